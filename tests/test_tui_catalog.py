"""The Catalog screen writes what `redcorr correct` writes, cancels safely and survives bad values."""

import numpy as np
import pytest
from tui_helpers import run_app, set_value, type_into, until

from redcorr._paths import project_dir
from redcorr.cli import main
from redcorr.colours import colour_magnitude
from redcorr.tui._inputs import catalog_probe
from redcorr.tui.widgets import StatusLine, XYPlot

pytestmark = pytest.mark.usefixtures("private_config")

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


def test_catalog_runs_write_what_the_cli_writes_cancel_safely_and_survive_bad_values(tmp_path):
    """One session on the Catalog screen: a run, a cancelled run, bad values, a grain model run."""
    tui_out, cli_out = tmp_path / "tui.csv", tmp_path / "cli.csv"
    grain_tui, grain_cli = tmp_path / "grain_tui.csv", tmp_path / "grain_cli.csv"
    later = tmp_path / "later"  # the cancelled run's folder: it must stay empty
    later.mkdir()
    out = later / "out.csv"

    async def script(app, pilot):
        # the demo catalog, corrected with R_V = 4.3
        await set_value(pilot, "#r-v", "4.3")
        await open_demo(pilot, tui_out)
        screen = app.screen
        status = screen.query_one(StatusLine)
        # the guessed mapping and reddening column of the demo file
        assert screen.query_one("#cat-mapping").mapping["kw-v"] == ("kw_v", "e_kw_v")
        assert app.session.cat_red_value == "ebv"
        await pilot.press("ctrl+r")
        await wait_for_run(pilot)
        assert status.message == f"wrote {tui_out}"
        assert screen.summary.rows == 300
        series = screen.query_one(XYPlot).series

        # a run cancelled before its first chunk is done writes nothing
        await set_value(pilot, "#cat-output", str(out))
        screen.action_run()
        screen.action_cancel()
        await wait_for_run(pilot)
        assert status.message == "cancelled: nothing was written"
        assert list(later.iterdir()) == []  # no partial file, no temporary

        # bad values: a message, refused before any thread starts, the app still usable
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

        # a grain model, as if just chosen on the Dust screen
        app.session.law = "mrn77"
        await set_value(pilot, "#cat-output", str(grain_tui))
        await pilot.click("#cat-open")
        dust = screen.query_one("#cat-dust")
        await until(pilot, lambda: screen._mapped and "mrn77" in str(dust.render()),
                    "the grain model and the column mapping")
        await pilot.press("ctrl+r")
        await wait_for_run(pilot)
        assert status.message == f"wrote {grain_tui}"
        return series

    series = run_app(script, size=(150, 60))
    # the diagram shows the core's colour-magnitude points of the written file (redcorr.colours);
    # bitwise: the UI draws the core's numbers, it computes none of its own
    _, written = catalog_probe(tui_out, 5000)
    expected = colour_magnitude(written, "kw_b", "kw_v")
    assert [name for name, _, _ in series] == list(expected) == ["as observed", "corrected"]
    for name, x, y in series:
        np.testing.assert_array_equal(x, expected[name][0])
        np.testing.assert_array_equal(y, expected[name][1])
    # byte for byte: the files `redcorr correct` writes with the same settings
    bands = [a for b in ("kw-b", "kw-v", "kw-r", "kw-i") for a in ("--band", b)]
    common = [*bands, "--ebv-col", "ebv", "--colour", "kw-b,kw-v", "--quiet"]
    assert main(["correct", str(DEMO), str(cli_out), "--law", "f99", "--rv", "4.3", *common]) == 0
    assert tui_out.read_bytes() == cli_out.read_bytes()
    assert main(["correct", str(DEMO), str(grain_cli), "--law", "mrn77", *common]) == 0
    assert grain_tui.read_bytes() == grain_cli.read_bytes()


def test_a_distance_resolved_map_takes_a_parallax_column_and_writes_what_the_cli_writes(tmp_path):
    """The distance row appears for a map with distances only; the run equals `redcorr correct --parallax-col`."""
    from test_correct_distance import stars, write_cube, write_flat

    cube, flat = str(write_cube(tmp_path / "cube.fits")), str(write_flat(tmp_path / "flat.fits"))
    catalog = tmp_path / "stars.csv"
    stars(30, seed=3, plx=np.linspace(0.5, 3.0, 30), e_plx=0.1).to_csv(catalog, index=False)
    tui_out, cli_out = tmp_path / "tui.csv", tmp_path / "cli.csv"

    async def script(app, pilot):
        await pilot.press("f4")
        await pilot.pause()
        screen = app.screen
        status = screen.query_one(StatusLine)
        row = screen.query_one("#cat-distance")
        assert not row.display  # no catalog, no map yet
        await set_value(pilot, "#cat-input", str(catalog))
        await set_value(pilot, "#cat-bands", "kw-v")
        await set_value(pilot, "#cat-colour", "")
        await pilot.click("#cat-open")
        await pilot.pause()
        await set_value(pilot, "#cat-output", str(tui_out))
        screen.query_one("#cat-red-kind").value = "map"
        await pilot.pause()
        await set_value(pilot, "#cat-red-value", flat)
        assert not row.display  # a map of whole sight lines: no distance to give
        await set_value(pilot, "#cat-red-value", cube)
        assert row.display
        # no column named yet: the core's warning says what the map then gives
        assert "no distance or parallax column" in status.message and status.has_class("-warning")
        screen.query_one("#cat-dist-kind").value = "parallax"
        await pilot.pause()
        await type_into(pilot, "#cat-dist-col", "nope")
        assert "parallax_column='nope' is not a column" in status.message
        assert screen.query_one("#cat-dist-col").has_class("-refused")
        await set_value(pilot, "#cat-dist-col", "plx")
        await set_value(pilot, "#cat-dist-err", "e_plx")
        assert not status.has_class("-error") and not screen.query_one("#cat-dist-col").has_class("-refused")
        await pilot.press("ctrl+r")
        await wait_for_run(pilot)
        # the smallest parallax, 0.5 ± 0.1 mas, has over 5 % of its posterior beyond the map's 3 kpc
        assert "warning: 1 row(s) lie beyond the reach" in status.message and tui_out.exists()
        assert screen.summary.flagged["beyond_map"] == 1 and screen.summary.rows == 30
        assert app.session.cat_dist_kind == "parallax" and app.session.cat_dist_col == "plx"

    run_app(script, size=(150, 60))
    assert main(["correct", str(catalog), str(cli_out), "--band", "kw-v", "--map", cube, "--parallax-col", "plx",
                 "--parallax-err-col", "e_plx", "--quiet"]) == 0
    assert tui_out.read_bytes() == cli_out.read_bytes()  # byte for byte: the same options, the same core
