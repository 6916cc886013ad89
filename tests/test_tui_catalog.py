"""The Catalog screen writes what `redcorr correct` writes, cancels safely and survives bad values."""

import tempfile
import time

import numpy as np
import pandas as pd
import pytest
from textual.coordinate import Coordinate
from tui_helpers import run_app, set_value, type_into, until, write

from redcorr._paths import project_dir
from redcorr.cli import main
from redcorr.colours import colour_magnitude, locus_colours, reddening_arrow
from redcorr.extinction import band_extinction
from redcorr.io import load_curve
from redcorr.io.filters import load_band
from redcorr.io.intrinsic import load_intrinsic_colours
from redcorr.sed import blackbody
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
        await write(pilot)
        await wait_for_run(pilot)
        assert status.message == f"wrote {tui_out}"
        assert screen.summary.rows == 300
        series = screen.query_one("#cat-plot", XYPlot).series

        # a run cancelled before its first chunk is done writes nothing
        await set_value(pilot, "#cat-output", str(out))
        screen._start()  # the run the confirmation starts, cancelled at once
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
        await write(pilot)  # a catalog whose columns could not be mapped is not run
        await pilot.pause()
        assert "not mapped" in status.message and not screen.running
        await set_value(pilot, "#cat-bands", "kw-b,kw-v,kw-r,kw-i")
        await pilot.click("#cat-open")
        await pilot.pause()
        await write(pilot)
        await wait_for_run(pilot)
        assert out.exists()
        await write(pilot)  # the output now exists and overwrite is off
        await wait_for_run(pilot)
        assert "exists" in status.message and status.has_class("-error")

        # a grain model, as if just chosen on the Dust screen
        app.session.law = "mrn77"
        await set_value(pilot, "#cat-output", str(grain_tui))
        await pilot.click("#cat-open")
        dust = screen.query_one("#cat-dust")
        await until(pilot, lambda: screen._mapped and "mrn77" in str(dust.render()),
                    "the grain model and the column mapping")
        await write(pilot)
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
        await write(pilot)
        await wait_for_run(pilot)
        # the smallest parallax, 0.5 ± 0.1 mas, has over 5 % of its posterior beyond the map's 3 kpc
        assert "warning: 1 row(s) lie beyond the reach" in status.message and tui_out.exists()
        assert screen.summary.flagged["beyond_map"] == 1 and screen.summary.rows == 30
        assert app.session.cat_dist_kind == "parallax" and app.session.cat_dist_col == "plx"

    run_app(script, size=(150, 60))
    assert main(["correct", str(catalog), str(cli_out), "--band", "kw-v", "--map", cube, "--parallax-col", "plx",
                 "--parallax-err-col", "e_plx", "--quiet"]) == 0
    assert tui_out.read_bytes() == cli_out.read_bytes()  # byte for byte: the same options, the same core


# ------------------------------------------------------------------ reddening from the photometry
PHOTOMETRY = {"bessell-B": "Bmag", "bessell-V": "Vmag", "bessell-R": "Rmag", "bessell-I": "Imag",
              "twomass-J": "Jmag", "twomass-H": "Hmag", "twomass-Ks": "Ksmag"}
DWARF_TYPES = ["A5V", "F5V", "G2V", "K0V", "K5V"]


def brume_dwarfs(path, rows=20):
    """An invented Brume Field catalog: dwarfs of the packaged locus behind known dust; returns E(B-V).

    Row i is a dwarf of type DWARF_TYPES[i % 5] (its T_eff and intrinsic magnitudes from the packaged
    table), at distance modulus 9 + i/4, behind E(B-V) = 0.10 + 0.05 i with F99, R_V = 3.1 (the screen's
    default dust), its band extinctions those of the project (redcorr.extinction.band_extinction, a
    blackbody of the star's T_eff: the fit's own model); errors 0.01 mag, no noise added.
    """
    locus, f99 = load_intrinsic_colours("dwarfs"), load_curve("f99", r_v=3.1)
    ebv = 0.10 + 0.05 * np.arange(rows)
    table = {"star": [f"BF-{i + 1:03d}" for i in range(rows)]}
    teff = locus.teff_of([DWARF_TYPES[i % 5] for i in range(rows)])
    for band, column in PHOTOMETRY.items():
        a_b = [float(band_extinction(f99, load_band(band), blackbody(t), 3.1 * e))
               for t, e in zip(teff, ebv, strict=True)]
        table[column] = locus.magnitude(teff, band) + 9.0 + 0.25 * np.arange(rows) + np.array(a_b)
        table["e_" + column] = np.full(rows, 0.01)
    pd.DataFrame(table).to_csv(path, index=False)
    return ebv


def test_catalog_fits_each_stars_reddening_from_its_photometry_and_corrects_with_it(tmp_path, monkeypatch):
    """From the photometry: the preview fits the first rows, the diagram shows the core's locus, arrow and
    stars, a run writes the fit and the correction whole (nothing on a cancel), a band the colour table lacks
    is refused with the core's message."""
    catalog = tmp_path / "brume_dwarfs.csv"
    truth = brume_dwarfs(catalog)
    folder = tmp_path / "out"  # the run's folder: only the output and its summary may appear there
    folder.mkdir()
    tui_out, cli_out = folder / "dered.csv", tmp_path / "cli.csv"
    temporary = tmp_path / "tmp"  # where the fitted table waits: empty again after every run
    temporary.mkdir()
    monkeypatch.setattr(tempfile, "tempdir", str(temporary))
    bvi = (("bessell-B", "bessell-V"), ("bessell-V", "bessell-I"))

    async def script(app, pilot):
        await pilot.press("f4")
        await pilot.pause()
        screen = app.screen
        status = screen.query_one(StatusLine)
        ccd = screen.query_one("#cat-ccd", XYPlot)
        await set_value(pilot, "#cat-input", str(catalog))
        await set_value(pilot, "#cat-bands", ",".join(PHOTOMETRY))
        await set_value(pilot, "#cat-colour", "bessell-B,bessell-V")
        await pilot.click("#cat-open")
        await pilot.pause()
        await set_value(pilot, "#cat-output", str(tui_out))
        assert not ccd.display and screen.query_one("#cat-red-value-field").display
        screen.query_one("#cat-red-kind").value = "photometry"
        await pilot.pause()
        assert ccd.display and not screen.query_one("#cat-red-value-field").display

        # the preview: the first rows fitted (once a worker has built the fit's grid), then corrected
        after = screen.query_one("#cat-after")

        def header():
            return [str(c.label) for c in after.columns.values()]

        await until(pilot, lambda: "ebv_fit" in header(), "the fitted preview")
        assert not status.has_class("-error"), status.message
        header = header()
        assert header[-5:] == ["ebv_fit", "ebv_fit_err", "teff_fit", "fit_flags", "dered_flags"]
        assert after.row_count == 5
        shown = np.array([[float(after.get_cell_at(Coordinate(r, header.index(c)))) for c in header[-5:-3]]
                          for r in range(5)])
        # default diagram: the first three bands, B-V against V-R
        assert [name for name, _, _ in ccd.series] == ["locus (dwarfs)", "E(B-V) = 1 at 7000 K",
                                                        "stars as observed", "dereddened"]
        assert ccd.points == [False, False, True, True]
        default = ccd.series[0]
        await type_into(pilot, "#cat-diagram", "bessell-B,bessell-V,bessell-I")
        diagram = list(ccd.series)
        await set_value(pilot, "#cat-diagram", "bessell-B,bessell-V,twomass-J,twomass-Ks")  # four bands
        four = list(ccd.series)

        # a diagram naming two bands is refused, the run is not
        await type_into(pilot, "#cat-diagram", "bessell-B,bessell-V")
        assert "diagram='bessell-B,bessell-V' must name 3 bands" in status.message
        assert screen.query_one("#cat-diagram").has_class("-refused")
        await set_value(pilot, "#cat-diagram", "")
        assert not screen.query_one("#cat-diagram").has_class("-refused")

        # a run cancelled before its first chunk is done writes nothing, not even the fit
        screen._start()  # the run the confirmation starts, cancelled at once
        screen.action_cancel()
        await wait_for_run(pilot)
        assert status.message == "cancelled: nothing was written"
        assert list(folder.iterdir()) == [] and list(temporary.iterdir()) == []

        await write(pilot)
        await wait_for_run(pilot)
        # written, with the fit's warning: posteriors that split in two along the locus (the data are exact,
        # the trade-off of temperature and reddening is the locus' own) are flagged, and said
        assert tui_out.exists() and status.has_class("-warning")
        assert "star(s) flagged (bimodal" in status.message, status.message
        assert screen.summary.rows == 20
        assert str(screen.query_one("#cat-summary").render()).startswith("fit: ")
        after_run = list(ccd.series)

        # a band the intrinsic-colour table does not have: the core's one-line message, nothing run
        await set_value(pilot, "#cat-bands", "bessell-B,bessell-V,kw-i")
        await pilot.click("#cat-open")
        # (the status may show an error from the bands alone before the catalog is mapped again)
        mapping = screen.query_one("#cat-mapping")
        await until(pilot, lambda: mapping.mapping.get("kw-i") == ("Imag", "e_Imag") and status.has_class("-error"),
                    "the new band mapped and the fit refused")
        assert status.message.startswith("band='kw-i' is not in the intrinsic-colour table 'dwarfs'; it covers "
                                         "bessell-U, bessell-B, bessell-V"), status.message
        assert screen.query_one("#cat-bands").has_class("-refused") and status.has_class("-error")
        screen.action_run()
        assert not screen.running
        return shown, default, diagram, four, after_run

    shown, default, diagram, four, after_run = run_app(script, size=(150, 60))
    assert sorted(p.name for p in folder.iterdir()) == ["dered.csv", "dered.csv.summary.json"]
    assert list(temporary.iterdir()) == []  # the fitted table was removed

    # self-consistency (no outside source): stars made from the packaged locus with the project's own band
    # extinction, the fit's model, give back their E(B-V) within 2 posterior sigma; the posteriors are wide
    # (0.07-0.14 mag: with the 0.02 mag floor, temperature and reddening trade off along the locus), so
    # also no wider than 0.15 mag. The preview shows 4 decimals.
    fit, err = shown.T
    assert np.all(err < 0.15) and np.all(np.abs(fit - truth[:5]) < 2 * err + 1e-4)
    written = pd.read_csv(tui_out)
    assert np.all(np.abs(written["ebv_fit"] - truth) < 2 * written["ebv_fit_err"])
    # the correction read the fitted E(B-V) and its error (its columns; bitwise: copied, not recomputed)
    np.testing.assert_array_equal(written["ebv_used"], written["ebv_fit"])
    assert {"teff_fit", "chi2_fit", "fit_flags", "Bmag_dered", "Ksmag_dered_err", "dered_flags"} <= set(written)
    # byte for byte: what `redcorr fit` then `redcorr correct --ebv-col ebv_fit --red-err-col ebv_fit_err` write
    # with the screen's settings (F99 R_V 3.1, fixed T 7000 K, colour B,V)
    fitted, bands = tmp_path / "fitted.csv", [a for b in PHOTOMETRY for a in ("--band", b)]
    dust = ["--law", "f99", "--rv", "3.1", "--quiet"]
    assert main(["fit", str(catalog), str(fitted), *bands, *dust]) == 0
    assert main(["correct", str(fitted), str(cli_out), *bands, *dust, "--ebv-col", "ebv_fit", "--red-err-col",
                 "ebv_fit_err", "--colour", "bessell-B,bessell-V"]) == 0
    assert tui_out.read_bytes() == cli_out.read_bytes()

    # the diagram draws the core's numbers (redcorr.colours), bitwise: the UI computes none of its own
    locus = load_intrinsic_colours("dwarfs")
    _, lx, ly = locus_colours(locus, ("bessell-B", "bessell-V"), ("bessell-V", "bessell-R"))
    assert default[1:] == (list(lx), list(ly))
    _, lx, ly = locus_colours(locus, *bvi)
    assert diagram[0][1:] == (list(lx), list(ly))
    bands = {b: load_band(b) for b in PHOTOMETRY}
    start, end = reddening_arrow(locus, load_curve("f99", r_v=3.1), bands, *bvi, 7000.0)
    assert diagram[1][1:] == ([start[0], end[0]], [start[1], end[1]])
    first = pd.read_csv(catalog, nrows=5)
    assert diagram[2][1:] == (list(first["Bmag"] - first["Vmag"]), list(first["Vmag"] - first["Imag"]))
    assert four[2][1:] == (list(first["Bmag"] - first["Vmag"]), list(first["Jmag"] - first["Ksmag"]))
    # after the run (the default diagram again, B-V against V-R): the written file, observed and dereddened
    assert after_run[2][1] == list(written["Bmag"] - written["Vmag"])
    assert after_run[3][2] == list(written["Vmag_dered"] - written["Rmag_dered"])


def test_every_control_of_a_fit_from_the_photometry_is_reachable_at_80_by_24(tmp_path):
    """At 80x24 the Catalog screen scrolls (both ways): each control, focused or scrolled to, lies on screen."""
    catalog = tmp_path / "brume_dwarfs.csv"
    brume_dwarfs(catalog, rows=5)
    selectors = ["#cat-input", "#cat-open", "#cat-bands", "#cat-colour", "#cat-red-kind", "#cat-spectrum",
                 "#cat-teff", "#cat-diagram", "#cat-mapping", "#cat-after", "#cat-ccd", "#cat-output",
                 "#cat-overwrite", "#cat-run", "#cat-cancel", "#cat-plot"]

    async def script(app, pilot):
        await pilot.press("f4")
        await pilot.pause()
        screen = app.screen
        await set_value(pilot, "#cat-input", str(catalog))
        await set_value(pilot, "#cat-bands", ",".join(PHOTOMETRY))
        await set_value(pilot, "#cat-colour", "")
        await pilot.press("ctrl+o")  # the Open button is off screen until scrolled to
        await pilot.pause()
        screen.query_one("#cat-red-kind").value = "photometry"
        await until(pilot, lambda: screen.query_one("#cat-after").row_count == 5, "the fitted preview")

        def shown(widget):  # its first three lines (or all of it) between the header and the footer
            r = widget.region
            return widget.display and r.x >= 0 and r.y >= 1 and r.right <= 80 and r.y + min(r.height, 3) <= 23

        off = []
        for selector in selectors:
            widget = screen.query_one(selector)
            # a loaded machine may take more than one refresh to scroll, and the preview's last updates
            # may move the layout after it: focused (or scrolled to) again for up to 5 s
            settle = time.monotonic() + 5.0
            while True:
                if widget.focusable:
                    screen.set_focus(None)
                    widget.focus()
                else:
                    screen.scroll_to_widget(widget, animate=False)
                await pilot.pause()
                if shown(widget) or time.monotonic() > settle:
                    break
                await pilot.pause(0.05)
            if not shown(widget):
                off.append((selector, widget.region))
        return off

    assert run_app(script, size=(80, 24)) == []
