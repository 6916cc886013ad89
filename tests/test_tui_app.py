"""The TUI shell: remembered settings, help screen, screen routing, `redcorr tui`."""

import asyncio
import json

import pytest
from tui_helpers import set_value, type_into, until

from redcorr.cli import build_parser
from redcorr.io.settings import config_dir, load_settings, save_settings
from redcorr.tui import RedcorrApp
from redcorr.tui.screens import HelpScreen
from redcorr.tui.state import Session

pytestmark = pytest.mark.usefixtures("private_config")


def test_config_dir_is_redirected(tmp_path):
    assert config_dir() == tmp_path / "config"


def test_settings_round_trip_and_damaged_file(tmp_path):
    path = save_settings({"law": "ccm89"})
    assert load_settings() == {"law": "ccm89"}
    path.write_text("{not json", encoding="utf-8")
    assert load_settings() == {}
    path.write_text(json.dumps({"law": 3, "r_v": "4.3"}), encoding="utf-8")
    session = Session.load()
    assert session.law == Session().law  # wrong type: default kept
    assert session.r_v == "4.3"


def test_settings_are_remembered_and_saved_on_every_way_out(tmp_path):
    """Three runs in a row; each ends another way (Ctrl+Q, ``exit()``, the terminal closed)."""
    config = tmp_path / "config"
    saved = config / "tui.json"

    def on_disk():
        return json.loads(saved.read_text(encoding="utf-8")) if saved.is_file() else {}

    async def first():
        app = RedcorrApp()
        async with app.run_test(size=(140, 42)) as pilot:
            await pilot.pause()
            await set_value(pilot, "#r-v", "4.3")
            await type_into(pilot, "#amount", "1.7")
            # saved while the app runs, once the typing has paused
            await until(pilot, lambda: on_disk().get("amount") == "1.7", "the debounced save")
            assert on_disk()["r_v"] == "4.3"
            assert sorted(p.name for p in config.iterdir()) == ["tui.json"]  # atomic: no temporary left
            app.SAVE_DELAY = 3600  # from here on only leaving the app can save
            await pilot.press("f5")
            await pilot.pause()
            await pilot.press("f1")  # the help screen opens over any screen and closes again
            await pilot.pause()
            assert isinstance(app.screen, HelpScreen)
            await pilot.press("escape")
            await pilot.pause()
            assert not isinstance(app.screen, HelpScreen)
            assert on_disk()["screen"] == "dust"
            await pilot.press("ctrl+q")
            await pilot.pause()

    async def second():
        app = RedcorrApp()
        app.SAVE_DELAY = 3600  # only leaving the app can save
        async with app.run_test(size=(140, 42)) as pilot:
            await pilot.pause()
            assert app.current_mode == "plan"  # the last screen shown
            await pilot.press("f2")
            await pilot.pause()
            assert app.screen.query_one("#r-v").value == "4.3"
            # exact: the remembered texts parsed again
            assert app.screen.curve.r_v == 4.3
            assert app.screen.query_one("#amount").value == "1.7" and app.screen.a_v == 1.7
            await pilot.press("f3")
            await set_value(pilot, "#sed", "blackbody:4500")
            app.exit()  # no Ctrl+Q, and long before a debounced save

    async def third():
        app = RedcorrApp()
        app.SAVE_DELAY = 3600  # only leaving the app can save
        async with app.run_test(size=(140, 42)) as pilot:
            await pilot.pause()
            assert app.current_mode == "bands"
            assert app.screen.query_one("#sed").value == "blackbody:4500"
            await set_value(pilot, "#sed", "blackbody:5000")
        # leaving the test harness (the terminal closed) is an exit too

    asyncio.run(first())
    assert on_disk()["screen"] == "plan"
    asyncio.run(second())
    assert on_disk()["sed"] == "blackbody:4500" and on_disk()["screen"] == "bands"
    asyncio.run(third())
    assert on_disk()["sed"] == "blackbody:5000"


def test_tui_command_is_registered():
    args = build_parser().parse_args(["tui"])
    assert args.func.__module__ == "redcorr.cli.tui"


def test_a_config_folder_that_cannot_be_written_does_not_stop_the_app(tmp_path, monkeypatch):
    blocked = tmp_path / "not_a_folder"
    blocked.write_text("a file where the config folder should be")
    monkeypatch.setenv("REDCORR_CONFIG_DIR", str(blocked))

    async def go():
        app = RedcorrApp()
        async with app.run_test(size=(140, 42)) as pilot:
            await pilot.pause()
            app.save_session()
            await pilot.pause()
            assert any("settings not saved" in n.message for n in app._notifications)
            await set_value(pilot, "#r-v", "4.0")
            assert app.screen.curve.r_v == 4.0  # still usable (exact: the text parsed)

    asyncio.run(go())


def test_log_scale_plot_survives_a_resize():
    """A plot with log axes is rebuilt from its data at each render: resizing the terminal must not
    take the logarithm of already-logarithmic values (plotext keeps the transformed data)."""
    from textual.app import App

    from redcorr.tui.widgets import XYPlot

    class One(App):
        def compose(self):
            yield XYPlot()

    async def run():
        app = One()
        async with app.run_test(size=(80, 24)) as pilot:
            plot = app.query_one(XYPlot)
            plot.draw([("s", [1.0, 10.0, 100.0], [1.0, 10.0, 100.0])], xlog=True, ylog=True)
            await pilot.pause()
            for size in ((120, 40), (70, 20)):
                await pilot.resize_terminal(*size)
                await pilot.pause()
            assert plot.series == [("s", [1.0, 10.0, 100.0], [1.0, 10.0, 100.0])]
        return app

    assert asyncio.run(run()).return_code in (None, 0)  # an exception in rendering ends the app with 1
