"""The Plan screen shows what `redcorr plan` computes, and survives bad values."""

import json
import math

import numpy as np
import pytest
from textual.widgets import DataTable
from tui_helpers import run_app, set_value, type_into, write

from redcorr._format import human_time, time_cell
from redcorr._paths import project_dir
from redcorr.cli import main
from redcorr.tui.screens.plan import LIST_COLUMNS
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
    # the text of the table, cell by cell, as the CLI prints it (a time from a minute up with its human form,
    # "226.8 (3.78 min)": compared word by word)
    assert lines[start + 1].split() == header
    assert [line.split() for line in lines[start + 3:start + 3 + len(cells)]] == [" ".join(r).split() for r in cells]
    assert any("min)" in cell for row in cells for cell in row)


DEMO = project_dir("demo")
TARGETS = str(DEMO / "brume_targets.csv")
MAP_3D = str(DEMO / "brume_ebv_3d.fits")
LIST = ["plan", "--instrument", "demo", "--targets", TARGETS, "--law", "f99", "--rv", "4.3", "--snr", "50",
        "--max-time", "3600"]


def as_json(value):
    """A value as `redcorr plan --json` prints it (NaN and infinity become null)."""
    return None if isinstance(value, float) and not math.isfinite(value) else value


async def click_header(pilot, table, key):
    """Click the header of the column ``key`` of ``table``, as a user sorting by it would."""
    table.scroll_visible(animate=False, immediate=True)
    await pilot.pause()
    x = 0
    for column in table.ordered_columns:
        if column.key.value == key:
            break
        x += column.get_render_width(table)
    await pilot.click(table, offset=(x + 1, 0))
    await pilot.pause()


def column_values(table, key):
    """The values (not the text) of a column of the target list's table, top to bottom."""
    return [table.get_cell(row.key, key).value for row in table.ordered_rows]


def test_plan_screen_plans_a_target_list_as_the_cli(capsys, tmp_path):
    """The demo target list behind the 3D map (and then the Dust screen's A_V), sorted, totalled and written,
    compared with `redcorr plan --targets ... --json` and `-o` on the same inputs."""

    async def script(app, pilot):
        await set_value(pilot, "#r-v", "4.3")
        await set_value(pilot, "#amount", "2.5")
        await pilot.press("f5")
        await pilot.pause()
        screen = app.screen
        await set_value(pilot, "#plan-list", TARGETS)
        screen.query_one("#plan-list-dust").value = "map"
        await pilot.pause()
        await set_value(pilot, "#plan-list-map", MAP_3D)
        await set_value(pilot, "#plan-list-max-time", "3600")
        table = screen.query_one("#plan-list-table", DataTable)
        rows = {key: value.tolist() for key, value in screen.target_plan.rows().items()}
        cells = table_cells(table)
        summary = str(screen.query_one("#plan-list-summary").render())
        await click_header(pilot, table, "t_dust_s")
        ascending = table_cells(table), column_values(table, "t_dust_s")
        table.focus()
        table.move_cursor(column=list(LIST_COLUMNS).index("t_dust_s"))
        await pilot.press("enter")  # the same column again, from the keyboard: the other way round
        await pilot.pause()
        descending = column_values(table, "t_dust_s")
        await set_value(pilot, "#plan-list-output", str(tmp_path / "tui.csv"))
        await write(pilot)
        screen.query_one("#plan-list-dust").value = "av"  # the Dust screen's A_V = 2.5 for every target
        await pilot.pause()
        constant = {key: value.tolist() for key, value in screen.target_plan.rows().items()}
        status = screen.query_one("#plan-list-status", StatusLine)
        await set_value(pilot, "#plan-list", "nowhere.csv")  # refused: the last good plan stays on screen
        assert "'nowhere.csv' does not exist" in status.message and status.has_class("-error")
        assert screen.query_one("#plan-list").has_class("-refused") and table.row_count == len(cells)
        await set_value(pilot, "#plan-list", TARGETS)
        assert not status.has_class("-error") and not screen.query_one("#plan-list").has_class("-refused")
        return rows, cells, summary, ascending, descending, constant

    rows, cells, summary, (sorted_cells, ascending), descending, constant = run_app(script, size=(140, 48))
    assert main([*LIST, "--map", MAP_3D, "--json"]) == 0
    cli = json.loads(capsys.readouterr().out)
    # bitwise: the screen holds exactly the rows `redcorr plan --targets --json` prints (JSON keeps every bit)
    for key, values in rows.items():
        assert [as_json(v) for v in values] == [r[key] for r in cli["rows"]], key
    # the table shows them, one row per target and band, in the file's order, formatted as the CLI's table
    assert [c[:2] for c in cells] == [[r["name"], r["band"]] for r in cli["rows"]]
    assert [c[4] for c in cells] == [time_cell(r["t_dust_s"]) if r["t_dust_s"] is not None else "nan"
                                     for r in cli["rows"]]
    assert [c[-1] for c in cells] == ["*" if r["band"] == r["best_band"] else "" for r in cli["rows"]]
    # dust never shortens an exposure (common practice, no source)
    assert all(r["time_factor"] >= 1.0 for r in cli["rows"] if r["time_factor"] is not None)
    # sorted by t_dust_s: the same rows, shortest time first, the rows without a plan (NaN) last
    assert sorted_cells != cells and sorted(map(tuple, sorted_cells)) == sorted(map(tuple, cells))
    planned = [t for t in ascending if not math.isnan(t)]
    assert planned == sorted(planned) and len(planned) < len(ascending)
    assert all(math.isnan(t) for t in ascending[len(planned):])
    assert descending[len(ascending) - len(planned):] == planned[::-1]
    # the totals are the CLI's summary: each target in its cheapest band, and those that miss the goal in 3600 s
    total = cli["summary"]["best_total_s"]
    assert f"each target in its cheapest band: {total:.4g} s ({human_time(total)}) in all" in summary
    missed = cli["summary"]["missed"]
    assert missed  # the demo list has targets that reach S/N 50 in no band within an hour
    assert f"reach S/N 50 within 3600 s in no band: {', '.join(missed)}" in summary
    for band, v in cli["summary"]["bands"].items():
        assert f"{band} {human_time(v['total_s'])} ({v['targets']})" in summary
    # Ctrl+S wrote the same plan and summary as `redcorr plan --targets ... -o`
    assert main([*LIST, "--map", MAP_3D, "-o", str(tmp_path / "cli.csv")]) == 0
    assert (tmp_path / "tui.csv").read_text() == (tmp_path / "cli.csv").read_text()
    tui_summary = json.loads((tmp_path / "tui.csv.summary.json").read_text())
    assert tui_summary == json.loads((tmp_path / "cli.csv.summary.json").read_text())
    # the Dust screen's A_V as a constant: as `--av 2.5`
    capsys.readouterr()
    assert main([*LIST, "--av", "2.5", "--json"]) == 0
    cli = json.loads(capsys.readouterr().out)
    assert [as_json(v) for v in constant["t_dust_s"]] == [r["t_dust_s"] for r in cli["rows"]]
    assert set(constant["A_V"]) == {2.5}
