"""PNG figures drawn with matplotlib (off-screen); written atomically."""

import numpy as np
from astropy import units as u

from redcorr.io._atomic import atomic_path

__all__ = ["plot_curve"]


def _figure():
    import matplotlib

    matplotlib.use("Agg", force=False)
    import matplotlib.pyplot as plt

    return plt


def plot_curve(curve, path, *, marks=None, extrapolate=False):
    """Draw A(λ)/A(V) against 1/λ over the curve's valid range.

    Parameters
    ----------
    curve : ExtinctionCurve
    path : path-like
        PNG file to write (atomically).
    marks : array_like, optional
        Wavelengths in µm to mark with points.
    extrapolate : bool
        Passed to the curve when evaluating ``marks``.
    """
    plt = _figure()
    lo, hi = curve.x_range
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
