"""The Bands screen adds and removes bands, refuses bad ones, and exports what `redcorr coeffs` prints."""

import json

import numpy as np
import pytest
import speclite.filters
from astropy import units as u
from astropy.table import Table
from tui_helpers import run_app, set_value, type_into, until, write

from redcorr.cli import main
from redcorr.tui.screens.dialogs import Confirm
from redcorr.tui.widgets import BandGrid, StatusLine

pytestmark = pytest.mark.usefixtures("private_config")

KW = ["kw-b", "kw-v", "kw-r", "kw-i", "kw-z"]


def shown_files(tree):
    """Names of the files the directory tree lists (once it has read its folder)."""
    return {node.data.path.name for node in tree.root.children if node.data is not None}


async def choose(pilot, tree, name):
    """Walk the tree with the keyboard to ``name`` and press Enter, as a user would."""
    tree.focus()
    await pilot.press("home")
    for _ in range(len(tree.root.children) + 1):
        node = tree.cursor_node
        if node is not None and node.data is not None and node.data.path.name == name:
            await pilot.press("enter")
            await pilot.pause()
            return
        await pilot.press("down")
    raise AssertionError(f"{name} not found in the tree")


def test_bands_from_files_library_and_specs_export_what_the_cli_prints(tmp_path, capsys):
    """One session on the Bands screen: add from the file tree, the library and a spec; refuse bad values; export."""
    # the Bessell V curve as speclite ships it (Bessell 1990, PASP 102, 1181), saved as a user's ECSV file
    filt = speclite.filters.load_filter("bessell-V")
    table = Table({"wavelength": filt.wavelength * u.AA, "response": filt.response})
    table.meta.update({"convention": "photon", "source": "speclite bessell-V, copied by the test"})
    folder = tmp_path / "filters_of_mine"
    folder.mkdir()
    table.write(folder / "my-v.ecsv", format="ascii.ecsv")
    (folder / "notes.txt").write_text("not a filter curve\n")
    spec = f"file:{folder / 'my-v.ecsv'}"
    out = tmp_path / "kw.ecsv"

    async def script(app, pilot):
        await pilot.press("f3")
        await pilot.pause()
        screen = app.screen
        status = screen.query_one(StatusLine)

        # a filter file chosen in the file tree
        tree = screen.query_one("#bands-tree")
        tree.path = folder
        await until(pilot, lambda: shown_files(tree) == {"my-v.ecsv", "notes.txt"}, "the tree to read the folder")
        await choose(pilot, tree, "my-v.ecsv")
        assert app.session.bands == KW + [spec]
        assert app.session.band_dir == str(folder)

        # a band from the library, found by typing in the picker
        await type_into(pilot, "#bands-picker .picker-search", "bessell-V")
        await pilot.press("enter", "enter")
        await pilot.pause()
        assert app.session.bands == KW + [spec, "bessell-V"]
        rows = {r["band"]: r for r in screen.query_one(BandGrid).rows_shown}
        # the same curve through a user file and through the library gives the same numbers; the file's
        # wavelengths are converted from Å by astropy units, the library's by its own arithmetic (1 ulp
        # apart), so lambda_eff may differ in the last bits: rel=1e-9 is far below any digit shown
        for key in ("lambda_eff_um", "A_band", "A_over_AV"):
            assert rows[spec][key] == pytest.approx(rows["bessell-V"][key], rel=1e-9)
        await choose(pilot, tree, "notes.txt")
        assert status.has_class("-error") and "notes.txt" in status.message
        assert app.session.bands == KW + [spec, "bessell-V"]  # refused, nothing added, still usable

        # a band spec typed in, and a band removed from the chosen list
        await set_value(pilot, "#band-spec", "gauss:1.6:0.3")
        await pilot.click("#band-spec")
        await pilot.press("enter")
        await pilot.pause()
        assert app.session.bands == KW + [spec, "bessell-V", "gauss:1.6:0.3"]
        await pilot.click("#bands-chosen")
        await pilot.press("home", "delete")  # remove kw-b
        await pilot.pause()
        bands = KW[1:] + [spec, "bessell-V", "gauss:1.6:0.3"]
        assert app.session.bands == bands

        # bad values: a message, nothing changed, the last good table kept
        rows = screen.query_one(BandGrid).rows_shown
        await type_into(pilot, "#band-spec", "tophat:0.5")
        await pilot.press("enter")
        await pilot.pause()
        assert status.has_class("-error") and "tophat:0.5" in status.message
        assert app.session.bands == bands
        await type_into(pilot, "#sed", "blackbody:hot")
        assert "sed='blackbody:hot'" in status.message
        assert screen.query_one("#sed").has_class("-refused")
        assert screen.query_one(BandGrid).rows_shown == rows  # the last good table stays
        await set_value(pilot, "#sed", "blackbody:4000")
        assert not status.has_class("-error")
        assert screen.query_one(BandGrid).rows_shown != rows
        await set_value(pilot, "#band-output", "table.txt")
        await pilot.click("#band-export")  # the button asks first, like Ctrl+S
        await pilot.pause()
        assert isinstance(app.screen, Confirm)
        await pilot.press("y")
        await pilot.pause()
        assert "must end in .ecsv or .csv" in status.message
        assert screen.query_one("#band-output").has_class("-refused")

        await set_value(pilot, "#band-output", str(out))
        await pilot.click("#band-export")
        await pilot.pause()
        await pilot.press("escape")  # declined: nothing is written
        await pilot.pause()
        assert not out.exists()
        await write(pilot)
        await pilot.pause()
        assert status.message == f"wrote {out}"
        return bands

    bands = run_app(script)
    argv = ["coeffs", "--law", "f99", "--rv", "3.1", "--av", "1.0", "--sed", "blackbody:4000", "--json"]
    assert main(argv + [a for b in bands for a in ("--band", b)]) == 0
    cli_rows = json.loads(capsys.readouterr().out)
    table = Table.read(out, format="ascii.ecsv")
    assert list(table["band"]) == bands
    # bitwise: the exported table holds exactly the numbers `redcorr coeffs` prints (JSON and ECSV both
    # write doubles with enough digits to read back the same bits)
    for key in ("lambda_eff_um", "A_band", "A_over_AV", "A_over_EBV"):
        np.testing.assert_array_equal(table[key], [r[key] for r in cli_rows])
    assert table.meta["curve"] == "f99" and table.meta["source"] == "blackbody:4000"
