"""The Plan screen shows what `redcorr plan` computes, and survives bad values."""

import json

import numpy as np
import pytest
from textual.widgets import DataTable
from tui_helpers import run_app, set_value, type_into

from redcorr.cli import main
from redcorr.tui.widgets import StatusLine, XYPlot

pytestmark = pytest.mark.usefixtures("private_config")

PLAN = ["plan", "--instrument", "demo", "--mag", "19", "--mag-band", "kw-v", "--sed", "blackbody:5800",
        "--law", "f99", "--rv", "4.3", "--av", "2.5", "--snr", "50"]


def table_cells(table):
    return [[str(c) for c in table.get_row_at(i)] for i in range(table.row_count)]


async def plans_and_refused_values(app, pilot):
    """The plans shown; bad values leave the last good plan on screen."""
    screen = app.screen
    shown = [(p.band, p.A_band, p.t_clear_s, p.t_dust_s, p.snr, p.limiting_mag) for p in screen.plans]
    table = screen.query_one("#plan-table", DataTable)
    assert table.row_count == 5
    plot = screen.query_one(XYPlot)
    assert [name for name, _, _ in plot.series] == [p[0] for p in shown]
    status = screen.query_one(StatusLine)
    for selector, text, message, good in [
        ("#plan-mag", "bright", "mag='bright' is not a number", "19"),
        ("#plan-instrument", "nowhere.toml", "does not exist", "demo"),
        ("#plan-goal-value", "-3", "snr=", "50"),
    ]:
        await type_into(pilot, selector, text)
        assert message in status.message and status.has_class("-error")
        assert screen.query_one(selector).has_class("-refused")
        assert table.row_count == 5  # the last good plan stays on screen
        await set_value(pilot, selector, good)
        assert not status.has_class("-error")
    return shown


async def time_against_a_v(app, pilot):
    """The time-against-A_V table; a bad grid leaves the last good table on screen."""
    screen = app.screen
    table = screen.query_one("#plan-av", DataTable)
    cells = table_cells(table)
    header = [str(c.label) for c in table.columns.values()]
    snr, grid, times = screen.av
    # the row at the plan's own A_V is the plan's time behind the dust, the row at 0 the clear-sky time;
    # the grid evaluates the same exposure formula over an array of A_V, whose arithmetic may round
    # differently in the last bits from the plan's single value: rel=1e-12 allows only that
    for p in screen.plans:
        assert times[p.band][list(grid).index(2.5)] == pytest.approx(p.t_dust_s, rel=1e-12)
        assert times[p.band][0] == pytest.approx(p.t_clear_s, rel=1e-12)
    # dust never shortens an exposure (common practice, no source)
    assert all(np.all(np.diff(t) > 0) for t in times.values())
    status = screen.query_one(StatusLine)
    await set_value(pilot, "#plan-av-grid", "0 1 -2")
    assert "a_v must be" in status.message and screen.query_one("#plan-av-grid").has_class("-refused")
    assert table_cells(table) == cells  # kept
    await set_value(pilot, "#plan-av-grid", "0, one")
    assert "av_grid='one' is not a number" in status.message
    await set_value(pilot, "#plan-av-grid", "0 1 2 2.5 4 6")
    assert not status.has_class("-error")
    return header, cells


def test_plan_screen_shows_what_the_cli_prints_and_refuses_bad_values(capsys):
    """One session on the Plan screen (R_V = 4.3, A_V = 2.5), compared with two `redcorr plan` runs."""

    async def script(app, pilot):
        await set_value(pilot, "#r-v", "4.3")
        await set_value(pilot, "#amount", "2.5")
        await pilot.press("f5")
        await pilot.pause()
        return await plans_and_refused_values(app, pilot), await time_against_a_v(app, pilot)

    shown, (header, cells) = run_app(script, size=(140, 48))
    assert main([*PLAN, "--json"]) == 0
    cli = json.loads(capsys.readouterr().out)
    # bitwise: the screen holds exactly the numbers `redcorr plan --json` prints (JSON keeps every bit)
    assert shown == [(r["band"], r["A_band"], r["t_clear_s"], r["t_dust_s"], r["snr"], r["limiting_mag"]) for r in cli]
    assert main([*PLAN, "--av-grid", "0", "1", "2", "2.5", "4", "6"]) == 0
    lines = capsys.readouterr().out.splitlines()
    start = lines.index("Time (s) to reach S/N 50 against A_V:")
    # the text of the table, cell by cell, as the CLI prints it
    assert lines[start + 1].split() == header
    assert [line.split() for line in lines[start + 3:start + 3 + len(cells)]] == cells
