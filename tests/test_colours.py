"""Colour indices and the before/after colour–magnitude points (redcorr.colours)."""

import numpy as np
import pandas as pd
import pytest

from redcorr._paths import project_dir
from redcorr.colours import colour_index, colour_magnitude
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

