"""The Dust screen shows exactly what the core computes, and survives bad values."""

import numpy as np
import pytest
from astropy import units as u
from tui_helpers import run_app, set_value, type_into, until

from redcorr.band_summary import band_summary
from redcorr.extinction import band_extinction, effective_wavelength
from redcorr.io import load_curve
from redcorr.io.filters import load_band
from redcorr.io.spectra import load_sed
from redcorr.tui.widgets import BandGrid, CurvePlot, StatusLine

pytestmark = pytest.mark.usefixtures("private_config")

KW = ["kw-b", "kw-v", "kw-r", "kw-i", "kw-z"]

BAD_VALUES = [
    ("#r-v", "abc", "r_v='abc' is not a number"),
    ("#r-v", "9", "outside the range f99 supports"),
    ("#amount", "-1", "A_V='-1' is outside the allowed range"),
    ("#amount", "2x", "A_V='2x' is not a number"),
]


async def pick(pilot, name):
    """Choose the law or grain model ``name`` in the picker."""
    await set_value(pilot, "#dust-picker .picker-search", name)
    await pilot.click("#dust-picker .picker-search")
    await pilot.press("enter", "enter")
    await pilot.pause()


async def r_v_changes_the_table_and_plot_to_the_core_values(app, pilot):
    screen = app.screen
    table = screen.query_one(BandGrid)
    before = [row["A_band"] for row in table.rows_shown]
    await type_into(pilot, "#r-v", "5.5")
    curve, sed = load_curve("f99", r_v=5.5), load_sed("blackbody:5800")
    rows = table.rows_shown
    assert [row["band"] for row in rows] == KW
    for row in rows:
        band = load_band(row["band"])
        # exactly the core's band integral (redcorr.extinction); the UI recomputes nothing
        assert row["A_band"] == band_extinction(curve, band, sed, 1.0)
        assert row["lambda_eff_um"] == effective_wavelength(curve, band, sed, 1.0)
        # exact: the core's table gives A/E(B-V) as A/A_V times R_V, the same one product
        assert row["A_over_EBV"] == row["A_over_AV"] * 5.5
    # larger R_V, greyer dust: less blue extinction per A_V
    # (Cardelli, Clayton & Mathis 1989, Fig. 4; from memory)
    assert rows[0]["A_band"] < before[0]
    label, x, y = screen.query_one(CurvePlot).series
    np.testing.assert_array_equal(y, curve(np.asarray(x) * u.um**-1))  # exact: the core's curve, drawn as is
    assert "R_V=5.5" in label
    marks = screen.query_one(CurvePlot).marks
    assert [m[0] for m in marks] == KW
    assert marks[1][1] == 1 / rows[1]["lambda_eff_um"]  # exact: each band is marked at 1/lambda_eff


async def bad_values_show_a_message_and_keep_the_app_usable(app, pilot):
    screen = app.screen
    status = screen.query_one(StatusLine)
    for selector, text, message in BAD_VALUES:
        await type_into(pilot, selector, "")  # an empty R_V is the law's default
        before = screen.query_one(BandGrid).rows_shown
        await pilot.press(*text, "enter")
        await pilot.pause()
        assert message in status.message
        assert status.has_class("-error")
        assert screen.query_one(selector).has_class("-refused")
        assert screen.query_one(BandGrid).rows_shown == before  # the last good view stays
        # still usable: a good value clears the message and redraws
        await set_value(pilot, selector, "3.6" if selector == "#r-v" else "2")
        assert status.message == ""
        assert not screen.query_one(selector).has_class("-refused")
    assert screen.curve.r_v == 3.6 and screen.a_v == 2.0  # exact: parsed from the text typed


async def e_bv_fixed_r_v_laws_grain_models_and_warnings(app, pilot, tmp_path):
    screen = app.screen
    status = screen.query_one(StatusLine)
    await set_value(pilot, "#r-v", "4.3")
    screen.query_one("#amount-kind").value = "E(B-V)"
    await set_value(pilot, "#amount", "0.5")
    # A_V = R_V E(B-V), the definition of R_V (common practice, no source); exact: the UI does
    # this one multiplication of the same two numbers
    assert screen.a_v == 4.3 * 0.5 and screen.ebv == 0.5

    await pick(pilot, "smc")
    assert screen.curve.name == "g03-smc-bar"
    assert screen.query_one("#r-v").disabled
    # Gordon et al. 2003, Table 2: SMC Bar average R_V = 2.74
    assert screen.query_one("#r-v").value == "2.74"

    await pick(pilot, "ccm89")
    assert screen.query_one("#r-v").value == "4.3"  # the typed R_V comes back
    await set_value(pilot, "#r-v", "6.0")
    assert screen.curve.r_v == 6.0
    assert status.has_class("-warning") and "warning:" in status.message

    # a user's table: here CCM89 itself, tabulated by the core, read back through file:PATH
    table = tmp_path / "mine.csv"
    wave = np.linspace(0.3, 3.0, 28)
    rows = "\n".join(f"{float(w)!r},{float(r)!r}" for w, r in zip(wave, load_curve("ccm89")(wave), strict=True))
    table.write_text("wavelength_um,A_over_AV\n" + rows + "\n")
    await set_value(pilot, "#r-v", "3.1")
    await pick(pilot, f"file:{table}")
    assert screen.curve.name == "file:mine.csv", status.message
    assert app.session.law == f"file:{table}"
    _, x, y = screen.query_one(CurvePlot).series
    np.testing.assert_array_equal(y, load_curve(f"file:{table}", r_v=3.1)(np.asarray(x) * u.um**-1))  # exact

    await pick(pilot, "mrn77")
    await until(pilot, lambda: screen.curve.name == "mrn77", "the grain model")
    curve = load_curve("mrn77")
    assert screen.query_one("#r-v").disabled and screen.curve.r_v == curve.r_v  # exact: the same model's R_V
    rows = screen.query_one(BandGrid).rows_shown
    expected = band_summary(curve, [load_band(b) for b in KW], load_sed("blackbody:5800"), screen.a_v)
    assert rows == expected  # exact: the core's table, shown as is


def test_dust_screen_shows_the_core_values_and_survives_bad_values(tmp_path):
    """One session on the Dust screen, the checks in turn (each starts from where the last left off)."""

    async def script(app, pilot):
        await r_v_changes_the_table_and_plot_to_the_core_values(app, pilot)
        await bad_values_show_a_message_and_keep_the_app_usable(app, pilot)
        await e_bv_fixed_r_v_laws_grain_models_and_warnings(app, pilot, tmp_path)

    run_app(script)
