"""The TUI shell: remembered settings, help screen, screen routing, `redcorr tui`."""

import asyncio
import json

from tui_helpers import private_config, set_value  # noqa: F401

from redcorr.cli import build_parser
from redcorr.io.settings import config_dir, load_settings, save_settings
from redcorr.tui import RedcorrApp
from redcorr.tui.screens import HelpScreen
from redcorr.tui.state import Session


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


def test_last_settings_are_remembered_between_runs(tmp_path):
    async def first():
        app = RedcorrApp()
        async with app.run_test(size=(140, 42)) as pilot:
            await pilot.pause()
            await set_value(pilot, "#r-v", "4.3")
            await pilot.press("f5")
            await pilot.pause()
            await pilot.press("f1")  # the help screen opens over any screen and closes again
            await pilot.pause()
            assert isinstance(app.screen, HelpScreen)
            await pilot.press("escape")
            await pilot.pause()
            assert not isinstance(app.screen, HelpScreen)
            await pilot.press("ctrl+q")
            await pilot.pause()

    async def second():
        app = RedcorrApp()
        async with app.run_test(size=(140, 42)) as pilot:
            await pilot.pause()
            assert app.current_mode == "plan"  # the last screen shown
            await pilot.press("f2")
            await pilot.pause()
            assert app.screen.query_one("#r-v").value == "4.3"
            assert app.screen.curve.r_v == 4.3

    asyncio.run(first())
    assert (tmp_path / "config" / "tui.json").is_file()
    asyncio.run(second())


def test_tui_command_is_registered():
    args = build_parser().parse_args(["tui"])
    assert args.func.__module__ == "redcorr.cli.tui"
