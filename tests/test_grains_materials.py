"""Optical constants: packaged tables against their source, interpolation, user tables."""

import numpy as np
import pytest
from astropy import units as u
from astropy.table import Table

from redcorr.exceptions import InputError, UnknownNameError
from redcorr.grains import OpticalConstants
from redcorr.io.grains import get_material, list_materials, read_optical_constants


@pytest.mark.parametrize(
    ("material", "wave", "n", "k"),
    [
        # Draine (2003) silicate, sdist input/ri-data/callindex.out_silD03, row λ = 0.5500621 µm:
        # Re(n) - 1 = 0.6904, Im(n) = 0.02986.
        ("silicate-d03", 0.5500621, 1.6904, 0.02986),
        # Draine (2003) graphite E⊥c (a = 0.01 µm), callindex.out_CpeD03_0.01, row λ = 0.2214 µm:
        # Re(n) - 1 = -0.26006, Im(n) = 1.6246.
        ("graphite-d03", 0.2214, 0.73994, 1.6246),
        # Laor & Draine (1993) silicate, sdist input/ri-data/silicate_ld93, row λ = 0.5957 µm.
        ("silicate-ld93", 0.5957, 1.677, 3.016e-2),
    ],
)
def test_packaged_tables_match_source_rows(material, wave, n, k):
    mat = get_material(material)
    table = mat.radius_sets[0][1][-1][1]  # the isotropic table, or graphite E⊥c for a = 0.01 µm
    m = table(wave)
    # the rows are stored verbatim (4-5 significant digits); 1e-6 covers the rounding of
    # Re(n) = 1 + (Re(n) - 1) and of the µm wavelengths
    assert m.real == pytest.approx(n, rel=1e-6)
    assert m.imag == pytest.approx(k, rel=1e-6)


def test_graphite_orientation_average_and_radius_sets():
    mat = get_material("graphite-d03")
    # The usual 1/3 E∥c + 2/3 E⊥c average (Draine & Lee 1984, §2c).
    for _, parts in mat.radius_sets:
        assert [w for w, _ in parts] == pytest.approx([1 / 3, 2 / 3], rel=1e-15)  # stored as 1/3, 2/3
        assert "par" in parts[0][1].name and "perp" in parts[1][1].name
    # Draine (2003) tables for a = 0.01 and 0.1 µm: each grain uses the nearer one in log a.
    pieces = mat.pieces(np.array([0.001, 0.02, 0.05, 1.0]))
    assert [list(mask) for mask, _ in pieces] == [[True, True, False, False], [False, False, True, True]]
    assert "a0.01" in pieces[0][1][0][1].name and "a0.10" in pieces[1][1][0][1].name


def test_tables_are_ascending_and_cover_the_optical():
    # The source tables run in descending wavelength (as Draine's files are written); ours ascend.
    for info in list_materials():
        for table in get_material(info["name"]).tables:
            assert np.all(np.diff(table.wave) > 0)
            lo, hi = table.wave_range
            assert lo <= 0.05 and hi >= 100.0


def test_log_interpolation_follows_power_laws():
    wave = np.array([0.1, 1.0, 10.0])
    table = OpticalConstants(wave, 1.5 + 0.1 * np.log(wave), 0.02 * wave**-1.5)
    # n linear in ln λ and ln k linear in ln λ are reproduced exactly (common practice, no source):
    # to the rounding of log and exp, hence 1e-12
    m = table([0.3, 3.0])
    np.testing.assert_allclose(m.real, 1.5 + 0.1 * np.log([0.3, 3.0]), rtol=1e-12)
    np.testing.assert_allclose(m.imag, 0.02 * np.array([0.3, 3.0]) ** -1.5, rtol=1e-12)


def test_zero_k_interpolates_linearly():
    table = OpticalConstants([1.0, 2.0], [1.3, 1.3], [0.0, 0.2])
    # √2 is the midpoint of 1 and 2 in ln λ, so k is halfway (linear in ln λ where ln k cannot
    # be taken); rounding only
    assert table(np.sqrt(2.0)).imag == pytest.approx(0.1, rel=1e-12)


def test_outside_table_is_refused():
    table = OpticalConstants([0.1, 1.0], [1.5, 1.5], [0.1, 0.1], name="mine")
    with pytest.raises(InputError, match=r"wave=2 µm lies outside the optical constants of mine, \[0.1, 1\]"):
        table([0.5, 2.0])


@pytest.mark.parametrize(
    ("wave", "n", "k", "match"),
    [
        ([0.1, 1.0], [1.5, 1.5], [0.1, -0.1], "k=-0.1 must be >= 0"),
        ([0.1, 0.1], [1.5, 1.5], [0.1, 0.1], "repeated"),
        ([0.1, 1.0], [1.5, np.nan], [0.1, 0.1], "column n has a non-finite value"),
        ([0.1, 1.0], [0.0, 1.5], [0.1, 0.1], "n=0.0 must be > 0"),
        ([0.1], [1.5], [0.1], "equal length >= 2"),
    ],
)
def test_bad_tables(wave, n, k, match):
    with pytest.raises(InputError, match=match):
        OpticalConstants(wave, n, k)


def test_unknown_material():
    with pytest.raises(UnknownNameError, match="material='graphite-d3'.*did you mean 'graphite-d03'"):
        get_material("graphite-d3")


def test_user_csv_and_ecsv(tmp_path):
    csv = tmp_path / "ice.csv"
    csv.write_text("wavelength_um,n,k\n0.1,1.3,0.01\n1.0,1.31,0.001\n10.0,1.2,0.1\n")
    table = read_optical_constants(csv)
    assert table.name == "ice.csv"
    assert table(1.0) == pytest.approx(1.31 + 0.001j, rel=1e-12)  # a table node: rounding only
    ecsv = tmp_path / "ice.ecsv"
    t = Table([[100.0, 1000.0] * u.nm, [1.3, 1.31], [0.01, 0.001]], names=["wavelength", "n", "k"])
    t.meta["citation"] = "invented ice"
    t.write(ecsv)
    table = read_optical_constants(ecsv)
    assert table.wave_range == pytest.approx((0.1, 1.0), rel=1e-12)  # nm → µm: rounding only
    assert table.citation == "invented ice"


@pytest.mark.parametrize(
    ("text", "match"),
    [
        ("wavelength_um,n\n0.1,1.3\n1.0,1.3\n", "no 'k' column"),
        ("lam,n,k\n0.1,1.3,0.1\n1.0,1.3,0.1\n", "needs a 'wavelength_um' column"),
        ("wavelength_um,n,k\n0.1,abc,0.1\n1.0,1.3,0.1\n", "column 'n' is not numeric"),
        ("wavelength_um,n,k\n0.1,1.3,-0.1\n1.0,1.3,0.1\n", "k=-0.1"),
    ],
)
def test_malformed_user_tables(tmp_path, text, match):
    path = tmp_path / "bad.csv"
    path.write_text(text)
    with pytest.raises(InputError, match=match):
        read_optical_constants(path)


def test_missing_file(tmp_path):
    with pytest.raises(InputError, match="does not exist"):
        read_optical_constants(tmp_path / "none.csv")
