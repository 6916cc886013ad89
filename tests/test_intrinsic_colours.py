"""Intrinsic colours: the packaged dwarf table against its source, interpolation, user tables."""

from importlib import resources

import numpy as np
import pytest
from astropy import units as u
from astropy.table import MaskedColumn, Table

from redcorr.exceptions import InputError, UnknownNameError
from redcorr.intrinsic import ColourLocus
from redcorr.io import load_intrinsic_colours, read_intrinsic_colours, write_intrinsic_colours

B, V, R, I = "bessell-B", "bessell-V", "bessell-R", "bessell-I"  # noqa: E741 - the band's letter
U, J, H, KS = "bessell-U", "twomass-J", "twomass-H", "twomass-Ks"
G, BP, RP = "gaiadr2-G", "gaiadr2-BP", "gaiadr2-RP"
W1, W2, W3, W4 = "wise2010-W1", "wise2010-W2", "wise2010-W3", "wise2010-W4"


@pytest.fixture(scope="module")
def dwarfs():
    return load_intrinsic_colours("dwarfs")


def packaged_file():
    """The packaged ECSV read with astropy alone, not through redcorr."""
    ref = resources.files("redcorr") / "data" / "intrinsic_colours_dwarfs.ecsv"
    with resources.as_file(ref) as path:
        return Table.read(path, format="ascii.ecsv")


# --------------------------------------------------------------------------- the packaged table vs its sources
def test_published_rows_from_memory(dwarfs):
    # Pecaut & Mamajek (2013, ApJS 208, 9) Table 5, values from memory: G2V T_eff 5770 K, B-V 0.65,
    # V-Ks 1.56; A0V T_eff 9700 K, B-V 0.00; M0V T_eff ~3850 K, B-V ~1.4. Memory may be off by
    # a subtype's step: T_eff to 100 K, colours to 0.01 mag (M0V B-V to 0.05 mag, remembered to one decimal).
    g2, a0, m0 = dwarfs.teff_of("G2V"), dwarfs.teff_of("A0V"), dwarfs.teff_of("M0V")
    assert g2 == pytest.approx(5770, abs=100)
    assert a0 == pytest.approx(9700, abs=100)
    assert m0 == pytest.approx(3850, abs=100)
    assert float(dwarfs.colour(g2, B, V)) == pytest.approx(0.65, abs=0.01)
    assert float(dwarfs.colour(g2, V, KS)) == pytest.approx(1.56, abs=0.01)
    assert float(dwarfs.colour(a0, B, V)) == pytest.approx(0.00, abs=0.01)
    assert float(dwarfs.colour(m0, B, V)) == pytest.approx(1.4, abs=0.05)


# E. Mamajek, "A Modern Mean Dwarf Stellar Color and Effective Temperature Sequence", Version 2022.04.16
# (MeanStars/EEM_dwarf_UBVIJHK_colors_Teff.txt in the meanstars 3.6.1 wheel), rows typed from the file:
# SpT, Teff, Mv, B-V, G-V, Bp-Rp, G-Rp, U-B, V-Rc, V-Ic, V-Ks, J-H, H-Ks, Ks-W1, W1-W2, W1-W3, W1-W4, M_Ks
SOURCE_ROWS = [
    ("G2V", 5770, 4.80, 0.650, -0.165, 0.823, 0.459, 0.133, 0.363, 0.713, 1.564, 0.293, 0.073, 0.061, -0.050, -0.040,
     -0.016, 3.236),
    ("A0V", 9700, 0.99, 0.000, 0.015, -0.037, -0.020, -0.005, 0.001, 0.004, 0.041, -0.032, 0.028, 0.042, -0.041,
     -0.074, -0.022, 0.949),
    ("K5V", 4440, 7.28, 1.150, -0.44, 1.43, 0.74, 1.081, 0.685, 1.272, 2.88, 0.568, 0.132, 0.092, -0.073, -0.029,
     0.019, 4.397),
]


@pytest.mark.parametrize("row", SOURCE_ROWS, ids=[r[0] for r in SOURCE_ROWS])
def test_packaged_rows_reproduce_the_maintained_table(dwarfs, row):
    spt, teff, mv, bv, gv, bprp, grp, ub, vr, vi, vks, jh, hks, ksw1, w12, w13, w14, mks = row
    t = dwarfs.teff_of(spt)
    assert t == teff  # copied verbatim
    c = lambda a, b: float(dwarfs.colour(t, a, b))  # noqa: E731
    # Colours chained from the printed 3-decimal colours are exact but for float rounding: 1e-9 mag.
    tol = 1e-9
    assert c(B, V) == pytest.approx(bv, abs=tol)
    assert c(U, B) == pytest.approx(ub, abs=tol)
    assert c(V, R) == pytest.approx(vr, abs=tol)
    assert c(V, I) == pytest.approx(vi, abs=tol)
    assert c(V, KS) == pytest.approx(vks, abs=tol)
    assert c(J, H) == pytest.approx(jh, abs=tol)
    assert c(H, KS) == pytest.approx(hks, abs=tol)
    assert c(G, V) == pytest.approx(gv, abs=tol)
    assert c(BP, RP) == pytest.approx(bprp, abs=tol)
    assert c(G, RP) == pytest.approx(grp, abs=tol)
    assert c(KS, W1) == pytest.approx(ksw1, abs=tol)
    assert c(W1, W2) == pytest.approx(w12, abs=tol)
    assert c(W1, W3) == pytest.approx(w13, abs=tol)
    assert c(W1, W4) == pytest.approx(w14, abs=tol)
    assert float(dwarfs.absolute_magnitude(t, V)) == pytest.approx(mv, abs=tol)
    # The table's own M_Ks column (not copied) agrees with M_V - (V-Ks) to its printed 0.01 mag in these rows.
    assert float(dwarfs.absolute_magnitude(t, KS)) == pytest.approx(mks, abs=0.011)


def test_missing_source_values_stay_missing(dwarfs):
    # Same file: M0V has no W1-W2 ("..."), T5V no colour tied to V, and the coolest row with B-V is M9V.
    assert np.isnan(dwarfs.colour(dwarfs.teff_of("M0V"), W1, W2))
    assert np.all(np.isnan(dwarfs.magnitude(dwarfs.teff_of("T5V"))))
    assert not dwarfs.covers(dwarfs.teff_of("M9.5V"), B)
    assert dwarfs.band_teff_range(B) == (2380.0, 44900.0)  # M9V and O3V, the coolest and hottest rows with B-V


def test_vega_system_colours_are_near_zero_at_a0v(dwarfs):
    # An A0V star has colours near 0 in Vega-based systems, which are zeroed on Vega, an A0V star
    # (common practice, no source). Johnson-Cousins within 0.02 mag; Gaia and 2MASS within 0.05 mag,
    # their zero points being set on Vega through their own passbands and Vega's magnitudes a few
    # hundredths from 0 (common practice, no source). WISE is left out: the table's Ks-W1 and W1-W4 of
    # A0V add up to 0.08 mag from V (a fact of the table, not a check of anything).
    a0 = dwarfs.teff_of("A0V")
    for band in (U, B, R, I):
        assert abs(float(dwarfs.magnitude(a0, band))) <= 0.02, band
    for band in (G, BP, RP, J, H, KS):
        assert abs(float(dwarfs.magnitude(a0, band))) <= 0.05, band


def test_header_states_the_source_and_every_band_system():
    meta = packaged_file().meta
    assert "Pecaut" in meta["citation"] and "208, 9" in meta["citation"]
    assert meta["table_version"] == "Version 2022.04.16"
    assert meta["table_url"].endswith("EEM_dwarf_UBVIJHK_colors_Teff.txt")
    assert "BSD-3-Clause" in meta["package"]
    assert len(meta["wheel_sha256"]) == 64 and len(meta["file_sha256"]) == 64
    bands = [c for c in packaged_file().colnames if c not in ("spectral_type", "teff", "abs_mag")]
    assert sorted(meta["bands"]) == sorted(bands)
    assert all(meta["bands"][b]["system"].startswith("Vega") for b in bands)


# --------------------------------------------------------------------------- interpolation
def test_nodes_return_the_table_exactly(dwarfs):
    # The rows of the file read by astropy alone: at each row's T_eff the row comes back unchanged
    # (tolerance 0: no arithmetic at a node), including rows beside a missing value.
    table = packaged_file()
    for band in dwarfs.bands:
        stored = np.ma.filled(table[band].astype(float), np.nan)
        np.testing.assert_array_equal(dwarfs.magnitude(np.asarray(table["teff"]), band), stored)


def test_linear_in_log_teff_like_numpy(dwarfs):
    # Between rows the value is linear in ln T_eff: numpy.interp on ln T_eff is the reference
    # (over the O9V..M0V rows, where every row has B-V). 1e-12 mag: rounding of two formulas.
    nodes = dwarfs.teff
    keep = (nodes >= dwarfs.teff_of("M0V")) & (nodes <= dwarfs.teff_of("O9V"))
    bv = dwarfs.colour(nodes[keep], B, V)
    t = np.geomspace(nodes[keep][0], nodes[keep][-1], 997)
    ref = np.interp(np.log(t), np.log(nodes[keep]), bv)
    np.testing.assert_allclose(dwarfs.colour(t, B, V), ref, rtol=0, atol=1e-12)
    # broadcasting: a (2, 3) grid of T_eff gives (2, 3), and (2, 3, n_band) for all bands
    grid = t[:6].reshape(2, 3)
    assert dwarfs.colour(grid, B, V).shape == (2, 3)
    assert dwarfs.magnitude(grid).shape == (2, 3, len(dwarfs.bands))
    assert dwarfs.magnitude(5770 * u.K, B) == pytest.approx(0.65, abs=1e-12)  # a Quantity in K


def test_monotonic_where_the_table_is(dwarfs):
    # Piecewise-linear interpolation keeps the order of monotonic nodes (common practice, no source):
    # V-Ks rises steadily from B0V to M3V in the table; so must the interpolated V-Ks on a fine grid.
    nodes = dwarfs.teff
    lo, hi = dwarfs.teff_of("M3V"), dwarfs.teff_of("B0V")
    vks = dwarfs.colour(nodes[(nodes >= lo) & (nodes <= hi)], V, KS)
    assert np.all(np.diff(vks) < 0)  # the table itself: V-Ks falls as T_eff rises
    fine = dwarfs.colour(np.geomspace(lo, hi, 5001), V, KS)
    assert np.all(np.diff(fine) <= 0)


def test_outside_the_table_is_nan_and_said(dwarfs):
    t = np.array([100.0, 250.0, 44900.0, 60000.0, np.nan])
    assert list(dwarfs.covers(t)) == [False, True, True, False, False]
    assert np.isnan(dwarfs.colour([100.0, 60000.0, np.nan], B, V)).all()
    assert dwarfs.teff_range == (250.0, 44900.0)
    # a gap inside a band: W1-W2 is missing from K6V to M4.5V in the source, so W2 is NaN there
    assert dwarfs.covers(dwarfs.teff_of("K5V"), W2) and not dwarfs.covers(4000.0, W2)
    assert dwarfs.covers(dwarfs.teff_of("M5V"), W2)
    with pytest.raises(InputError, match="teff=-5"):
        dwarfs.magnitude(-5.0)


def test_subset_and_band_errors(dwarfs):
    sub = dwarfs.subset([J, KS])
    assert sub.bands == (J, KS) and sub.reference == V
    t = dwarfs.teff_of("K0V")
    assert float(sub.colour(t, J, KS)) == float(dwarfs.colour(t, J, KS))  # same rows, same arithmetic
    with pytest.raises(UnknownNameError, match="band='sdss2010-g' is not in the intrinsic-colour table 'dwarfs'; "
                                               "it covers bessell-U"):
        dwarfs.colour(t, "sdss2010-g", V)


def test_spectral_type_lookup(dwarfs):
    assert dwarfs.teff_of("g2v") == 5770.0
    np.testing.assert_array_equal(dwarfs.teff_of(["A0V", "M0V"]), [9700.0, 3850.0])
    with pytest.raises(UnknownNameError, match=r"spectral_type='G2' is not in .* did you mean 'G2V'"):
        dwarfs.teff_of("G2")
    with pytest.raises(UnknownNameError, match="spectral_type='K0III'"):
        dwarfs.teff_of(["G2V", "K0III"])


def test_locus_checks_its_input():
    m = [[0.0, 0.5], [0.0, 0.3]]
    with pytest.raises(InputError, match="teff has 5000 K twice"):
        ColourLocus([5000, 5000], m, ["V", "B"], reference="V")
    with pytest.raises(InputError, match="at least 2"):
        ColourLocus([5000, 6000], [[0.0], [0.0]], ["V"], reference="V")
    with pytest.raises(InputError, match="teff=5000 K has magnitudes but none in the reference band 'V'"):
        ColourLocus([5000, 6000], [[np.nan, 0.5], [0.0, 0.3]], ["V", "B"], reference="V")
    # absolute magnitudes are made relative to the reference; rows are sorted into increasing T_eff
    loc = ColourLocus([6000, 5000], [[4.0, 4.3], [6.0, 6.5]], ["V", "B"], reference="V", labels=["F", "K"])
    np.testing.assert_array_equal(loc.teff, [5000.0, 6000.0])
    np.testing.assert_allclose(loc.magnitudes, [[0.0, 0.5], [0.0, 0.3]], atol=1e-15)  # 6.5 - 6.0, 4.3 - 4.0
    assert loc.labels == ("K", "F")


# --------------------------------------------------------------------------- user tables
def _user_table(path, **columns):
    t = Table()
    for name, values in columns.items():
        t[name.replace("_", "-") if name.startswith(("bessell", "twomass", "wise")) else name] = values
    t.write(path, format="ascii.ecsv")
    return path


def test_round_trip_of_the_packaged_locus(dwarfs, tmp_path):
    path = write_intrinsic_colours(dwarfs, tmp_path / "mine.ecsv")
    mine = read_intrinsic_colours(path)
    assert mine.bands == dwarfs.bands and mine.reference == dwarfs.reference and mine.labels == dwarfs.labels
    np.testing.assert_array_equal(mine.teff, dwarfs.teff)  # exact: ECSV writes floats to full precision
    np.testing.assert_array_equal(mine.magnitudes, dwarfs.magnitudes)
    np.testing.assert_array_equal(mine.absolute, dwarfs.absolute)
    assert load_intrinsic_colours(str(path)).citation == dwarfs.citation


def test_user_table_of_absolute_magnitudes(tmp_path):
    # Absolute magnitudes become magnitudes relative to the first band (or meta reference_band).
    path = tmp_path / "giants.ecsv"
    t = Table({"teff": [4500.0, 5000.0] * u.K, "twomass-Ks": [-1.0, -0.5], "bessell-V": [1.5, 1.6]})
    t.meta["reference_band"] = "bessell-V"
    t.write(path, format="ascii.ecsv")
    loc = load_intrinsic_colours(path)
    assert loc.reference == V
    np.testing.assert_allclose(loc.magnitude([4500.0, 5000.0], KS), [-2.5, -2.1], atol=1e-12)  # -1-1.5, -0.5-1.6


def test_user_table_by_type_takes_dwarf_teff(tmp_path):
    path = _user_table(tmp_path / "types.ecsv", spectral_type=["K0V", "G2V"], bessell_B=[0.8, 0.6],
                       bessell_V=[0.0, 0.0])
    loc = read_intrinsic_colours(path)
    np.testing.assert_array_equal(loc.teff, [5270.0, 5770.0])  # K0V and G2V of the packaged table
    with pytest.raises(InputError, match=r"no 'teff' column, so its types must be dwarf types: .*'K0III'"):
        read_intrinsic_colours(_user_table(tmp_path / "giants.ecsv", spectral_type=["K0III", "G8III"],
                                           bessell_B=[1.0, 0.9], bessell_V=[0.0, 0.0]))


def test_bad_table_without_teff_or_type(tmp_path):
    path = _user_table(tmp_path / "t.ecsv", temp=[4000.0, 5000.0], bessell_B=[1.0, 0.8], bessell_V=[0.0, 0.0])
    with pytest.raises(InputError, match="needs a 'teff' column .* or a 'spectral_type' column"):
        read_intrinsic_colours(path)


def test_bad_table_unknown_band_suggests(tmp_path):
    t = Table({"teff": [4000.0, 5000.0], "bessel-B": [1.0, 0.8], "bessell-V": [0.0, 0.0]})
    t.write(tmp_path / "t.ecsv", format="ascii.ecsv")
    with pytest.raises(UnknownNameError, match=r"'bessel-B' is not known; did you mean 'bessell-B'"):
        read_intrinsic_colours(tmp_path / "t.ecsv")


def test_bad_table_unordered_teff(tmp_path):
    path = _user_table(tmp_path / "t.ecsv", teff=[4000.0, 6000.0, 5000.0], bessell_B=[1.0, 0.5, 0.8],
                       bessell_V=[0.0, 0.0, 0.0])
    with pytest.raises(InputError, match=r"row 3 \(5000 K\) turns back after row 2 \(6000 K\)"):
        read_intrinsic_colours(path)


def test_bad_table_repeated_teff(tmp_path):
    path = _user_table(tmp_path / "t.ecsv", teff=[4000.0, 5000.0, 5000.0], bessell_B=[1.0, 0.8, 0.8],
                       bessell_V=[0.0, 0.0, 0.0])
    with pytest.raises(InputError, match="teff=5000 K is in rows 2 and 3"):
        read_intrinsic_colours(path)


def test_bad_table_text_in_a_cell(tmp_path):
    path = _user_table(tmp_path / "t.ecsv", teff=[4000.0, 5000.0], bessell_B=["1.0", "n/a"], bessell_V=[0.0, 0.0])
    with pytest.raises(InputError, match="column 'bessell-B' row 2 is 'n/a', not a number"):
        read_intrinsic_colours(path)


def test_bad_table_one_band(tmp_path):
    path = _user_table(tmp_path / "t.ecsv", teff=[4000.0, 5000.0], bessell_B=[1.0, 0.8])
    with pytest.raises(InputError, match=r"has 1 band column \(bessell-B\); a colour needs at least 2"):
        read_intrinsic_colours(path)


def test_bad_table_teff_unit_and_reference(tmp_path):
    t = Table({"teff": [4.0, 5.0] * u.kK, "bessell-B": [1.0, 0.8], "bessell-V": [0.0, 0.0]})
    t.write(tmp_path / "t.ecsv", format="ascii.ecsv")
    with pytest.raises(InputError, match="column 'teff' has unit kK; give T_eff in K"):
        read_intrinsic_colours(tmp_path / "t.ecsv")
    t = Table({"teff": [4000.0, 5000.0], "bessell-B": MaskedColumn([1.0, 0.8]),
               "bessell-V": MaskedColumn([0.0, 0.0], mask=[True, False])})
    t.meta["reference_band"] = "bessell-V"
    t.write(tmp_path / "r.ecsv", format="ascii.ecsv")
    with pytest.raises(InputError, match="teff=4000 K has magnitudes but none in the reference band 'bessell-V'"):
        read_intrinsic_colours(tmp_path / "r.ecsv")


def test_bad_names_and_files(tmp_path):
    with pytest.raises(UnknownNameError, match="colours='dwarf' is not known; did you mean 'dwarfs'"):
        load_intrinsic_colours("dwarf")
    with pytest.raises(InputError, match="does not exist"):
        load_intrinsic_colours(tmp_path / "none.ecsv")
    (tmp_path / "bad.ecsv").write_text("teff,bessell-B\n1,2\n")
    with pytest.raises(InputError, match="could not be read as ECSV"):
        read_intrinsic_colours(tmp_path / "bad.ecsv")
