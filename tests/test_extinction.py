"""Tests of redcorr.extinction: band integration, limits, published coefficients, the grid."""

import warnings

import direct_integration as direct
import numpy as np
import pytest
from numpy.testing import assert_allclose
from published import SF11_TABLE6_RV31
from scipy.integrate import quad

from redcorr.bandpass import Band, gaussian, tophat
from redcorr.coefficients import CoefficientGrid, coefficient_grid
from redcorr.curves import TabulatedCurve, get_curve
from redcorr.exceptions import ExtrapolationWarning, InputError, OutOfRangeWarning, TruncatedBandWarning
from redcorr.extinction import (
    band_extinction,
    band_quadrature,
    band_ratio,
    colour_excess_ratio,
    effective_wavelength,
)
from redcorr.io.filters import load_band
from redcorr.io.grids import read_coefficient_grid, write_coefficient_grid
from redcorr.sed import blackbody, flat_fnu, power_law

F99 = get_curve("f99", r_v=3.1)
BB7000 = blackbody(7000.0)


@pytest.fixture(scope="module")
def kw_bands():
    return [load_band(n) for n in ("kw-b", "kw-v", "kw-r", "kw-i", "kw-z")]


# --------------------------------------------------------------------------- limits
@pytest.mark.parametrize("name", ["bessell-B", "sdss2010-u", "gaiadr3-G", "twomass-Ks", "kw-z"])
def test_grey_curve_gives_a_band_equal_to_a_v(name):
    # A(λ)/A(V) = 1 everywhere ⇒ 10^(−0.4 A_V) leaves the integral: A_b = A_V
    # exactly (definition of A_b; common practice, no source). With r ≡ 1 the shifted exponent
    # is 0 and only rounding remains, hence 1e-12.
    grey = TabulatedCurve([0.05, 0.1, 1.0, 10.0], [1.0, 1.0, 1.0, 1.0], r_v=3.1, name="grey")
    a_v = np.array([0.0, 0.3, 2.5, 20.0])
    assert_allclose(band_extinction(grey, load_band(name), BB7000, a_v), a_v, rtol=1e-12, atol=1e-12)


@pytest.mark.parametrize("centre", [0.25, 0.44, 0.55, 0.9, 2.2])
@pytest.mark.parametrize("a_v", [0.1, 3.0, 20.0])
def test_narrow_tophat_gives_monochromatic_extinction(centre, a_v):
    # A band of width → 0 samples r(λ_c): A_b → A_V r(λ_c) (definition; common
    # practice, no source). Width 1e-4 µm leaves a relative error below 1e-7, except at
    # 0.25 µm with A_V = 20, where the spread of r across the band enters at second order in A_V
    # (measured 1.1e-6); hence 2e-6.
    band = tophat(centre, 1e-4)
    assert_allclose(band_extinction(F99, band, BB7000, a_v), a_v * F99(centre), rtol=2e-6)


@pytest.mark.parametrize("sed", [BB7000, blackbody(3500.0), power_law(-2.0)], ids=lambda s: s.name)
def test_low_extinction_slope_is_weighted_mean_of_curve(sed):
    # dA_b/dA_V at 0 = ∫ F_λ T λ r dλ / ∫ F_λ T λ dλ (derived in band_ratio's
    # docstring). Reference integrals by scipy.integrate.quad on a smooth
    # Gaussian band (41 samples), independent of redcorr's quadrature.
    band = gaussian(0.5, 0.1, samples=41)
    lo, hi = band.wave_range_um

    def weight(lam):
        return sed.flam(lam) * band(lam) * lam

    kinks = band.wave_um[1:-1]  # the response is linear between its samples
    num = quad(lambda lam: weight(lam) * F99(lam), lo, hi, points=kinks, limit=2000, epsabs=0, epsrel=1e-11)[0]
    den = quad(weight, lo, hi, points=kinks, limit=2000, epsabs=0, epsrel=1e-11)[0]
    # quad is converged to 1e-11; redcorr's product rule reproduces this smooth band to ~1e-10
    assert_allclose(band_ratio(F99, band, sed), num / den, rtol=1e-9)
    h = 1e-4
    slope = (band_extinction(F99, band, sed, h) - band_extinction(F99, band, sed, -h)) / (2 * h)
    # central difference: truncation O(h²) ~ 1e-9 relative, rounding ~1e-16/h = 1e-12
    assert_allclose(slope, band_ratio(F99, band, sed), rtol=1e-8)
    # bitwise: at A_V = 0 numerator and denominator are the same sum, and log10(1) is exactly 0
    assert band_extinction(F99, band, sed, 0.0) == 0.0


def test_energy_convention_drops_the_lambda_weight():
    # With w = 1 the weight is F_λ T only (bandpass docstring; common practice).
    band = tophat(0.55, 0.2)
    energy = Band(band.wave_um, band.response, name="e", convention="energy")
    lo, hi = 0.45, 0.65
    sed = flat_fnu()
    num = quad(lambda lam: sed.flam(lam) * F99(lam), lo, hi, epsrel=1e-12)[0]
    den = quad(lambda lam: sed.flam(lam), lo, hi, epsrel=1e-12)[0]
    # quad converged to 1e-12; the top-hat's sharp edges are integrated exactly by redcorr's rule
    assert_allclose(band_ratio(F99, energy, sed), num / den, rtol=1e-8)
    # the two conventions differ by 1.6 % here (measured), far beyond any quadrature error
    assert band_ratio(F99, energy, sed) != pytest.approx(band_ratio(F99, band, sed), rel=1e-3)


# --------------------------------------------------------------------------- convergence
@pytest.mark.parametrize("name", ["bessell-B", "sdss2010-g", "gaiadr3-G", "twomass-J", "kw-b", "tophat:0.55:0.1"])
@pytest.mark.parametrize("a_v", [1.0, 5.0, 20.0])
def test_quadrature_is_converged_to_1e4_mag(name, a_v):
    # The default integration grid is converged to 1e-4 mag (the accuracy the
    # module docstring promises, ample beside photometric errors of ~0.01 mag).
    # Reference: 8 nodes per interval on intervals 10x narrower.
    band = load_band(name)
    nodes, q = band_quadrature(band, order=8, max_dx=0.002, min_intervals=160)
    w = q * BB7000.flam(nodes)
    fine = -2.5 * np.log10(np.sum(w * 10 ** (-0.4 * a_v * F99(nodes))) / np.sum(w))
    assert abs(band_extinction(F99, band, BB7000, a_v) - fine) < 1e-4


def test_quadrature_agrees_with_dense_trapezoid():
    # Independent method: numpy trapezoid on 400 001 points of the
    # piecewise-linear response (error ~1e-9 mag at this density).
    band = load_band("sdss2010-r")
    lo, hi = band.wave_range_um
    lam = np.linspace(lo, hi, 400001)
    w = BB7000.flam(lam) * band(lam) * lam
    for a_v in (1.0, 10.0):
        ref = -2.5 * np.log10(np.trapezoid(w * 10 ** (-0.4 * a_v * F99(lam)), lam) / np.trapezoid(w, lam))
        assert_allclose(band_extinction(F99, band, BB7000, a_v), ref, atol=1e-6)


# --------------------------------------------------------------------------- published coefficients
# Schlafly & Finkbeiner 2011, Table 6, column R_V = 3.1 (tests/published.py):
# A_b/E(B−V)_SFD for the F99 law with a 7000 K source spectrum, SDSS filters of
# Doi et al. 2010 (the curves speclite ships as sdss2010-*), 2MASS, and
# Landolt UBVRI. The E(B−V)_SFD normalisation cancels in ratios, which we
# compare: A_b/A_r(SDSS). Tolerance 2 %: a blackbody stands in for the model
# atmosphere (no Balmer jump or lines) and we take the A_V → 0 limit.
SF11 = {
    "sdss2010-u": "SDSS u",
    "sdss2010-g": "SDSS g",
    "sdss2010-r": "SDSS r",
    "sdss2010-i": "SDSS i",
    "sdss2010-z": "SDSS z",
    "twomass-J": "2MASS J",
    "twomass-H": "2MASS H",
    "twomass-Ks": "2MASS Ks",
}
# Landolt U, B, V, R, I of the same table, compared with the Bessell (1990)
# curves in speclite: different filter curves, so 3.5 %.
SF11_LANDOLT = {f"bessell-{x}": f"Landolt {x}" for x in "UBVRI"}


@pytest.fixture(scope="module")
def sdss_r_ratio():
    return band_ratio(F99, load_band("sdss2010-r"), BB7000)


@pytest.mark.parametrize("name", sorted(SF11))
def test_schlafly_finkbeiner_2011_table6_ratios(name, sdss_r_ratio):
    ours = band_ratio(F99, load_band(name), BB7000) / sdss_r_ratio
    assert_allclose(ours, SF11_TABLE6_RV31[SF11[name]] / SF11_TABLE6_RV31["SDSS r"], rtol=0.02)


@pytest.mark.parametrize("name", sorted(SF11_LANDOLT))
def test_schlafly_finkbeiner_2011_table6_landolt_vs_bessell(name, sdss_r_ratio):
    ours = band_ratio(F99, load_band(name), BB7000) / sdss_r_ratio
    assert_allclose(ours, SF11_TABLE6_RV31[SF11_LANDOLT[name]] / SF11_TABLE6_RV31["SDSS r"], rtol=0.035)


# --------------------------------------------------------------------------- reddening shifts
def test_effective_wavelength_moves_redward_and_coefficient_falls():
    # Heavier dust removes more blue light: λ_eff grows and A_b/A_V falls
    # with A_V (physics of a decreasing r(λ); common practice, no source).
    band = load_band("bessell-B")
    a_v = np.array([0.0, 1.0, 5.0, 10.0, 20.0])
    lam = effective_wavelength(F99, band, BB7000, a_v)
    assert np.all(np.diff(lam) > 0)
    ratio = band_extinction(F99, band, BB7000, a_v[1:]) / a_v[1:]
    assert np.all(np.diff(ratio) < 0) and ratio[0] < band_ratio(F99, band, BB7000)


def test_hot_stars_have_larger_blue_coefficients():
    # A hot source puts more weight on the blue side of a band, where r is
    # larger (common practice, no source).
    band = load_band("bessell-B")
    assert band_ratio(F99, band, blackbody(30000)) > band_ratio(F99, band, blackbody(3500))


def test_colour_excess_ratio_against_independent_quadrature():
    # E(B−V)_bands/E(B−V) = R_V (A_B − A_V)/A_V with E(B−V) ≡ A_V/R_V (module docstring), A_B and
    # A_V from independent quadrature (tests/direct_integration: dense trapezoid sums, Planck's
    # law from scipy.constants); at A_V = 0 the limit R_V (⟨r⟩_B − ⟨r⟩_V). Both integrations
    # agree to ~3e-8 mag, i.e. ~1e-7 of the colour excess here, hence 1e-6.
    b, v = load_band("bessell-B"), load_band("bessell-V")
    a_b, a_v_band = direct.a_band(F99, b, 7000.0, 2.0)[0], direct.a_band(F99, v, 7000.0, 2.0)[0]
    assert_allclose(colour_excess_ratio(F99, b, v, BB7000, 2.0), 3.1 * (a_b - a_v_band) / 2.0, rtol=1e-6)
    limit = 3.1 * (direct.ratio(F99, b, 7000.0) - direct.ratio(F99, v, 7000.0))
    assert_allclose(colour_excess_ratio(F99, b, v, BB7000, 0.0), limit, rtol=1e-6)
    # E(B−V) through Bessell B and V is close to the curve's nominal A_V/R_V (F99 Sect. 3; ~2 %).
    assert_allclose(limit, 1.0, atol=0.05)


def test_broadcasting_and_nan():
    band = load_band("kw-v")
    out = band_extinction(F99, band, BB7000, np.array([[0.0, 1.0], [np.nan, 2.0]]))
    assert out.shape == (2, 2) and np.isnan(out[1, 0])
    assert np.ndim(band_extinction(F99, band, BB7000, 1.0)) == 0


# --------------------------------------------------------------------------- bad input
def test_band_outside_curve_range_raises_naming_the_band():
    band = load_band("wise2010-W2")
    with pytest.raises(InputError, match="wise2010-W2.*outside the f99 range"):
        band_extinction(F99, band, BB7000, 1.0)


def test_band_outside_curve_range_extrapolates_with_warning():
    band = load_band("wise2010-W1")
    with pytest.warns(ExtrapolationWarning):
        a = band_extinction(F99, band, BB7000, 1.0, extrapolate=True)
    assert 0 < a < F99(2.2)


def test_tabulated_curve_is_never_extrapolated():
    table = TabulatedCurve([0.4, 0.5, 0.6, 0.7], [1.3, 1.1, 0.9, 0.7], name="short")
    with pytest.raises(InputError, match="cannot be extrapolated"):
        band_extinction(table, load_band("kw-z"), BB7000, 1.0, extrapolate=True)


def test_truncated_band_warns():
    cut = Band([0.5, 0.55, 0.6], [1.0, 1.0, 0.0], name="cut")
    with pytest.warns(TruncatedBandWarning, match="cut"):
        band_extinction(F99, cut, BB7000, 1.0)


def test_non_band_and_bad_a_v():
    with pytest.raises(InputError, match="Band"):
        band_extinction(F99, "kw-v", BB7000, 1.0)
    with pytest.raises(InputError, match="a_v"):
        band_extinction(F99, load_band("kw-v"), BB7000, np.inf)


def test_source_without_flux_in_band():
    from redcorr.sed import TabulatedSED

    with pytest.raises(InputError, match="outside the source"):
        band_extinction(F99, load_band("kw-v"), TabulatedSED([1.0, 2.0], [1.0, 1.0]), 1.0)


# --------------------------------------------------------------------------- grid
@pytest.fixture(scope="module")
def grid(kw_bands):
    return coefficient_grid(get_curve("f99", r_v=4.3), kw_bands)


def test_grid_defaults_and_shape(grid):
    assert grid.ratio.shape == (5, 30, 41)
    # bitwise: numpy's geomspace and linspace return their end points exactly
    assert grid.temperatures[0] == 3000 and grid.temperatures[-1] == 50000
    assert grid.a_v[0] == 0 and grid.a_v[-1] == 20


def test_grid_nodes_match_independent_quadrature(grid, kw_bands):
    # At its nodes the grid holds integrated values, no approximation: checked against
    # independent quadrature (tests/direct_integration). The two integrations agree to ~1e-8 mag
    # (measured), hence 1e-7 on A_b/A_V at A_V = 0 and 1e-7 mag on A_b at A_V = 1.5 and 20.
    curve = get_curve("f99", r_v=4.3)
    for k in (0, 17, 29):
        temperature = grid.temperatures[k]
        for b, band in enumerate(kw_bands):
            assert_allclose(grid.ratio[b, k, 0], direct.ratio(curve, band, temperature), rtol=1e-7)
            a_v = grid.a_v[[3, 40]]
            reference = direct.a_band(curve, band, temperature, a_v)
            assert_allclose(grid.ratio[b, k, [3, 40]] * a_v, reference, rtol=0, atol=1e-7)


def test_grid_interpolation_between_nodes(grid, kw_bands):
    # Bilinear in (ln T, A_V): within 2e-3 mag of direct integration between nodes (the bound
    # the correction tests rely on).
    curve = get_curve("f99", r_v=4.3)
    for temp in (3100.0, 4321.0, 9876.0, 41000.0):
        sed = blackbody(temp)
        for a_v in (0.3, 2.5, 13.7, 19.9):
            direct = [float(band_extinction(curve, b, sed, a_v)) for b in kw_bands]
            assert_allclose(grid.a_band(a_v, temp), direct, atol=2e-3)


def test_grid_lookup_broadcasts_and_flags(grid):
    a_v = np.array([[1.0], [2.0], [np.nan]])
    temp = np.array([4000.0, 8000.0])
    out = grid.a_band(a_v, temp)
    assert out.shape == (3, 2, 5)
    assert np.all(np.isnan(out[2]))
    assert grid.inside([1.0, 25.0, 1.0], [5000.0, 5000.0, 2000.0]).tolist() == [True, False, False]
    with pytest.warns(OutOfRangeWarning, match="outside the coefficient grid"):
        edge = grid.a_band(25.0, 5000.0)
    # the edge's A_b/A_V is used as is: equal up to the rounding of a product and a quotient
    assert_allclose(edge / 25.0, grid.a_band(20.0, 5000.0) / 20.0, rtol=1e-14)


def test_grid_polynomial_residuals(grid):
    poly = grid.fit_polynomial()
    assert poly.colour_bands == ("kw-b", "kw-v")
    assert np.all(poly.max_mag < 5e-3) and np.all(poly.rms_mag < 1e-3)
    colour = grid.colour0("kw-b", "kw-v")
    k, j = 12, 20
    # at a node the polynomial is within its own maximum residual, asserted < 5e-3 mag just above
    assert_allclose(poly.a_band(colour[k], grid.a_v[j]), grid.ratio[:, k, j] * grid.a_v[j], atol=5e-3)
    # Blackbody colours get redder as T falls (Planck's law; no source needed).
    assert np.all(np.diff(colour) < 0)


def test_grid_polynomial_needs_two_bands(kw_bands):
    g1 = coefficient_grid(F99, kw_bands[:1], temperatures=[4000, 8000], a_v=[0, 1])
    with pytest.raises(InputError, match="two bands"):
        g1.fit_polynomial()


def test_grid_ecsv_round_trip(grid, tmp_path):
    path = tmp_path / "grid.ecsv"
    write_coefficient_grid(grid, path)
    text = path.read_text()
    assert "Fitzpatrick 1999" in text and "E(B-V)" in text and "residual_max_mag" in text
    back = read_coefficient_grid(path)
    assert back.bands == grid.bands
    # bitwise: ECSV text carries doubles with enough digits to round-trip, so the grid read
    # back must be the grid written, to the last bit
    np.testing.assert_array_equal(back.ratio, grid.ratio)
    np.testing.assert_array_equal(back.mag0, grid.mag0)
    assert isinstance(back, CoefficientGrid)
    assert not list(tmp_path.glob("*.part*"))


def test_grid_bad_axes(kw_bands):
    with pytest.raises(InputError, match="a_v"):
        coefficient_grid(F99, kw_bands, a_v=[0, -1])
    with pytest.raises(InputError, match="temperatures"):
        coefficient_grid(F99, kw_bands, temperatures=[5000])
    with pytest.raises(InputError, match="distinct"):
        coefficient_grid(F99, [kw_bands[0], kw_bands[0]])


def test_grid_refuses_band_outside_curve(kw_bands):
    with pytest.raises(InputError, match="wise2010-W3"):
        coefficient_grid(F99, [kw_bands[0], load_band("wise2010-W3")])


def test_grid_accepts_quantity_free_tabulated_curve(kw_bands):
    # Any DustCurve works: a tabulated power law r ∝ λ^-1.7 (a common
    # near-IR form, e.g. Martin & Whittet 1990; here only as a test curve).
    lam = np.geomspace(0.2, 3.0, 200)
    table = TabulatedCurve(lam, (lam / 0.55) ** -1.7, r_v=3.1, name="pl")
    g = coefficient_grid(table, kw_bands, temperatures=[4000, 8000], a_v=[0, 5])
    with warnings.catch_warnings():
        warnings.simplefilter("error")
        assert np.all(np.isfinite(g.ratio))
    # independent quadrature of the same tabulated law (tests/direct_integration); agreement
    # ~1e-10 measured for smooth curves, hence 1e-7
    assert_allclose(g.ratio[1, 0, 0], direct.ratio(table, kw_bands[1], 4000.0), rtol=1e-7)


def test_grid_accepts_quantities(kw_bands):
    from astropy import units as u

    g = coefficient_grid(F99, kw_bands[:2], temperatures=[4000, 8000] * u.K, a_v=[0, 2] * u.mag)
    # bitwise: converting 1 mag, 6000 K, 4000 K and 8000 K to plain numbers is exact
    np.testing.assert_array_equal(g.a_band(1 * u.mag, 6000 * u.K), g.a_band(1.0, 6000.0))
    np.testing.assert_array_equal(g.temperatures, [4000, 8000])
