"""Size distributions against WD01's equations, the sdist's tabulated sizes, and definitions."""

import math
from pathlib import Path

import numpy as np
import pytest
from astropy import units as u
from astropy.table import Table
from published import DRAINE03_RENORMALIZATION, WD01_CASE_A_B_C

from redcorr.exceptions import InputError, UnknownNameError
from redcorr.grains import (
    LogNormal,
    PowerLaw,
    PowerLawCutoff,
    TabulatedSizes,
    WD01Carbonaceous,
    WD01Silicate,
    mrn77,
)
from redcorr.grains.sizes import M_C_G, RHO_GRAPHITE
from redcorr.io.grains import get_grain_model, wd01_sizes

DATA = Path(__file__).parent / "data"

# (R_V, b_C, column tag) of the Draine (2003) Milky Way mixtures, WD01 case A (tests/published.py).
MIXTURES = [(float(r_v), b_c, f"{r_v}_{b_c * 1e5:.1f}_A") for r_v, b_c in WD01_CASE_A_B_C.items()]


@pytest.fixture(scope="module")
def sdist_sizes():
    # Weingartner & Draine (2001) size distributions as tabulated in the PyPI sdist
    # hyperion-dust 0.1.0 (input/d03/wd01/sizes/), every 10th of 1000 radii, per H per µm,
    # without the Draine (2003) renormalization; extracted by scripts/make_data.py.
    return Table.read(DATA / "wd01_sizes.ecsv")


@pytest.mark.parametrize(("r_v", "b_c", "tag"), MIXTURES)
def test_wd01_matches_sdist_tables(sdist_sizes, r_v, b_c, tag):
    a = np.asarray(sdist_sizes["a"])
    carbon, silicate = wd01_sizes(r_v, b_c, "A")
    for dist, col in ((carbon, f"graphite_{tag}"), (silicate, f"silicate_{tag}")):
        ref = np.asarray(sdist_sizes[col])
        mass = a**4 * ref  # where the grain volume sits (a^4 dn/da per ln a)
        use = mass > 1e-3 * mass.max()
        # WD01 eqs. (2)-(6) with Table 1 vs the sdist's tables: 4-digit printed values.
        np.testing.assert_allclose(dist(a[use]), ref[use], rtol=2e-3)


def test_wd01_log_normal_carbon_budget():
    # WD01 eq. (3) is normalized so that the two log-normals hold b_C carbon atoms per H
    # (WD01 §2): check ∫ D(a) (4π/3) a³ ρ / m_C da = b_C. rel 2e-3: trapezoid rule on 6000
    # log-spaced radii and the log-normals' tails beyond 0.1 µm.
    carbon = WD01Carbonaceous(-1.54, -0.165, 0.0107, 0.428, 9.99e-12, 6.0e-5)
    power = WD01Silicate(-1.54, -0.165, 0.0107, 0.428, 9.99e-12)
    a = np.geomspace(3.5e-4, 0.1, 6000)
    vsg = carbon(a) - power(a)
    n_c = np.trapezoid(vsg * 4 * math.pi / 3 * (a * 1e-4) ** 3 * RHO_GRAPHITE / M_C_G, a)
    assert n_c == pytest.approx(6.0e-5, rel=2e-3)


def test_wd01_below_smallest_radius_is_zero():
    carbon, silicate = wd01_sizes(3.1, 6.0e-5)
    # WD01 §2: the distributions start at 3.5 Å (exactly zero below, by definition).
    assert carbon(3.4e-4) == 0.0 and silicate(3.4e-4) == 0.0
    assert carbon(3.5e-4) > 0


@pytest.mark.parametrize("r_v", list(WD01_CASE_A_B_C))
def test_named_wd01_models_carry_the_draine_renormalization(r_v):
    # Draine (2003): the Milky Way mixtures are the WD01 case-A distributions times 0.93, 1.18
    # and 1.42 (tests/published.py). rtol 1e-12: one multiplication apart.
    carbon, silicate = wd01_sizes(float(r_v), WD01_CASE_A_B_C[r_v])
    model = get_grain_model(f"wd01-rv{r_v}")
    a = np.geomspace(5e-4, 0.5, 7)
    by_material = {c.material.name: c.sizes(a) for c in model.components}
    scale = DRAINE03_RENORMALIZATION[r_v]
    np.testing.assert_allclose(by_material["silicate-d03"], scale * silicate(a), rtol=1e-12)
    np.testing.assert_allclose(by_material["graphite-d03"], scale * carbon(a), rtol=1e-12)


def test_wd01_quantity_radii():
    c1, _ = wd01_sizes(3.1, 6.0e-5)
    assert c1(100 * u.AA) == pytest.approx(c1(0.01), rel=1e-12)  # 100 Å = 0.01 µm, to rounding


def test_wd01_unknown_row():
    with pytest.raises(InputError, match="b_c=5e-05"):
        wd01_sizes(5.5, 5.0e-5)


def test_mrn_normalization():
    sil = mrn77("silicate")
    # Draine & Lee (1984) §6: A_sil = 10^-25.11 cm^2.5 per H, a^-3.5, 0.005-0.25 µm (from memory).
    a_cm = 0.1e-4
    dnda_per_cm = 10**-25.11 * a_cm**-3.5
    assert sil(0.1) == pytest.approx(dnda_per_cm * 1e-4, rel=1e-12)  # the same formula: rounding
    assert sil(0.3) == 0.0 and sil(0.004) == 0.0  # exactly zero outside 0.005-0.25 µm
    with pytest.raises(InputError, match="component='ice'"):
        mrn77("ice")


def test_power_law_moment():
    dist = PowerLaw(2.0, 3.5, 0.01, 1.0)
    # ∫ a^3 · 2 a^-3.5 da = 4 (√1 − √0.01) (calculus, common practice, no source); rel 1e-5 for
    # the quadrature on 2000 radii
    assert dist.moment(3, n=2000) == pytest.approx(4 * (1 - 0.1), rel=1e-5)


def test_power_law_cutoff():
    dist = PowerLawCutoff(1.0, 3.5, 0.2, 0.005)
    # the range ends by default at 10 a_c, where the cut-off is e^-10 (the class docstring); at
    # a_c the law is A a^-q e^-1; both to rounding
    assert dist.a_max == pytest.approx(2.0, rel=1e-12)
    assert dist(0.2) == pytest.approx(0.2**-3.5 * math.exp(-1), rel=1e-12)


def test_log_normal_volume():
    # Log-normal volume: (4π/3) B √(2π) σ a0³ exp(9σ²/2) (moment of a log-normal; common
    # practice, no source); with wide limits the cut is negligible. rel 1e-5 for the quadrature
    # on 3000 radii, 1e-4 for the amplitude solved back from that quadrature.
    dist = LogNormal(0.05, 0.3, amplitude=2.0, a_min=1e-4, a_max=10.0)
    expect = 4 * math.pi / 3 * 2.0 * math.sqrt(2 * math.pi) * 0.3 * 0.05**3 * math.exp(4.5 * 0.09)
    assert 4 * math.pi / 3 * dist.moment(3, n=3000) == pytest.approx(expect, rel=1e-5)
    by_volume = LogNormal(0.05, 0.3, volume=expect, a_min=1e-4, a_max=10.0)
    assert by_volume.amplitude == pytest.approx(2.0, rel=1e-4)
    with pytest.raises(InputError, match="exactly one"):
        LogNormal(0.05, 0.3)


def test_tabulated_sizes_interpolates_power_law_exactly():
    a = np.geomspace(0.01, 1.0, 5)
    table = TabulatedSizes(a[::-1], 3.0 * a[::-1] ** -3.5)
    # log-log interpolation reproduces a power law (common practice, no source): rounding of
    # log and exp only; exactly zero beyond the table
    assert table(0.05) == pytest.approx(3.0 * 0.05**-3.5, rel=1e-12)
    assert table(2.0) == 0.0
    assert np.isnan(table(np.nan))


@pytest.mark.parametrize(
    ("a", "y", "match"),
    [
        ([0.1, -0.2], [1.0, 1.0], "must be > 0"),
        ([0.1, 0.2], [1.0, -1.0], "dnda=-1.0"),
        ([0.1, 0.1, 0.2], [1.0, 1.0, 1.0], "repeated"),
        ([0.1], [1.0], "equal length >= 2"),
        ([0.1, np.nan], [1.0, 1.0], "finite"),
    ],
)
def test_tabulated_sizes_bad_input(a, y, match):
    with pytest.raises(InputError, match=match):
        TabulatedSizes(a, y)


@pytest.mark.parametrize(
    ("kwargs", "match"),
    [
        ({"amplitude": -1, "q": 3.5, "a_min": 0.01, "a_max": 1}, "amplitude=-1"),
        ({"amplitude": 1, "q": 3.5, "a_min": 0.5, "a_max": 0.1}, "a_max=0.1"),
        ({"amplitude": 1, "q": float("nan"), "a_min": 0.01, "a_max": 1}, "q=nan"),
    ],
)
def test_power_law_bad_input(kwargs, match):
    with pytest.raises(InputError, match=match):
        PowerLaw(**kwargs)


def test_grid_needs_sizes():
    with pytest.raises(InputError, match="n=3"):
        mrn77("graphite").grid(3)


def test_unknown_size_type():
    from redcorr.io.grains import build_component

    with pytest.raises(UnknownNameError, match="sizes.type='powerlaw'"):
        build_component({"material": "silicate-d03", "sizes": {"type": "powerlaw"}})


def test_tabulated_sizes_range_must_lie_inside_the_table():
    table = TabulatedSizes([0.01, 0.1, 1.0], [1.0, 1e-3, 1e-6], a_min=0.02, a_max=0.5)
    assert table(0.015) == 0.0 and table(0.05) > 0  # exactly zero below a_min
    with pytest.raises(InputError, match=r"a_max=2 µm lies outside the radii of size table table, \[0.01, 1\]"):
        TabulatedSizes([0.01, 0.1, 1.0], [1.0, 1e-3, 1e-6], a_max=2.0)


def test_wd01_explicit_and_named_parameters_conflict():
    from redcorr.io.grains import build_component

    spec = {"type": "wd01-silicate", "r_v": 3.1, "alpha": -1.5}
    with pytest.raises(InputError, match="not both"):
        build_component({"material": "silicate-d03", "sizes": spec})
