"""The band tables on the Dust and Bands screens are the core's numbers, and export what the CLI prints."""

import asyncio
import json

import numpy as np
import pytest
from astropy.table import Table

from redcorr.cli import main
from redcorr.extinction import band_extinction, effective_wavelength
from redcorr.io import load_curve
from redcorr.io.filters import load_band
from redcorr.io.spectra import load_sed
from redcorr.tui import RedcorrApp
from redcorr.tui.widgets import BandTable, StatusLine

KW = ["kw-b", "kw-v", "kw-r", "kw-i", "kw-z"]


@pytest.fixture(autouse=True)
def _config(tmp_path, monkeypatch):
    """Never touch the user's real configuration folder."""
    monkeypatch.setenv("REDCORR_CONFIG_DIR", str(tmp_path / "config"))


def run_app(script, size=(140, 42)):
    async def go():
        app = RedcorrApp()
        async with app.run_test(size=size) as pilot:
            await pilot.pause()
            await script(app, pilot)

    asyncio.run(go())


async def type_into(pilot, selector, text):
    await pilot.click(selector)
    await pilot.press("end", "ctrl+u", *text)
    await pilot.pause()


def test_changing_r_v_changes_the_table_to_the_core_values():
    async def script(app, pilot):
        table = app.screen.query_one(BandTable)
        before = [row["A_band"] for row in table.rows_shown]
        await type_into(pilot, "#r-v", "5.5")
        after = table.rows_shown
        assert [row["band"] for row in after] == KW
        curve, sed = load_curve("f99", r_v=5.5), load_sed("blackbody:5800")
        for row in after:
            band = load_band(row["band"])
            # exactly the core's band integral (redcorr.extinction), nothing recomputed by the UI
            assert row["A_band"] == band_extinction(curve, band, sed, 1.0)
            assert row["lambda_eff_um"] == effective_wavelength(curve, band, sed, 1.0)
            assert row["A_over_EBV"] == row["A_over_AV"] * 5.5
        assert [row["A_band"] for row in after] != before
        # Larger R_V means greyer dust: less blue extinction per A_V
        # (Cardelli, Clayton & Mathis 1989, Fig. 4; from memory).
        assert after[0]["A_band"] < before[0]

    run_app(script)


def test_bands_screen_adds_removes_and_exports_what_the_cli_prints(tmp_path, capsys):
    out = tmp_path / "kw.ecsv"

    async def script(app, pilot):
        await pilot.press("f3")
        await pilot.pause()
        await type_into(pilot, "#bands-picker .picker-search", "bessell-V")
        await pilot.press("enter", "enter")
        await pilot.pause()
        await type_into(pilot, "#band-spec", "gauss:1.6:0.3")
        await pilot.press("enter")
        await pilot.pause()
        assert app.session.bands == KW + ["bessell-V", "gauss:1.6:0.3"]
        await pilot.click("#bands-chosen")
        await pilot.press("home", "delete")  # remove kw-b
        await pilot.pause()
        assert app.session.bands == KW[1:] + ["bessell-V", "gauss:1.6:0.3"]
        await type_into(pilot, "#sed", "blackbody:4000")
        await type_into(pilot, "#band-output", str(out))
        await pilot.press("enter")
        await pilot.pause()
        assert "wrote" in app.screen.query_one(StatusLine).message

    run_app(script)
    bands = KW[1:] + ["bessell-V", "gauss:1.6:0.3"]
    argv = ["coeffs", "--law", "f99", "--rv", "3.1", "--av", "1.0", "--sed", "blackbody:4000", "--json"]
    assert main(argv + [a for b in bands for a in ("--band", b)]) == 0
    cli_rows = json.loads(capsys.readouterr().out)
    table = Table.read(out, format="ascii.ecsv")
    assert list(table["band"]) == bands
    for key in ("lambda_eff_um", "A_band", "A_over_AV", "A_over_EBV"):
        np.testing.assert_allclose(table[key], [r[key] for r in cli_rows], rtol=1e-12)
    assert table.meta["curve"] == "f99" and table.meta["source"] == "blackbody:4000"


def test_bad_band_and_source_values_show_messages():
    async def script(app, pilot):
        await pilot.press("f3")
        await pilot.pause()
        screen = app.screen
        status = screen.query_one(StatusLine)
        rows = screen.query_one(BandTable).rows_shown
        await type_into(pilot, "#band-spec", "tophat:0.5")
        await pilot.press("enter")
        await pilot.pause()
        assert status.has_class("-error") and "tophat:0.5" in status.message
        assert app.session.bands == KW
        await type_into(pilot, "#sed", "blackbody:hot")
        assert "sed='blackbody:hot'" in status.message
        assert screen.query_one("#sed").has_class("-refused")
        assert screen.query_one(BandTable).rows_shown == rows
        await type_into(pilot, "#sed", "flat")
        assert not status.has_class("-error")
        assert screen.query_one(BandTable).rows_shown != rows
        await type_into(pilot, "#band-output", "table.txt")
        await pilot.press("enter")
        await pilot.pause()
        assert "must end in .ecsv or .csv" in status.message
        assert screen.query_one("#band-output").has_class("-refused")

    run_app(script)
