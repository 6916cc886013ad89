"""Figures drawn with matplotlib: each function builds and returns a Figure and writes nothing.

The figures are made without pyplot (:class:`matplotlib.figure.Figure`), so
no window, backend or global list of open figures is involved, and each
carries its own resolution (``dpi``). They are written at the edge, by
:func:`redcorr.io.figures.save_figure`.
"""

import numpy as np
from astropy import units as u

__all__ = [
    "curve_figure",
    "band_coefficients_figure",
    "snr_vs_time_figure",
    "time_vs_av_figure",
    "grain_model_figure",
    "grain_emission_figure",
]


def _figure(figsize, dpi):
    from matplotlib.figure import Figure  # noqa: PLC0415 - matplotlib only when a figure is asked for

    return Figure(figsize=figsize, dpi=dpi, layout="constrained")


def curve_figure(curve, *, marks=None, extrapolate=False):
    """A(λ)/A(V) against 1/λ over the curve's valid range.

    Parameters
    ----------
    curve : DustCurve
    marks : array_like, optional
        Wavelengths in µm to mark with points.
    extrapolate : bool
        Passed to the curve when evaluating ``marks``.

    Returns
    -------
    matplotlib.figure.Figure
        6.4 × 4.2 inches at 110 dpi.
    """
    lo, hi = curve.wavenumber_limits
    hi = min(hi, 12.0)
    x = np.linspace(lo, hi, 600)
    fig = _figure((6.4, 4.2), 110)
    ax = fig.subplots()
    ax.plot(x, curve(x * u.um**-1), lw=1.6, label=f"{curve.name} (R_V={curve.r_v:.2f})")
    if marks is not None:
        marks = np.atleast_1d(np.asarray(marks, dtype=float))
        ax.plot(1 / marks, curve(marks, extrapolate=extrapolate), "o", ms=5, label="requested")
    ax.set_xlabel(r"$1/\lambda$ [$\mu$m$^{-1}$]")
    ax.set_ylabel(r"$A(\lambda)/A(V)$")
    ax.set_title(curve.citation, fontsize=8)
    ax.legend(frameon=False)
    return fig


def snr_vs_time_figure(t, snr_by_band, *, title="", target=None):
    """S/N against exposure time, without (dashed) and with (solid) the dust.

    Parameters
    ----------
    t : array_like
        Exposure times, s.
    snr_by_band : dict
        Band name → ``(snr_clear, snr_dust)``, as from
        :func:`redcorr.exposure.snr_vs_time`.
    title : str
    target : float, optional
        S/N to mark with a horizontal line.

    Returns
    -------
    matplotlib.figure.Figure
        6.4 × 4.2 inches at 110 dpi.
    """
    t = np.asarray(t, dtype=float)
    fig = _figure((6.4, 4.2), 110)
    ax = fig.subplots()
    for name, (clear, dust) in snr_by_band.items():
        (line,) = ax.loglog(t, dust, lw=1.6, label=f"{name} behind the dust")
        ax.loglog(t, clear, lw=1.0, ls="--", color=line.get_color(), label=f"{name} without dust")
    if target is not None:
        ax.axhline(target, color="0.5", lw=0.8, ls=":")
    ax.set_xlabel("exposure time [s]")
    ax.set_ylabel("S/N")
    ax.set_title(title, fontsize=8)
    ax.legend(frameon=False, fontsize=7)
    return fig


def time_vs_av_figure(a_v, times_by_band, *, title="", mark=None):
    """The exposure time needed against A_V, one line per band.

    Parameters
    ----------
    a_v : array_like
        A_V grid, mag.
    times_by_band : dict
        Band name → times in s on the grid, as from
        :func:`redcorr.exposure.time_vs_av`.
    title : str
    mark : float, optional
        A_V to mark with a vertical line.

    Returns
    -------
    matplotlib.figure.Figure
        6.4 × 4.2 inches at 110 dpi.
    """
    fig = _figure((6.4, 4.2), 110)
    ax = fig.subplots()
    if mark is not None:
        ax.axvline(mark, color="0.5", lw=0.8, ls=":")
    for name, times in times_by_band.items():
        ax.semilogy(a_v, times, lw=1.6, label=name)
    ax.set_xlabel(r"$A_V$ [mag]")
    ax.set_ylabel("exposure time needed [s]")
    ax.set_title(title, fontsize=8)
    ax.legend(frameon=False)
    return fig


def band_coefficients_figure(curve, bands, sed, *, a_v_max=20.0, extrapolate=False):
    """The bands over A(λ)/A(V), and A_b/A_V against A_V for each band.

    Parameters
    ----------
    curve : DustCurve
    bands : list of Band
    sed : SED
        Source spectrum used for A_b/A_V.
    a_v_max : float
        Upper end of the A_V axis of the right panel.
    extrapolate : bool
        Passed to the band integration.

    Returns
    -------
    matplotlib.figure.Figure
        11 × 4.2 inches at 110 dpi, two panels.
    """
    from redcorr.extinction import band_extinction, band_ratio  # noqa: PLC0415

    wmin, wmax = curve.wave_range.to_value(u.um)
    lo = max(min(b.wave_range_um[0] for b in bands) * 0.9, wmin)
    hi = min(max(b.wave_range_um[1] for b in bands) * 1.1, wmax)
    lam = np.geomspace(lo, hi, 500)
    fig = _figure((11, 4.2), 110)
    left, right = fig.subplots(1, 2)
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
    return fig


def grain_model_figure(curve):
    """A grain model's A(λ)/A(V), albedo and g against 1/λ, and its phase function.

    Parameters
    ----------
    curve : GrainCurve
        A grain model's curve (:meth:`redcorr.grains.GrainModel.curve`); its
        tabulated optics are drawn up to 1/λ = 10 µm⁻¹.

    Returns
    -------
    matplotlib.figure.Figure
        9 × 6.6 inches at 100 dpi, four panels; the last compares the exact
        Mie phase function (:meth:`~redcorr.grains.GrainModel.phase_function`)
        at 0.2, 0.55 and 2.2 µm with Henyey–Greenstein of the same g.
    """
    from redcorr.curves.tabulated import V_WAVE_UM  # noqa: PLC0415
    from redcorr.phase import henyey_greenstein  # noqa: PLC0415

    model, optics = curve.model, curve.optics
    x = 1.0 / optics.wave_um
    keep = x <= 10.0
    fig = _figure((9.0, 6.6), 100)
    (ax1, ax2), (ax3, ax4) = fig.subplots(2, 2)
    ax1.plot(x[keep], (optics.c_ext / optics.c_ext[np.argmin(abs(optics.wave_um - V_WAVE_UM))])[keep])
    ax1.set_ylabel(r"$A(\lambda)/A(V)$")
    ax2.plot(x[keep], optics.albedo[keep])
    ax2.set_ylabel("albedo")
    ax3.plot(x[keep], optics.g[keep])
    ax3.set_ylabel(r"$g = \langle\cos\theta\rangle$")
    for ax in (ax1, ax2, ax3):
        ax.set_xlabel(r"$1/\lambda$ [$\mu$m$^{-1}$]")
    theta = np.linspace(0.0, np.pi, 181)
    for lam, colour in ((0.2, "C0"), (V_WAVE_UM, "C1"), (2.2, "C3")):
        g = float(np.interp(1 / lam, x[::-1], optics.g[::-1]))
        ax4.semilogy(np.degrees(theta), model.phase_function(lam, theta), color=colour,
                     label=f"{lam:g} µm Mie, g={g:.2f}")
        ax4.semilogy(np.degrees(theta), henyey_greenstein(theta, g), color=colour, ls="--", lw=0.9)
    ax4.set_xlabel("scattering angle [deg]")
    ax4.set_ylabel(r"phase function [sr$^{-1}$]")
    ax4.set_title("Mie (solid) and Henyey–Greenstein with the same g (dashed)", fontsize=8)
    ax4.legend(frameon=False, fontsize=8)
    fig.suptitle(f"{model.name}: R_V = {curve.r_v:.3f}", fontsize=10)
    return fig


def grain_emission_figure(emission, *, fit=None, marks=None, title=""):
    """Equilibrium temperatures against grain radius, and the emission spectrum per H nucleon.

    Parameters
    ----------
    emission : DustEmission
        From :func:`redcorr.grains.emission_spectrum`; its ``temperatures``
        give the left panel, its ``lam_i_lam`` (total and by component) the right.
    fit : ModifiedBlackbodyFit, optional
        Drawn over the spectrum (dotted) on the wavelengths it was fitted to.
    marks : DustEmission, optional
        The emission at other wavelengths (e.g. those asked for), drawn as points.
    title : str
        Over both panels (e.g. the grain model and the radiation field).

    Returns
    -------
    matplotlib.figure.Figure
        11 × 4.2 inches at 110 dpi, two panels. Radii whose grains are flagged
        stochastic are drawn dashed: they do not reach the temperature shown,
        and their emission is not in the spectrum.
    """
    from redcorr.grains.fields import four_pi_planck  # noqa: PLC0415

    fig = _figure((11, 4.2), 110)
    left, right = fig.subplots(1, 2)
    lam = emission.wave_um
    for i, (t, row) in enumerate(zip(emission.temperatures, emission.by_component, strict=True)):
        colour = f"C{i % 10}"
        label = t.component.strip("<>").removeprefix("Component ")
        hot = np.where(t.stochastic, np.nan, t.temperature_k)
        left.semilogx(t.radius_um, hot, color=colour, lw=1.6, label=label)
        left.semilogx(t.radius_um, np.where(t.stochastic, t.temperature_k, np.nan), color=colour, lw=1.0, ls="--")
        right.loglog(lam, row, color=colour, lw=1.0, label=label)
    left.set_xlabel(r"grain radius $a$ [$\mu$m]")
    left.set_ylabel(r"equilibrium temperature [K]")
    left.set_title("dashed: stochastically heated, not at this temperature", fontsize=8)
    left.legend(frameon=False, fontsize=7)
    right.loglog(lam, emission.lam_i_lam, color="k", lw=1.8, label="all grains in equilibrium")
    if fit is not None:
        lo, hi = fit.wave_range_um
        x = lam[(lam >= lo) & (lam <= hi)]
        model = fit.tau_ref * (x / fit.wave_ref_um) ** -fit.beta * four_pi_planck(x, fit.temperature_k) / (4 * np.pi)
        right.loglog(x, x * model, color="0.4", lw=1.2, ls=":",
                     label=f"modified blackbody T = {fit.temperature_k:.1f} K, β = {fit.beta:.2f}")
    if marks is not None:
        right.loglog(marks.wave_um, marks.lam_i_lam, "o", color="k", ms=4, label="requested")
    peak = np.nanmax(emission.lam_i_lam)
    if peak > 0:
        right.set_ylim(peak * 1e-4, peak * 3)
    right.set_xlabel(r"$\lambda$ [$\mu$m]")
    right.set_ylabel(r"$\lambda I_\lambda / N_H$ [erg s$^{-1}$ sr$^{-1}$ H$^{-1}$]")
    right.set_title(f"stochastic grains left out: {100 * emission.stochastic_fraction:.3g} % of the absorbed power",
                    fontsize=8)
    right.legend(frameon=False, fontsize=7)
    fig.suptitle(title, fontsize=10)
    return fig
