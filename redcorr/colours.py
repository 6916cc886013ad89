"""Colour indices, colour–magnitude and colour–colour diagrams of a catalog.

Pure functions over columns (a pandas DataFrame, or any mapping from column
name to a 1-d array), intrinsic-colour tables (:class:`redcorr.intrinsic.ColourLocus`)
and dust curves: no files are read here. The magnitude and colour column
names are those :class:`redcorr.correction.Correction` writes (``MAG_dered``
with the default suffix).

A colour–colour diagram plots one colour index against another, x = m₁ − m₂
and y = m₃ − m₄ (the two may share a band, e.g. B−V against V−I). Unreddened
stars lie near the intrinsic locus (:func:`locus_colours`); dust moves each
star along the reddening vector (:func:`reddening_vector`,
:func:`reddening_arrow`), by (E(x), E(y)) = (A₁ − A₂, A₃ − A₄).
"""

import numpy as np
from astropy import units as u

from redcorr._validate import as_float_array, check_positive
from redcorr.exceptions import InputError
from redcorr.extinction import band_extinction
from redcorr.sed import blackbody

__all__ = ["colour_colour", "colour_index", "colour_magnitude", "locus_colours", "reddening_arrow", "reddening_vector"]


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


def _pair(name, value):
    """The two bands of a colour, ``(first, second)``; an InputError naming ``name`` for anything else."""
    items = list(value) if np.iterable(value) and not isinstance(value, str) else []
    if len(items) != 2:
        raise InputError(f"{name}={value!r} must be a pair of two bands (band1, band2)")
    return items[0], items[1]


def colour_colour(frame, colour_x, colour_y):
    """Points of a colour–colour diagram, (m₁ − m₂, m₃ − m₄), one per row.

    Parameters
    ----------
    frame : DataFrame or mapping of str to array_like
        A table with the magnitude columns named in ``colour_x`` and ``colour_y``.
    colour_x, colour_y : (str, str)
        The magnitude columns of each colour, bluer band first.

    Returns
    -------
    (ndarray, ndarray)
        x and y in mag, float64; NaN where a magnitude is NaN.

    References
    ----------
    .. [1] Johnson, H. L. & Morgan, W. W. 1953, ApJ, 117, 313 (the U−B
       against B−V diagram of stars, with its intrinsic sequence).

    Examples
    --------
    >>> x, y = colour_colour({"b": [15.2], "v": [14.6], "i": [13.9]}, ("b", "v"), ("v", "i"))
    >>> round(float(x[0]), 2), round(float(y[0]), 2)
    (0.6, 0.7)
    """
    (m1, m2), (m3, m4) = _pair("colour_x", colour_x), _pair("colour_y", colour_y)
    return (colour_index(_column(frame, m1), _column(frame, m2)), colour_index(_column(frame, m3), _column(frame, m4)))


def locus_colours(locus, colour_x, colour_y, teff=None):
    """The intrinsic locus in a colour–colour diagram.

    Parameters
    ----------
    locus : redcorr.intrinsic.ColourLocus
        Intrinsic magnitudes against T_eff.
    colour_x, colour_y : (str, str)
        Band names of the locus for each colour, bluer band first.
    teff : array_like or Quantity ['temperature'], optional
        T_eff (K) to evaluate the locus at. Default: the table's own rows
        where both colours have a value (the nodes, no interpolation).

    Returns
    -------
    teff, x, y : ndarray
        T_eff (K), and the intrinsic colours x = m₁ − m₂, y = m₃ − m₄ (mag)
        from :meth:`~redcorr.intrinsic.ColourLocus.colour`; NaN where the
        table gives none (outside its range, or a missing band).

    Raises
    ------
    UnknownNameError
        For a band the table does not have (naming the bands it covers).

    Notes
    -----
    Between rows the locus is linear in ln T_eff (as the fit of
    :mod:`redcorr.photometric_reddening` takes it), so drawing the nodes
    joined by straight lines shows the model's locus up to the curvature
    that the change of variable from ln T to the colours adds.

    References
    ----------
    .. [1] Pecaut, M. J. & Mamajek, E. E. 2013, ApJS, 208, 9, Table 5 (the
       packaged table of dwarfs' intrinsic colours).

    Examples
    --------
    >>> from redcorr.intrinsic import ColourLocus
    >>> locus = ColourLocus([5000, 6000], [[0.9, 0.0, -0.8], [0.6, 0.0, -0.6]], ["B", "V", "I"], reference="V")
    >>> t, x, y = locus_colours(locus, ("B", "V"), ("V", "I"))
    >>> t.tolist(), x.tolist(), y.tolist()
    ([5000.0, 6000.0], [0.9, 0.6], [0.8, 0.6])
    """
    (b1, b2), (b3, b4) = _pair("colour_x", colour_x), _pair("colour_y", colour_y)
    t = locus.teff if teff is None else as_float_array("teff", teff, u.K, "a temperature")
    x, y = locus.colour(t, b1, b2), locus.colour(t, b3, b4)
    if teff is None:
        have = np.isfinite(x) & np.isfinite(y)
        t, x, y = t[have], x[have], y[have]
    return t, x, y


def reddening_vector(curve, colour_x, colour_y, sed, ebv=1.0, extrapolate=False):
    """How far dust moves a star in a colour–colour diagram: (E(x), E(y)) for a given E(B−V).

    Parameters
    ----------
    curve : redcorr.curves.DustCurve
        The dust curve; E(B−V) ≡ A_V / R_V with its ``r_v`` (see
        :mod:`redcorr.extinction`).
    colour_x, colour_y : (Band, Band)
        The bands of each colour, bluer band first.
    sed : redcorr.sed.SED
        The source spectrum the band extinctions are integrated over.
    ebv : float or array_like
        E(B−V) in mag, >= 0 (any shape).
    extrapolate : bool
        Let the curve extrapolate beyond its wavelengths (with a warning).

    Returns
    -------
    (ndarray, ndarray)
        E(x) = A₁ − A₂ and E(y) = A₃ − A₄ in mag, the shape of ``ebv``.

    Notes
    -----
    With A_b from :func:`redcorr.extinction.band_extinction` at
    A_V = R_V E(B−V), E(x) = A₁ − A₂ exactly, so for a large E(B−V) the
    vector bends slightly (the bands' effective wavelengths move redward).
    The slope E(y)/E(x) of a small vector is the ratio of the bands'
    colour-excess ratios (:func:`redcorr.extinction.colour_excess_ratio`).

    References
    ----------
    .. [1] Fitzpatrick, E. L. 1999, PASP 111, 63, Sect. 3 (band extinction
       depends on the source and on the amount of dust).

    Examples
    --------
    >>> from redcorr.bandpass import tophat
    >>> from redcorr.curves import get_curve
    >>> from redcorr.sed import blackbody
    >>> b, v = tophat(0.44, 0.001, "b"), tophat(0.55, 0.001, "v")
    >>> dx, dy = reddening_vector(get_curve("ccm89"), (b, v), (b, v), blackbody(6000), 0.5)
    >>> bool(abs(dx - dy) < 1e-12) and bool(0.45 < dx < 0.55)
    True
    """
    (b1, b2), (b3, b4) = _pair("colour_x", colour_x), _pair("colour_y", colour_y)
    e = np.asarray(ebv, dtype=np.float64)
    if np.any(~np.isfinite(e) | (e < 0)):
        raise InputError(f"ebv={ebv!r} must be finite and >= 0 (mag)")
    a_v = check_positive("curve.r_v", curve.r_v) * e

    def a(band):
        return band_extinction(curve, band, sed, a_v, extrapolate)

    return np.asarray(a(b1) - a(b2)), np.asarray(a(b3) - a(b4))


def reddening_arrow(locus, curve, bands, colour_x, colour_y, teff, ebv=1.0, extrapolate=False):
    """The reddening vector drawn from the locus: start and end points in a colour–colour diagram.

    Parameters
    ----------
    locus : redcorr.intrinsic.ColourLocus
    curve : redcorr.curves.DustCurve
    bands : mapping of str to Band
        The Band of each locus band name used in ``colour_x`` and ``colour_y``.
    colour_x, colour_y : (str, str)
        Band names of each colour, bluer band first.
    teff : float
        T_eff (K) of the locus point the arrow starts from, and of the
        blackbody its band extinctions are integrated over.
    ebv : float
        E(B−V) of the arrow (mag, > 0).
    extrapolate : bool
        Let the curve extrapolate beyond its wavelengths (with a warning).

    Returns
    -------
    start, end : (float, float)
        The locus point (x₀, y₀) at ``teff`` and (x₀ + E(x), y₀ + E(y)),
        where an unreddened star of that T_eff lands behind E(B−V) = ``ebv``.

    Raises
    ------
    InputError
        If the locus has no value for the colours at ``teff``, or a band
        of the colours is missing from ``bands``.

    Notes
    -----
    :func:`locus_colours` at ``teff`` plus :func:`reddening_vector` for a
    blackbody of that T_eff (the source model of
    :mod:`redcorr.photometric_reddening`).

    References
    ----------
    .. [1] Pecaut, M. J. & Mamajek, E. E. 2013, ApJS, 208, 9 (the locus).
    .. [2] Fitzpatrick, E. L. 1999, PASP 111, 63 (the reddening vector's
       dependence on the source).
    """
    (b1, b2), (b3, b4) = _pair("colour_x", colour_x), _pair("colour_y", colour_y)
    t = check_positive("teff", teff)
    e = check_positive("ebv", ebv)
    _, x0, y0 = locus_colours(locus, (b1, b2), (b3, b4), teff=t)
    if not (np.isfinite(x0) and np.isfinite(y0)):
        lo, hi = locus.teff_range
        raise InputError(
            f"teff={t:g} K: the intrinsic-colour table {locus.name!r} has no {b1}-{b2} and {b3}-{b4} there "
            f"(it spans {lo:g}-{hi:g} K, with gaps where a band is missing)"
        )
    missing = [b for b in (b1, b2, b3, b4) if b not in bands]
    if missing:
        raise InputError(f"bands has no Band for {missing[0]!r}; it has {list(bands)}")
    dx, dy = reddening_vector(curve, (bands[b1], bands[b2]), (bands[b3], bands[b4]), blackbody(t), e, extrapolate)
    x0, y0 = float(x0), float(y0)
    return (x0, y0), (x0 + float(dx), y0 + float(dy))
