"""Tests of redcorr.exposure: photon rates, the CCD equation and its regimes."""

import math
import types

import numpy as np
import pytest
from astropy import constants as const
from astropy import units as u
from numpy.testing import assert_allclose
from published import AB_ZERO_POINT_JY

from redcorr.exceptions import InputError, UnknownNameError
from redcorr.exposure import (
    Channel,
    Instrument,
    ab_photon_rate,
    ccd_snr,
    ccd_source_rate,
    ccd_time,
    dominant_noise,
    fnu_photon_rate,
    gaussian_aperture_fraction,
)


def _box(lo, hi, value=1.0, n=4001):
    """A top-hat sampled with its edges on the grid (plain arrays, no Band needed)."""
    lam = np.linspace(lo, hi, n)
    return types.SimpleNamespace(wave_um=lam, response=np.full(n, value), name="box", convention="photon")


def _channel(**kw):
    base = dict(
        name="box",
        band=_box(0.5, 0.6, 0.5),
        area_m2=1.0,
        pixel_scale_arcsec=0.4,
        read_noise_e=5.0,
        dark_e_per_s=0.01,
        gain_e_per_adu=1.5,
        sky_mag_arcsec2=21.0,
        seeing_fwhm_arcsec=1.2,
        aperture_radius_arcsec=1.5,
        airmass=1.0,
        extinction_mag_per_airmass=0.0,
    )
    base.update(kw)
    return Channel(**base)


# --- photon rates -------------------------------------------------------------------------

def test_ab_rate_flat_fnu_tophat_matches_analytic_integral():
    # AB definition F_nu = 3631 Jy 10^(-0.4 m) (Oke & Gunn 1983, tests/published.py). For a flat
    # F_nu through a top-hat of transmission T0 on [l1, l2]: N = A F_nu T0 / h * ln(l2/l1)
    # (analytic integral of dlambda/lambda). rtol 1e-6: numerical integration over the 4001
    # samples of the box is good to ~1e-9 (measured), far below it.
    area, t0, mag, l1, l2 = 0.9, 0.37, 17.3, 0.48, 0.66
    band = _box(l1, l2, t0)
    fnu_si = AB_ZERO_POINT_JY * 1e-26 * 10 ** (-0.4 * mag)  # W m^-2 Hz^-1
    expected = area * fnu_si * t0 / const.h.to_value(u.J * u.s) * math.log(l2 / l1)
    assert_allclose(ab_photon_rate(mag, band.wave_um, band.response, area), expected, rtol=1e-6)
    fnu = np.full(band.wave_um.size, AB_ZERO_POINT_JY * 10 ** (-0.4 * mag))
    assert_allclose(fnu_photon_rate(band.wave_um, fnu, band.response, area * u.m**2), expected, rtol=1e-6)


def test_ab_zero_point_photon_flux_density_near_one_thousand_per_angstrom():
    # Fact of the trade (common practice, no source): an AB = 0 source delivers about
    # 1000 photons s^-1 cm^-2 A^-1 at 5500 A. Cross-checked with astropy's own spectral-density
    # conversion (a general reference library), independent of our integral. rtol 1e-6: the box's
    # mean of 1/λ differs from 1/λc by (1e-4)²/3 ~ 3e-9 relative (measured 3.3e-9).
    lam = 0.55
    band = _box(lam * (1 - 1e-4), lam * (1 + 1e-4))
    width_aa = (band.wave_um[-1] - band.wave_um[0]) * 1e4
    ours = ab_photon_rate(0.0, band.wave_um, band.response, 1e-4) / width_aa  # per cm^2 per A
    zero_point = AB_ZERO_POINT_JY * u.Jy
    astropy_value = zero_point.to_value(u.photon / u.s / u.cm**2 / u.AA, u.spectral_density(lam * u.um))
    assert_allclose(ours, astropy_value, rtol=1e-6)
    assert 950 < ours < 1050


_HST_AREA_M2 = math.pi * 1.2**2  # 2.4 m primary, the area the handbooks' constant is for


def _ln_box(integral, t0=1.0):
    """A top-hat of transmission t0 whose integral of T dlambda/lambda equals ``integral``."""
    return _box(0.5, 0.5 * math.exp(integral / t0), t0)


def test_ab_zero_point_rate_matches_the_hst_handbooks_constant():
    # HST instrument handbooks (ACS Instrument Handbook, 2005, Sect. 9.2; WFC3 Instrument
    # Handbook, Sect. 9.2): count rate C = 2.5e11 * int(QT dlambda/lambda) * eps * 10^(-0.4 AB)
    # for the 2.4 m telescope. The constant is printed to two figures, so ours must round to it.
    band = _ln_box(1.0)
    constant = ab_photon_rate(0.0, band.wave_um, band.response, _HST_AREA_M2)
    assert round(constant / 1e11, 1) == 2.5


@pytest.mark.parametrize(
    "source, integral, eps, ab_mag, published",
    [
        # ACS Instrument Handbook (2005), Sect. 9.6.1 "Example 1: WFC Imaging a Faint Point
        # Source": F2 V star, V = 26.5, F555W, int(QT dl/l) = 0.0775, AB_nu = 0.040, 90 % of
        # the light in the aperture -> 0.423 counts/s.
        ("ACS IHB 2005 9.6.1", 0.0775, 0.90, 26.5 + 0.040, 0.423),
        # WFC3 Instrument Handbook (Cycle 22), Sect. 9.9.1 "Example 1: UVIS Imaging of a Faint
        # Point Source": F0 V star, V = 27.5, F555W, int(QT dl/l) = 0.0835, AB_nu = 0.03, 78 %
        # of the light in a 5x5 box -> 0.1584 e/s.
        ("WFC3 IHB 9.9.1", 0.0835, 0.78, 27.5 + 0.03, 0.1584),
    ],
)
def test_source_rate_reproduces_the_handbooks_worked_examples(source, integral, eps, ab_mag, published):
    # The worked examples use the rounded constant 2.5e11; with our unrounded zero point scaled
    # to it the published rate must come out to its printed precision, and without scaling
    # within the 1 % the rounding of the constant allows.
    band = _ln_box(integral)
    rate = eps * ab_photon_rate(ab_mag, band.wave_um, band.response, _HST_AREA_M2)
    unit_band = _ln_box(1.0)
    constant = ab_photon_rate(0.0, unit_band.wave_um, unit_band.response, _HST_AREA_M2)
    assert_allclose(rate * 2.5e11 / constant, published, rtol=3e-3)
    assert_allclose(rate, published, rtol=1.2e-2)


def test_gaussian_aperture_fraction_half_light_at_half_fwhm():
    # A circular Gaussian encloses 1 - exp(-r^2 / 2 sigma^2); r = FWHM/2 gives exactly one half
    # (common practice, no source: FWHM = 2 sqrt(2 ln 2) sigma). rtol 1e-12: 1 - exp(-ln 2) is 1/2
    # to rounding. The limits are exact: 1 - exp(0) = 0 and exp(-huge) underflows to 0.
    assert_allclose(gaussian_aperture_fraction(1.0, 2.0), 0.5, rtol=1e-12)
    np.testing.assert_array_equal(gaussian_aperture_fraction([0.0, 1e3], 1.0), [0.0, 1.0])


# --- the CCD equation ---------------------------------------------------------------------

def test_ccd_equation_full_form_hand_evaluated():
    # Howell 2006, Handbook of CCD Astronomy 2nd ed., Sect. 4.4, eq. 4.4 (after Merline & Howell
    # 1995): S/N = N* / sqrt(N* + n_pix (1 + n_pix/n_B)(N_S + N_D + N_R^2 + G^2 sigma_f^2)).
    # The equation is from the book (from memory); the inputs are illustrative, NOT the book's
    # worked example (whose numbers could not be checked here). Hand evaluation:
    #   N* = 800 e/s * 300 s = 240000; n_pix = 200, n_B = 1000 -> weight 200 * 1.2 = 240
    #   N_S = 2.0*300 = 600, N_D = 0.006*300 = 1.8, N_R^2 = 25, (G sigma_f)^2 = (5*0.289)^2 = 2.088025
    #   variance = 240000 + 240 * 628.888025 = 390933.126 -> S/N = 240000/625.2464...= 383.85
    snr = ccd_snr(300.0, 800.0, 2.0, 0.006, 5.0, 200, n_sky_pix=1000, digitisation_e=5 * 0.289)
    # rtol 1e-9: the hand-evaluated variance is written to 9 significant digits
    assert_allclose(snr, 240000 / math.sqrt(390933.126), rtol=1e-9)
    assert_allclose(snr, 383.85, atol=0.01)  # the hand result, printed to 2 decimals


def test_ccd_equation_reproduces_the_wfpc2_handbooks_worked_example():
    # WFPC2 Instrument Handbook (Heyer & Biretta 2005, v9), Sect. 6.7.2 "Extended Sources":
    # V = 24 mag/arcsec^2 through F569W on the WFC, sky 23.3 mag/arcsec^2, 3000 s, per pixel:
    # source S = 44.1 e, sky 84.1 e, dark ~12 e, read noise 5.3 e, so B = 84.1 + 5.3^2 + 12
    # = 124.2 e (the page prints the square as "5.32"; its own sum needs 28.1), noise
    # N = (S + B)^1/2 = 13.0 e and S/N = 3.4 per pixel. One pixel, sky known exactly.
    t = 3000.0
    args = (44.1 / t, 84.1 / t, 12.0 / t, 5.3, 1)
    snr = ccd_snr(t, *args)
    # the handbook prints one decimal: ours must round to the same figures
    assert round(float(44.1 / snr), 1) == 13.0
    assert round(float(snr), 1) == 3.4
    # ccd_time inverts ccd_snr (a quadratic in t): equal to rounding, amplified by the root's
    # cancellation at most a few digits; 1e-9
    assert_allclose(ccd_time(snr, *args), t, rtol=1e-9)


def test_ccd_equation_reduces_to_its_simple_form():
    # Merline & Howell (1995, Exp. Astron. 6, 163), the CCD equation without the sky-estimate and
    # digitisation terms (from memory): SNR = N* / sqrt(N* + n_pix (N_S + N_D + N_R^2)), which is
    # what it must reduce to when the sky is known exactly (n_B infinite).
    t, src, sky, dark, rn, npix = 120.0, 50.0, 3.0, 0.1, 7.0, 60.0
    expected = src * t / math.sqrt(src * t + npix * (sky * t + dark * t + rn**2))
    # the same arithmetic, rounding only (1e-12)
    assert_allclose(ccd_snr(t, src, sky, dark, rn, npix), expected, rtol=1e-12)


def test_time_solution_inverts_the_snr_and_broadcasts():
    src = np.array([[10.0], [1000.0]])
    snr = np.array([3.0, 10.0, 300.0])
    kw = dict(sky_rate=4.0, dark_rate=0.01, read_noise=6.0, n_pix=80.0, n_sky_pix=900.0, digitisation_e=0.5)
    t = ccd_time(snr, src, **kw)
    assert t.shape == (2, 3)
    # round trips through the closed-form roots of the CCD equation: rounding, amplified by the
    # roots' cancellation by at most a few digits, hence 1e-10
    assert_allclose(ccd_snr(t, src, **kw), np.broadcast_to(snr, (2, 3)), rtol=1e-10)
    rate = ccd_source_rate(snr, t, **kw)
    assert_allclose(rate, np.broadcast_to(src, (2, 3)), rtol=1e-10)
    assert ccd_time(5.0, 0.0, **kw) == np.inf  # no source signal: no finite time reaches any S/N


@pytest.mark.parametrize(
    ("regime", "settings", "mag", "slope"),
    [
        # Facts of the trade (common practice, no source), derived from the CCD equation:
        # source-limited t = S^2/R*, so t grows as 10^(0.4 A_b);
        ("source", dict(sky_mag_arcsec2=35.0, dark_e_per_s=0.0, read_noise_e=0.0, gain_e_per_adu=1e-6), 5.0, 0.4),
        # sky-limited t = S^2 n_pix R_sky / R*^2, so 10^(0.8 A_b);
        ("sky", dict(sky_mag_arcsec2=6.0, dark_e_per_s=0.0, read_noise_e=0.0, gain_e_per_adu=1e-6), 24.0, 0.8),
        # read-noise-limited t = S sqrt(n_pix) N_R / R*, so 10^(0.4 A_b).
        ("read", dict(sky_mag_arcsec2=35.0, dark_e_per_s=0.0, read_noise_e=1e5, gain_e_per_adu=1e-6), 5.0, 0.4),
    ],
)
def test_time_factor_in_each_noise_regime(regime, settings, mag, slope):
    ch = _channel(**settings)
    a_band = np.array([0.5, 1.0, 2.0, 3.0])
    t0 = ch.time_for_snr(mag, 20.0)
    assert ch.dominant_noise(mag, t0) == regime
    factor = ch.time_for_snr(mag, 20.0, a_band) / t0
    # the suppressed noise terms still add a little: measured departures from the pure power
    # law are below 1e-8, so 1e-6 tests the regime's exponent tightly
    assert_allclose(factor, 10 ** (slope * a_band), rtol=1e-6)


def test_dominant_noise_names_dark_when_dark_dominates():
    assert dominant_noise(100.0, 1.0, 0.0, 50.0, 1.0, 10.0) == "dark"


# --- the channel --------------------------------------------------------------------------

def test_channel_limiting_mag_is_the_inverse_of_the_time():
    ch = _channel(airmass=1.3, extinction_mag_per_airmass=0.2, sky_pixels=2000.0)
    t = ch.time_for_snr(20.5, 10.0, a_band=1.2)
    # A dust-free source of magnitude m behind A_band looks like an apparent m + A_band. Round
    # trips through the CCD equation's closed-form roots: rounding only, hence 1e-10.
    assert_allclose(ch.limiting_mag(t, 10.0), 21.7, rtol=1e-10)
    assert_allclose(ch.snr(20.5, t, 1.2), 10.0, rtol=1e-10)


def test_channel_sky_rate_from_surface_brightness():
    # Sky per pixel: a surface brightness mu (AB mag/arcsec^2) gives per arcsec^2 the photon
    # rate of an AB magnitude mu source, times the pixel area p^2 (common practice, no source).
    # For the channel's top-hat of transmission 0.5 on [0.5, 0.6] µm and 1 m^2, that rate is
    # A F_nu T0 / h * ln(0.6/0.5) with F_nu from the AB definition (Oke & Gunn 1983).
    # rtol 1e-6: the numerical integration over the box is good to ~1e-9 (measured 3.5e-10).
    ch = _channel()
    fnu_si = AB_ZERO_POINT_JY * 1e-26 * 10 ** (-0.4 * 21.0)  # W m^-2 Hz^-1
    expected = 1.0 * fnu_si * 0.5 / const.h.to_value(u.J * u.s) * math.log(0.6 / 0.5) * 0.4**2
    assert_allclose(ch.sky_rate, expected, rtol=1e-6)


# --- bad input ----------------------------------------------------------------------------

def test_negative_time_is_refused():
    with pytest.raises(InputError, match=r"time=-5 s .*>= 0"):
        _channel().snr(19.0, -5.0)
    with pytest.raises(InputError, match="time"):
        ccd_source_rate(5.0, [10.0, -1.0], 1.0, 0.0, 1.0, 10.0)


@pytest.mark.parametrize("snr", [0.0, -3.0, np.inf])
def test_nonpositive_snr_is_refused(snr):
    with pytest.raises(InputError, match=r"snr=.* signal-to-noise ratio must be finite and > 0"):
        _channel().time_for_snr(19.0, snr)


def test_unknown_band_is_refused_with_the_instrument_bands():
    inst = Instrument("test", {"box": _channel()})
    with pytest.raises(UnknownNameError, match=r"band='kw-q' is not a band of instrument 'test'; choose from 'box'"):
        inst.channel("kw-q")


@pytest.mark.parametrize(
    ("field", "value", "allowed"),
    [
        ("sky_mag_arcsec2", math.nan, "sky_mag_arcsec2"),
        ("airmass", 0.8, r"airmass=0.8 is outside the allowed range \[1, 10\]"),
        ("read_noise_e", -1.0, "read_noise_e"),
        ("pixel_scale_arcsec", 0.0, r"pixel_scale_arcsec=0.0 must be > 0"),
    ],
)
def test_channel_fields_are_validated(field, value, allowed):
    with pytest.raises(InputError, match=allowed):
        _channel(**{field: value})


def test_throughput_above_one_is_refused():
    with pytest.raises(InputError, match="between 0 and 1"):
        _channel(band=_box(0.5, 0.6, 1.5))
