"""The TUI's key map is one, shown whole by the help; every control can be reached by keyboard at 80x24 and 200x50."""

import pytest
from textual.geometry import Region
from tui_helpers import run_app, set_value, until

from redcorr._paths import project_dir
from redcorr.tui import RedcorrApp
from redcorr.tui.keys import KEYS, KINDS, SCREENS, by_screen
from redcorr.tui.screens import HelpScreen
from redcorr.tui.screens.help import help_text

pytestmark = pytest.mark.usefixtures("private_config")

SIZES = [(80, 24), (200, 50)]
FKEYS = {"dust": "f2", "bands": "f3", "catalog": "f4", "plan": "f5"}


def test_each_key_has_one_meaning_and_kind_in_the_whole_app():
    keys = [name for k in KEYS for name in k.key.split(",")]
    assert len(keys) == len(set(keys))  # written once: one entry, one kind per key
    assert all(k.kind in KINDS for k in KEYS)
    # no key writes a file on one screen and edits or moves on another: each has one kind, and the
    # write actions are exactly those of the Ctrl+S entry
    writers = {k.key for k in KEYS if k.kind == "write"}
    assert writers == {"ctrl+s"}
    for screen, cls in RedcorrApp.MODES.items():
        bound = {(b.key, b.action) for b in cls.BINDINGS}
        assert bound == {(k.key, k.actions[screen]) for k in KEYS if screen in k.actions}
    assert {(b.key, b.action) for b in RedcorrApp.BINDINGS} == {(k.key, k.actions["app"]) for k in by_screen()["app"]}


def test_help_lists_every_key_grouped_by_screen():
    text = help_text([])
    for screen in SCREENS:
        section = text.split(f"### {screen.capitalize()} screen")[1].split("###")[0]
        for key in by_screen()[screen]:
            assert f"`{key.shown}` | {key.doc}" in section

    async def script(app, pilot):
        await pilot.press("f4", "f1")
        await pilot.pause()
        assert isinstance(app.screen, HelpScreen)
        shown = app.screen.query_one("Markdown").source
        assert all(f"`{k.shown}`" in shown for k in KEYS)  # every key, not only the Catalog screen's
        await pilot.press("f1")
        await pilot.pause()
        return not isinstance(app.screen, HelpScreen)

    assert run_app(script)


def on_screen(app, widget):
    """True when part of ``widget`` lies between the header and the footer and is not covered there."""
    width, height = app.size
    visible = widget.region.intersection(Region(0, 1, width, height - 2))
    if not visible.area:
        return False
    x, y = visible.x + visible.width // 2, visible.y + visible.height // 2
    under, _ = app.screen.get_widget_at(x, y)
    return under is widget or widget in under.ancestors


async def tab_through(app, pilot):
    """Tab through the screen; return the controls reached and those reached but not shown on screen."""
    chain = list(app.screen.focus_chain)
    reached, hidden = [], []
    for _ in range(len(chain) + 1):
        await pilot.press("tab")
        await pilot.pause()
        widget = app.focused
        if widget not in reached:
            reached.append(widget)
        if not on_screen(app, widget):
            hidden.append(widget.id or type(widget).__name__)
    return chain, reached, hidden


@pytest.mark.parametrize("size", SIZES, ids=[f"{w}x{h}" for w, h in SIZES])
def test_every_control_of_every_screen_is_reachable_by_keyboard(size):
    """Tab reaches every control of each screen, and each one it reaches is on screen; plots fit whole."""
    width, height = size

    async def script(app, pilot):
        report = {}
        for screen, key in FKEYS.items():
            await pilot.press(key)
            await pilot.pause()
            if screen == "catalog":  # open the demo catalog: its column mapping adds controls
                await set_value(pilot, "#cat-input", str(project_dir("demo") / "brume_catalog.csv"))
                await until(pilot, lambda: app.screen._mapped, "the column mapping")
            if screen == "plan":  # plan the demo target list with a dust map: its table and the map's field appear
                await set_value(pilot, "#plan-list", str(project_dir("demo") / "brume_targets.csv"))
                app.screen.query_one("#plan-list-dust").value = "map"
                await pilot.pause()
                await set_value(pilot, "#plan-list-map", str(project_dir("demo") / "brume_ebv_3d.fits"))
                assert app.screen.query_one("#plan-list-table").row_count > 0
            chain, reached, hidden = await tab_through(app, pilot)
            plots = []
            for plot in app.screen.query("CurvePlot, XYPlot"):
                if not plot.display:
                    continue
                plot.scroll_visible(animate=False, immediate=True)
                await pilot.pause()
                r = plot.region
                if not (r.y >= 1 and r.bottom <= height - 1 and r.x >= 0 and r.right <= width):
                    plots.append((plot.id, r))
            report[screen] = (set(chain) - set(reached), hidden, plots)
        return report

    for screen, (unreached, hidden, plots) in run_app(script, size=size).items():
        assert not unreached, (screen, unreached)
        assert not hidden, (screen, hidden)
        assert not plots, (screen, plots)


def test_a_wide_terminal_shows_the_demo_file_names_whole():
    """At 200x50 the file trees are wide enough for the demo files' names, one folder down."""
    longest = max(len(p.name) for p in project_dir("demo").iterdir())

    async def script(app, pilot):
        widths = []
        for key, tree in (("f3", "#bands-tree"), ("f4", "#cat-tree")):
            await pilot.press(key)
            await pilot.pause()
            widths.append(app.screen.query_one(tree).scrollable_content_region.width)
        return widths

    # one level of guide ("├── ", 4 cells) below the root, the file icon and a space (3 cells)
    assert all(w >= 4 + 4 + 3 + longest for w in run_app(script, size=(200, 50)))

