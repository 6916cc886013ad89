"""One row per band: the numbers ``redcorr coeffs`` prints and the terminal UI shows.

Both shells call :func:`band_summary`, so the table on screen and the table
on the command line are the same numbers.
"""

from redcorr.extinction import band_extinction, band_ratio, effective_wavelength

__all__ = ["band_summary", "BAND_SUMMARY_COLUMNS"]

BAND_SUMMARY_COLUMNS = ("band", "lambda_eff_um", "A_band", "A_over_AV", "A_over_EBV")
"""Keys of each row, in display order."""


def band_summary(curve, bands, sed, a_v, extrapolate=False):
    """Band-integrated extinction of a source behind dust, one dict per band.

    Parameters
    ----------
    curve : DustCurve
        A law, a table or a grain model (via `redcorr.io.load_curve`).
    bands : sequence of Band
    sed : SED
        Source spectrum.
    a_v : float
        A_V in mag, >= 0.
    extrapolate : bool
        Let the curve extrapolate beyond its range, with a warning.

    Returns
    -------
    list of dict
        Keys `BAND_SUMMARY_COLUMNS`: band name, reddened effective wavelength
        λ_eff (µm), A_b (mag), A_b/A_V and A_b/E(B-V).

    Notes
    -----
    A_b from :func:`redcorr.extinction.band_extinction`; A_b/A_V is that
    divided by A_V, or at A_V = 0 its limit :func:`~redcorr.extinction.band_ratio`;
    A_b/E(B-V) = R_V · A_b/A_V with E(B-V) ≡ A_V/R_V and R_V the curve's.

    References
    ----------
    The definitions of A_b and λ_eff are those of :mod:`redcorr.extinction`.

    Examples
    --------
    >>> from redcorr.curves import get_curve
    >>> from redcorr.bandpass import tophat
    >>> from redcorr.sed import blackbody
    >>> row, = band_summary(get_curve("ccm89"), [tophat(0.55, 0.001, "v")], blackbody(6000), 1.0)
    >>> round(row["A_over_EBV"], 2)
    3.1
    """
    rows = []
    for band in bands:
        a_band = float(band_extinction(curve, band, sed, a_v, extrapolate))
        ratio = a_band / a_v if a_v > 0 else band_ratio(curve, band, sed, extrapolate)
        rows.append(
            {
                "band": band.name,
                "lambda_eff_um": float(effective_wavelength(curve, band, sed, a_v, extrapolate)),
                "A_band": a_band,
                "A_over_AV": ratio,
                "A_over_EBV": ratio * curve.r_v,
            }
        )
    return rows
