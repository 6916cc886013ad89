"""The Bands screen adds and removes bands, refuses bad ones, and exports what `redcorr coeffs` prints."""

import json

import numpy as np
from astropy.table import Table
from tui_helpers import private_config, run_app, set_value, type_into  # noqa: F401

from redcorr.cli import main
from redcorr.tui.widgets import BandTable, StatusLine

KW = ["kw-b", "kw-v", "kw-r", "kw-i", "kw-z"]


def test_bands_screen_exports_what_the_cli_prints_and_refuses_bad_values(tmp_path, capsys):
    out = tmp_path / "kw.ecsv"

    async def script(app, pilot):
        await pilot.press("f3")
        await pilot.pause()
        screen = app.screen
        status = screen.query_one(StatusLine)
        await type_into(pilot, "#bands-picker .picker-search", "bessell-V")
        await pilot.press("enter", "enter")
        await set_value(pilot, "#band-spec", "gauss:1.6:0.3")
        await pilot.click("#band-spec")
        await pilot.press("enter")
        await pilot.pause()
        assert app.session.bands == KW + ["bessell-V", "gauss:1.6:0.3"]
        await pilot.click("#bands-chosen")
        await pilot.press("home", "delete")  # remove kw-b
        await pilot.pause()
        bands = KW[1:] + ["bessell-V", "gauss:1.6:0.3"]
        assert app.session.bands == bands

        rows = screen.query_one(BandTable).rows_shown
        await type_into(pilot, "#band-spec", "tophat:0.5")
        await pilot.press("enter")
        await pilot.pause()
        assert status.has_class("-error") and "tophat:0.5" in status.message
        assert app.session.bands == bands
        await type_into(pilot, "#sed", "blackbody:hot")
        assert "sed='blackbody:hot'" in status.message
        assert screen.query_one("#sed").has_class("-refused")
        assert screen.query_one(BandTable).rows_shown == rows  # the last good table stays
        await set_value(pilot, "#sed", "blackbody:4000")
        assert not status.has_class("-error")
        assert screen.query_one(BandTable).rows_shown != rows
        await set_value(pilot, "#band-output", "table.txt")
        await pilot.click("#band-export")
        await pilot.pause()
        assert "must end in .ecsv or .csv" in status.message
        assert screen.query_one("#band-output").has_class("-refused")

        await set_value(pilot, "#band-output", str(out))
        await pilot.press("ctrl+s")
        await pilot.pause()
        assert status.message == f"wrote {out}"
        return bands

    bands = run_app(script)
    argv = ["coeffs", "--law", "f99", "--rv", "3.1", "--av", "1.0", "--sed", "blackbody:4000", "--json"]
    assert main(argv + [a for b in bands for a in ("--band", b)]) == 0
    cli_rows = json.loads(capsys.readouterr().out)
    table = Table.read(out, format="ascii.ecsv")
    assert list(table["band"]) == bands
    for key in ("lambda_eff_um", "A_band", "A_over_AV", "A_over_EBV"):
        np.testing.assert_array_equal(table[key], [r[key] for r in cli_rows])
    assert table.meta["curve"] == "f99" and table.meta["source"] == "blackbody:4000"
