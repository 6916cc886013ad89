"""The fit against the packaged table of dwarfs' intrinsic colours, row by row.

Source: Pecaut & Mamajek 2013, ApJS 208, 9, Table 5 (maintained version, as packaged:
``load_intrinsic_colours("dwarfs")``). Stars are made of the table's own rows, reddened by a known
E(B-V) through the project's bands with its own band integration (``band_extinction`` of a blackbody at
the row's T_eff behind F99 dust, R_V = 3.1), without noise, errors 0.01 mag: the fit's own model, so
these are self-consistency checks of the fit with the published table (the issue's first outside
check), not an outside truth. tests/test_fit_core.py checks the fit's statistics (coverage, the direct
sum) on a blackbody locus.
"""

import numpy as np
import pytest

from redcorr.exceptions import FitWarning
from redcorr.extinction import band_extinction
from redcorr.io import load_curve
from redcorr.io.filters import load_band
from redcorr.io.intrinsic import load_intrinsic_colours
from redcorr.photometric_reddening import FIT_FLAGS, ReddeningFitGrid
from redcorr.sed import blackbody

NAMES = ["bessell-B", "bessell-V", "bessell-R", "bessell-I", "twomass-J", "twomass-Ks"]
TYPES = ["B8V", "A0V", "F0V", "G2V", "K5V", "M2V"]
R_V = 3.1
ERROR = 0.01  # mag, given with each magnitude (the grid adds its 0.02-mag floor)


@pytest.fixture(scope="module")
def table():
    return load_intrinsic_colours("dwarfs").subset(NAMES)


@pytest.fixture(scope="module")
def bands():
    return [load_band(n) for n in NAMES]


@pytest.fixture(scope="module")
def grid(table, bands):
    return ReddeningFitGrid(bands, table.teff, table.magnitudes, load_curve("f99", r_v=R_V), ebv_max=1.5)


def reddened(table, bands, types, ebv):
    """Magnitudes of the table's rows ``types`` behind E(B-V) = ``ebv`` (distance modulus 10)."""
    curve = load_curve("f99", r_v=R_V)
    teff = table.teff_of(types)
    return teff, np.array([[10.0 + table.magnitude(t, b.name) + band_extinction(curve, b, blackbody(t), R_V * ebv)
                            for b in bands] for t in teff])


@pytest.mark.parametrize("ebv", [0.3, 0.9])
def test_table_rows_behind_known_reddening_are_recovered(table, bands, grid, ebv):
    """The model meets the magnitudes (chi2_min < 0.5), and E(B-V) and T_eff have the truth within 1 std.

    Without noise the likelihood peaks at the truth, up to the model's steps (grid nodes every 0.005
    in E(B-V) and 0.01 in ln T_eff, against errors of 0.022 mag with the floor: chi2 < 0.5; measured
    at most 0.11). The posterior is wide along the degeneracy of
    temperature and reddening and not symmetric, so its median is not the truth; measured: largest
    0.8 std off (F0V), hence 1 std.
    """
    teff, mags = reddened(table, bands, TYPES, ebv)
    fit = grid.fit(mags, np.full(mags.shape, ERROR), warn=False)
    assert np.all(fit.chi2 < 0.5), fit.chi2
    assert np.all(np.abs(fit.ebv["p50"] - ebv) < fit.ebv["std"]), (fit.ebv["p50"], fit.ebv["std"])
    assert np.all(np.abs(fit.teff["p50"] - teff) < fit.teff["std"]), (fit.teff["p50"], fit.teff["std"])


def test_unreddened_rows_give_the_tables_colours(table, bands, grid):
    """At E(B-V) = 0 the best fit has the table's colours (chi2_min < 0.5, as above), at the row's T_eff.

    E(B-V) >= 0 lets the posterior spread only upward, and along the degeneracy to hotter T_eff: the
    2.5 % point lies within 0.01 mag (two grid steps) of the truth 0, and the median T_eff within 1.5
    std of the row's (measured: largest 1.0 std, K5V).
    """
    teff, mags = reddened(table, bands, TYPES, 0.0)
    fit = grid.fit(mags, np.full(mags.shape, ERROR), warn=False)
    assert np.all(fit.chi2 < 0.5), fit.chi2
    assert np.all(fit.ebv["p2.5"] < 0.01), fit.ebv["p2.5"]
    assert np.all(np.abs(fit.teff["p50"] - teff) < 1.5 * fit.teff["std"]), (fit.teff["p50"], fit.teff["std"])


def test_teff_cover_is_the_bands_rows(table, grid):
    """The fit's T_eff range for a star is where the table has each band it uses (Table 5's rows)."""
    mags = np.zeros((3, len(NAMES)))
    errs = np.full(mags.shape, ERROR)
    errs[1, NAMES.index("bessell-R")] = np.nan  # no R: B's rows
    errs[2, [NAMES.index("bessell-B"), NAMES.index("bessell-R")]] = 0.0  # neither: V..Ks rows
    low, high = grid.teff_cover(mags, errs)
    expect = [(max(table.band_teff_range(b)[0] for b in used), min(table.band_teff_range(b)[1] for b in used))
              for used in (NAMES, [n for n in NAMES if n != "bessell-R"], NAMES[1:2] + NAMES[3:])]
    assert expect[0] == (2380.0, 26000.0)  # M9V to B1V: B's first row, R's last
    np.testing.assert_array_equal(np.stack([low, high], axis=1), expect)


def test_teff_prior_outside_the_bands_rows_is_flagged(table, bands, grid):
    """A T_eff prior of 1000 K lies inside the table (250-44,900 K) but below B's rows (2380 K): teff_edge."""
    _, mags = reddened(table, bands, ["K5V"], 0.3)
    with pytest.warns(FitWarning, match="teff_edge"):
        fit = grid.fit(mags, np.full(mags.shape, ERROR), teff_prior=([1000.0], [100.0]))
    assert fit.flags[0] & FIT_FLAGS["teff_edge"]
    inside = grid.fit(mags, np.full(mags.shape, ERROR), teff_prior=([4400.0], [100.0]), warn=False)
    assert not inside.flags[0] & FIT_FLAGS["teff_edge"]
