"""Tests of redcorr.bandpass: the Band object, synthetic shapes, products, derived wavelengths."""

import math

import numpy as np
import pytest
from astropy import constants as const
from astropy import units as u
from numpy.testing import assert_allclose
from published import AB_ZERO_POINT_JY

from redcorr.bandpass import Band, gaussian, product, tophat
from redcorr.exceptions import InputError
from redcorr.io.filters import load_band


def test_tophat_pivot_photon_and_energy_are_analytic():
    # Photon counting: λp² = ∫λ dλ / ∫dλ/λ = (b² − a²) / (2 ln(b/a));
    # energy counting: λp² = ∫dλ / ∫λ⁻² dλ = ab (integrals of a constant
    # response; common practice, no source).
    # Tolerances: tophat() ramps its edges over 1e-9 of the width (changing integrals by ~1e-9),
    # and the 3-point Gauss-Legendre moments are exact for T·λ^k with k >= 0 only; for the λ⁻²
    # moment of the energy pivot they leave 5e-8 on this interval (measured), hence 1e-7.
    a, b = 0.5, 0.6
    band = tophat(0.55, 0.1)
    assert_allclose(band.pivot_um, math.sqrt((b**2 - a**2) / (2 * math.log(b / a))), rtol=1e-8)
    energy = Band(band.wave_um, band.response, name="e", convention="energy")
    assert_allclose(energy.pivot_um, math.sqrt(a * b), rtol=1e-7)
    assert_allclose(band.mean_um, 0.55, rtol=1e-9)
    assert_allclose(band.width_um, 0.1, rtol=1e-8)


def test_gaussian_width_is_fwhm_times_sqrt_pi_over_4ln2():
    # ∫exp(−4 ln2 x²/F²) dx = F √(π/(4 ln 2)) (Gaussian integral; common practice, no source).
    # The sampled Gaussian (401 samples to ± 4 FWHM) is integrated piecewise-linearly, which for
    # a smooth, vanishing-ended integrand converges far below 1e-9 (measured: exact to rounding).
    band = gaussian(0.8, 0.05)
    assert_allclose(band.width_um, 0.05 * math.sqrt(math.pi / (4 * math.log(2))), rtol=1e-9)
    assert_allclose(band.mean_um, 0.8, rtol=1e-9)
    # half maximum at centre ± FWHM/2; 0.825 µm is a sample, so only rounding remains
    assert band(0.825) == pytest.approx(0.5, rel=1e-12)


def test_photon_weight_is_lambda_energy_weight_is_one():
    # Photon counting weights by λ/(hc), energy counting by 1 (e.g. the
    # speclite filters module docstring; common practice).
    # bitwise: the weights are the wavelengths themselves and exact ones
    band = tophat(1.0, 0.2)
    np.testing.assert_array_equal(band.weight([0.9, 1.1]), [0.9, 1.1])
    energy = Band(band.wave_um, band.response, name="e", convention="energy")
    np.testing.assert_array_equal(energy.weight([0.9, 1.1]), [1.0, 1.0])


@pytest.mark.parametrize("name", ["sdss2010-r", "twomass-Ks", "gaiadr3-G", "bessell-V"])
def test_pivot_matches_speclite_ab_zeropoint(name):
    # Independent check through speclite (a general filter library): a source
    # with constant F_λ = K has AB maggies K λp²/(c · 3631 Jy) (AB zero point of
    # Oke & Gunn 1983), so the pivot follows from speclite's own synthetic photometry.
    import speclite.filters

    filt = speclite.filters.load_filter(name)
    wave = np.linspace(filt.wavelength[0], filt.wavelength[-1], 20001) * u.AA
    flam = np.ones(wave.size) * 1e-17 * u.erg / u.s / u.cm**2 / u.AA
    maggies = filt.get_ab_maggies(flam, wave)
    ref = AB_ZERO_POINT_JY * u.Jy
    pivot = np.sqrt(maggies * ref * const.c / (1e-17 * u.erg / u.s / u.cm**2 / u.AA)).to_value(u.um)
    # speclite resamples the curve for its own quadrature: agreement to 1e-4.
    assert_allclose(load_band(name).pivot_um, pivot, rtol=1e-4)


@pytest.mark.parametrize(
    "name, pivot_um, source",
    [
        # Riello et al. 2021, A&A 649, A3 (Gaia EDR3 photometry), pivot
        # wavelengths of the passbands: G 621.79 nm, BP 511.09 nm, RP 776.90 nm
        # (from memory).
        ("gaiadr3-G", 0.62179, "Riello+2021"),
        ("gaiadr3-BP", 0.51109, "Riello+2021"),
        ("gaiadr3-RP", 0.77690, "Riello+2021"),
        # SVO Filter Profile Service, 2MASS/2MASS.J, .H, .Ks "λ_pivot"
        # 12358, 16458, 21603 Å (from memory).
        ("twomass-J", 1.2358, "SVO FPS"),
        ("twomass-H", 1.6458, "SVO FPS"),
        ("twomass-Ks", 2.1603, "SVO FPS"),
    ],
)
def test_pivot_wavelengths_against_published_values(name, pivot_um, source):
    # Tolerance 0.1 %: different tabulations of the same curves (the published values themselves
    # carry 5-6 digits).
    assert_allclose(load_band(name).pivot_um, pivot_um, rtol=1e-3, err_msg=source)


def test_product_is_pointwise_and_on_the_overlap():
    f = tophat(0.55, 0.2)
    g = gaussian(0.6, 0.1)
    p = product(f, g, name="fg")
    lam = np.linspace(0.46, 0.64, 50)
    # atol 1e-12: the product is resampled on the union of both sample grids and then linearly
    # interpolated, which reproduces f·g at 1e-12 only where one factor is constant (the top-hat
    # is 1 here) -- rounding of the interpolation weights
    assert_allclose(p(lam), f(lam) * g(lam), atol=1e-12)
    # the top-hat ends at 0.45 and 0.65 µm plus its 2e-10 µm edge ramps
    assert p.wave_range_um[0] >= 0.45 - 1e-6 and p.wave_range_um[1] <= 0.65 + 1e-6
    assert "product of" in p.provenance


def test_product_refuses_mixed_conventions_and_disjoint_bands():
    f = tophat(0.55, 0.1)
    e = Band(f.wave_um, f.response, name="e", convention="energy")
    with pytest.raises(InputError, match="convention"):
        product(f, e)
    assert product(f, e, convention="energy").convention == "energy"
    with pytest.raises(InputError, match="overlap"):
        product(tophat(0.5, 0.05), tophat(0.9, 0.05))


@pytest.mark.parametrize(
    "wave, resp, match",
    [
        ([0.5, 0.6, 0.7], [0.0, -0.1, 0.0], "negative"),
        ([0.5, 0.6, 0.6, 0.7], [0, 1, 1, 0], "increase"),
        ([0.7, 0.6, 0.5], [0, 1, 0], "increase"),
        ([0.5, np.nan, 0.7], [0, 1, 0], "not finite"),
        ([0.5, 0.6, 0.7], [0, np.inf, 0], "not finite"),
        ([0.5, 0.6], [0, 1], "at least 3"),
        ([0.5, 0.6, 0.7], [0, 0, 0], "zero everywhere"),
        ([-0.5, 0.6, 0.7], [0, 1, 0], "outside"),
        ([1e-300, 2e-300, 3e-300], [0, 1, 0], "outside"),
        ([0.5, 0.6, 1e300], [0, 1, 0], "outside"),
    ],
)
def test_band_validation(wave, resp, match):
    with pytest.raises(InputError, match=match):
        Band(wave, resp, name="bad")


def test_band_convention_must_be_known():
    with pytest.raises(InputError, match="convention"):
        Band([0.5, 0.6, 0.7], [0, 1, 0], name="x", convention="counts")


def test_truncated_band_is_flagged():
    band = Band([0.5, 0.6, 0.7], [0.5, 1, 0], name="cut")
    assert band.truncated
    assert band.edge_fraction == (0.5, 0.0)  # bitwise: 0.5/1 and 0/1 are exact
    assert not tophat(0.6, 0.1).truncated


def test_quantity_wavelengths_are_converted():
    # unit conversion multiplies by 1e-4 or 1e-3: equal to rounding (1e-15), checked to 1e-14
    band = Band([5000, 5500, 6000] * u.AA, [0, 1, 0], name="q")
    assert_allclose(band.wave_um, [0.5, 0.55, 0.6], rtol=1e-14)
    assert_allclose(tophat(550 * u.nm, 100 * u.nm).pivot_um, tophat(0.55, 0.1).pivot_um, rtol=1e-14)
