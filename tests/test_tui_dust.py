"""The Dust screen shows exactly what the core computes, and survives bad values."""

import asyncio

import numpy as np
import pytest
from astropy import units as u

from redcorr.band_table import band_table
from redcorr.io import load_curve
from redcorr.io.filters import load_band
from redcorr.io.spectra import load_sed
from redcorr.tui import RedcorrApp
from redcorr.tui.widgets import BandTable, CurvePlot, StatusLine


@pytest.fixture(autouse=True)
def _config(tmp_path, monkeypatch):
    """Never touch the user's real configuration folder."""
    monkeypatch.setenv("REDCORR_CONFIG_DIR", str(tmp_path / "config"))


def run_app(script, size=(140, 42)):
    async def go():
        app = RedcorrApp()
        async with app.run_test(size=size) as pilot:
            await pilot.pause()
            await script(app, pilot)

    asyncio.run(go())


async def type_into(pilot, selector, text):
    """Clear the input ``selector`` and type ``text`` key by key, as a user would."""
    await pilot.click(selector)
    await pilot.press("end", "ctrl+u", *text)
    await pilot.pause()


def test_r_v_change_redraws_the_core_curve():
    async def script(app, pilot):
        await type_into(pilot, "#r-v", "5.5")
        screen = app.screen
        label, x, y = screen.query_one(CurvePlot).series
        # The plotted values are the core's own, evaluated at the same wavenumbers.
        expected = load_curve("f99", r_v=5.5)(np.asarray(x) * u.um**-1)
        np.testing.assert_array_equal(y, expected)
        assert "R_V=5.5" in label
        assert screen.curve.r_v == 5.5

    run_app(script)


def test_e_bv_entry_gives_a_v_through_r_v():
    async def script(app, pilot):
        await type_into(pilot, "#r-v", "4.3")
        screen = app.screen
        screen.query_one("#amount-kind").value = "E(B-V)"
        await type_into(pilot, "#amount", "0.5")
        # A_V = R_V E(B-V) (definition of R_V; common practice, no source)
        assert screen.a_v == pytest.approx(4.3 * 0.5)
        assert screen.ebv == 0.5

    run_app(script)


BAD_VALUES = [
    ("#r-v", "abc", "r_v='abc' is not a number"),
    ("#r-v", "9", "outside the range f99 supports"),
    ("#amount", "-1", "A_V='-1' is outside the allowed range"),
    ("#amount", "1e", "A_V='1e' is not a number"),
]


def test_bad_values_show_a_message_and_keep_the_app_usable():
    async def script(app, pilot):
        screen = app.screen
        status = screen.query_one(StatusLine)
        for selector, text, message in BAD_VALUES:
            await type_into(pilot, selector, "")  # an empty R_V is the law's default
            before = screen.query_one(CurvePlot).series
            await type_into(pilot, selector, text)
            assert message in status.message
            assert status.has_class("-error")
            assert screen.query_one(selector).has_class("-refused")
            assert screen.query_one(CurvePlot).series == before  # the last good view stays
            # still usable: good values clear the message and redraw
            await type_into(pilot, "#r-v", "3.6")
            await type_into(pilot, "#amount", "2")
            assert status.message == ""
            assert not screen.query_one(selector).has_class("-refused")
            assert screen.curve.r_v == 3.6 and screen.a_v == 2.0

    run_app(script)


def test_fixed_r_v_law_disables_the_field_and_picking_switches_law():
    async def script(app, pilot):
        await type_into(pilot, "#dust-picker .picker-search", "smc")
        await pilot.press("enter", "enter")
        await pilot.pause()
        screen = app.screen
        assert screen.curve.name == "g03-smcbar"
        rv = screen.query_one("#r-v")
        assert rv.disabled
        # Gordon et al. 2003, Table 2: SMC Bar average R_V = 2.74
        assert rv.value == "2.74"

    run_app(script)


def test_out_of_sample_r_v_warns_without_failing():
    async def script(app, pilot):
        await type_into(pilot, "#dust-picker .picker-search", "ccm89")
        await pilot.press("enter", "enter")
        await type_into(pilot, "#r-v", "6.0")
        status = app.screen.query_one(StatusLine)
        assert app.screen.curve.r_v == 6.0
        assert status.has_class("-warning") and "warning:" in status.message

    run_app(script)


def test_grain_model_is_computed_off_the_ui_thread_and_tabulated(tmp_path, monkeypatch):
    monkeypatch.setenv("REDCORR_CACHE_DIR", str(tmp_path / "cache"))

    async def script(app, pilot):
        await type_into(pilot, "#dust-picker .picker-search", "mrn77")
        await pilot.press("enter", "enter")
        for _ in range(600):
            await pilot.pause(0.05)
            if app.screen.curve is not None and app.screen.curve.name == "mrn77":
                break
        screen = app.screen
        curve = load_curve("mrn77")
        assert screen.query_one("#r-v").disabled
        assert screen.curve.r_v == curve.r_v
        rows = screen.query_one(BandTable).rows_shown
        bands = [load_band(r["band"]) for r in rows]
        assert rows == band_table(curve, bands, load_sed("blackbody:5800"), 1.0)

    run_app(script)
