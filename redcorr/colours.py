"""Colour indices and colour–magnitude diagrams of a catalog, before and after a correction.

Pure functions over columns (a pandas DataFrame, or any mapping from column
name to a 1-d array): no files are read here. The magnitude and colour
column names are those :class:`redcorr.correction.Correction` writes
(``MAG_dered`` with the default suffix).
"""

import numpy as np

from redcorr.exceptions import InputError

__all__ = ["colour_index", "colour_magnitude"]


def colour_index(mag1, mag2):
    """The colour index m₁ − m₂ of two magnitudes.

    Parameters
    ----------
    mag1, mag2 : array_like
        Magnitudes in the bluer and the redder band (mag); they broadcast.

    Returns
    -------
    ndarray
        m₁ − m₂ in mag, float64; NaN where either magnitude is NaN.

    Notes
    -----
    The colour index of bands 1 and 2 is

    .. math:: C_{12} = m_1 - m_2 = -2.5 \\log_{10}(F_1 / F_2) + \\mathrm{const},

    so a redder source (relatively fainter in band 1) has a larger index;
    the colour excess is E(1−2) = C_observed − C_intrinsic = A_1 − A_2.

    References
    ----------
    .. [1] Johnson, H. L. & Morgan, W. W. 1953, ApJ, 117, 313 (the UBV
       system and its colour indices B−V and U−B).

    Examples
    --------
    >>> round(float(colour_index(15.2, 14.6)), 6)
    0.6
    """
    try:
        m1 = np.asarray(mag1, dtype=np.float64)
        m2 = np.asarray(mag2, dtype=np.float64)
    except (TypeError, ValueError):
        raise InputError("colour_index: magnitudes must be numbers (NaN for missing values)") from None
    try:
        np.broadcast_shapes(m1.shape, m2.shape)
    except ValueError:
        raise InputError(
            f"colour_index: mag1 of shape {m1.shape} and mag2 of shape {m2.shape} do not broadcast"
        ) from None
    return m1 - m2


def _column(frame, name):
    if name not in frame:
        raise InputError(f"column={name!r} is not in the table; its columns are {list(frame)}")
    return np.asarray(frame[name], dtype=np.float64)


def colour_magnitude(frame, mag1, mag2, *, suffix="_dered"):
    """Points of the colour–magnitude diagram (m₁ − m₂, m₂) as observed and after correction.

    Parameters
    ----------
    frame : DataFrame or mapping of str to array_like
        A corrected table: the observed magnitude columns ``mag1`` and
        ``mag2`` and the corrected ones ``mag1 + suffix``, ``mag2 + suffix``.
    mag1, mag2 : str
        The observed magnitude columns of the bluer and the redder band.
    suffix : str
        Suffix of the corrected columns (`Correction`'s ``suffix``).

    Returns
    -------
    dict
        ``{"as observed": (colour, mag), "corrected": (colour, mag)}``, each a
        pair of float64 arrays of one value per row.

    Notes
    -----
    Observed: (m₁ − m₂, m₂). Corrected: (m₁,₀ − m₂,₀, m₂,₀) with
    m_b,₀ = m_b − A_b, so each point moves by (−E(1−2), −A₂) with
    E(1−2) = A₁ − A₂ (see :func:`colour_index`).

    References
    ----------
    .. [1] Johnson, H. L. & Morgan, W. W. 1953, ApJ, 117, 313.

    Examples
    --------
    >>> cmd = colour_magnitude({"b": [15.2], "v": [14.6], "b_dered": [14.0], "v_dered": [13.7]}, "b", "v")
    >>> [round(float(a[0]), 2) for a in cmd["corrected"]]
    [0.3, 13.7]
    """
    m1, m2 = _column(frame, mag1), _column(frame, mag2)
    d1, d2 = _column(frame, mag1 + suffix), _column(frame, mag2 + suffix)
    return {"as observed": (colour_index(m1, m2), m2), "corrected": (colour_index(d1, d2), d2)}
