"""Tests of redcorr.ccd: the CCD equation, its inversions and the aperture fraction."""

import math

import numpy as np
from numpy.testing import assert_allclose

from redcorr.ccd import ccd_snr, ccd_source_rate, ccd_time, dominant_noise, gaussian_aperture_fraction


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


def test_dominant_noise_names_dark_when_dark_dominates():
    assert dominant_noise(100.0, 1.0, 0.0, 50.0, 1.0, 10.0) == "dark"
