"""Synthetic photometry: AB magnitudes, colours and photon rates of a spectrum through a band.

This is the one place that turns a source spectrum and a band into an AB
magnitude. Everything is pure array code on sampled curves; :class:`Band`
and :class:`~redcorr.sed.SED` objects are only unpacked by the two
convenience functions :func:`synthetic_ab` and :func:`synthetic_colour`.

Conventions
-----------
* AB magnitudes (Oke & Gunn 1983): a source of constant
  F_ν = 3631 Jy has m_AB = 0 in every band, ``m = −2.5 log₁₀(⟨F_ν⟩ / 3631 Jy)``.
* The band mean of F_ν weights by the detector as the band's convention
  says (:meth:`redcorr.bandpass.Band.weight`, w = λ for photon counting,
  w = 1 for energy counting), with F_ν = F_λ λ²/c::

      ⟨F_ν⟩ = ∫ F_λ T w dλ / ∫ (c/λ²) T w dλ.

  For photon counting this is ⟨F_ν⟩ = ∫ F_ν T dλ/λ / ∫ T dλ/λ, the mean
  of F_ν over the detected photons.
* Integrals are sums Σ_j q_j f(λ_j) with weights q_j that carry T w dλ:
  :func:`trapezoid_weights` gives the trapezoid rule on a band's own
  samples; :func:`redcorr.extinction.band_quadrature` gives a finer
  product rule. Wavelength is the last axis.
* F_λ in erg s⁻¹ cm⁻² Å⁻¹ for absolute magnitudes, λ in µm, F_ν in Jy.

References
----------
.. [1] Oke, J. B. & Gunn, J. E. 1983, ApJ 266, 713, eq. (1) (AB magnitudes).
.. [2] Tokunaga, A. T. & Vacca, W. D. 2005, PASP 117, 421, Appendix (the
       photon-weighted band mean of F_ν). doi:10.1086/429382
"""

import math

import numpy as np
from astropy import constants as const
from astropy import units as u
from scipy.integrate import trapezoid

from redcorr._validate import check_positive, check_sampled_curve
from redcorr.exceptions import InputError

__all__ = [
    "AB_ZERO_JY",
    "flat_fnu_mag",
    "ab_mag",
    "trapezoid_weights",
    "synthetic_ab",
    "synthetic_colour",
    "fnu_photon_rate",
    "ab_photon_rate",
]

AB_ZERO_JY = 3631.0
"""Flux density of an AB magnitude 0 source, Jy (Oke & Gunn 1983)."""

_H = const.h.to_value(u.J * u.s)
_JY = 1e-26  # W m⁻² Hz⁻¹
_C_AA = const.c.to_value(u.AA / u.s)
# m_AB − flat_fnu_mag for F_λ in erg s⁻¹ cm⁻² Å⁻¹ and λ in µm:
# ⟨F_ν⟩ = 10⁸/c[Å s⁻¹] · ΣqF_λ/Σqλ⁻² erg s⁻¹ cm⁻² Hz⁻¹ = 10³¹/c[Å s⁻¹] · ΣqF_λ/Σqλ⁻² Jy.
_AB_OFFSET = -2.5 * math.log10(1e31 / (_C_AA * AB_ZERO_JY))
_MAG_PER_LN = 2.5 / math.log(10.0)


def flat_fnu_mag(wave_um, flam, weights, axis=-1, log_scale=0.0):
    """Magnitude of a sampled spectrum relative to a flat F_ν: the AB magnitude up to a constant.

    Parameters
    ----------
    wave_um : array_like
        Wavelengths of the samples, µm; broadcasts against ``flam``.
    flam : array_like
        F_λ at ``wave_um`` in any units (divided by ``e^log_scale``).
    weights : array_like
        Integration weights q_j that carry the response, the detector weight
        and dλ (from :func:`trapezoid_weights` or
        :func:`redcorr.extinction.band_quadrature`).
    axis : int
        The wavelength axis of the broadcast arrays.
    log_scale : float or array_like
        ln of a factor taken out of ``flam`` to keep it within floating-point
        range (e.g. the largest ln B_λ); broadcasts against the result.

    Returns
    -------
    ndarray
        ``m' = −2.5 log₁₀(Σ q F_λ / Σ q λ⁻²)`` (NaN where the flux sum is ≤ 0).

    Notes
    -----
    A source with F_λ ∝ λ⁻² has constant F_ν, so ``m'`` differs from the AB
    magnitude by a constant that depends only on the units of F_λ, the same
    for every band: differences of ``m'`` are AB colours.

    Examples
    --------
    >>> import numpy as np
    >>> lam = np.linspace(0.5, 0.6, 11)
    >>> abs(float(flat_fnu_mag(lam, lam**-2, np.ones(11)))) < 1e-12  # a flat F_ν
    True
    """
    lam = np.asarray(wave_um, dtype=float)
    q = np.asarray(weights, dtype=float)
    flux = np.sum(q * np.asarray(flam, dtype=float), axis)
    ref = np.sum(q * lam**-2, axis)
    with np.errstate(divide="ignore", invalid="ignore"):
        return (-_MAG_PER_LN * (np.asarray(log_scale, dtype=float) + np.log(flux) - np.log(ref)))[()]


def ab_mag(wave_um, flam, weights, axis=-1):
    """AB magnitude of a sampled, flux-calibrated spectrum through a band.

    Parameters
    ----------
    wave_um : array_like
        Wavelengths of the samples, µm.
    flam : array_like
        F_λ at ``wave_um``, erg s⁻¹ cm⁻² Å⁻¹; any leading shape.
    weights : array_like
        Integration weights carrying T w dλ (see :func:`flat_fnu_mag`).
    axis : int
        The wavelength axis.

    Returns
    -------
    ndarray
        m_AB; NaN where the band mean of F_ν is not positive.

    Notes
    -----
    .. math:: m_{AB} = -2.5 \\log_{10} \\frac{\\langle F_\\nu \\rangle}{3631\\,\\mathrm{Jy}},
              \\qquad \\langle F_\\nu \\rangle = \\frac{\\int F_\\lambda T w\\, d\\lambda}
              {\\int (c/\\lambda^2)\\, T w\\, d\\lambda}

    References
    ----------
    Oke & Gunn 1983, ApJ 266, 713, eq. (1).

    Examples
    --------
    >>> import numpy as np
    >>> lam = np.linspace(0.5, 0.6, 11)
    >>> flam = 3631e-23 * 2.99792458e18 / (lam * 1e4) ** 2   # 3631 Jy as F_λ
    >>> round(float(ab_mag(lam, flam, np.ones(11))), 9)
    0.0
    """
    return flat_fnu_mag(wave_um, flam, weights, axis) + _AB_OFFSET


def trapezoid_weights(band):
    """Trapezoid-rule weights q_j = T_j w(λ_j) Δλ_j on a band's own samples.

    Parameters
    ----------
    band : Band
        Response ``response`` at ``wave_um`` (µm) and detector weight
        :meth:`~redcorr.bandpass.Band.weight`.

    Returns
    -------
    wave_um, weights : ndarray
        The band's samples and the weights, so that Σ q_j f(λ_j) is the
        trapezoid rule for ∫ f T w dλ.
    """
    lam, thr = check_sampled_curve(band.wave_um, band.response, "response")
    step = np.zeros_like(lam)
    dx = 0.5 * np.diff(lam)
    step[:-1] += dx
    step[1:] += dx
    return lam, thr * np.asarray(band.weight(lam), dtype=float) * step


def _band_label(band):
    return getattr(band, "name", "?")


def synthetic_ab(sed, band):
    """AB magnitude in ``band`` of a flux-calibrated spectrum.

    Parameters
    ----------
    sed : SED
        Any object with ``flam(wave_um)`` giving F_λ in erg s⁻¹ cm⁻² Å⁻¹
        (as :func:`redcorr.io.spectra.read_sed_file` returns for a table with
        units); a spectrum of arbitrary normalisation gives a magnitude up
        to a constant.
    band : Band
        Response and detector convention.

    Returns
    -------
    float

    Raises
    ------
    InputError
        If the spectrum has no flux in the band.

    Notes
    -----
    :func:`ab_mag` with the trapezoid rule on the band's samples
    (:func:`trapezoid_weights`).

    References
    ----------
    Oke & Gunn 1983, ApJ 266, 713 (AB); Tokunaga & Vacca 2005, PASP 117,
    421, Appendix (the photon-weighted band mean of F_ν).

    Examples
    --------
    >>> from redcorr.bandpass import tophat
    >>> from redcorr.sed import PowerLaw
    >>> flat = PowerLaw(0.0)             # F_ν constant, F_λ ∝ λ⁻²
    >>> v, i = tophat(0.55, 0.1), tophat(0.8, 0.15)
    >>> abs(synthetic_ab(flat, v) - synthetic_ab(flat, i)) < 1e-12
    True
    """
    lam, q = trapezoid_weights(band)
    mag = float(ab_mag(lam, np.asarray(sed.flam(lam), dtype=float), q))
    if not math.isfinite(mag):
        raise InputError(f"the spectrum {getattr(sed, 'name', sed)!r} has no flux in band {_band_label(band)!r}")
    return mag


def synthetic_colour(sed, band1, band2):
    """AB colour m₁ − m₂ of a spectrum between two bands (any normalisation).

    Parameters
    ----------
    sed : SED
        Object with ``flam(wave_um)``; only its shape matters.
    band1, band2 : Band

    Returns
    -------
    float

    Raises
    ------
    InputError
        If the spectrum has no flux in either band.

    Notes
    -----
    :math:`m_1 - m_2 = -2.5 \\log_{10}(\\langle F_\\nu\\rangle_1 / \\langle F_\\nu\\rangle_2)`,
    with the band means of :func:`ab_mag`; the AB zero point cancels.
    """
    mags = []
    for band in (band1, band2):
        lam, q = trapezoid_weights(band)
        mags.append(float(flat_fnu_mag(lam, np.asarray(sed.flam(lam), dtype=float), q)))
    colour = mags[0] - mags[1]
    if not math.isfinite(colour):
        raise InputError(
            f"the spectrum {getattr(sed, 'name', sed)!r} has no flux in band "
            f"{_band_label(band1)!r} or {_band_label(band2)!r}; cannot convert a magnitude between them"
        )
    return colour


def _area_m2(area):
    if isinstance(area, u.Quantity):
        area = area.to_value(u.m**2)
    return check_positive("area_m2", area)


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
    lam, thr = check_sampled_curve(wave_um, throughput)
    fnu = np.asarray(fnu_jy, dtype=float)
    integral = trapezoid(fnu * thr / lam, lam, axis=-1)
    return _area_m2(area_m2) * _JY * integral / _H


def ab_photon_rate(mag, wave_um, throughput, area_m2):
    """Detected photon rate of a source of AB magnitude ``mag`` in the band ``throughput``.

    Parameters
    ----------
    mag : float or array_like
        AB magnitude in this band (photon-counting band mean, see the module notes).
    wave_um, throughput : array_like, shape (n,)
        The system throughput curve.
    area_m2 : float or `~astropy.units.Quantity` ['area']

    Returns
    -------
    rate : ndarray
        Photons per second, broadcast over ``mag``.

    Notes
    -----
    For a source of AB magnitude m in the band (photon-counting definition
    of the band mean), :func:`fnu_photon_rate` is, whatever the spectrum,

    .. math:: N = \\frac{A}{h}\\, 3631\\,\\mathrm{Jy}\\; 10^{-0.4 m} \\int T(\\lambda)\\, \\frac{d\\lambda}{\\lambda}

    References
    ----------
    Oke & Gunn 1983, ApJ 266, 713, eq. (1) (definition of AB).
    """
    lam, thr = check_sampled_curve(wave_um, throughput)
    m = np.asarray(mag, dtype=float)
    zero = _area_m2(area_m2) * AB_ZERO_JY * _JY * trapezoid(thr / lam, lam) / _H
    return zero * 10.0 ** (-0.4 * m)
