"""The TUI shell: remembered settings, help screen, screen routing, `redcorr tui`."""

import asyncio
import json

from tui_helpers import private_config, set_value, type_into, until  # noqa: F401

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


def test_settings_are_saved_while_running_and_on_any_exit(tmp_path):
    config = tmp_path / "config"
    saved = config / "tui.json"

    def on_disk():
        return json.loads(saved.read_text(encoding="utf-8")) if saved.is_file() else {}

    async def first():
        app = RedcorrApp()
        async with app.run_test(size=(140, 42)) as pilot:
            await pilot.pause()
            await type_into(pilot, "#amount", "1.7")
            # saved while the app runs, once the typing has paused
            await until(pilot, lambda: on_disk().get("amount") == "1.7", "the debounced save",
                        steps=int(4 * app.SAVE_DELAY / 0.05))
            assert sorted(p.name for p in config.iterdir()) == ["tui.json"]  # atomic: no temporary left
            await pilot.press("f3")
            await set_value(pilot, "#sed", "blackbody:4500")
            app.exit()  # no Ctrl+Q, and before the debounce delay has passed

    async def second():
        app = RedcorrApp()
        async with app.run_test(size=(140, 42)) as pilot:
            await pilot.pause()
            assert app.current_mode == "bands"
            assert app.screen.query_one("#sed").value == "blackbody:4500"
            await pilot.press("f2")
            await pilot.pause()
            assert app.screen.query_one("#amount").value == "1.7" and app.screen.a_v == 1.7
        # leaving the test harness (the terminal closed) is an exit too

    asyncio.run(first())
    assert on_disk()["sed"] == "blackbody:4500" and on_disk()["screen"] == "bands"
    asyncio.run(second())
    assert on_disk()["screen"] == "dust"


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
            assert app.screen.curve.r_v == 4.0  # still usable

    asyncio.run(go())
