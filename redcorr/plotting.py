"""PNG figures drawn with matplotlib (off-screen); written atomically."""

import numpy as np
from astropy import units as u

from redcorr.io._atomic import atomic_path

__all__ = ["plot_curve", "plot_band_coefficients", "plot_snr_vs_time", "plot_time_vs_av"]


def _figure():
    import matplotlib

    matplotlib.use("Agg", force=False)
    import matplotlib.pyplot as plt

    return plt


def plot_curve(curve, path, *, marks=None, extrapolate=False):
    """Draw A(λ)/A(V) against 1/λ over the curve's valid range.

    Parameters
    ----------
    curve : DustCurve
    path : path-like
        PNG file to write (atomically).
    marks : array_like, optional
        Wavelengths in µm to mark with points.
    extrapolate : bool
        Passed to the curve when evaluating ``marks``.
    """
    plt = _figure()
    lo, hi = curve.wavenumber_limits
    hi = min(hi, 12.0)
    x = np.linspace(lo, hi, 600)
    fig, ax = plt.subplots(figsize=(6.4, 4.2), layout="constrained")
    ax.plot(x, curve(x * u.um**-1), lw=1.6, label=f"{curve.name} (R_V={curve.r_v:.2f})")
    if marks is not None:
        marks = np.atleast_1d(np.asarray(marks, dtype=float))
        ax.plot(1 / marks, curve(marks, extrapolate=extrapolate), "o", ms=5, label="requested")
    ax.set_xlabel(r"$1/\lambda$ [$\mu$m$^{-1}$]")
    ax.set_ylabel(r"$A(\lambda)/A(V)$")
    ax.set_title(curve.citation, fontsize=8)
    ax.legend(frameon=False)
    with atomic_path(path, suffix=".png") as tmp:
        fig.savefig(tmp, format="png", dpi=110)
    plt.close(fig)


def plot_snr_vs_time(t, snr_by_band, path, *, title="", target=None):
    """Draw S/N against exposure time, without (dashed) and with (solid) the dust.

    Parameters
    ----------
    t : array_like
        Exposure times, s.
    snr_by_band : dict
        Band name → ``(snr_clear, snr_dust)``, as from
        :func:`redcorr.exposure.snr_vs_time`.
    path : path-like
        PNG file to write (atomically).
    title : str
    target : float, optional
        S/N to mark with a horizontal line.
    """
    plt = _figure()
    t = np.asarray(t, dtype=float)
    fig, ax = plt.subplots(figsize=(6.4, 4.2), layout="constrained")
    for name, (clear, dust) in snr_by_band.items():
        (line,) = ax.loglog(t, dust, lw=1.6, label=f"{name} behind the dust")
        ax.loglog(t, clear, lw=1.0, ls="--", color=line.get_color(), label=f"{name} without dust")
    if target is not None:
        ax.axhline(target, color="0.5", lw=0.8, ls=":")
    ax.set_xlabel("exposure time [s]")
    ax.set_ylabel("S/N")
    ax.set_title(title, fontsize=8)
    ax.legend(frameon=False, fontsize=7)
    with atomic_path(path, suffix=".png") as tmp:
        fig.savefig(tmp, format="png", dpi=110)
    plt.close(fig)


def plot_time_vs_av(a_v, times_by_band, path, *, title="", mark=None):
    """Draw the exposure time needed against A_V, one line per band.

    Parameters
    ----------
    a_v : array_like
        A_V grid, mag.
    times_by_band : dict
        Band name → times in s on the grid, as from
        :func:`redcorr.exposure.time_vs_av`.
    path : path-like
        PNG file to write (atomically).
    title : str
    mark : float, optional
        A_V to mark with a vertical line.
    """
    plt = _figure()
    fig, ax = plt.subplots(figsize=(6.4, 4.2), layout="constrained")
    if mark is not None:
        ax.axvline(mark, color="0.5", lw=0.8, ls=":")
    for name, times in times_by_band.items():
        ax.semilogy(a_v, times, lw=1.6, label=name)
    ax.set_xlabel(r"$A_V$ [mag]")
    ax.set_ylabel("exposure time needed [s]")
    ax.set_title(title, fontsize=8)
    ax.legend(frameon=False)
    with atomic_path(path, suffix=".png") as tmp:
        fig.savefig(tmp, format="png", dpi=110)
    plt.close(fig)


def plot_band_coefficients(curve, bands, sed, path, *, a_v_max=20.0, extrapolate=False):
    """Draw the bands over A(λ)/A(V), and A_b/A_V against A_V for each band.

    Parameters
    ----------
    curve : DustCurve
    bands : list of Band
    sed : SED
        Source spectrum used for A_b/A_V.
    path : path-like
        PNG file to write (atomically).
    a_v_max : float
        Upper end of the A_V axis of the right panel.
    extrapolate : bool
        Passed to the band integration.
    """
    from redcorr.extinction import band_extinction, band_ratio  # noqa: PLC0415

    plt = _figure()
    wmin, wmax = curve.wave_range.to_value(u.um)
    lo = max(min(b.wave_range_um[0] for b in bands) * 0.9, wmin)
    hi = min(max(b.wave_range_um[1] for b in bands) * 1.1, wmax)
    lam = np.geomspace(lo, hi, 500)
    fig, (left, right) = plt.subplots(1, 2, figsize=(11, 4.2), layout="constrained")
    left.plot(lam, curve(lam), color="k", lw=1.6, label=f"{curve.name} (R_V={curve.r_v:.2f})")
    left.set_xlabel(r"$\lambda$ [$\mu$m]")
    left.set_ylabel(r"$A(\lambda)/A(V)$")
    twin = left.twinx()
    a_v = np.linspace(0.0, a_v_max, 81)[1:]
    for band in bands:
        line = twin.fill_between(band.wave_um, band.response / band.response.max(), alpha=0.25, label=band.name)
        colour = line.get_facecolor()[0]
        ratio = band_extinction(curve, band, sed, a_v, extrapolate) / a_v
        ratios = np.r_[band_ratio(curve, band, sed, extrapolate), ratio]
        right.plot(np.r_[0.0, a_v], ratios, color=colour[:3], label=band.name)
    left.set_zorder(twin.get_zorder() + 1)  # the curve above the filled bands
    left.patch.set_visible(False)
    twin.set_ylim(0, 1.05)
    twin.set_ylabel("response (peak 1)")
    twin.legend(frameon=False, fontsize=8, loc="upper right")
    left.set_title(curve.citation, fontsize=8)
    right.set_xlabel(r"$A_V$ [mag]")
    right.set_ylabel(r"$A_b/A_V$")
    right.set_title(f"source: {sed.name}", fontsize=9)
    right.legend(frameon=False, fontsize=8, loc="best")
    with atomic_path(path, suffix=".png") as tmp:
        fig.savefig(tmp, format="png", dpi=110)
    plt.close(fig)
