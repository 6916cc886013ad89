"""Tests of redcorr.mie against outside references.

References used below:
* Bohren, C. F. & Huffman, D. R. 1983, Absorption and Scattering of Light by
  Small Particles (Wiley) -- "BH83"; its equation numbers are cited from memory.
* van de Hulst, H. C. 1957, Light Scattering by Small Particles (Wiley); section
  numbers from memory.
* scipy.special spherical Bessel functions (a general reference library).
* miepython (PyPI), a general-purpose Mie code, as a test peer; it writes
  m = n - ik, so its indices are the complex conjugates of ours.
"""

import os
import subprocess
import sys
from pathlib import Path

import numpy as np
import pytest
from astropy import units as u
from hypothesis import assume, given, settings
from hypothesis import strategies as st
from published import MIEPYTHON_EFFICIENCIES_MX_EXAMPLE
from scipy.integrate import trapezoid
from scipy.special import spherical_jn, spherical_yn

import redcorr.mie as mie_module
from redcorr.exceptions import InputError
from redcorr.mie import n_terms, series_coefficients, sphere, sphere_amplitudes, sphere_phase_function

ROOT = Path(__file__).resolve().parents[1]

# refractive indices spanning weak to strong absorption and |m| up to 10
M_GRID = np.array([1.33, 1.05 + 0.001j, 1.5 + 0.01j, 1.7 + 0.6j, 2.0 + 1.0j, 3.0 + 4.0j, 10.0 + 0.1j, 10.0 + 10.0j])


HAVE_NUMBA = mie_module._numba_kernels() is not None


@pytest.fixture(params=["numba", "numpy"])
def path(request):
    """The engine to pass as ``engine=``: each test runs on the numba kernel and on numpy."""
    if request.param == "numba" and not HAVE_NUMBA:
        pytest.skip("numba is not installed")
    return request.param


def direct_series(m, x):
    """Q_ext, Q_sca, Q_back, g summed from scipy's spherical Bessel functions.

    a_n and b_n from BH83 eq. 4.53 (with the medium's permeability equal to
    the sphere's), psi_n(z) = z j_n(z), xi_n(z) = z h_n^(1)(z); the sums from
    BH83 eqs. 4.61, 4.62, 4.82 and the g formula below eq. 4.92 (BH83 p. 120).
    Independent of redcorr's recurrences: no logarithmic derivative is used.
    """
    nstop = int(x + 4.05 * x ** (1 / 3) + 2)
    n = np.arange(1, nstop + 1)
    mx = m * x

    def psi(z):
        return z * spherical_jn(n, z)

    def dpsi(z):
        return spherical_jn(n, z) + z * spherical_jn(n, z, derivative=True)

    h = spherical_jn(n, x) + 1j * spherical_yn(n, x)
    dh = spherical_jn(n, x, derivative=True) + 1j * spherical_yn(n, x, derivative=True)
    xi, dxi = x * h, h + x * dh
    a = (m * psi(mx) * dpsi(x) - psi(x) * dpsi(mx)) / (m * psi(mx) * dxi - xi * dpsi(mx))
    b = (psi(mx) * dpsi(x) - m * psi(x) * dpsi(mx)) / (psi(mx) * dxi - m * xi * dpsi(mx))
    f = 2 * n + 1
    q_ext = 2 / x**2 * np.sum(f * (a + b).real)
    q_sca = 2 / x**2 * np.sum(f * (abs(a) ** 2 + abs(b) ** 2))
    q_back = abs(np.sum(f * (-1.0) ** n * (a - b))) ** 2 / x**2
    nn = n[:-1]
    cross = np.sum(nn * (nn + 2) / (nn + 1) * (a[:-1] * a[1:].conj() + b[:-1] * b[1:].conj()).real)
    cross += np.sum(f / (n * (n + 1)) * (a * b.conj()).real)
    return q_ext, q_sca, q_back, 4 / x**2 * cross / q_sca


@pytest.mark.parametrize("m", [1.33, 1.5 + 0.01j, 2.0 + 1.0j, 3.0 + 4.0j, 1.2 + 0.05j])
@pytest.mark.parametrize("x", [0.3, 1.0, 4.0, 12.0, 30.0])
def test_direct_bessel_series(path, m, x):
    # scipy.special spherical Bessel functions, direct series (BH83 eq. 4.53);
    # moderate x and |m|x where the direct evaluation itself is accurate (scipy's Bessel
    # functions to ~1e-15, a few digits lost to cancellation in a_n, b_n): measured agreement
    # 2e-13, 1e-9 asserted so that other scipy builds pass too
    r = sphere(m, x, engine=path)
    ref = direct_series(m, x)
    np.testing.assert_allclose([r.q_ext, r.q_sca, r.q_back, r.g], ref, rtol=1e-9)


# 60-digit mpmath 1.3.0 evaluation of the direct series (a_n, b_n of BH83 eq. 4.53
# with psi_n, chi_n from mpmath.besselj/bessely of half-integer order, the same
# n_stop = int(x + 4.05 x^(1/3) + 2) terms), computed once for this file:
# (m, x): (Q_ext, Q_sca, Q_back, g)
HIGH_PRECISION = {
    (1.5 + 0.01j, 1e-6): (1.993074066512726e-08, 2.30775833111006e-25, 3.461637496663456e-25, 1.983297511090096e-13),
    (1.001 + 1e-7j, 1e-3): (
        2.6657760171475935e-10, 1.1847891693955675e-18, 1.7771830430301698e-18, 1.600587114880609e-07
    ),
    (10 + 10j, 0.05): (0.006352619992340213, 1.6720032146542233e-05, 2.5100822991024322e-05, -0.0004975049086287714),
    (1.33, 0.3): (0.0008924603817483723, 0.0008924603817483723, 0.0012859856110277888, 0.016435545442861087),
    (3 + 4j, 30.0): (2.258304476890548, 1.7517323857083749, 0.6035417164918788, 0.6367843563733393),
    (5.52, 120.0): (2.0562137546701633, 2.0562137546701633, 71.54332760175558, 0.5032819578120913),
}


@pytest.mark.parametrize(("m", "x"), list(HIGH_PRECISION))
def test_high_precision_reference(path, m, x):
    # tiny x, m close to 1, |m| = 14, a large real index: the reference has 16 significant
    # digits; 2e-13 allows the rounding accumulated over up to ~150 terms of the recurrences
    r = sphere(m, x, engine=path)
    np.testing.assert_allclose([r.q_ext, r.q_sca, r.q_back, r.g], HIGH_PRECISION[(m, x)], rtol=2e-13)


def test_peer_miepython_grid():
    # miepython 3 (PyPI), used only as a test peer; agreement where |m|x >= 0.1,
    # below which the peer switches to its own small-particle approximation. Two double-
    # precision codes with different recurrences agree to 1e-12 (measured; 1e-9 asserted);
    # Q_back, an alternating sum that cancels strongly at large x, to 6e-9 (1e-6 asserted)
    miepython = pytest.importorskip("miepython")
    x = np.logspace(-1.5, 3, 16)
    mm, xx = np.meshgrid(M_GRID, x, indexing="ij")
    keep = np.abs(mm) * xx >= 0.1
    m, x = mm[keep], xx[keep]
    peer_ext, peer_sca, peer_back, peer_g = miepython.efficiencies_mx(np.conj(m), x)
    r = sphere(m, x)
    np.testing.assert_allclose(r.q_ext, peer_ext, rtol=1e-9)
    np.testing.assert_allclose(r.q_sca, peer_sca, rtol=1e-9)
    np.testing.assert_allclose(r.g, peer_g, rtol=1e-9, atol=1e-12)
    np.testing.assert_allclose(r.q_back, peer_back, rtol=1e-6)


def test_peer_at_largest_sizes():
    # miepython 3 (PyPI) as peer at x = 1e4, including |m| < 1 and a real index,
    # where too low a start of the D_n recurrence shows up first; Q_ext, Q_sca and g are sums of
    # positive-dominated terms here, equal to 5e-13 between the two codes (measured; 1e-11
    # asserted)
    miepython = pytest.importorskip("miepython")
    m = np.array([1.33, 0.8 + 0.01j, 1.5 + 0.01j])
    peer_ext, peer_sca, _, peer_g = miepython.efficiencies_mx(np.conj(m), np.full(3, 1e4))
    r = sphere(m, 1e4)
    np.testing.assert_allclose(r.q_ext, peer_ext, rtol=1e-11)
    np.testing.assert_allclose(r.q_sca, peer_sca, rtol=1e-11)
    np.testing.assert_allclose(r.g, peer_g, rtol=1e-11)


def test_peer_documented_example():
    # miepython 3.3 docstring of efficiencies_mx (tests/published.py). atol 6e-7: the values are
    # printed to six decimals, i.e. to ±5e-7
    ex = MIEPYTHON_EFFICIENCIES_MX_EXAMPLE
    r = sphere(ex["m"], ex["x"], convention="n-ik")
    expected = [ex["q_ext"], ex["q_sca"], ex["q_back"], ex["g"]]
    np.testing.assert_allclose([r.q_ext, r.q_sca, r.q_back, r.g], expected, atol=6e-7)


def test_rayleigh_limit(path):
    # BH83 eqs. 5.7 and 5.8 (Rayleigh limit), from memory:
    # Q_abs = 4x Im[(m²-1)/(m²+2)], Q_sca = (8/3) x⁴ |(m²-1)/(m²+2)|²;
    # corrections are O(|m|²x²) relative, below 2e-8 here
    x = 1e-5
    pol = (M_GRID**2 - 1) / (M_GRID**2 + 2)
    r = sphere(M_GRID, x, engine=path)
    np.testing.assert_allclose(r.q_sca, 8 / 3 * x**4 * np.abs(pol) ** 2, rtol=1e-6)
    absorbing = M_GRID.imag > 0
    np.testing.assert_allclose(r.q_abs[absorbing], 4 * x * pol.imag[absorbing], rtol=1e-6)


def test_rayleigh_power_laws_down_to_smallest_size(path):
    # Rayleigh limit (BH83 eqs. 5.7, 5.8 and, for Q_back = 4x⁴|(m²-1)/(m²+2)|²,
    # BH83 §5.2, from memory): Q_abs ∝ x, Q_sca and Q_back ∝ x⁴, and g ∝ x²
    # (lowest-order a_1 a_2* and a_1 b_1* terms, from memory); exact scaling
    # from x = 1e-6 down to the smallest accepted x = 1e-30
    m = np.array([1.5 + 0.01j, 10.0 + 10.0j, 1.001, 0.5 + 0.001j])
    x = np.array([1e-6, 1e-30])
    r = sphere(m[:, None], x, engine=path)
    pol = (m**2 - 1) / (m**2 + 2)
    np.testing.assert_allclose(r.q_back / x**4, (4 * np.abs(pol) ** 2)[:, None] * [1, 1], rtol=1e-6)
    for q, power in ((r.q_ext, 1), (r.q_sca, 4), (r.g, 2)):
        scaled = q / x**power if power != 1 else np.where(m.imag[:, None] > 0, q / x, q / x**4)
        # (corrections at x = 1e-6 are O(|m|²x²) ~ 2e-10, a few times that for g)
        np.testing.assert_allclose(scaled[:, 1], scaled[:, 0], rtol=5e-9)


@pytest.mark.parametrize("x", [1e-6, 1e-3])
def test_tiny_spheres_keep_precision(path, x):
    # Rayleigh limit (BH83 eqs. 5.7, 5.8, from memory) holds to relative O(x²),
    # i.e. to ~1e-12 or better here; g of a Rayleigh sphere is O(x²) and
    # its forward/backward balance must still add up (Q_ext = Q_sca + Q_abs).
    m = np.array([1.5 + 0.01j, 1.5, 10.0 + 10.0j, 1.001])
    pol = (m**2 - 1) / (m**2 + 2)
    r = sphere(m, x, engine=path)
    np.testing.assert_allclose(r.q_sca, 8 / 3 * x**4 * np.abs(pol) ** 2, rtol=max(10 * x**2, 1e-12))
    assert np.all(np.abs(r.g) < 10 * x**2)
    # a real index scatters without absorbing: Q_ext equals Q_sca to full precision
    real = m.imag == 0
    np.testing.assert_allclose(r.q_ext[real], r.q_sca[real], rtol=1e-12)


def test_small_absorbing_grains_depend_on_volume_only(path):
    # fact of the trade (common practice, no source): for absorbing grains with
    # x << 1, C_ext ∝ volume, so one grain split into 1000 of the same total
    # volume gives the same extinction
    # (corrections are O(|m|²x²) relative, below 1e-6 here)
    m = np.array([1.7 + 0.6j, 3.0 + 4.0j, 1.5 + 0.01j])
    x_big = 2e-4
    x_small = x_big / 1000 ** (1 / 3)
    c_big = sphere(m, x_big, engine=path).q_ext * x_big**2  # C_ext ∝ Q_ext x² at fixed wavelength
    c_many = 1000 * sphere(m, x_small, engine=path).q_ext * x_small**2
    np.testing.assert_allclose(c_many, c_big, rtol=1e-5)


def test_extinction_paradox(path):
    # van de Hulst 1957, §8.22 (extinction paradox): Q_ext -> 2 for x -> infinity
    r = sphere(M_GRID[:, None], np.array([300.0, 3000.0]), engine=path)
    assert np.all(np.abs(r.q_ext[:, 1] - 2) < 0.02)
    assert np.all(np.abs(r.q_ext[:, 1] - 2) < np.abs(r.q_ext[:, 0] - 2))


def test_extinction_paradox_at_largest_sizes():
    # van de Hulst 1957, §8.22: Q_ext -> 2; x = 1e4 with |m| up to 14 (numba kernel)
    r = sphere(M_GRID, 1e4)
    assert np.all(np.abs(r.q_ext - 2) < 0.01)


def test_energy_conservation_and_shape(path):
    # Q_ext = Q_sca + Q_abs with Q_abs >= 0 (BH83 eq. 3.25; common practice). Q_ext and Q_sca
    # are separate sums (BH83 eqs. 4.61, 4.62) and Q_abs is reported as their difference, so
    # what can be checked is: a sphere of real index extinguishes by scattering alone, Q_ext =
    # Q_sca to rounding (measured 1.3e-15 relative; 1e-12 asserted), and an absorbing one never
    # scatters more than it extinguishes.
    m = np.append(M_GRID, [0.8, 10.0])
    r = sphere(m[:, None], np.logspace(-6, 3, 10), engine=path)
    assert r.q_ext.shape == (m.size, 10)
    real = m.imag == 0
    np.testing.assert_allclose(r.q_ext[real], r.q_sca[real], rtol=1e-12)
    assert np.all(r.q_abs[real] == 0)  # bitwise: documented as exactly 0 for a real index
    assert np.all(r.q_sca[~real] <= r.q_ext[~real]) and np.all(r.q_abs >= 0)
    assert np.all((r.g > -1) & (r.g < 1))


@pytest.mark.skipif(not HAVE_NUMBA, reason="numba is not installed")
def test_numba_and_numpy_paths_agree():
    # same formulas compiled and in numpy (common practice, no source)
    # (the numpy path is slow for |m|x ~ 1e5, so the largest x only for |m| <= 1.5)
    m = np.append(M_GRID[:, None] + np.zeros(10), [1.5 + 0.01j] * 10)
    x = np.append(np.tile(np.append(np.logspace(-6, 2, 9), 1234.5), M_GRID.size), np.logspace(-6, 4, 10))
    theta = np.linspace(0, np.pi, 5)
    a = sphere(m, x, engine="numba")
    s_a = sphere_amplitudes(M_GRID[:, None], x[:8], theta, engine="numba")
    b = sphere(m, x, engine="numpy")
    s_b = sphere_amplitudes(M_GRID[:, None], x[:8], theta, engine="numpy")
    for name in ("q_ext", "q_sca", "q_abs", "q_back", "g"):
        # The same sums in a different order of operations: rounding accumulated over up to ~1e4
        # terms stays below 1e-10; Q_back sums alternating terms: relative rounding ~1e-8 at x ~ 1e4
        rtol = 1e-7 if name == "q_back" else 1e-10
        np.testing.assert_allclose(getattr(a, name), getattr(b, name), rtol=rtol, atol=1e-300, err_msg=name)
    np.testing.assert_allclose(s_a, s_b, rtol=1e-10)


def test_a_sphere_gets_the_same_bits_alone_or_in_a_batch(path):
    # A sphere's efficiencies are a function of its own (m, x) only; quantities built by
    # subtracting nearly equal results (R_V of grey dust) rely on it, so this is bitwise
    # (a documented property of redcorr.mie, common practice, no source).
    rng = np.random.default_rng(7)
    x = 10 ** rng.uniform(-3, 3, 60)
    m = rng.uniform(1.1, 2.5, 60) + 1j * 10 ** rng.uniform(-4, 0, 60)
    batch = sphere(m, x, engine=path)
    for i in (0, 17, 42, 59):
        alone = sphere(m[i], x[i], engine=path)
        for name in ("q_ext", "q_sca", "q_abs", "q_back", "g"):
            assert getattr(alone, name) == getattr(batch, name)[i], name
    reordered = sphere(m[::-1], x[::-1], engine=path)
    for name in ("q_ext", "q_sca", "q_abs", "q_back", "g"):
        np.testing.assert_array_equal(getattr(reordered, name)[::-1], getattr(batch, name), err_msg=name)


def test_sphere_of_the_medium_index_does_not_scatter(path):
    # Bohren & Huffman 1983, eq. 4.53 (from memory): with m = 1 the numerators of a_n and b_n
    # vanish term by term, so nothing is scattered or absorbed at any size; g is then
    # undefined and given as 0 (the convention documented in redcorr.mie.sphere).
    # (at x = 1e-4 every sum is exactly 0, where the numba kernel once divided by Q_sca = 0)
    r = sphere([1.0, 1.0 + 0j, 1.0, 1.5], [1e-2, 10.0, 1e-4, 10.0], engine=path)
    s1, s2 = sphere_amplitudes(1.0, [0.1, 30.0], [0.0, 1.0], engine=path)
    for name in ("q_ext", "q_sca", "q_abs", "q_back", "g"):
        # bitwise zero: the numerators vanish exactly, so every sum is a sum of zeros
        assert np.all(getattr(r, name)[:3] == 0), name
    assert r.q_ext[3] > 1  # a real contrast still scatters
    assert not np.any(s1) and not np.any(s2)
    a, b = series_coefficients(1.0, 5.0)
    assert a.size > 5 and not np.any(a) and not np.any(b)


@settings(max_examples=60, deadline=None)
@given(
    n=st.floats(0.1, 10.0),
    log_k=st.floats(-8.0, 1.0),
    absorbing=st.booleans(),
    log_x=st.floats(-6.0, 2.0),
)
def test_physical_bounds_on_random_spheres(n, log_k, absorbing, log_x):
    # common practice, no source: efficiencies are finite and >= 0, |g| < 1,
    # Q_ext = Q_sca + Q_abs, and both code paths give the same numbers. Contrasts |m - 1|
    # below 1e-6 are left out: there D_n(mx) - D_n(x) is rounding noise (see the Notes of
    # redcorr.mie.sphere); m = 1 itself has its own test.
    m = complex(n, 10**log_k if absorbing else 0.0)
    assume(abs(m - 1) > 1e-6)
    x = 10**log_x
    a = sphere(m, x)
    b = sphere(m, x, engine="numpy")
    for r in (a, b):
        assert np.isfinite([r.q_ext, r.q_sca, r.q_back, r.g]).all()
        assert r.q_sca >= 0 and r.q_back >= 0 and r.q_abs >= -1e-13 * r.q_ext
        assert abs(r.g) < 1
    # both code paths: the same sums, rounding only (see test_numba_and_numpy_paths_agree)
    np.testing.assert_allclose([a.q_ext, a.q_sca, a.g], [b.q_ext, b.q_sca, b.g], rtol=1e-10, atol=1e-300)


def test_environment_variable_forces_numpy():
    # REDCORR_MIE_NUMPY=1 at import makes engine="auto" mean numpy (the module docstring);
    # numba is then not even imported
    code = (
        "import sys, redcorr.mie as M; r = M.sphere(1.5, 2.0); "
        "print(M.default_engine(), 'numba' in sys.modules, float(r.q_ext))"
    )
    env = dict(os.environ, REDCORR_MIE_NUMPY="1")
    out = subprocess.run([sys.executable, "-c", code], cwd=ROOT, env=env, capture_output=True, text=True, check=True)
    used, numba_loaded, q_ext = out.stdout.split()
    assert used == "numpy"
    assert numba_loaded == "False"
    # scipy direct series as reference (BH83 eq. 4.53); at x = 2 with a real index there is no
    # cancellation to speak of and both agree to rounding, hence 1e-12
    np.testing.assert_allclose(float(q_ext), direct_series(1.5, 2.0)[0], rtol=1e-12)


def test_default_engine():
    # without the environment variable, "auto" is numba when it imports (the module docstring)
    assert mie_module.default_engine() == ("numba" if HAVE_NUMBA and not mie_module._NUMPY_REQUESTED else "numpy")
    assert mie_module.ENGINES == ("auto", "numba", "numpy")


def test_unknown_engine():
    with pytest.raises(InputError, match=r"engine='fortran' is not known; choose one of 'auto', 'numba', 'numpy'"):
        sphere(1.5, 1.0, engine="fortran")


def test_numba_engine_without_numba(monkeypatch):
    # engine="numba" is a request, never silently replaced: without numba it raises, while
    # "auto" falls back to numpy
    monkeypatch.setattr(mie_module, "_numba_kernels", lambda: None)
    with pytest.raises(ImportError, match="engine='numba' needs numba"):
        sphere(1.5, 1.0, engine="numba")
    assert mie_module.default_engine() == "numpy"
    assert sphere(1.5, 1.0).q_ext == sphere(1.5, 1.0, engine="numpy").q_ext


def test_scalar_and_quantity_input():
    r = sphere(1.5 + 0.01j, 2.0 * u.dimensionless_unscaled)
    assert r.q_ext.shape == ()
    assert isinstance(r.q_ext, np.ndarray)
    # the single-scattering albedo is Q_sca/Q_ext by definition (BH83 Sect. 3.4): one division
    np.testing.assert_allclose(r.albedo, r.q_sca / r.q_ext, rtol=1e-15)


def test_module_is_a_plain_module():
    assert not callable(mie_module)


def test_term_count():
    # Wiscombe 1980, Appl. Opt. 19, 1505, eq. 3 (8 < x < 4200): x + 4.05 x^(1/3) + 2
    assert n_terms(100.0) == int(100 + 4.05 * 100 ** (1 / 3) + 2)
    a, b = series_coefficients(1.5, 100.0)
    assert a.size == b.size == n_terms(100.0)


# ------------------------------------------------------------ amplitudes


def test_optical_theorem_and_backscatter(path):
    # BH83 eq. 4.76 (optical theorem): Q_ext = (4/x²) Re S(0°), with S1(0) = S2(0);
    # BH83 eq. 4.82 with 4.74: Q_back = 4 |S1(180°)|² / x²
    m, x = M_GRID[:, None], np.array([0.2, 3.0, 40.0])
    s1, s2 = sphere_amplitudes(m, x, [0.0, np.pi], engine=path)
    r = sphere(m, x, engine=path)
    # Tolerances: S1(0) = S2(0) term by term (π_n = τ_n at θ = 0), so rounding only (1e-12);
    # the amplitude and efficiency routes are different sums: 1e-10, and 1e-8 for the
    # alternating backscatter sum
    np.testing.assert_allclose(s1[..., 0], s2[..., 0], rtol=1e-12)
    np.testing.assert_allclose(4 / x**2 * s1[..., 0].real, r.q_ext, rtol=1e-10)
    np.testing.assert_allclose(4 / x**2 * np.abs(s1[..., 1]) ** 2, r.q_back, rtol=1e-8)


def test_amplitudes_against_peer(path):
    # miepython 3 S1_S2 with norm="wiscombe" returns the unnormalized amplitudes
    # in its exp(+iωt) convention: the complex conjugates of BH83's. Two double-precision codes:
    # rtol 1e-9, with an atol of 1e-12 of the largest amplitude for values near the zeros of S
    miepython = pytest.importorskip("miepython")
    theta = np.linspace(0, np.pi, 13)
    for m, x in [(1.5 + 0.01j, 2.0), (3.0 + 4.0j, 25.0), (1.33, 0.7)]:
        p1, p2 = miepython.S1_S2(np.conj(m), x, np.cos(theta), norm="wiscombe")
        s1, s2 = sphere_amplitudes(m, x, theta, engine=path)
        np.testing.assert_allclose(s1, np.conj(p1), rtol=1e-9, atol=1e-12 * np.abs(p1).max())
        np.testing.assert_allclose(s2, np.conj(p2), rtol=1e-9, atol=1e-12 * np.abs(p2).max())


def test_phase_function_normalized_with_mean_cosine_g(path):
    # ∫ p dΩ = 1 and ⟨cos θ⟩ = g (BH83 eqs. 3.13-3.14): the amplitude route
    # must agree with the efficiency route. Trapezoid rule on 20001 angles: error O(h²), measured
    # 4e-8 for these forward-peaked functions, hence 1e-6 and 1e-5 (g is a smaller number)
    theta = np.linspace(0, np.pi, 20001)
    m, x = np.array([1.5 + 0.01j, 2.0 + 1.0j]), np.array([[0.5], [5.0]])
    p = sphere_phase_function(m, x, theta, engine=path)
    assert p.shape == (2, 2, theta.size)
    w = 2 * np.pi * np.sin(theta)
    np.testing.assert_allclose(trapezoid(p * w, theta, axis=-1), 1, rtol=1e-6)
    g = trapezoid(p * w * np.cos(theta), theta, axis=-1)
    np.testing.assert_allclose(g, sphere(m, x, engine=path).g, rtol=1e-5)


def test_phase_function_rayleigh_shape():
    # Rayleigh phase function 3(1 + cos²θ)/(16π) for x << 1 (BH83 §5.2, from memory); the
    # corrections are O(x²) = 1e-8 relative at x = 1e-4, hence 1e-6
    theta = np.linspace(0, np.pi, 7)
    p = sphere_phase_function(1.5 + 0.1j, 1e-4, theta)
    np.testing.assert_allclose(p, 3 * (1 + np.cos(theta) ** 2) / (16 * np.pi), rtol=1e-6)


def test_angles_as_quantity():
    a = sphere_amplitudes(1.5, 2.0, 90 * u.deg)
    b = sphere_amplitudes(1.5, 2.0, np.pi / 2)
    np.testing.assert_allclose(a, b, rtol=1e-14)  # 90° → π/2 rad is exact to rounding


# ------------------------------------------------------------ bad input


@pytest.mark.parametrize(
    ("kwargs", "match"),
    [
        ({"m": 1.5, "x": -1.0}, r"x=-1\.0 is outside the allowed range \[1e-30, 1e\+06\]"),
        ({"m": 1.5, "x": 1e-31}, r"x=1e-31 is outside the allowed range"),
        ({"m": 1.5, "x": np.nan}, r"x=nan is outside the allowed range"),
        ({"m": 1.5, "x": 0.0}, r"x=0\.0 is outside"),
        ({"m": 1.5, "x": 2e6}, r"x=2000000\.0 is outside"),
        ({"m": 1.5, "x": "big"}, r"x='big' is not a real number"),
        ({"m": complex(np.nan, 0), "x": 1.0}, r"m=.*must be a finite complex number"),
        ({"m": -1.5 + 0.1j, "x": 1.0}, r"m=\(-1\.5\+0\.1j\) must have a real part > 0"),
        ({"m": [1.5 + 0.1j, 1.5 - 0.1j], "x": 1.0}, r"m=\(1\.5-0\.1j\) has a negative imaginary part"),
        ({"m": 1.5 + 0.1j, "x": 1.0, "convention": "n-ik"}, r"m=\(1\.5\+0\.1j\) has a positive imaginary part"),
        ({"m": 1.5, "x": 1.0, "convention": "n+ki"}, r"convention='n\+ki' is not known"),
        ({"m": [1.5, 1.6], "x": [1.0, 2.0, 3.0]}, r"m of shape \(2,\) and x of shape \(3,\) do not broadcast"),
        ({"m": 1.5, "x": 2.0 * u.um}, r"x has unit um"),
    ],
)
def test_bad_input(kwargs, match):
    with pytest.raises(InputError, match=match):
        sphere(**kwargs)


def test_bad_angles():
    with pytest.raises(InputError, match=r"theta=4\.0 is outside the allowed range \[0, π\]"):
        sphere_amplitudes(1.5, 1.0, [0.0, 4.0])
    with pytest.raises(InputError, match="theta has unit m"):
        sphere_amplitudes(1.5, 1.0, 1.0 * u.m)
    with pytest.raises(InputError, match="must be single numbers"):
        series_coefficients([1.5, 1.6], 1.0)
