"""Tabulated curves from arrays and from user files."""

import numpy as np
import pytest
from astropy import units as u
from astropy.table import Table
from numpy.testing import assert_allclose

from redcorr.curves import CCM89, TabulatedCurve
from redcorr.exceptions import ExtrapolationWarning, InputError
from redcorr.io import load_curve, read_curve_table


def _ccm_table(n=200):
    wave = np.geomspace(0.12, 3.0, n)
    return wave, CCM89(3.1)(wave)


def test_reproduces_smooth_curve():
    # Interpolating a finely sampled CCM89 recovers CCM89 between the nodes
    # (PCHIP error is O(h^3) for smooth data; Fritsch & Carlson 1980). With 200 log-spaced nodes
    # the error is largest on the 2175 Å bump (measured 2.7e-4), hence 2e-3; at a node, rounding.
    wave, ratio = _ccm_table()
    curve = TabulatedCurve(wave, ratio)
    probe = np.geomspace(0.13, 2.9, 77)
    assert_allclose(curve(probe), CCM89(3.1)(probe), rtol=2e-3)
    assert_allclose(curve(wave[5]), ratio[5], rtol=1e-12)


def test_monochromatic_r_v():
    # R_V = A_V/E(B-V) with E(B-V) = A_B - A_V, i.e. 1/(A_B/A_V - 1) at the B and V wavelengths
    # 0.44 and 0.55 µm (definitions; common practice, no source), here from the law the table
    # samples. rtol 1e-4: the table is interpolated at 0.44 and 0.55 µm (PCHIP, ~1e-5 there),
    # and R_V amplifies relative errors of A_B/A_V by ~R_V + 1.
    wave, ratio = _ccm_table()
    curve = TabulatedCurve(wave, ratio)
    c = CCM89(3.1)
    assert_allclose(curve.r_v, 1 / (c(0.44) / c(0.55) - 1), rtol=1e-4)
    assert np.isnan(TabulatedCurve([1.0, 1.5, 2.0, 2.5], [0.4, 0.2, 0.15, 0.1]).r_v)


def test_never_extrapolates():
    wave, ratio = _ccm_table()
    curve = TabulatedCurve(wave, ratio)
    with pytest.raises(InputError, match="cannot be extrapolated"):
        curve(5.0, extrapolate=True)


@pytest.mark.parametrize(
    ("wave", "ratio", "match"),
    [
        ([0.5, 0.6, 0.7], [1, 1, 1], "at least 4"),
        ([0.5, 0.6, 0.6, 0.7], [1, 1, 1, 1], "repeated"),
        ([0.5, 0.6, np.nan, 0.7], [1, 1, 1, 1], "finite"),
        ([0.5, 0.6, 0.7, 0.8], [1, 1, 1], "equal length"),
    ],
)
def test_bad_tables(wave, ratio, match):
    with pytest.raises(InputError, match=match):
        TabulatedCurve(wave, ratio)


def test_ecsv_with_units_and_meta(tmp_path):
    wave, ratio = _ccm_table(50)
    table = Table({"wavelength": wave * 1e4 * u.AA, "A_over_AV": ratio})
    table.meta["R_V"] = 3.3
    table.meta["citation"] = "made by the test from CCM89"
    path = tmp_path / "c.ecsv"
    table.write(path)
    before = path.read_bytes()
    curve = load_curve(f"file:{path}")
    assert curve.r_v == 3.3 and curve.citation == "made by the test from CCM89"  # meta, as written
    # a node, moved by ~1e-16 relative through µm → Å → µm: 1e-10
    assert_allclose(curve(wave[10]), ratio[10], rtol=1e-10)
    assert path.read_bytes() == before  # input files are never modified
    assert load_curve(f"file:{path}", r_v=4.0).r_v == 4.0  # an explicit R_V wins, stored as given


def test_csv(tmp_path):
    wave, ratio = _ccm_table(40)
    path = tmp_path / "c.csv"
    Table({"wavelength_um": wave, "A_over_AV": ratio}).write(path, format="ascii.csv")
    # a node; astropy writes the doubles with round-trip digits: rounding only
    assert_allclose(read_curve_table(path)(wave[3]), ratio[3], rtol=1e-12)


@pytest.mark.parametrize(
    ("text", "match"),
    [
        ("wavelength_um,other\n0.5,1\n", "no 'A_over_AV'"),
        ("lam,A_over_AV\n0.5,1\n", "wavelength_um"),
        ("wavelength_um,A_over_AV\n0.5,1\n0.6,0.9\n", "at least 4"),
        ("wavelength_um,A_over_AV\n0.5,x\n0.6,0.9\n0.7,1\n0.8,1\n", "'A_over_AV' is not numeric"),
        ("wavelength_um,A_over_AV\nx,1\n0.6,0.9\n0.7,1\n0.8,1\n", "'wavelength_um' is not numeric"),
    ],
)
def test_malformed_files(tmp_path, text, match):
    path = tmp_path / "bad.csv"
    path.write_text(text)
    with pytest.raises(InputError, match=match):
        read_curve_table(path)


def test_missing_file(tmp_path):
    with pytest.raises(InputError, match="does not exist"):
        load_curve(f"file:{tmp_path / 'nope.csv'}")


def test_unrelated_warning_category_is_not_raised():
    # ExtrapolationWarning is never emitted by a table: it refuses instead.
    wave, ratio = _ccm_table()
    with pytest.raises(InputError):
        TabulatedCurve(wave, ratio)(10.0)
    assert issubclass(ExtrapolationWarning, UserWarning)
