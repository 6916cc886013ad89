"""The Plan screen shows what `redcorr plan` computes, and survives bad values."""

import json

import numpy as np
import pytest
from textual.widgets import DataTable
from tui_helpers import private_config, run_app, set_value, type_into  # noqa: F401

from redcorr.cli import main
from redcorr.tui.widgets import StatusLine, XYPlot


def test_plan_screen_matches_the_cli_and_refuses_bad_values(capsys):
    async def script(app, pilot):
        await set_value(pilot, "#r-v", "4.3")
        await set_value(pilot, "#amount", "2.5")
        await pilot.press("f5")
        await pilot.pause()
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

    shown = run_app(script, size=(140, 48))
    argv = ["plan", "--instrument", "demo", "--mag", "19", "--mag-band", "kw-v", "--sed", "blackbody:5800",
            "--law", "f99", "--rv", "4.3", "--av", "2.5", "--snr", "50", "--json"]
    assert main(argv) == 0
    cli = json.loads(capsys.readouterr().out)
    assert shown == [(r["band"], r["A_band"], r["t_clear_s"], r["t_dust_s"], r["snr"], r["limiting_mag"]) for r in cli]


def test_time_against_a_v_table_is_what_plan_av_grid_prints(capsys):
    async def script(app, pilot):
        await set_value(pilot, "#r-v", "4.3")
        await set_value(pilot, "#amount", "2.5")
        await pilot.press("f5")
        await pilot.pause()
        screen = app.screen
        table = screen.query_one("#plan-av", DataTable)
        cells = [[str(c) for c in table.get_row_at(i)] for i in range(table.row_count)]
        header = [str(c.label) for c in table.columns.values()]
        snr, grid, times = screen.av
        # the row at the plan's own A_V is the plan's time behind the dust, the row at 0 the clear-sky time
        for p in screen.plans:
            assert times[p.band][list(grid).index(2.5)] == pytest.approx(p.t_dust_s, rel=1e-12)
            assert times[p.band][0] == pytest.approx(p.t_clear_s, rel=1e-12)
        # dust never shortens an exposure (common practice, no source)
        assert all(np.all(np.diff(t) > 0) for t in times.values())
        status = screen.query_one(StatusLine)
        await set_value(pilot, "#plan-av-grid", "0 1 -2")
        assert "a_v must be" in status.message and screen.query_one("#plan-av-grid").has_class("-refused")
        assert [[str(c) for c in table.get_row_at(i)] for i in range(table.row_count)] == cells  # kept
        await set_value(pilot, "#plan-av-grid", "0, one")
        assert "av_grid='one' is not a number" in status.message
        await set_value(pilot, "#plan-av-grid", "0 1 2 2.5 4 6")
        assert not status.has_class("-error")
        return header, cells

    header, cells = run_app(script, size=(140, 48))
    argv = ["plan", "--instrument", "demo", "--mag", "19", "--mag-band", "kw-v", "--sed", "blackbody:5800",
            "--law", "f99", "--rv", "4.3", "--av", "2.5", "--snr", "50", "--av-grid", "0", "1", "2", "2.5", "4", "6"]
    assert main(argv) == 0
    lines = capsys.readouterr().out.splitlines()
    start = lines.index("Time (s) to reach S/N 50 against A_V:")
    assert lines[start + 1].split() == header
    assert [line.split() for line in lines[start + 3:start + 3 + len(cells)]] == cells
