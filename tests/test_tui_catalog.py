"""The Catalog screen writes what `redcorr correct` writes, cancels safely and survives bad values."""

import numpy as np
import pandas as pd
import pytest
from tui_helpers import private_config, run_app, set_value, type_into, until  # noqa: F401

from redcorr._paths import project_dir
from redcorr.cli import build_parser, main
from redcorr.cli.correct import _options as cli_options
from redcorr.colours import colour_magnitude
from redcorr.correct import Correction
from redcorr.tui._inputs import catalog_probe, correction_options, guess_mapping
from redcorr.tui.widgets import StatusLine, XYPlot

DEMO = project_dir("demo") / "brume_catalog.csv"


async def open_demo(pilot, output):
    await pilot.press("f4")
    await pilot.pause()
    await set_value(pilot, "#cat-input", str(DEMO))
    await pilot.click("#cat-open")
    await pilot.pause()
    await set_value(pilot, "#cat-output", str(output))


async def wait_for_run(pilot):
    await until(pilot, lambda: not pilot.app.screen.running, "the correction")


def test_demo_catalog_correction_writes_what_the_cli_writes(tmp_path):
    tui_out, cli_out = tmp_path / "tui.csv", tmp_path / "cli.csv"

    async def script(app, pilot):
        await set_value(pilot, "#r-v", "4.3")
        await open_demo(pilot, tui_out)
        screen = app.screen
        # the guessed mapping and reddening column of the demo file
        assert screen.query_one("#cat-mapping").mapping["kw-v"] == ("kw_v", "e_kw_v")
        assert app.session.cat_red_value == "ebv"
        await pilot.press("ctrl+r")
        await wait_for_run(pilot)
        assert screen.query_one(StatusLine).message == f"wrote {tui_out}"
        assert screen.summary.rows == 300
        return screen.query_one(XYPlot).series

    series = run_app(script, size=(150, 60))
    # the diagram shows the core's colour-magnitude points of the written file (redcorr.colours)
    _, written = catalog_probe(tui_out, 5000)
    expected = colour_magnitude(written, "kw_b", "kw_v")
    assert [name for name, _, _ in series] == list(expected) == ["as observed", "corrected"]
    for name, x, y in series:
        np.testing.assert_array_equal(x, expected[name][0])
        np.testing.assert_array_equal(y, expected[name][1])
    bands = [a for b in ("kw-b", "kw-v", "kw-r", "kw-i") for a in ("--band", b)]
    argv = ["correct", str(DEMO), str(cli_out), *bands, "--law", "f99", "--rv", "4.3", "--ebv-col", "ebv",
            "--colour", "kw-b,kw-v", "--quiet"]
    assert main(argv) == 0
    assert tui_out.read_bytes() == cli_out.read_bytes()


def test_cancel_leaves_no_output_and_bad_values_leave_the_app_usable(tmp_path):
    out = tmp_path / "out.csv"

    async def script(app, pilot):
        await open_demo(pilot, out)
        screen = app.screen
        status = screen.query_one(StatusLine)
        screen.action_run()
        screen.action_cancel()  # before the first chunk is done
        await wait_for_run(pilot)
        assert status.message == "cancelled: nothing was written"
        assert [p.name for p in tmp_path.iterdir() if p.name != "config"] == []  # no partial file
        for selector, text, message in [
            ("#cat-red-value", "no_such_column", "no_such_column"),
            ("#cat-teff", "hot", "temperature='hot' is not a number"),
            ("#cat-colour", "kw-b", "colour='kw-b' must be two band names"),
        ]:
            good = screen.query_one(selector).value
            await type_into(pilot, selector, text)
            assert message in status.message and status.has_class("-error")
            assert screen.query_one(selector).has_class("-refused")
            screen.action_run()  # refused before any thread starts
            assert not screen.running and not out.exists()
            await set_value(pilot, selector, good)
            assert not status.has_class("-error")
        await set_value(pilot, "#cat-input", str(tmp_path / "missing.csv"))
        await pilot.click("#cat-open")
        await pilot.pause()
        assert "does not exist" in status.message
        assert screen.query_one("#cat-input").has_class("-refused")
        await set_value(pilot, "#cat-input", str(DEMO))
        await set_value(pilot, "#cat-bands", " ")
        await pilot.click("#cat-open")
        await pilot.pause()
        assert "bands=' ' is empty" in status.message and status.has_class("-error")
        await pilot.press("ctrl+r")  # a catalog whose columns could not be mapped is not run
        await pilot.pause()
        assert "not mapped" in status.message and not screen.running
        await set_value(pilot, "#cat-bands", "kw-b,kw-v,kw-r,kw-i")
        await pilot.click("#cat-open")
        await pilot.pause()
        await pilot.press("ctrl+r")
        await wait_for_run(pilot)
        assert out.exists()
        await pilot.press("ctrl+r")  # the output now exists and overwrite is off
        await wait_for_run(pilot)
        assert "exists" in status.message and status.has_class("-error")

    run_app(script, size=(150, 60))


@pytest.mark.parametrize(
    ("kind", "value", "flags"),
    [
        ("ebv", "0.6", ["--ebv", "0.6"]),
        ("av", "2.5", ["--av", "2.5"]),
        ("map", str(project_dir("demo") / "brume_ebv_healpix.fits"),
         ["--map", str(project_dir("demo") / "brume_ebv_healpix.fits")]),
    ],
)
def test_constant_and_map_reddening_set_up_the_correction_as_the_cli_does(kind, value, flags):
    columns, first = catalog_probe(DEMO)
    bands = ["kw-b", "kw-v", "kw-r", "kw-i"]
    mapping = guess_mapping(columns, bands, "f99", 4.3)
    ours = correction_options(mapping, kind, value, "f99", 4.3, "colour", "7000", "kw-b,kw-v")
    argv = ["correct", str(DEMO), "out.csv", *[a for b in bands for a in ("--band", b)], "--law", "f99",
            "--rv", "4.3", "--solve-colour", "kw-b,kw-v", "--colour", "kw-b,kw-v", *flags]
    theirs = cli_options(build_parser().parse_args(argv))
    a = Correction(bands, columns=columns, **ours)
    b = Correction(bands, columns=columns, **theirs)
    assert a.setup() == b.setup()
    pd.testing.assert_frame_equal(a.correct(first), b.correct(first))


def test_a_grain_model_run_writes_what_the_cli_writes(tmp_path, monkeypatch):
    monkeypatch.setenv("REDCORR_CACHE_DIR", str(tmp_path / "cache"))
    tui_out, cli_out = tmp_path / "tui.csv", tmp_path / "cli.csv"

    async def script(app, pilot):
        app.session.law = "mrn77"
        await open_demo(pilot, tui_out)
        screen = app.screen
        await until(pilot, lambda: screen._mapped, "the grain model and the column mapping")
        await pilot.press("ctrl+r")
        await wait_for_run(pilot)
        assert screen.query_one(StatusLine).message == f"wrote {tui_out}"

    run_app(script, size=(150, 60))
    bands = [a for b in ("kw-b", "kw-v", "kw-r", "kw-i") for a in ("--band", b)]
    argv = ["correct", str(DEMO), str(cli_out), *bands, "--law", "mrn77", "--ebv-col", "ebv",
            "--colour", "kw-b,kw-v", "--quiet"]
    assert main(argv) == 0
    assert tui_out.read_bytes() == cli_out.read_bytes()
