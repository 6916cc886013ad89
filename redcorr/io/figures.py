"""Write the figures of :mod:`redcorr.plotting` to PNG files, atomically."""

from pathlib import Path

from redcorr.io._atomic import atomic_path

__all__ = ["save_figure"]


def save_figure(fig, path):
    """Write a matplotlib Figure as a PNG at its own resolution; the file appears whole or not at all.

    Parameters
    ----------
    fig : matplotlib.figure.Figure
        As built by :mod:`redcorr.plotting`.
    path : path-like
        Output file, written as PNG whatever its suffix; its folder must exist.

    Returns
    -------
    pathlib.Path
    """
    with atomic_path(path, suffix=".png") as tmp:
        fig.savefig(tmp, format="png", dpi="figure")
    return Path(path)
