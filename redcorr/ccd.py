"""The CCD equation: signal-to-noise ratio of a point source, and its inversions.

Pure array code: every function broadcasts its arguments, rates in
electrons per second, times in seconds (a Quantity of time is accepted).
The noise model is that of Merline & Howell (1995) as given by Howell
(2006): source shot noise, sky and dark current over the aperture's
pixels, read noise and digitisation noise per pixel, each pixel's
background estimated from ``n_B`` sky pixels.

Notation: ``a = R_*`` the source rate in the aperture, ``n' = n_pix (1 +
n_pix/n_B)``, ``b = n' (R_S + R_D)`` the background variance per second
and ``c = n' (N_R² + G² σ_f²)`` the variance per read-out; then
``(S/N)² = a² t² / (a t + b t + c)``.

References
----------
.. [1] Howell, S. B. 2006, *Handbook of CCD Astronomy*, 2nd ed., Cambridge
       University Press, §4.4 (the CCD equation, eq. 4.4, and its solution
       for the exposure time).
.. [2] Merline, W. J. & Howell, S. B. 1995, Experimental Astronomy 6, 163.
"""

import math

import numpy as np

from redcorr._validate import as_seconds, check_snr

__all__ = [
    "DIGITISATION_SIGMA_ADU",
    "gaussian_aperture_fraction",
    "noise_terms",
    "ccd_snr",
    "ccd_time",
    "ccd_source_rate",
    "dominant_noise",
]

DIGITISATION_SIGMA_ADU = 0.289
"""1σ error of the A/D conversion in ADU, ≈ 1/√12 (Merline & Howell 1995; Howell 2006 §4.4)."""


def gaussian_aperture_fraction(radius_arcsec, fwhm_arcsec):
    """Fraction of a circular Gaussian PSF inside a circular aperture.

    Notes
    -----
    .. math:: f = 1 - \\exp\\left(-\\frac{r^2}{2\\sigma^2}\\right), \\qquad
              \\sigma = \\frac{\\mathrm{FWHM}}{2\\sqrt{2\\ln 2}}

    (the integral of a 2-d Gaussian over a disc centred on it). Real seeing
    profiles have broader wings (Moffat-like), so this is an upper bound on
    the enclosed fraction for a given FWHM.

    Examples
    --------
    >>> round(float(gaussian_aperture_fraction(1.0, 2.0)), 3)   # r = FWHM/2 holds half the light
    0.5
    """
    r = np.asarray(radius_arcsec, dtype=float)
    sigma = np.asarray(fwhm_arcsec, dtype=float) / (2.0 * math.sqrt(2.0 * math.log(2.0)))
    return -np.expm1(-0.5 * (r / sigma) ** 2)


def noise_terms(n_pix, n_sky_pix, sky_rate, dark_rate, read_noise, digitisation_e):
    """Per-second background variance ``b`` and per-read variance ``c`` of the CCD equation.

    Parameters
    ----------
    n_pix, n_sky_pix : array_like
        Pixels in the aperture and in the background estimate (n_B, may be ``inf``).
    sky_rate, dark_rate : array_like
        Sky and dark-current electrons per second per pixel.
    read_noise, digitisation_e : array_like
        Read noise and A/D noise per pixel, electrons rms.

    Returns
    -------
    b, c : ndarray
        Variance per second :math:`b = n'(R_S + R_D)` and per read-out :math:`c = n'(N_R^2 + G^2\\sigma_f^2)`,
        in e⁻², with :math:`n' = n_{pix}(1 + n_{pix}/n_B)` (Howell 2006, eq. 4.4).
    """
    weight = n_pix * (1.0 + n_pix / np.asarray(n_sky_pix, dtype=float))
    b = weight * (np.asarray(sky_rate, dtype=float) + np.asarray(dark_rate, dtype=float))
    c = weight * (np.asarray(read_noise, dtype=float) ** 2 + np.asarray(digitisation_e, dtype=float) ** 2)
    return b, c


def ccd_snr(t, source_rate, sky_rate, dark_rate, read_noise, n_pix, n_sky_pix=np.inf, digitisation_e=0.0):
    """Signal-to-noise ratio of a point source from the CCD equation.

    Parameters
    ----------
    t : float, array_like or `~astropy.units.Quantity` ['time']
        Exposure time, s (≥ 0).
    source_rate : array_like
        Source electrons per second inside the photometric aperture.
    sky_rate, dark_rate : array_like
        Sky and dark-current electrons per second per pixel.
    read_noise : array_like
        Read noise per pixel, electrons rms.
    n_pix : array_like
        Pixels in the photometric aperture.
    n_sky_pix : array_like, optional
        Pixels used to estimate the background (n_B); infinite (the default)
        means a perfectly known background.
    digitisation_e : array_like, optional
        A/D noise in electrons, gain × σ_f with σ_f ≈ 0.289 ADU.

    Returns
    -------
    snr : ndarray

    Notes
    -----
    Howell (2006) eq. 4.4, after Merline & Howell (1995):

    .. math:: \\frac{S}{N} = \\frac{N_*}{\\sqrt{N_* + n_{pix}\\left(1 + \\frac{n_{pix}}{n_B}\\right)
              \\left(N_S + N_D + N_R^2 + G^2\\sigma_f^2\\right)}}

    with :math:`N_* = R_* t`, :math:`N_S = R_S t`, :math:`N_D = R_D t` electrons.

    References
    ----------
    Howell 2006, *Handbook of CCD Astronomy*, 2nd ed., §4.4, eq. 4.4;
    Merline & Howell 1995, Exp. Astron. 6, 163.
    """
    t = as_seconds("time", t)
    src = np.asarray(source_rate, dtype=float)
    b, c = noise_terms(n_pix, n_sky_pix, sky_rate, dark_rate, read_noise, digitisation_e)
    signal = src * t
    noise = np.sqrt(signal + b * t + c)
    with np.errstate(divide="ignore", invalid="ignore"):
        return np.where(signal > 0, signal / noise, 0.0)[()]


def ccd_time(snr, source_rate, sky_rate, dark_rate, read_noise, n_pix, n_sky_pix=np.inf, digitisation_e=0.0):
    """Exposure time for a target S/N: the CCD equation solved for ``t``.

    Parameters are those of :func:`ccd_snr`, with ``snr`` (> 0) in place of ``t``.

    Returns
    -------
    t : ndarray
        Seconds; ``inf`` for a source rate of zero.

    Notes
    -----
    Squaring the CCD equation with :math:`a = R_*`,
    :math:`b = n'(R_S + R_D)` and :math:`c = n'(N_R^2 + G^2\\sigma_f^2)`,
    :math:`n' = n_{pix}(1 + n_{pix}/n_B)`, gives
    :math:`a^2 t^2 - s^2 (a + b)\\, t - s^2 c = 0`, whose positive root is

    .. math:: t = \\frac{s^2 (a + b) + \\sqrt{s^4 (a + b)^2 + 4 a^2 s^2 c}}{2 a^2}

    (Howell 2006 §4.4 gives the same quadratic). Both terms of the numerator
    are positive, so there is no cancellation. Limits: source-limited
    :math:`t = s^2/a`; sky-limited :math:`t = s^2 b / a^2`; read-noise-limited
    :math:`t = s\\sqrt{c}/a`.

    References
    ----------
    Howell 2006, *Handbook of CCD Astronomy*, 2nd ed., §4.4.
    """
    s = check_snr("snr", snr)
    a = np.asarray(source_rate, dtype=float)
    b, c = noise_terms(n_pix, n_sky_pix, sky_rate, dark_rate, read_noise, digitisation_e)
    with np.errstate(divide="ignore", invalid="ignore", over="ignore"):  # beyond float64: t = inf
        s2 = s * s
        t = (s2 * (a + b) + np.sqrt(s2 * s2 * (a + b) ** 2 + 4.0 * a * a * s2 * c)) / (2.0 * a * a)
    return np.where(a > 0, t, np.inf)[()]


def ccd_source_rate(snr, t, sky_rate, dark_rate, read_noise, n_pix, n_sky_pix=np.inf, digitisation_e=0.0):
    """Source rate (e⁻/s in the aperture) that reaches ``snr`` in time ``t``: the limiting rate.

    Notes
    -----
    The CCD equation solved for :math:`a = R_*` at fixed :math:`t` (notation of
    :func:`ccd_time`): :math:`a^2 t^2 - s^2 t\\, a - s^2 (b t + c) = 0`, so

    .. math:: a = \\frac{s^2 + \\sqrt{s^4 + 4 s^2 (b t + c)}}{2 t}
    """
    s = check_snr("snr", snr)
    t = as_seconds("time", t)
    b, c = noise_terms(n_pix, n_sky_pix, sky_rate, dark_rate, read_noise, digitisation_e)
    s2 = s * s
    with np.errstate(divide="ignore"):
        return ((s2 + np.sqrt(s2 * s2 + 4.0 * s2 * (b * t + c))) / (2.0 * t))[()]


def dominant_noise(t, source_rate, sky_rate, dark_rate, read_noise, n_pix, n_sky_pix=np.inf, digitisation_e=0.0):
    """Name of the largest variance term at time ``t``: "source", "sky", "dark" or "read".

    Returns a str for scalar input, else an ndarray of str.
    """
    t = as_seconds("time", t)
    weight = n_pix * (1.0 + n_pix / np.asarray(n_sky_pix, dtype=float))
    terms = np.broadcast_arrays(
        np.asarray(source_rate, dtype=float) * t,
        weight * np.asarray(sky_rate, dtype=float) * t,
        weight * np.asarray(dark_rate, dtype=float) * t,
        weight * (np.asarray(read_noise, dtype=float) ** 2 + np.asarray(digitisation_e, dtype=float) ** 2),
    )
    names = np.array(["source", "sky", "dark", "read"])
    out = names[np.argmax(np.stack(terms), axis=0)]
    return str(out) if out.ndim == 0 else out
