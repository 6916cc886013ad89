"""Distance distributions for distance-resolved maps (redcorr.maps.distance).

References outside the project: the posterior and the cubic of Bailer-Jones, C. A. L. 2015,
PASP 127, 994, sect. 5 (the EDSD prior); scipy.optimize and scipy.integrate.quad for the mode
and moments of that posterior found numerically; scipy.stats.truncnorm for the truncated normal.
"""

import numpy as np
import pytest
from astropy import units as u
from scipy import integrate, optimize, stats

from redcorr.exceptions import InputError
from redcorr.maps.distance import EDSD_LENGTH_SCALE_PC, DistanceSamples, edsd_mode, prior_dominated

L_PC = 1350.0  # the default length scale, 1.35 kpc (Bailer-Jones 2015, sect. 5 examples; from memory)

# A cumulative reddening curve: piecewise linear in distance (how a distance-resolved map is
# interpolated, see redcorr.maps), zero at 0, flat beyond its last distance. Invented numbers.
KINK_PC = np.array([0.0, 80.0, 150.0, 400.0, 1000.0, 2500.0, 6000.0])
KINK_EBV = np.array([0.0, 0.01, 0.25, 0.30, 0.55, 0.70, 0.72])


def reddening(r):
    return np.interp(r, KINK_PC, KINK_EBV)


def identity(r):
    return r


# (parallax mas, error mas): precise, moderate, large fractional error, zero and negative parallax,
# and bimodal posteriors (a nearby star with 15-30 % error: a second bump near 2L holds a few %)
UNIMODAL = [(10.0, 0.01), (10.0, 0.1), (10.0, 1.0), (5.0, 0.5), (1.0, 0.1), (1.0, 0.3), (1.0, 1.0),
            (0.3, 0.3), (0.0, 1.0), (-1.0, 1.0), (-3.0, 0.5), (10.0, 5.0), (100.0, 30.0)]
BIMODAL = [(10.0, 2.0), (10.0, 3.0), (50.0, 10.0), (74.0, 12.0), (200.0, 30.0)]


def log_posterior(r, plx, err, length=L_PC):
    """ln P(r | ϖ, σ_ϖ) + const, Bailer-Jones (2015) sect. 5: r² exp(-r/L) × Normal(ϖ | 1000/r, σ_ϖ)."""
    return 2.0 * np.log(r) - r / length - (plx - 1000.0 / r) ** 2 / (2.0 * err**2)


def numerical_mode(plx, err, length=L_PC):
    """The global maximum of the posterior: a dense grid in ln r, then scipy's bounded minimiser."""
    grid = np.geomspace(1e-2, 100 * length, 200_001)
    i = int(np.argmax(log_posterior(grid, plx, err, length)))
    res = optimize.minimize_scalar(lambda v: -log_posterior(np.exp(v), plx, err, length),
                                   bounds=(np.log(grid[i - 1]), np.log(grid[i + 1])), method="bounded",
                                   options={"xatol": 1e-12})
    return float(np.exp(res.x))


def posterior_moments(plx, err, g, length=L_PC):
    """Mean and standard deviation of g(r) over the normalised posterior, by scipy.integrate.quad.

    The integrand is scaled to 1 at the mode (so epsabs=1e-13 is negligible). Integrated in
    u = ln r over [ln 0.01 pc, ln 300L], cut into 200 equal pieces, pieces of 1/4 of the peak's
    fractional width σ_r/r about the mode (so that a narrow peak is not missed), and at g's kinks.
    """
    mode = numerical_mode(plx, err, length)
    top = log_posterior(mode, plx, err, length) + np.log(mode)
    width = min(err * mode / 1000.0, 1.0)  # fractional width of a narrow peak (σ_r/r = σ_ϖ r/1000)
    edges = np.concatenate([np.linspace(np.log(1e-2), np.log(300 * length), 201),
                            np.log(mode) + width * np.arange(-40, 41) / 4,
                            np.log(KINK_PC[1:])])
    edges = np.unique(edges)

    def integral(k, centre):
        def f(v):
            return (g(np.exp(v)) - centre) ** k * np.exp(log_posterior(np.exp(v), plx, err, length) + v - top)
        return sum(integrate.quad(f, a, b, epsabs=1e-13, epsrel=1e-10, limit=200)[0]
                   for a, b in zip(edges[:-1], edges[1:], strict=True))

    norm = integral(0, 0.0)
    mean = integral(1, 0.0) / norm
    return mean, np.sqrt(integral(2, mean) / norm)


def sample_moments(samples, g):
    vals = g(samples.nodes_pc)
    mean = np.sum(samples.weights * vals, axis=1)
    return mean, np.sqrt(np.sum(samples.weights * (vals - mean[:, None]) ** 2, axis=1))


# --- edsd_mode ----------------------------------------------------------------------------------


# Two posteriors with peaks near 130 pc and 2.1 kpc whose heights differ by 0.0013 and 0.0067 in
# ln P: the far one is the higher in the first, the near one in the second (found with numpy.roots
# on the cubic of Bailer-Jones 2015 sect. 5 while writing this test).
NEAR_EQUAL_PEAKS = [(10.36, 3.322), (10.85, 3.447)]


@pytest.mark.parametrize(("plx", "err"), UNIMODAL + BIMODAL + NEAR_EQUAL_PEAKS)
def test_edsd_mode_is_the_posterior_maximum(plx, err):
    # Reference: the global maximum of the log-posterior of Bailer-Jones (2015) sect. 5 found by a
    # dense grid and scipy.optimize.minimize_scalar (independent of the cubic). rtol 1e-7: the
    # optimiser's xatol is 1e-12 in ln r, but at a maximum the position is only as good as the
    # square root of the rounding of ln P, ~1e-8.
    assert float(edsd_mode(plx, err, L_PC)) == pytest.approx(numerical_mode(plx, err), rel=1e-7)


def test_edsd_mode_of_near_equal_peaks_is_not_always_the_smallest_root():
    # Reference: numerical_mode (scipy), for the cases above: the far root wins in the first.
    assert float(edsd_mode(*NEAR_EQUAL_PEAKS[0], L_PC)) > 2000.0
    assert float(edsd_mode(*NEAR_EQUAL_PEAKS[1], L_PC)) < 200.0


def test_edsd_mode_vectorised_matches_scalar_calls():
    # Reference: the same function called row by row (the closed form has no loop over stars).
    plx = np.array([[10.0, -1.0, 0.0], [74.0, 1.0, 0.3]])
    err = np.array([0.1, 1.0, 1.0])
    got = edsd_mode(plx, err, L_PC)
    assert got.shape == (2, 3)
    expected = [[float(edsd_mode(p, e, L_PC)) for p, e in zip(row, err, strict=True)] for row in plx]
    np.testing.assert_allclose(got, expected, rtol=0)  # the same arithmetic, element by element
    assert isinstance(edsd_mode(1.0, 0.1, L_PC), float)


@pytest.mark.parametrize("frac", [1e-2, 1e-3, 1e-4])
@pytest.mark.parametrize("plx", [0.5, 5.0, 50.0])
def test_edsd_mode_tends_to_inverse_parallax(plx, frac):
    # Common practice, no source: for a small fractional error f = σ_ϖ/ϖ the mode tends to 1000/ϖ pc.
    # Expanding the cubic (Bailer-Jones 2015 sect. 5) in f gives r = (1000/ϖ)(1 + 2f² + ...), so
    # the relative difference must be below 3f².
    mode = float(edsd_mode(plx, frac * plx, L_PC))
    assert abs(mode * plx / 1000.0 - 1.0) < 3 * frac**2


def test_edsd_mode_unusable_rows_are_nan():
    # Common practice, no source: no distance from a NaN parallax or a non-positive/NaN/infinite error.
    got = edsd_mode([np.nan, np.inf, 1.0, 1.0, 1.0, 1.0, 1.0], [0.1, 0.1, 0.0, -0.1, np.nan, np.inf, 0.1], L_PC)
    assert np.isnan(got[:6]).all()
    assert np.isfinite(got[6])


# --- from_parallax ------------------------------------------------------------------------------


@pytest.mark.parametrize("g", [identity, reddening], ids=["r", "reddening"])
@pytest.mark.parametrize(("plx", "err"), UNIMODAL)
def test_from_parallax_moments_unimodal(plx, err, g):
    # Reference: scipy.integrate.quad of the normalised EDSD posterior (Bailer-Jones 2015, sect. 5);
    # checked against a 4-million-point trapezoid sum while writing this test (agree to 1e-10).
    # Tolerances, as errors of the mean in units of the standard deviation of g and relative errors
    # of the standard deviation (the module's accuracy claims): for g = r, a smooth integrand,
    # 5e-5 (measured up to 2e-5: the tails beyond e^-18 of the peak and the ends of the grid);
    # for the piecewise-linear reddening 5e-3 (measured up to 3.3e-3 with 64 nodes: at a kink the
    # trapezoid rule is second order in the spacing, ~0.19 widths of the peak).
    tol = 5e-5 if g is identity else 5e-3
    samples = DistanceSamples.from_parallax([plx], [err], L_PC)
    mean, std = sample_moments(samples, g)
    ref_mean, ref_std = posterior_moments(plx, err, g)
    assert abs(mean[0] - ref_mean) < tol * ref_std
    assert std[0] == pytest.approx(ref_std, rel=tol)


@pytest.mark.parametrize("g", [identity, reddening], ids=["r", "reddening"])
@pytest.mark.parametrize(("plx", "err"), BIMODAL)
def test_from_parallax_moments_bimodal(plx, err, g):
    # Reference: scipy.integrate.quad, as above. Tolerance 3e-3 relative, for the mean and for the
    # standard deviation (measured up to 1.7e-3 while writing this test): the second bump, far
    # from the mode, holds a few per cent of the probability on m // 4 nodes.
    samples = DistanceSamples.from_parallax([plx], [err], L_PC)
    mean, std = sample_moments(samples, g)
    ref_mean, ref_std = posterior_moments(plx, err, g)
    assert mean[0] == pytest.approx(ref_mean, rel=3e-3)
    assert std[0] == pytest.approx(ref_std, rel=3e-3)


def test_from_parallax_far_bump_is_kept():
    # Reference: scipy.integrate.quad. A star at 1000/74 pc with a 16 % error: the posterior's
    # probability beyond 500 pc (the second bump near 2L) must be represented, to 1e-4 absolute.
    plx, err = 74.0, 12.0
    def beyond(r):
        return (r > 500.0).astype(float)
    samples = DistanceSamples.from_parallax([plx], [err], L_PC)
    ref, _ = posterior_moments(plx, err, beyond)
    assert ref > 0.01  # the case is really bimodal
    assert np.sum(samples.weights[0] * beyond(samples.nodes_pc[0])) == pytest.approx(ref, abs=1e-4)


def test_from_parallax_rows_are_independent_and_well_formed():
    # Common practice, no source: weights >= 0 summing to 1, finite nodes >= 0, for a wide random
    # sample (fractional errors 1e-4 to 100, negative parallaxes); a row's nodes do not depend on
    # the other rows (bitwise: each row is computed on its own, whichever chunk it falls in).
    rng = np.random.default_rng(15)
    n = 9000
    plx = rng.uniform(-2.0, 50.0, n)
    err = np.abs(plx) * 10 ** rng.uniform(-4, 2, n) + 1e-3
    samples = DistanceSamples.from_parallax(plx, err, L_PC)
    assert samples.nodes_pc.shape == (n, 64) and samples.usable.all() and len(samples) == n
    assert np.all(samples.nodes_pc >= 0) and np.all(samples.weights >= 0)
    np.testing.assert_allclose(samples.weights.sum(axis=1), 1.0, rtol=1e-12)  # rounding of the sum
    one = DistanceSamples.from_parallax(plx[4321:4322], err[4321:4322], L_PC)
    np.testing.assert_array_equal(one.nodes_pc[0], samples.nodes_pc[4321])
    np.testing.assert_array_equal(one.weights[0], samples.weights[4321])


def test_from_parallax_unusable_rows():
    # Decided here (module documentation): a NaN/infinite parallax or a NaN/infinite/non-positive
    # error leaves a NaN row; the other rows are as if alone (bitwise: rows are independent).
    plx = [np.nan, np.inf, 1.0, 1.0, 1.0, 1.0, -0.5]
    err = [0.1, 0.1, 0.0, -0.2, np.nan, np.inf, 0.3]
    samples = DistanceSamples.from_parallax(plx, err, L_PC)
    assert samples.usable.tolist() == [False] * 6 + [True]
    assert np.isnan(samples.nodes_pc[:6]).all() and np.isnan(samples.weights[:6]).all()
    alone = DistanceSamples.from_parallax([-0.5], [0.3], L_PC)
    np.testing.assert_array_equal(alone.nodes_pc[0], samples.nodes_pc[6])
    assert np.isnan(samples.mean_pc()[0]) and np.isfinite(samples.mean_pc()[6])


def test_from_parallax_units_defaults_and_metadata():
    # Reference: astropy.units (1 arcsec = 1000 mas, 1 kpc = 1000 pc); the default length scale is
    # 1.35 kpc (Bailer-Jones 2015 sect. 5 examples; from memory).
    a = DistanceSamples.from_parallax([2.0, 0.5], 0.2)
    b = DistanceSamples.from_parallax(u.Quantity([2e-3, 5e-4], u.arcsec), 2e-4 * u.arcsec,
                                      length_scale_pc=1.35 * u.kpc)
    np.testing.assert_allclose(b.nodes_pc, a.nodes_pc, rtol=1e-12)  # unit conversion rounding only
    np.testing.assert_allclose(b.weights, a.weights, rtol=1e-9, atol=1e-15)
    assert EDSD_LENGTH_SCALE_PC == 1350.0 and a.length_scale_pc == 1350.0
    assert "EDSD" in a.method and "Bailer-Jones 2015" in a.method
    assert DistanceSamples.from_parallax([2.0], [0.2], n_nodes=32).nodes_pc.shape == (1, 32)
    assert "2 objects" in repr(a)


# --- gaussian -----------------------------------------------------------------------------------


@pytest.mark.parametrize("ratio", [20.0, 5.0, 2.0, 1.0, 0.3, 0.0])
def test_gaussian_mean_and_std_match_truncnorm(ratio):
    # Reference: scipy.stats.truncnorm (the normal distribution truncated at 0, closed-form moments).
    # Tolerance: 1e-5 relative where the truncation is 5σ or more away (the trapezoid rule is exact
    # to rounding for a Gaussian; only the 5.7e-7 of the mass beyond 5σ is lost); 1e-3 where it
    # cuts the density, for there the rule is second order: the Euler-Maclaurin end term makes the
    # mean's relative error up to h²/(12σ²) = 5.2e-4 at d = 0 (h = 5σ/63).
    sigma = 100.0
    d = ratio * sigma
    tol = 1e-5 if ratio >= 5 else 1e-3
    ref = stats.truncnorm((0.0 - d) / sigma, np.inf, loc=d, scale=sigma)
    samples = DistanceSamples.gaussian([d], [sigma])
    assert samples.mean_pc()[0] == pytest.approx(ref.mean(), rel=tol)
    assert samples.std_pc()[0] == pytest.approx(ref.std(), rel=tol)


@pytest.mark.parametrize(("d", "sigma"), [(300.0, 60.0), (1000.0, 250.0), (120.0, 50.0), (2000.0, 900.0)])
def test_gaussian_piecewise_linear_function(d, sigma):
    # Reference: scipy.integrate.quad of g × scipy.stats.truncnorm.pdf, split at g's kinks.
    # Tolerance 3e-3 of the standard deviation of g, the module's claim for 64 nodes: at a kink
    # the trapezoid rule is second order in the spacing (measured up to 1.3e-3 here).
    ref = stats.truncnorm((0.0 - d) / sigma, np.inf, loc=d, scale=sigma)
    lo, hi = max(0.0, d - 12 * sigma), d + 12 * sigma
    pts = [k for k in KINK_PC if lo < k < hi]
    m1 = integrate.quad(lambda r: reddening(r) * ref.pdf(r), lo, hi, points=pts, limit=400, epsabs=1e-14)[0]
    m2 = integrate.quad(lambda r: (reddening(r) - m1) ** 2 * ref.pdf(r), lo, hi, points=pts, limit=400,
                        epsabs=1e-14)[0]
    mean, std = sample_moments(DistanceSamples.gaussian([d], [sigma]), reddening)
    assert abs(mean[0] - m1) < 3e-3 * np.sqrt(m2)
    assert std[0] == pytest.approx(np.sqrt(m2), rel=3e-3)


def test_gaussian_zero_error_is_exact_and_bad_rows_unusable():
    # Decided here (module documentation): σ = 0 is the exact distance; a NaN, infinite or
    # negative distance or error leaves a NaN row (a missing error is not taken as zero).
    samples = DistanceSamples.gaussian([250.0, np.nan, -5.0, 100.0, 100.0, 100.0],
                                       [0.0, 1.0, 1.0, np.nan, -1.0, np.inf])
    assert samples.usable.tolist() == [True, False, False, False, False, False]
    assert np.all(samples.nodes_pc[0] == 250.0)  # bitwise: every node is the given distance
    assert samples.mean_pc()[0] == 250.0 and samples.std_pc()[0] == 0.0  # weight 1 on one node, exact
    np.testing.assert_array_equal(
        DistanceSamples.gaussian([300.0], [20.0]).nodes_pc[0],
        DistanceSamples.gaussian([300.0, np.nan], [20.0, 1.0]).nodes_pc[0],
    )  # bitwise: rows are independent


def test_gaussian_broadcasts_a_single_error_and_takes_lengths():
    # Reference: astropy.units (1 kpc = 1000 pc).
    a = DistanceSamples.gaussian([100.0, 2000.0], 50.0)
    b = DistanceSamples.gaussian(u.Quantity([0.1, 2.0], u.kpc), 0.05 * u.kpc)
    np.testing.assert_allclose(b.nodes_pc, a.nodes_pc, rtol=1e-12)  # conversion rounding only
    assert a.nodes_pc.shape == (2, 64)


# --- point --------------------------------------------------------------------------------------


def test_point():
    # Common practice, no source: one exact node; a negative, NaN or infinite distance is unusable.
    samples = DistanceSamples.point([10.0, 0.0, -1.0, np.nan, np.inf])
    assert samples.nodes_pc.shape == (5, 1)
    assert samples.usable.tolist() == [True, True, False, False, False]
    assert samples.mean_pc()[:2].tolist() == [10.0, 0.0]  # bitwise: weight 1 on the given value


# --- bad input ----------------------------------------------------------------------------------


@pytest.mark.parametrize("length", [-1.0, 0.0, np.nan, np.inf, [1000.0, 2000.0], "far"])
def test_bad_length_scale(length):
    with pytest.raises(InputError, match="length_scale_pc"):
        DistanceSamples.from_parallax([1.0], [0.1], length_scale_pc=length)
    with pytest.raises(InputError, match="length_scale_pc"):
        edsd_mode(1.0, 0.1, length)


def test_bad_shapes_units_and_node_counts():
    with pytest.raises(InputError, match=r"parallax_mas has shape \(3,\).*error_mas has shape \(2,\)"):
        DistanceSamples.from_parallax([1.0, 2.0, 3.0], [0.1, 0.2], L_PC)
    with pytest.raises(InputError, match="error_mas"):
        edsd_mode([1.0, 2.0, 3.0], [0.1, 0.2], L_PC)
    with pytest.raises(InputError, match="distance_pc has shape"):
        DistanceSamples.gaussian([1.0, 2.0, 3.0], [0.1, 0.2])
    with pytest.raises(InputError, match="parallax_mas has unit pc; an angle"):
        DistanceSamples.from_parallax(1.0 * u.pc, 0.1, L_PC)
    with pytest.raises(InputError, match="error_pc has unit mas; a length"):
        DistanceSamples.gaussian(100.0, 1.0 * u.mas)
    for n in (2, 3.5, "64", True):
        with pytest.raises(InputError, match=r"n_nodes=.* must be a whole number >= 16"):
            DistanceSamples.from_parallax([1.0], [0.1], L_PC, n_nodes=n)
    with pytest.raises(InputError, match="n_nodes=2 must be a whole number >= 3"):
        DistanceSamples.gaussian([1.0], [0.1], n_nodes=2)
    with pytest.raises(InputError, match="must be equal and 2-d"):
        DistanceSamples(np.ones((2, 3)), np.ones((2, 4)))


def test_prior_dominated_parallaxes():
    # The definition (redcorr.maps.PRIOR_FRACTION = 0.2, our choice after Bailer-Jones 2015, sect. 4):
    # a parallax <= 0, or a fractional error σ/ϖ above 0.2; NaN gives no distance at all, so it is not
    # "dominated by the prior". Quantities in other angle units are converted (1 mas = 1e-3 arcsec).
    plx = np.array([10.0, 5.0, 4.0, 0.0, -1.0, np.nan, 3.0])
    err = np.array([1.0, 1.0, 1.0, 0.5, 0.5, 0.1, np.inf])
    assert prior_dominated(plx, err).tolist() == [False, False, True, True, True, False, False]
    assert prior_dominated(4.0 * u.mas, 0.001 * u.arcsec).tolist() is True
