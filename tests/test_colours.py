"""Colour indices and the before/after colour–magnitude points (redcorr.colours)."""

import numpy as np
import pandas as pd
import pytest

from redcorr._paths import project_dir
from redcorr.colours import (
    colour_colour,
    colour_index,
    colour_magnitude,
    locus_colours,
    reddening_arrow,
    reddening_vector,
)
from redcorr.correction import Correction
from redcorr.exceptions import InputError
from redcorr.io.correction import correction_options


def test_colour_index_sign_convention():
    # A colour index is m(bluer band) - m(redder band), so a redder source, fainter in the bluer
    # band, has the larger index (Johnson & Morgan 1953, ApJ 117, 313; common practice). The Sun,
    # a G2 V star, has B - V = +0.65 (Allen's Astrophysical Quantities, 4th ed.; from memory),
    # positive in this convention: with V = -26.74 it is given B = -26.09. abs 1e-12: the
    # difference of two doubles near 26 is exact to ~4e-15.
    assert colour_index(-26.09, -26.74) == pytest.approx(0.65, abs=1e-12)
    assert colour_index(16.0, 15.0) > colour_index(15.0, 15.0)


def test_colour_index_broadcasts_and_propagates_nan():
    out = colour_index([[15.0], [16.0]], [14.0, np.nan, 15.5])
    assert out.shape == (2, 3) and out.dtype == np.float64
    # bitwise: differences of these short binary fractions are exact
    np.testing.assert_array_equal(out, [[1.0, np.nan, -0.5], [2.0, np.nan, 0.5]])
    with pytest.raises(InputError, match="do not broadcast"):
        colour_index([1.0, 2.0], [1.0, 2.0, 3.0])
    with pytest.raises(InputError, match="must be numbers"):
        colour_index(["bright"], [1.0])


def test_colour_magnitude_of_a_corrected_demo_catalog():
    frame = pd.read_csv(project_dir("demo") / "brume_catalog.csv", comment="#", nrows=50)
    corr = Correction(list(frame.columns), correction_options(["kw-b", "kw-v"], ebv_column="ebv", law="f99", r_v=4.3,
                                                              colours=[("kw-b", "kw-v")]))
    out = corr.correct(frame)
    cmd = colour_magnitude(out, "kw_b", "kw_v")
    colour, mag = cmd["as observed"]
    # bitwise: the points are the table's own values and their difference, nothing recomputed
    np.testing.assert_array_equal(colour, frame["kw_b"] - frame["kw_v"])
    np.testing.assert_array_equal(mag, frame["kw_v"])
    dered_colour, dered_mag = cmd["corrected"]
    # the same numbers as the colour column Correction writes
    np.testing.assert_array_equal(dered_colour, out["kw_b-kw_v_dered"])
    np.testing.assert_array_equal(dered_mag, out["kw_v_dered"])
    # colour excess E(b-v) = C_obs - C_0 = A_b - A_v (definition; common practice, no source);
    # atol 1e-12: the two sides subtract magnitudes near 15 in different orders (rounding ~1e-14)
    np.testing.assert_allclose(colour - dered_colour, out["A_kw_b"] - out["A_kw_v"], rtol=0, atol=1e-12)
    assert np.all(colour - dered_colour > 0)  # dust reddens: the blue band loses more


def test_colour_magnitude_names_a_missing_column():
    with pytest.raises(InputError, match="column='kw_v_dered' is not in the table"):
        colour_magnitude({"kw_b": [1.0], "kw_v": [1.0], "kw_b_dered": [1.0]}, "kw_b", "kw_v")



# ------------------------------------------------------------------ colour–colour diagrams
BVI = (("bessell-B", "bessell-V"), ("bessell-V", "bessell-I"))


def test_locus_colours_are_the_packaged_dwarf_table_at_its_rows():
    from astropy.table import Table

    from redcorr.io.intrinsic import load_intrinsic_colours

    locus = load_intrinsic_colours("dwarfs")
    teff, x, y = locus_colours(locus, *BVI)
    # source: Pecaut & Mamajek 2013, ApJS 208, 9, Table 5 as packaged (maintained version), read here
    # independently of ColourLocus; the table stores M_band - M_V, so B-V and V-I are column differences
    raw = Table.read(project_dir("redcorr") / "data" / "intrinsic_colours_dwarfs.ecsv", format="ascii.ecsv")
    b, v, i = (np.asarray(raw[c].filled(np.nan), dtype=float) for c in ("bessell-B", "bessell-V", "bessell-I"))
    t_raw = np.asarray(raw["teff"], dtype=float)
    have = np.isfinite(b - v) & np.isfinite(v - i)
    order = np.argsort(t_raw[have])
    np.testing.assert_array_equal(teff, t_raw[have][order])  # the nodes, no row invented or lost
    # atol 1e-12: ColourLocus stores the rows shifted to V (a subtraction of 3-decimal values)
    np.testing.assert_allclose(x, (b - v)[have][order], rtol=0, atol=1e-12)
    np.testing.assert_allclose(y, (v - i)[have][order], rtol=0, atol=1e-12)
    # the same numbers ColourLocus.colour gives at its nodes (bitwise: the same computation)
    np.testing.assert_array_equal(x, locus.colour(teff, *BVI[0]))
    # facts of the tables: an A0 V star has B-V = 0 by the Johnson system's zero point (common practice,
    # no source); G2 V (the Sun's type) has B-V = 0.65 (Pecaut & Mamajek 2013 Table 5; from memory),
    # 0.01 mag: the tables are given to 0.001-0.01 mag
    _, x_a0, _ = locus_colours(locus, *BVI, teff=[locus.teff_of("A0V"), locus.teff_of("G2V")])
    np.testing.assert_allclose(x_a0, [0.0, 0.65], atol=0.01)
    # between rows and outside the table: interpolated or NaN, never extrapolated
    _, x_out, _ = locus_colours(locus, *BVI, teff=[1.0e6])
    assert np.isnan(x_out[0])


def test_reddening_vector_matches_published_colour_excess_ratios():
    from redcorr.curves import get_curve
    from redcorr.io.filters import load_band
    from redcorr.sed import blackbody

    b, v, i, j, ks = (load_band(n) for n in ("bessell-B", "bessell-V", "bessell-I", "twomass-J", "twomass-Ks"))
    ccm = get_curve("ccm89", r_v=3.1)
    hot = blackbody(20000.0)  # reddening ratios are measured on early-type stars
    dx, dy = reddening_vector(ccm, (b, v), (v, i), hot, 0.1)
    # slope of the vector in (B-V, V-I): E(V-I)/E(B-V) = 1.25 for Cousins I (Dean, Warren & Cousins 1978,
    # MNRAS 183, 569; from memory); 0.08: a blackbody instead of stellar spectra and the filter curves
    # as packaged shift synthetic ratios by a few per cent (common practice, no source)
    assert float(dy / dx) == pytest.approx(1.25, abs=0.08)
    _, djk = reddening_vector(ccm, (b, v), (j, ks), hot, 0.1)
    # E(J-K)/E(B-V) = 0.52 (Rieke & Lebofsky 1985, ApJ 288, 618, Table 3; from memory), 2MASS Ks for K
    assert float(djk / dx) == pytest.approx(0.52, abs=0.05)
    # E(x) is A_1 - A_2 at A_V = R_V E(B-V) (the definition; redcorr.extinction), bitwise: same calls
    from redcorr.extinction import band_extinction

    assert float(dx) == float(band_extinction(ccm, b, hot, 3.1 * 0.1) - band_extinction(ccm, v, hot, 3.1 * 0.1))
    # broadcasting over E(B-V); no dust, no vector; negative E(B-V) refused
    ex, ey = reddening_vector(ccm, (b, v), (v, i), hot, [0.0, 1.0, 2.0])
    assert ex.shape == (3,) and ex[0] == 0.0 and ey[0] == 0.0 and np.all(np.diff(ey) > 0)
    with pytest.raises(InputError, match="ebv=-1.0 must be finite and >= 0"):
        reddening_vector(ccm, (b, v), (v, i), hot, -1.0)


def test_reddening_arrow_starts_on_the_locus_and_names_what_is_missing():
    from redcorr.curves import get_curve
    from redcorr.exceptions import UnknownNameError
    from redcorr.io.filters import load_band
    from redcorr.io.intrinsic import load_intrinsic_colours
    from redcorr.sed import blackbody

    locus = load_intrinsic_colours("dwarfs")
    names = ("bessell-B", "bessell-V", "bessell-I")
    bands = {n: load_band(n) for n in names}
    f99 = get_curve("f99", r_v=3.1)
    start, end = reddening_arrow(locus, f99, bands, *BVI, locus.teff_of("G2V"), ebv=1.0)
    assert start == (pytest.approx(0.65, abs=1e-12), pytest.approx(0.713, abs=1e-12))  # the G2V row, as packaged
    dx, dy = reddening_vector(f99, (bands["bessell-B"], bands["bessell-V"]), (bands["bessell-V"], bands["bessell-I"]),
                              blackbody(5770.0), 1.0)
    # bitwise: the arrow is the locus point plus the vector of the same blackbody
    assert end == (start[0] + float(dx), start[1] + float(dy))
    with pytest.raises(InputError, match="teff=100000 K: the intrinsic-colour table 'dwarfs' has no"):
        reddening_arrow(locus, f99, bands, *BVI, 1.0e5)
    with pytest.raises(UnknownNameError, match="band='kw-b' is not in the intrinsic-colour table 'dwarfs'; it covers"):
        reddening_arrow(locus, f99, bands, ("kw-b", "bessell-V"), BVI[1], 5770.0)
    with pytest.raises(InputError, match="bands has no Band for 'bessell-I'"):
        reddening_arrow(locus, f99, {n: bands[n] for n in names[:2]}, *BVI, 5770.0)


def test_colour_colour_points_are_the_table_columns():
    x, y = colour_colour({"b": [15.25, np.nan], "v": [14.5, 14.0], "i": [13.75, 13.5]}, ("b", "v"), ("v", "i"))
    # bitwise: differences of short binary fractions are exact
    np.testing.assert_array_equal(x, [0.75, np.nan])
    np.testing.assert_array_equal(y, [0.75, 0.5])
    with pytest.raises(InputError, match="colour_y='vi' must be a pair"):
        colour_colour({"v": [1.0], "i": [1.0]}, ("v", "i"), "vi")
