"""The Plan screen shows what `redcorr plan` computes, and survives bad values."""

import json

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
        table = screen.query_one(DataTable)
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
