"""Keys typed fast all arrive; values count once committed; only valid values are remembered; lists and dialogs."""

import asyncio

import pytest
from tui_helpers import run_app, set_value, type_into, type_keys, until

from redcorr._paths import project_dir
from redcorr.band_summary import band_summary
from redcorr.io import load_curve
from redcorr.io.filters import load_band
from redcorr.io.spectra import load_sed
from redcorr.tui import RedcorrApp
from redcorr.tui.screens.dialogs import AskPath, Confirm
from redcorr.tui.widgets import BandGrid, StatusLine

pytestmark = pytest.mark.usefixtures("private_config")

DEMO = project_dir("demo") / "brume_catalog.csv"


def test_fast_keys_are_never_lost_and_only_committed_values_count():
    async def script(app, pilot):
        screen = app.screen
        field = screen.query_one("#r-v")
        await pilot.click("#r-v")
        await pilot.press("end")
        # queued at once, as a fast typist or a terminal multiplexer sends them
        await type_keys(pilot, "backspace", "backspace", "backspace", "9")
        await until(pilot, lambda: field.value == "9", "the keys typed")
        await type_keys(pilot, "backspace", "4", ".", "3")
        await until(pilot, lambda: field.value == "4.3", "the keys typed")
        await pilot.pause()
        assert field.value == "4.3"
        assert screen.curve.r_v == 3.1  # typed, not yet committed: the view is unchanged
        await pilot.press("enter")
        await pilot.pause()
        assert screen.curve.r_v == 4.3  # exact: the text parsed
        # from 3.3 to 3.2 through "3." (a valid 3.0): the intermediate value is never taken
        await type_into(pilot, "#r-v", "3.3")
        rows = screen.query_one(BandGrid).rows_shown
        await type_keys(pilot, "backspace")
        await until(pilot, lambda: field.value == "3.", "the key typed")
        await type_keys(pilot, "2")
        await until(pilot, lambda: field.value == "3.2", "the key typed")
        await pilot.pause()
        assert screen.curve.r_v == 3.3 and screen.query_one(BandGrid).rows_shown == rows
        await pilot.press("tab")  # leaving the field commits it
        await pilot.pause()
        shown = screen.curve.r_v, screen.query_one(BandGrid).rows_shown[0]["A_over_AV"]
        # Tab among fast keys: the keys after it go to the next field (whose text Tab selects)
        await pilot.press("f5")
        await pilot.click("#plan-mag")
        await pilot.press("end", "ctrl+u")
        await type_keys(pilot, "2", "0", "tab", "k", "w", "-", "r", "enter")
        band = app.screen.query_one("#plan-mag-band")
        await until(pilot, lambda: band.committed == "kw-r", "the keys typed")
        await pilot.pause()
        return (*shown, app.screen.query_one("#plan-mag").value, app.session.plan_mag, app.session.plan_mag_band)

    r_v, a_b, *plan = run_app(script)
    assert plan == ["20", "20", "kw-r"]
    assert r_v == 3.2
    # the shown table is the core's at R_V = 3.2 (exact: the same call)
    expected = band_summary(load_curve("f99", r_v=3.2), [load_band("kw-b")], load_sed("blackbody:5800"), 1.0)
    assert a_b == expected[0]["A_over_AV"]


def test_only_valid_values_are_remembered(tmp_path):
    """A refused value stays on screen (in red) but the next start opens on the last valid one."""

    async def first():
        app = RedcorrApp()
        async with app.run_test(size=(140, 44)) as pilot:
            await pilot.pause()
            await type_into(pilot, "#r-v", "4.3")
            await type_into(pilot, "#amount", "-2")  # refused: A_V >= 0 (common practice, no source)
            assert app.screen.query_one("#amount").has_class("-refused")
            await type_into(pilot, "#r-v", "abc")
            await pilot.press("f5")
            await type_into(pilot, "#plan-mag", "bright")
            assert app.screen.query_one(StatusLine).has_class("-error")

    async def second():
        app = RedcorrApp()
        async with app.run_test(size=(140, 44)) as pilot:
            await pilot.pause()
            assert app.current_mode == "plan"
            plan = app.screen
            await pilot.press("f2")
            await pilot.pause()
            dust = app.screen
            return (dust.query_one("#r-v").value, dust.query_one("#amount").value, dust.curve.r_v,
                    dust.query_one(StatusLine).has_class("-error"), len(dust.query_one(BandGrid).rows_shown),
                    plan.query_one("#plan-mag").value, plan.query_one("#plan-table").row_count)

    asyncio.run(first())
    assert asyncio.run(second()) == ("4.3", "1.0", 4.3, False, 5, "19.0", 5)


def test_ctrl_o_with_no_path_asks_for_one():
    async def script(app, pilot):
        await pilot.press("f4")
        await pilot.pause()
        screen = app.screen
        await pilot.press("ctrl+o")
        await pilot.pause()
        assert isinstance(app.screen, AskPath)  # nothing opened yet, no error
        assert screen.query_one(StatusLine).message == ""
        await type_keys(pilot, *str(DEMO))
        dialog = app.screen.query_one("#ask-path")
        await until(pilot, lambda: dialog.value == str(DEMO), "the path typed")
        await pilot.press("enter")
        await until(pilot, lambda: screen._mapped, "the catalog opened")
        return screen.query_one("#cat-input").value, screen.query_one("#cat-mapping").mapping["kw-v"]

    assert run_app(script) == (str(DEMO), ("kw_v", "e_kw_v"))


def test_lists_enter_chooses_and_moving_only_highlights():
    async def script(app, pilot):
        screen = app.screen
        await pilot.press("ctrl+f", "tab", "down", "down")  # to the list, and down it
        await pilot.pause()
        assert app.session.law == "f99" and screen.curve.name == "f99"  # moving through the list applies nothing
        highlighted = screen.query_one("#dust-picker .picker-list")
        name = highlighted.get_option_at_index(highlighted.highlighted).id
        await pilot.press("enter")
        await pilot.pause()
        assert app.session.law == name
        # Bands: Enter in the search box adds the (first) band found
        await pilot.press("f3")
        await pilot.pause()
        await type_into(pilot, "#bands-picker .picker-search", "bessell-V")
        await pilot.press("enter")
        await pilot.pause()
        return app.session.bands

    assert run_app(script)[-1] == "bessell-V"


def test_dust_table_says_which_source_spectrum_it_uses():
    async def script(app, pilot):
        await pilot.press("f3")
        await set_value(pilot, "#sed", "blackbody:4000")
        await pilot.press("f2")
        await pilot.pause()
        label = str(app.screen.query_one("#dust-bands-source").render())
        return label, app.screen.query_one(BandGrid).rows_shown

    label, rows = run_app(script)
    assert "blackbody:4000" in label and "Bands screen" in label
    # the table is the core's with that source (exact: the same call)
    assert rows == band_summary(load_curve("f99"), [load_band(b) for b in ("kw-b", "kw-v", "kw-r", "kw-i", "kw-z")],
                                load_sed("blackbody:4000"), 1.0)


def test_writing_says_what_it_will_write_and_asks_first(tmp_path):
    out = tmp_path / "table.ecsv"

    async def script(app, pilot):
        await pilot.press("f3")
        await set_value(pilot, "#band-output", str(out))
        await pilot.press("ctrl+s")
        await pilot.pause()
        assert isinstance(app.screen, Confirm)
        assert str(out) in str(app.screen.query_one("#confirm-what").render())
        await pilot.press("escape")
        await pilot.pause()
        assert not out.exists()  # declined: nothing written
        await pilot.press("ctrl+s")
        await pilot.pause()
        await pilot.press("enter")  # the focused button goes ahead
        await pilot.pause()
        return out.exists()

    assert run_app(script)
