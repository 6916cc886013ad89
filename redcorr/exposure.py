"""Exposure planning behind dust: photon rates, the CCD equation, time and depth.

This module is pure array code (no files, no UI). It answers the observer's
questions for a point source seen through an imaging instrument: how long to
reach a signal-to-noise ratio, what S/N a given time gives, how deep an
exposure goes, and how much of that the dust costs, band by band.

Conventions
-----------
* Magnitudes are AB (Oke & Gunn 1983): ``F_ν = 3631 Jy · 10^(−0.4 m)``.
* A *system throughput* ``T(λ)`` is the fraction of photons arriving at the
  top of the telescope that become detected electrons (filter × optics × QE);
  it is a photon-counting curve between 0 and 1.
* Photon rate of a source with spectrum ``F_ν`` through ``T``::

      N = A_tel ∫ F_ν / (hν) · T dν = (A_tel / h) ∫ F_ν T(λ) dλ / λ

  (``dν/ν = dλ/λ``). For a source of AB magnitude ``m`` *in that band* —
  defined with photon weighting, ``m = −2.5 log10[∫F_ν T dλ/λ / ∫3631 Jy T dλ/λ]``
  — the rate is exactly ``N = (A_tel / h) · 3631 Jy · 10^(−0.4 m) ∫ T dλ/λ``,
  whatever the spectrum.
* The magnitude the user gives is the source's dust-free magnitude. Dust
  dims it by ``A_band``, the band-integrated extinction computed by
  :func:`redcorr.extinction.band_extinction` for the source's spectrum
  through this band; the planner never re-derives extinction. The
  atmosphere dims it by ``k X`` (mag per airmass × airmass). The sky
  brightness is as measured at the site and is not dimmed again.
* Times are in seconds, rates in electrons per second. One exposure, one
  read-out.

References
----------
.. [1] Howell, S. B. 2006, *Handbook of CCD Astronomy*, 2nd ed., Cambridge
       University Press, §4.4 (the CCD equation, eq. 4.4, and its solution
       for the exposure time).
.. [2] Merline, W. J. & Howell, S. B. 1995, Experimental Astronomy 6, 163.
.. [3] Oke, J. B. & Gunn, J. E. 1983, ApJ 266, 713 (AB magnitudes).
"""

import dataclasses
import math

import numpy as np
from astropy import constants as const
from astropy import units as u
from scipy.integrate import trapezoid

from redcorr._validate import as_float_array, check_choice, check_finite, check_positive, check_range
from redcorr.exceptions import InputError, UnknownNameError
from redcorr.extinction import band_extinction

__all__ = [
    "AB_ZERO_JY",
    "DIGITISATION_SIGMA_ADU",
    "Channel",
    "Instrument",
    "BandPlan",
    "ab_color",
    "ab_mag_of_spectrum",
    "ab_photon_rate",
    "fnu_photon_rate",
    "gaussian_aperture_fraction",
    "ccd_snr",
    "ccd_time",
    "ccd_source_rate",
    "dominant_noise",
    "plan_exposure",
    "snr_vs_time",
    "time_vs_av",
]

AB_ZERO_JY = 3631.0
"""Flux density of an AB magnitude 0 source, Jy (Oke & Gunn 1983)."""

DIGITISATION_SIGMA_ADU = 0.289
"""1σ error of the A/D conversion in ADU, ≈ 1/√12 (Merline & Howell 1995; Howell 2006 §4.4)."""

_H = const.h.to_value(u.J * u.s)
_JY = 1e-26  # W m⁻² Hz⁻¹


def _seconds(t, name):
    """Float64 array of times in s (a Quantity of time accepted), checked ≥ 0."""
    arr = as_float_array(name, t, u.s, "a unit of time")
    bad = ~np.isnan(arr) & ~(arr >= 0)
    bad |= np.isinf(arr)
    if np.any(bad):
        raise InputError(f"{name}={arr[bad].flat[0]:g} s is not allowed; exposure times must be finite and >= 0")
    return arr


def _snr_value(snr, name="snr"):
    arr = np.asarray(snr, dtype=float)
    bad = ~np.isnan(arr) & ~(arr > 0)
    bad |= np.isinf(arr)
    if np.any(bad):
        raise InputError(f"{name}={arr[bad].flat[0]:g} is not allowed; a signal-to-noise ratio must be finite and > 0")
    return arr


def _area_m2(area):
    if isinstance(area, u.Quantity):
        area = area.to_value(u.m**2)
    return check_positive("area_m2", area)


def _curve_arrays(wave_um, throughput):
    lam = np.asarray(wave_um, dtype=float)
    thr = np.asarray(throughput, dtype=float)
    if lam.ndim != 1 or lam.size < 2 or thr.shape[-1:] != lam.shape:
        raise InputError(
            f"wave_um (shape {lam.shape}) and throughput (shape {thr.shape}) must share their last axis, "
            "with at least two wavelengths"
        )
    if not (np.all(np.isfinite(lam)) and np.all(lam > 0) and np.all(np.diff(lam) > 0)):
        raise InputError("wave_um must be finite, positive and strictly increasing")
    return lam, thr


def fnu_photon_rate(wave_um, fnu_jy, throughput, area_m2):
    """Detected photon rate of a spectrum through a system throughput.

    Parameters
    ----------
    wave_um : array_like, shape (n,)
        Wavelengths in µm, strictly increasing.
    fnu_jy : array_like, shape (..., n)
        Flux density F_ν in Jy at ``wave_um``.
    throughput : array_like, shape (n,)
        System throughput (fraction of photons detected), 0..1.
    area_m2 : float or `~astropy.units.Quantity` ['area']
        Collecting area of the telescope.

    Returns
    -------
    rate : ndarray
        Photons (electrons) per second, shape ``fnu_jy.shape[:-1]``.

    Notes
    -----
    .. math:: N = \\frac{A}{h} \\int F_\\nu(\\lambda)\\, T(\\lambda)\\, \\frac{d\\lambda}{\\lambda}

    which is :math:`A \\int F_\\nu T / (h\\nu)\\, d\\nu` written in wavelength,
    integrated with the trapezoid rule on the given grid.

    Examples
    --------
    >>> import numpy as np
    >>> lam = np.linspace(0.5, 0.6, 2001)
    >>> rate = fnu_photon_rate(lam, np.full(lam.size, 3631.0), np.ones(lam.size), 1.0)
    >>> round(float(rate / 1e10), 4)   # 3631 Jy/h · ln(1.2) photons s⁻¹ m⁻²
    0.9991
    """
    lam, thr = _curve_arrays(wave_um, throughput)
    fnu = np.asarray(fnu_jy, dtype=float)
    integral = trapezoid(fnu * thr / lam, lam, axis=-1)
    return _area_m2(area_m2) * _JY * integral / _H


def ab_photon_rate(mag, wave_um, throughput, area_m2):
    """Detected photon rate of a source of AB magnitude ``mag`` in the band ``throughput``.

    Parameters
    ----------
    mag : float or array_like
        AB magnitude in this band (photon-weighted definition, see the module notes).
    wave_um, throughput : array_like, shape (n,)
        The system throughput curve.
    area_m2 : float or `~astropy.units.Quantity` ['area']

    Returns
    -------
    rate : ndarray
        Photons per second, broadcast over ``mag``.

    Notes
    -----
    .. math:: N = \\frac{A}{h}\\, 3631\\,\\mathrm{Jy}\\; 10^{-0.4 m} \\int T(\\lambda)\\, \\frac{d\\lambda}{\\lambda}

    References
    ----------
    Oke & Gunn 1983, ApJ 266, 713, eq. (1) (definition of AB).
    """
    lam, thr = _curve_arrays(wave_um, throughput)
    m = np.asarray(mag, dtype=float)
    zero = _area_m2(area_m2) * AB_ZERO_JY * _JY * trapezoid(thr / lam, lam) / _H
    return zero * 10.0 ** (-0.4 * m)


def ab_color(sed, band_from, band_to):
    """``m_to − m_from``, the AB colour of a spectrum between two bands.

    Parameters
    ----------
    sed : object with ``flam(wave_um)``
        Source spectrum (any normalisation), e.g. from :mod:`redcorr.sed`.
    band_from, band_to : Band
        Objects with ``wave_um`` and ``response`` (photon-counting).

    Notes
    -----
    With :math:`\\langle F_\\nu\\rangle_T = \\int F_\\nu T\\, d\\lambda/\\lambda \\,/\\, \\int T\\, d\\lambda/\\lambda`
    and :math:`F_\\nu \\propto \\lambda^2 F_\\lambda`,
    :math:`m_{to} - m_{from} = -2.5 \\log_{10}(\\langle F_\\nu\\rangle_{to} / \\langle F_\\nu\\rangle_{from})`.
    """

    def mean_fnu(band):
        lam, thr = _curve_arrays(band.wave_um, band.response)
        fnu = np.asarray(sed.flam(lam), dtype=float) * lam**2
        return trapezoid(fnu * thr / lam, lam) / trapezoid(thr / lam, lam)

    ratio = mean_fnu(band_to) / mean_fnu(band_from)
    if not (np.isfinite(ratio) and ratio > 0):
        raise InputError(
            f"the spectrum {getattr(sed, 'name', sed)!r} has no flux in band "
            f"{getattr(band_from, 'name', '?')!r} or {getattr(band_to, 'name', '?')!r}; "
            "cannot convert the magnitude between them"
        )
    return float(-2.5 * np.log10(ratio))


def ab_mag_of_spectrum(sed, band):
    """AB magnitude in ``band`` of a flux-calibrated spectrum.

    Parameters
    ----------
    sed : object with ``flam(wave_um)``
        F_λ in erg s⁻¹ cm⁻² Å⁻¹ (as :func:`redcorr.io.spectra.read_sed_file`
        returns for a table with units).
    band : Band
        Photon-counting response (``wave_um``, ``response``).

    Notes
    -----
    .. math:: m_{AB} = -2.5 \\log_{10} \\frac{\\int F_\\nu T\\, d\\lambda/\\lambda}
              {3631\\,\\mathrm{Jy} \\int T\\, d\\lambda/\\lambda},
              \\qquad F_\\nu = F_\\lambda \\lambda^2 / c

    References
    ----------
    Oke & Gunn 1983, ApJ 266, 713 (AB); the photon-weighted band average as in
    Fukugita et al. 1996, AJ 111, 1748, eq. 7 (from memory).
    """
    lam, thr = _curve_arrays(band.wave_um, band.response)
    flam = np.asarray(sed.flam(lam), dtype=float)  # erg s^-1 cm^-2 A^-1
    fnu_jy = flam * (lam * 1e4) ** 2 / const.c.to_value(u.AA / u.s) * 1e23
    mean = trapezoid(fnu_jy * thr / lam, lam) / trapezoid(thr / lam, lam)
    if not mean > 0:
        raise InputError(
            f"the spectrum {getattr(sed, 'name', sed)!r} has no flux in band {getattr(band, 'name', '?')!r}"
        )
    return float(-2.5 * np.log10(mean / AB_ZERO_JY))


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


def _noise_terms(n_pix, n_sky_pix, sky_rate, dark_rate, read_noise, digitisation_e):
    """Per-second background variance ``b`` and per-read variance ``c`` of the CCD equation."""
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
    t = _seconds(t, "time")
    src = np.asarray(source_rate, dtype=float)
    b, c = _noise_terms(n_pix, n_sky_pix, sky_rate, dark_rate, read_noise, digitisation_e)
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
    s = _snr_value(snr)
    a = np.asarray(source_rate, dtype=float)
    b, c = _noise_terms(n_pix, n_sky_pix, sky_rate, dark_rate, read_noise, digitisation_e)
    s2 = s * s
    with np.errstate(divide="ignore", invalid="ignore"):
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
    s = _snr_value(snr)
    t = _seconds(t, "time")
    b, c = _noise_terms(n_pix, n_sky_pix, sky_rate, dark_rate, read_noise, digitisation_e)
    s2 = s * s
    with np.errstate(divide="ignore"):
        return ((s2 + np.sqrt(s2 * s2 + 4.0 * s2 * (b * t + c))) / (2.0 * t))[()]


def dominant_noise(t, source_rate, sky_rate, dark_rate, read_noise, n_pix, n_sky_pix=np.inf, digitisation_e=0.0):
    """Name of the largest variance term at time ``t``: "source", "sky", "dark" or "read".

    Returns a str for scalar input, else an ndarray of str.
    """
    t = _seconds(t, "time")
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


@dataclasses.dataclass(frozen=True)
class Channel:
    """One band of an imaging instrument: everything the CCD equation needs.

    Attributes
    ----------
    name : str
        Band name as the instrument calls it (e.g. ``"kw-v"``).
    band : Band
        System throughput (filter × optics × QE) with ``wave_um`` and
        ``response`` (photon-counting fraction, 0..1).
    area_m2 : float
        Unobstructed collecting area, m².
    pixel_scale_arcsec : float
        Arcsec per pixel.
    read_noise_e : float
        Read noise per pixel, e⁻ rms.
    dark_e_per_s : float
        Dark current per pixel, e⁻/s.
    gain_e_per_adu : float
        Gain; enters as the digitisation noise gain × 0.289 ADU.
    sky_mag_arcsec2 : float
        Sky brightness at the site, AB mag/arcsec².
    seeing_fwhm_arcsec : float
        FWHM of the (Gaussian) point-spread function.
    aperture_radius_arcsec : float
        Radius of the photometric aperture.
    airmass : float
        ≥ 1.
    extinction_mag_per_airmass : float
        Atmospheric extinction coefficient k, ≥ 0.
    sky_pixels : float
        Pixels used to estimate the background (n_B); ``inf`` means known exactly.
    """

    name: str
    band: object
    area_m2: float
    pixel_scale_arcsec: float
    read_noise_e: float
    dark_e_per_s: float
    gain_e_per_adu: float
    sky_mag_arcsec2: float
    seeing_fwhm_arcsec: float
    aperture_radius_arcsec: float
    airmass: float = 1.0
    extinction_mag_per_airmass: float = 0.0
    sky_pixels: float = math.inf

    def __post_init__(self):
        lam, thr = _curve_arrays(self.band.wave_um, self.band.response)
        if thr.ndim != 1 or not (np.all(np.isfinite(thr)) and thr.min() >= 0 and thr.max() <= 1):
            raise InputError(
                f"band {self.name!r}: the system throughput must be a fraction of photons between 0 and 1 "
                f"(found values from {np.nanmin(thr):g} to {np.nanmax(thr):g})"
            )
        if not thr.max() > 0:
            raise InputError(f"band {self.name!r}: the system throughput is zero everywhere")
        if getattr(self.band, "convention", "photon") != "photon":
            raise InputError(
                f"band {self.name!r}: convention={self.band.convention!r}; a system throughput must be a "
                "photon-counting curve (convention 'photon')"
            )
        check_positive("area_m2", self.area_m2)
        check_positive("pixel_scale_arcsec", self.pixel_scale_arcsec)
        check_range("read_noise_e", self.read_noise_e, 0.0, math.inf)
        check_range("dark_e_per_s", self.dark_e_per_s, 0.0, math.inf)
        check_positive("gain_e_per_adu", self.gain_e_per_adu)
        check_range("sky_mag_arcsec2", self.sky_mag_arcsec2, 5.0, 35.0)
        check_positive("seeing_fwhm_arcsec", self.seeing_fwhm_arcsec)
        check_positive("aperture_radius_arcsec", self.aperture_radius_arcsec)
        check_range("airmass", self.airmass, 1.0, 10.0)
        check_range("extinction_mag_per_airmass", self.extinction_mag_per_airmass, 0.0, 5.0)
        if not (isinstance(self.sky_pixels, (int, float)) and self.sky_pixels > 0 and not math.isnan(self.sky_pixels)):
            raise InputError(f"sky_pixels={self.sky_pixels!r} must be > 0 (or inf for a known background)")

    # --- derived quantities -------------------------------------------------
    @property
    def zero_point_rate(self):
        """Electrons per second from an AB magnitude 0 source above the atmosphere (all its light)."""
        return float(ab_photon_rate(0.0, self.band.wave_um, self.band.response, self.area_m2))

    @property
    def n_pix(self):
        """Pixels in the photometric aperture, π r² / p²."""
        return math.pi * (self.aperture_radius_arcsec / self.pixel_scale_arcsec) ** 2

    @property
    def aperture_fraction(self):
        """Fraction of the source's light inside the aperture (Gaussian PSF)."""
        return float(gaussian_aperture_fraction(self.aperture_radius_arcsec, self.seeing_fwhm_arcsec))

    @property
    def sky_rate(self):
        """Sky electrons per second per pixel: ``N_0 · 10^(−0.4 μ) · p²``."""
        return self.zero_point_rate * 10.0 ** (-0.4 * self.sky_mag_arcsec2) * self.pixel_scale_arcsec**2

    @property
    def digitisation_e(self):
        """A/D noise in electrons, gain × 0.289 ADU."""
        return self.gain_e_per_adu * DIGITISATION_SIGMA_ADU

    def _ccd(self):
        return dict(
            sky_rate=self.sky_rate,
            dark_rate=self.dark_e_per_s,
            read_noise=self.read_noise_e,
            n_pix=self.n_pix,
            n_sky_pix=self.sky_pixels,
            digitisation_e=self.digitisation_e,
        )

    def source_rate(self, mag, a_band=0.0):
        """Source electrons per second inside the aperture.

        ``N_0 · 10^(−0.4 (m + A_band + k X)) · f_ap`` with ``m`` the dust-free AB
        magnitude in this band and ``A_band`` the dust's band extinction.
        """
        m = np.asarray(mag, dtype=float) + np.asarray(a_band, dtype=float)
        m = m + self.extinction_mag_per_airmass * self.airmass
        return self.zero_point_rate * 10.0 ** (-0.4 * m) * self.aperture_fraction

    def snr(self, mag, t, a_band=0.0):
        """S/N of a source of dust-free magnitude ``mag`` behind ``a_band`` after ``t`` seconds."""
        return ccd_snr(t, self.source_rate(mag, a_band), **self._ccd())

    def time_for_snr(self, mag, snr, a_band=0.0):
        """Seconds for a source of dust-free magnitude ``mag`` behind ``a_band`` to reach ``snr``."""
        return ccd_time(snr, self.source_rate(mag, a_band), **self._ccd())

    def limiting_mag(self, t, snr=5.0):
        """Faintest apparent AB magnitude (above the atmosphere) reaching ``snr`` in ``t`` seconds."""
        rate = ccd_source_rate(snr, t, **self._ccd())
        scale = self.zero_point_rate * self.aperture_fraction
        with np.errstate(divide="ignore"):
            m = -2.5 * np.log10(rate / scale) - self.extinction_mag_per_airmass * self.airmass
        return m[()]

    def dominant_noise(self, mag, t, a_band=0.0):
        """Largest noise term ("source", "sky", "dark", "read") for this source at time ``t``."""
        return dominant_noise(t, self.source_rate(mag, a_band), **self._ccd())


@dataclasses.dataclass(frozen=True)
class Instrument:
    """A telescope and imager: a name and its bands (:class:`Channel`), in order."""

    name: str
    channels: dict

    def __post_init__(self):
        if not self.channels:
            raise InputError(f"instrument {self.name!r} has no bands")

    @property
    def band_names(self):
        return list(self.channels)

    def channel(self, band):
        """The channel named ``band``; `UnknownNameError` naming the instrument's bands otherwise."""
        try:
            key = check_choice("band", band, list(self.channels))
        except UnknownNameError:
            known = ", ".join(repr(n) for n in self.channels)
            raise UnknownNameError(
                f"band={band!r} is not a band of instrument {self.name!r}; choose from {known}"
            ) from None
        return self.channels[key]


@dataclasses.dataclass(frozen=True)
class BandPlan:
    """The answer for one band.

    Attributes
    ----------
    band : str
    mag : float
        Dust-free AB magnitude of the source in this band.
    A_band : float
        Band-integrated dust extinction, mag.
    t_clear_s, t_dust_s : float
        Exposure time without and with the dust (see :func:`plan_exposure`).
    time_factor : float
        ``t_dust_s / t_clear_s``.
    snr : float
        S/N of the reddened source in ``t_dust_s``.
    limiting_mag : float
        Apparent AB magnitude of a point source reaching ``limit_snr`` in ``t_dust_s``.
    limit_snr : float
    noise : str
        Dominant noise term at ``t_dust_s``.
    """

    band: str
    mag: float
    A_band: float
    t_clear_s: float
    t_dust_s: float
    time_factor: float
    snr: float
    limiting_mag: float
    limit_snr: float
    noise: str

    def as_dict(self, keys=("band", "A_band", "t_clear_s", "t_dust_s", "time_factor", "snr", "limiting_mag")):
        """The chosen fields as plain Python values (the ``--json`` keys by default)."""
        return {k: getattr(self, k) for k in keys}


def _band_extinction(curve, band, sed, a_v, extrapolate):
    return np.asarray(band_extinction(curve, band, sed, a_v, extrapolate=extrapolate), dtype=float)


def _band_mags(instrument, bands, mag, sed, mag_band):
    if isinstance(mag, dict):
        if mag_band is not None:
            raise InputError("mag_band applies to a single magnitude; mag already gives one per band")
        missing = [b for b in bands if b not in mag]
        if missing:
            raise InputError(f"mag has no value for band {missing[0]!r}; it gives {', '.join(map(repr, mag))}")
        return [check_finite(f"mag[{b!r}]", mag[b]) for b in bands]
    m0 = check_finite("mag", mag)
    if mag_band is None:
        return [m0] * len(bands)
    return [m0 + ab_color(sed, mag_band, instrument.channel(b).band) for b in bands]


def plan_exposure(
    instrument,
    bands,
    mag,
    *,
    curve,
    sed,
    a_v,
    snr=None,
    time=None,
    mag_band=None,
    limit_snr=5.0,
    extrapolate=False,
):
    """Plan exposures of a reddened point source in several bands, ranked by time needed.

    Parameters
    ----------
    instrument : Instrument
    bands : sequence of str
        Band names of the instrument.
    mag : float or dict
        Dust-free AB magnitude of the source: in each band if ``mag_band`` is
        None, else in ``mag_band`` and carried to each band with the SED's AB
        colour; or a dict band name → magnitude (e.g. from
        :func:`ab_mag_of_spectrum` for a flux-calibrated spectrum).
    curve : DustCurve
        Law or grain model (from :func:`redcorr.io.load_curve`).
    sed : SED
        Source spectrum (for the band extinction and colours).
    a_v : float
        Dust column, A_V in mag (≥ 0).
    snr : float, optional
        Target S/N (> 0): ``t_clear_s`` and ``t_dust_s`` are the times the source
        needs without and with the dust.
    time : float, optional
        Exposure time (≥ 0, s): ``t_dust_s`` is this time, ``snr`` what the
        reddened source reaches in it, and ``t_clear_s`` the time the dust-free
        source would need for that same S/N. Give exactly one of ``snr``, ``time``.
    mag_band : Band, optional
        The band ``mag`` is measured in (any Band; an instrument band included).
    limit_snr : float
        S/N defining ``limiting_mag`` (5 by common practice).
    extrapolate : bool
        Passed to the band extinction.

    Returns
    -------
    list of BandPlan
        Ranked: by ``t_dust_s`` (shortest first) for a target ``snr``, by the
        S/N reached (highest first) for a given ``time``.

    Notes
    -----
    ``A_band`` comes from :func:`redcorr.extinction.band_extinction` for the
    SED through the band's system throughput. Since the source rate scales as
    :math:`10^{-0.4 A_{band}}`, the time factor lies between
    :math:`10^{0.4 A_{band}}` (source- or read-noise-limited) and
    :math:`10^{0.8 A_{band}}` (sky-limited).
    """
    if (snr is None) == (time is None):
        raise InputError("give exactly one of snr (a target S/N) or time (an exposure time in s)")
    a_v = check_range("a_v", a_v, 0.0, math.inf)
    limit_snr = float(_snr_value(limit_snr, "limit_snr"))
    if snr is not None:
        snr = float(_snr_value(snr))
    else:
        time = float(_seconds(time, "time"))
    names = [instrument.channel(b).name for b in bands]
    if not names:
        raise InputError("bands is empty; give at least one band of the instrument")
    mags = _band_mags(instrument, names, mag, sed, mag_band)
    plans = []
    for name, m in zip(names, mags, strict=True):
        ch = instrument.channel(name)
        a_band = float(_band_extinction(curve, ch.band, sed, a_v, extrapolate))
        if snr is not None:
            t_clear = float(ch.time_for_snr(m, snr))
            t_dust = float(ch.time_for_snr(m, snr, a_band))
            reached = snr
        else:
            t_dust = time
            reached = float(ch.snr(m, time, a_band))
            t_clear = float(ch.time_for_snr(m, reached)) if reached > 0 else 0.0
        factor = t_dust / t_clear if 0 < t_clear < math.inf else math.nan
        plans.append(
            BandPlan(
                band=name,
                mag=float(m),
                A_band=a_band,
                t_clear_s=t_clear,
                t_dust_s=t_dust,
                time_factor=float(factor),
                snr=float(reached),
                limiting_mag=float(ch.limiting_mag(t_dust, limit_snr)) if t_dust > 0 else math.nan,
                limit_snr=limit_snr,
                noise=ch.dominant_noise(m, t_dust, a_band) if t_dust > 0 else "read",
            )
        )
    if snr is not None:
        plans.sort(key=lambda p: p.t_dust_s)
    else:
        plans.sort(key=lambda p: -p.snr)
    return plans


def time_vs_av(instrument, bands, mag, *, curve, sed, a_v, snr, mag_band=None, extrapolate=False):
    """Exposure time to reach ``snr`` as a function of A_V, per band.

    Parameters
    ----------
    a_v : array_like
        A_V values (≥ 0), 1-d.
    (others as in :func:`plan_exposure`)

    Returns
    -------
    a_v : ndarray
    times : dict
        Band name → ndarray of seconds, same shape as ``a_v``.
    a_band : dict
        Band name → ndarray of A_band, mag.
    """
    s = float(_snr_value(snr))
    grid = np.atleast_1d(np.asarray(a_v, dtype=float))
    if grid.ndim != 1 or not np.all(np.isfinite(grid)) or np.any(grid < 0):
        raise InputError("a_v must be a 1-d list of finite values >= 0")
    names = [instrument.channel(b).name for b in bands]
    mags = _band_mags(instrument, names, mag, sed, mag_band)
    times, a_bands = {}, {}
    for name, m in zip(names, mags, strict=True):
        ch = instrument.channel(name)
        a_b = np.broadcast_to(_band_extinction(curve, ch.band, sed, grid, extrapolate), grid.shape)
        a_bands[name] = np.array(a_b)
        times[name] = np.asarray(ch.time_for_snr(m, s, a_b))
    return grid, times, a_bands


def snr_vs_time(instrument, plans, t):
    """S/N against exposure time without and with the dust, for planned bands.

    Parameters
    ----------
    instrument : Instrument
    plans : sequence of BandPlan
        From :func:`plan_exposure` (gives each band's magnitude and A_band).
    t : array_like
        Exposure times, s (≥ 0).

    Returns
    -------
    dict
        Band name → ``(snr_clear, snr_dust)``, two ndarrays shaped like ``t``.
    """
    t = _seconds(t, "time")
    out = {}
    for p in plans:
        ch = instrument.channel(p.band)
        out[p.band] = (np.asarray(ch.snr(p.mag, t)), np.asarray(ch.snr(p.mag, t, p.A_band)))
    return out
