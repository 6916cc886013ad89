"""Tests of redcorr.phase: Henyey-Greenstein and population Mie phase functions.

References: Henyey, L. G. & Greenstein, J. L. 1941, ApJ 93, 70 ("HG41");
Bohren, C. F. & Huffman, D. R. 1983 ("BH83"); equation numbers from memory.
"""

import numpy as np
import pytest
from astropy import units as u
from scipy.integrate import quad, trapezoid

from redcorr.exceptions import InputError
from redcorr.mie import sphere, sphere_phase_function
from redcorr.phase import henyey_greenstein, mean_cosine, population_phase_function

THETA = np.linspace(0, np.pi, 20001)


@pytest.mark.parametrize("g", [-0.5, 0.0, 0.3, 0.8, 0.95])
def test_hg_normalized_with_mean_cosine_g(g):
    # HG41: ∫ p dΩ = 1 and ⟨cos θ⟩ = g; integrated with scipy.integrate.quad in μ = cos θ, whose
    # error on this smooth integrand is below 1e-12, hence 1e-9
    def p(mu):
        return henyey_greenstein(np.arccos(mu), g)

    norm = 2 * np.pi * quad(p, -1, 1, epsabs=1e-13, limit=200)[0]
    mean = 2 * np.pi * quad(lambda mu: mu * p(mu), -1, 1, epsabs=1e-13, limit=200)[0]
    assert norm == pytest.approx(1, rel=1e-9)
    assert mean == pytest.approx(g, rel=1e-9, abs=1e-12)


def test_hg_isotropic_and_forward_value():
    # HG41: g = 0 gives 1/(4π); forward value (1+g)/(4π(1-g)²); closed forms, rounding only
    assert henyey_greenstein(1.0, 0.0) == pytest.approx(1 / (4 * np.pi), rel=1e-12)
    assert henyey_greenstein(0.0, 0.6) == pytest.approx(1.6 / (4 * np.pi * 0.4**2), rel=1e-12)
    # 30° → π/6 rad: rounding only
    np.testing.assert_allclose(henyey_greenstein(30 * u.deg, 0.5), henyey_greenstein(np.pi / 6, 0.5), rtol=1e-14)


def test_mean_cosine_of_tabulated_hg():
    # HG41: ⟨cos θ⟩ = g, here by the trapezoid rule on 20001 angles: O(h²) error, ~1e-7 for this
    # forward-peaked function, hence 1e-5
    np.testing.assert_allclose(mean_cosine(THETA, henyey_greenstein(THETA, 0.7)), 0.7, rtol=1e-5)


def test_population_normalized_and_consistent_with_efficiencies():
    # ∫ p dΩ = 1 and ⟨cos θ⟩ equal to the C_sca-weighted g of the efficiencies
    # (BH83 eqs. 3.13, 3.14, 4.61, 4.62): two independent routes through the series.
    # Tolerances: trapezoid rule on 20001 angles for the integrals (1e-6, and 1e-5 for g, the
    # smaller number); the C_sca-weighted mean is the same sum as the module's, rounding only.
    radius = np.geomspace(0.005, 0.25, 40)  # µm
    weight = radius**-3.5 * np.gradient(radius)  # an MRN-like slope (Mathis et al. 1977)
    pop = population_phase_function(1.7 + 0.03j, radius, weight, 0.55, THETA)
    assert 2 * np.pi * trapezoid(pop.p * np.sin(THETA), THETA) == pytest.approx(1, rel=1e-6)
    assert mean_cosine(THETA, pop.p) == pytest.approx(pop.g, rel=1e-5)
    r = sphere(1.7 + 0.03j, 2 * np.pi * radius / 0.55)
    c_sca = np.pi * radius**2 * r.q_sca
    assert pop.c_sca == pytest.approx(np.sum(weight * c_sca) / np.sum(weight), rel=1e-12)
    # HG with the same g is normalized too, and differs from the exact Mie
    # function somewhere by more than 10% (HG is an approximation)
    hg = pop.henyey_greenstein()
    assert 2 * np.pi * trapezoid(hg * np.sin(THETA), THETA) == pytest.approx(1, rel=1e-6)
    assert np.max(np.abs(pop.p / hg - 1)) > 0.1


def test_population_of_one_size_is_the_single_sphere():
    # one size: the weighted means are that sphere's own values, to rounding
    pop = population_phase_function(1.5 + 0.01j, [0.2], [3.0], 0.6 * u.um, [0.0, 1.0, 2.0])
    single = sphere_phase_function(1.5 + 0.01j, 2 * np.pi * 0.2 / 0.6, [0.0, 1.0, 2.0])
    np.testing.assert_allclose(pop.p, single, rtol=1e-12)
    assert pop.g == pytest.approx(float(sphere(1.5 + 0.01j, 2 * np.pi * 0.2 / 0.6).g), rel=1e-12)


def test_population_index_per_radius():
    radius = np.array([0.1, 0.2])
    one = population_phase_function(1.5 + 0.01j, radius, [1, 2], 0.55, [0.0, 1.0])
    each = population_phase_function(np.full(2, 1.5 + 0.01j), radius, [1, 2], 0.55, [0.0, 1.0])
    np.testing.assert_allclose(each.p, one.p, rtol=1e-14)  # the same index per radius: rounding only
    with pytest.raises(InputError, match=r"m of shape \(3,\) must be one value or one per radius"):
        population_phase_function(np.full(3, 1.5), radius, [1, 1], 0.55, [0.0])


def test_population_units():
    a = population_phase_function(1.5, [0.1, 0.2] * u.um, [1, 1], 5500 * u.AA, [0.5])
    b = population_phase_function(1.5, [0.1, 0.2], [1, 1], 0.55, [0.5])
    np.testing.assert_allclose(a.p, b.p, rtol=1e-12)  # µm and Å → µm conversions: rounding only


@pytest.mark.parametrize(
    ("args", "match"),
    [
        (([0.1, -0.2], [1, 1], 0.55), r"radius=-0\.2 must be a finite length > 0"),
        (([0.1, 0.2], [1, -1], 0.55), r"weight=-1\.0 must be finite and >= 0"),
        (([0.1, 0.2], [0, 0], 0.55), "at least one value > 0"),
        (([0.1, 0.2], [1], 0.55), r"weight of shape \(1,\) must match radius of shape \(2,\)"),
        (([0.1, 0.2], [1, 1], -0.55), r"wavelength=-0\.55 must be a single length > 0"),
        (([0.1, 0.2], [1, 1], 1 * u.s), "wavelength has unit s"),
    ],
)
def test_population_bad_input(args, match):
    with pytest.raises(InputError, match=match):
        population_phase_function(1.5, *args, [0.0, 1.0])


def test_hg_bad_input():
    with pytest.raises(InputError, match=r"g=1\.0 is outside the allowed range \(-1, 1\)"):
        henyey_greenstein(0.5, 1.0)
    with pytest.raises(InputError, match=r"theta=-0\.1 is outside"):
        henyey_greenstein(-0.1, 0.5)
    with pytest.raises(InputError, match="1-d increasing"):
        mean_cosine([0.0, 1.0], [1.0, 1.0])


def test_demo_section_compares_mie_with_hg(capsys, private_cache):
    # the demo's scattering section: one row per angle, positive phase functions
    from redcorr._paths import project_dir
    from redcorr.cli._demo import s25_scattering
    from redcorr.io._toml import load_toml

    demo_dir = project_dir("demo")
    s25_scattering.section(load_toml(demo_dir / "scenario.toml", what="demo scenario"), demo_dir)
    lines = capsys.readouterr().out.splitlines()
    header = lines[1].split()
    assert header[0] == "theta_deg" and sum(h.startswith("p_HG(g=") for h in header) == 2
    rows = [line.split() for line in lines[3 : 3 + len(s25_scattering.ANGLES_DEG)]]
    assert [float(r[0]) for r in rows] == list(s25_scattering.ANGLES_DEG)
    assert all(float(v) > 0 for r in rows for v in r[1:])
