"""The Catalog screen: open a catalog, map its columns, choose the reddening, preview, run, inspect."""

import contextlib
import threading
from pathlib import Path

from textual import work
from textual.app import ComposeResult
from textual.containers import Horizontal, VerticalScroll
from textual.screen import Screen
from textual.widgets import Button, Checkbox, DataTable, Footer, Header, Label, ProgressBar, Select, Static

from redcorr.colours import colour_magnitude
from redcorr.correction import CatalogFit, Correction
from redcorr.io.batch import correct_file, fit_and_correct_file
from redcorr.io.catalogs import open_catalog
from redcorr.tui import _cache
from redcorr.tui._guard import Outcome, combine, guarded
from redcorr.tui._inputs import (
    DISTANCE_KINDS,
    FIT_EBV,
    RED_KINDS,
    SPECTRA,
    build_fit,
    catalog_fit_options,
    catalog_options,
    catalog_probe,
    colour_diagram,
    diagram_colours,
    fit_key,
    guess_mapping,
    guess_reddening,
    is_3d_map,
    is_grain,
    law_r_v,
    preview_correction,
    preview_fit,
    ready_fit,
    split_list,
)
from redcorr.tui.keys import bindings
from redcorr.tui.screens._grain import GrainWait
from redcorr.tui.screens.dialogs import AskPath, Confirm
from redcorr.tui.widgets import ColumnMapping, Field, FileTree, StatusLine, XYPlot

__all__ = ["CatalogScreen", "RunCancelled"]

PREVIEW_ROWS = 5
PLOT_ROWS = 5000
"""Rows of the written output read back for the before/after diagram."""


class RunCancelled(Exception):
    """Raised from the progress callback to stop a run; the atomic writer then leaves no output."""


_FIELDS = {
    "cat-input": "cat_input",
    "cat-bands": "cat_bands",
    "cat-colour": "cat_colour",
    "cat-red-value": "cat_red_value",
    "cat-teff": "cat_teff",
    "cat-output": "cat_output",
    "cat-dist-col": "cat_dist_col",
    "cat-dist-err": "cat_dist_err",
    "cat-diagram": "cat_diagram",
}
_CHECKED = ("cat_bands", "cat_colour", "cat_red_kind", "cat_red_value", "cat_spectrum", "cat_teff", "cat_dist_kind",
            "cat_dist_col", "cat_dist_err", "cat_diagram")
"""Session fields a successful preview has checked (remembered then)."""
_STEPS = {"fit": (0.0, 0.5, "fitted"), "correct": (0.5, 0.5, "corrected")}
"""A run from the photometry: each step's share of the progress bar (start, width) and its verb."""


class CatalogScreen(GrainWait, Screen):
    """Correct a catalog file with the dust of the Dust screen, in a worker thread."""

    TITLE = "Catalog"
    HELP = (
        "open a catalog (file tree or path), check the guessed columns, choose the reddening "
        "(column, constant or dust map; a distance-resolved map also takes a distance or parallax column; "
        "or from the photometry: each star's E(B-V) and T_eff fitted from its bands against the dwarfs' "
        "intrinsic colours, shown in a colour-colour diagram with the reddening arrow from the locus point at "
        "the temperature given), preview the first rows, run (cancel is safe: no partial output)"
    )
    BINDINGS = bindings("catalog")

    def __init__(self, **kwargs):
        super().__init__(**kwargs)
        self.columns = []
        self.preview = None
        self.summary = None
        self.running = False
        self._mapped = False
        self._suffix = ""
        self._cancel = threading.Event()
        self._fit_building = None  # the fit_key whose model grid a worker builds
        self._fit_failed = (None, None)  # the last fit_key refused, and its outcome

    def compose(self) -> ComposeResult:
        s = self.session
        yield Header()
        with Horizontal(id="cat-body"):
            yield FileTree(Path(s.cat_dir if Path(s.cat_dir).is_dir() else Path.cwd()), id="cat-tree")
            with VerticalScroll(id="cat-main"):
                with Horizontal(classes="form"):
                    yield Field("input", s.cat_input, input_id="cat-input", placeholder="catalog file", width=44)
                    yield Button("Open (ctrl+o)", id="cat-open")
                with Horizontal(classes="form"):
                    yield Field("bands", s.cat_bands, input_id="cat-bands", width=30)
                    yield Field("colour", s.cat_colour, input_id="cat-colour", placeholder="B1,B2", width=16)
                with Horizontal(classes="form"):
                    yield Select([(v, k) for k, v in RED_KINDS.items()], value=s.cat_red_kind, allow_blank=False,
                                 id="cat-red-kind")
                    yield Field(
                        "", s.cat_red_value, input_id="cat-red-value", placeholder="column, value or map", width=30,
                        id="cat-red-value-field",
                    )
                    yield Select(
                        [(v, k) for k, v in SPECTRA.items()], value=s.cat_spectrum, allow_blank=False, id="cat-spectrum"
                    )
                    yield Field("", s.cat_teff, input_id="cat-teff", placeholder="K", width=10)
                with Horizontal(classes="form", id="cat-distance"):  # shown for a distance-resolved map
                    yield Select([(v, k) for k, v in DISTANCE_KINDS.items()], value=s.cat_dist_kind,
                                 allow_blank=False, id="cat-dist-kind")
                    yield Field("", s.cat_dist_col, input_id="cat-dist-col", placeholder="column", width=20)
                    yield Field("error", s.cat_dist_err, input_id="cat-dist-err", placeholder="column (optional)",
                                width=22)
                with Horizontal(classes="form", id="cat-fit"):  # shown for a fit from the photometry
                    yield Field("diagram", s.cat_diagram, input_id="cat-diagram",
                                placeholder="b1,b2,b3 (first three)", width=30)
                yield Static(id="cat-dust", classes="info")
                yield Label("Columns (guessed; change them here)", classes="section")
                yield ColumnMapping(id="cat-mapping")
                yield StatusLine(id="cat-status")
                yield Label("First rows: as read, and corrected", classes="section")
                with Horizontal(id="cat-previews"):
                    yield DataTable(id="cat-before", zebra_stripes=True)
                    yield DataTable(id="cat-after", zebra_stripes=True)
                yield XYPlot(id="cat-ccd")  # the colour-colour diagram of a fit from the photometry
                with Horizontal(classes="form"):
                    yield Field("output", s.cat_output, input_id="cat-output", placeholder="corrected file", width=40)
                    yield Checkbox("overwrite", s.cat_overwrite, id="cat-overwrite")
                    yield Button("Run (ctrl+s)", id="cat-run", variant="primary")
                    yield Button("Cancel", id="cat-cancel", variant="error", disabled=True)
                yield ProgressBar(id="cat-progress", show_eta=False)
                yield Static(id="cat-summary", classes="info")
                yield XYPlot(id="cat-plot")
        yield Footer()

    async def on_mount(self):
        self._show_rows()
        if self.session.cat_input:
            await self.open_catalog()

    def redraw(self):
        self.update_preview()

    # -- input -------------------------------------------------------------------------------
    async def on_directory_tree_file_selected(self, event):
        event.stop()
        self.query_one("#cat-input").show_value(str(event.path))
        self.session.cat_input = str(event.path)
        self.session.cat_dir = str(Path(event.path).parent)
        self.app.accept("cat_dir")
        await self.open_catalog()

    async def on_commit_input_committed(self, event):
        attr = _FIELDS.get(event.input.id)
        if attr is None:
            return
        setattr(self.session, attr, event.value)
        if event.input.id == "cat-input":
            await self.action_open()
        elif event.input.id == "cat-bands":
            if self.session.cat_input.strip():
                await self.open_catalog()
        elif event.input.id == "cat-output":
            self.app.accept("cat_output")
        else:
            self.update_preview()

    def on_select_changed(self, event):
        if event.select.id == "cat-red-kind" and event.value in RED_KINDS:
            self.session.cat_red_kind = event.value
        elif event.select.id == "cat-spectrum" and event.value in SPECTRA:
            self.session.cat_spectrum = event.value
        elif event.select.id == "cat-dist-kind" and event.value in DISTANCE_KINDS:
            self.session.cat_dist_kind = event.value
        elif not str(event.select.id or "").startswith("map-"):
            return
        self.update_preview()

    def on_checkbox_changed(self, event):
        self.session.cat_overwrite = event.value
        self.app.accept("cat_overwrite")

    async def on_button_pressed(self, event):
        if event.button.id == "cat-open":
            await self.action_open()
        elif event.button.id == "cat-run":
            self.action_run()
        elif event.button.id == "cat-cancel":
            self.action_cancel()

    async def action_open(self):
        """Open the file named in the input box (as typed); with the box empty, ask for its path first."""
        field = self.query_one("#cat-input")
        self.session.cat_input = field.value
        if field.value.strip():
            await self.open_catalog()
            return
        self.app.push_screen(AskPath("Open which catalog file?", placeholder="catalog file: CSV, ECSV, FITS …"),
                             self._open_path)

    def _open_path(self, path):
        if path:
            self.query_one("#cat-input").show_value(path)
            self.session.cat_input = path
            self.call_later(self.open_catalog)

    # -- the core ----------------------------------------------------------------------------
    def _law(self, for_run=False):
        """``(law, r_v)`` for `catalog_options`.

        A grain model already computed is passed as the curve object, so that
        checks and previews on the UI thread do not load it again; the run
        passes the name, exactly as ``redcorr correct --law`` does.
        """
        s = self.session
        if not for_run and is_grain(s.law) and _cache.grain_ready(s.law):
            return _cache.grain_curve(s.law), None
        return s.law, law_r_v(s.law, s.r_v)

    def _bands(self):
        return split_list(self.session.cat_bands, "bands")

    async def open_catalog(self):
        """Read the columns and first rows; guess the mapping and the reddening column."""
        s = self.session
        status = self.query_one(StatusLine)
        probe = guarded(catalog_probe, s.cat_input.strip(), PREVIEW_ROWS)
        self.query_one("#cat-input").set_class(not probe.ok, "-refused")
        if not probe.ok:
            status.show_outcome(probe)
            return
        self.columns, self.preview = probe.value
        self.app.accept("cat_input")
        self._mapped = False
        self._fit_failed = (None, None)  # opening again tries a refused fit again
        if self.grain_pending(s.law):
            return
        await self._map_columns()

    async def grain_ready(self):
        """The grain model is computed: finish opening the catalog, or redo the preview."""
        if self.preview is not None and not self._mapped:
            await self._map_columns()
        else:
            self.update_preview()

    async def _map_columns(self):
        """Guess the column mapping and the reddening column through `Correction`, then preview."""
        s = self.session
        status = self.query_one(StatusLine)
        setup = guarded(lambda: (self._bands(), self._law()))
        if not setup.ok:
            status.show_outcome(setup)
            return
        bands, (law, r_v) = setup.value
        mapping = guarded(guess_mapping, self.columns, bands, law, r_v)
        if not mapping.ok:
            status.show_outcome(mapping)
            return
        await self.query_one(ColumnMapping).set_mapping(self.columns, mapping.value)
        if s.cat_red_kind in ("ebv_column", "av_column"):
            found = guarded(guess_reddening, self.columns, bands, mapping.value, law, r_v)
            if found.ok and found.value is not None:
                kind, column = found.value
                s.cat_red_kind, s.cat_red_value = kind, column
                self.query_one("#cat-red-kind", Select).value = kind
                self.query_one("#cat-red-value").show_value(column)
        if not s.cat_output.strip():
            path = Path(s.cat_input.strip())
            s.cat_output = str(path.with_name(path.stem + "_dered" + path.suffix))
            self.query_one("#cat-output").show_value(s.cat_output)
            self.app.accept("cat_output")
        self._mapped = True
        self.update_preview()

    def _choices(self, for_run=False):
        """The arguments of `catalog_options`, read from the screen (on the main thread)."""
        s = self.session
        law, r_v = self._law(for_run)
        mapping = self.query_one(ColumnMapping).mapping
        return (self._bands(), mapping, s.cat_red_kind, s.cat_red_value, law, r_v, s.cat_spectrum, s.cat_teff,
                s.cat_colour, (s.cat_dist_kind, s.cat_dist_col, s.cat_dist_err))

    def _fit_choices(self, for_run=False):
        """The arguments of `catalog_fit_options` (bands, mapping, law, r_v), read from the screen."""
        return (self._bands(), self.query_one(ColumnMapping).mapping, *self._law(for_run))

    def _fitting(self):
        return self.session.cat_red_kind == "photometry"

    def _fit_job(self):
        """The outcome of the preview's `CatalogFit`, or None while a worker builds its model grid."""
        key = guarded(lambda: fit_key(self.columns, *self._fit_choices()))
        if not key.ok:
            return key
        if self._fit_failed[0] == key.value:
            return self._fit_failed[1]
        job = ready_fit(key.value)
        if job is not None:
            return Outcome(job)
        self.query_one(StatusLine).show("building the fit's model grid … (seconds; the screen stays usable)",
                                        "warning")
        if self._fit_building != key.value:
            self._fit_building = key.value
            self.build_fit_in_thread(key.value)
        return None

    @work(thread=True, exclusive=True, group="fit-grid")
    def build_fit_in_thread(self, key):
        """Build a `CatalogFit` (its model grid takes seconds) off the UI thread, then preview again."""
        outcome = guarded(build_fit, key)
        with contextlib.suppress(RuntimeError):  # the app may have closed meanwhile
            self.app.call_from_thread(self._fit_built, key, outcome)

    def _fit_built(self, key, outcome):
        if self._fit_building == key:
            self._fit_building = None
        if not outcome.ok:
            self._fit_failed = (key, outcome)
        self.update_preview()

    def _show_rows(self):
        """Offer the distance (or parallax) column only for a map with distances; the diagram only for a fit."""
        s = self.session
        self.query_one("#cat-distance").display = guarded(is_3d_map, s.cat_red_kind, s.cat_red_value).value is True
        fitting = self._fitting()
        self.query_one("#cat-red-value-field").display = not fitting  # the fit gives the reddening
        self.query_one("#cat-fit").display = fitting
        self.query_one("#cat-ccd").display = fitting

    def update_preview(self):
        """Correct the first rows through `Correction` (after `CatalogFit`) and show them before and after."""
        self._seen = self._shared()
        self._show_rows()
        if self.preview is None or self.running:
            return
        s = self.session
        status = self.query_one(StatusLine)
        r_v = guarded(law_r_v, s.law, s.r_v).value
        self.query_one("#cat-dust", Static).update(
            f"dust: [b]{s.law}[/]" + (f" R_V = {r_v:g}" if r_v else "") + " (set on the Dust screen, F2)"
        )
        if self.grain_pending(s.law) or not self._mapped:
            return
        options = guarded(lambda: catalog_options(*self._choices()))
        fitting = self._fitting()
        job = self._fit_job() if fitting else None
        if fitting and job is None:  # a worker builds the fit's grid; it previews again when done
            return
        if not fitting:
            result = guarded(preview_correction, self.preview, options.value) if options.ok else options
        elif options.ok and job.ok:
            result = guarded(preview_fit, self.preview, job.value, options.value)
        else:
            result = combine(options, job)
        error = result.error or ""
        self.query_one("#cat-bands").set_class(error.startswith(("band=", "no error column")), "-refused")
        self.query_one("#cat-red-value").set_class(error.startswith(("ebv", "av", "map", "no reddening")), "-refused")
        self.query_one("#cat-teff").set_class(error.startswith("temperature"), "-refused")
        self.query_one("#cat-colour").set_class(error.startswith(("colour", "spectrum")), "-refused")
        self.query_one("#cat-dist-col").set_class(error.startswith(("distance_column", "parallax_column")), "-refused")
        self.query_one("#cat-dist-err").set_class(error.startswith(("distance_error", "parallax_error")), "-refused")
        status.show_outcome(combine(options, *([job] if fitting else []), result))
        if result.ok:
            self.app.accept(*_CHECKED)
        out, corr = result.value if result.ok else (None, None)
        if corr is not None:
            self._suffix = corr.suffix
        if fitting and job.ok:  # the stars as observed even when the correction is refused
            self._diagram(job.value, self.preview, out, f"the first {len(self.preview)} rows", report=result.ok)
        if not result.ok:
            return
        read = [c for c in (corr.red_col, corr.plan.dist_col) if c and c in self.preview.columns]
        before = list(dict.fromkeys(corr.mag_cols + read))
        reddening = [*FIT_EBV, "teff_fit", "fit_flags"] if fitting else ["ebv_used"]
        after = [m + corr.suffix for m in corr.mag_cols] + reddening + ["dered_flags"]
        self._fill(self.query_one("#cat-before", DataTable), self.preview, before)
        self._fill(self.query_one("#cat-after", DataTable), out, after)

    def _diagram(self, job, stars, corrected, what, report=True):
        """The colour–colour diagram of the rows ``stars`` (and ``corrected``, if given), from `redcorr.colours`.

        A refused diagram says why in its title, and on the status line if ``report``.
        """
        s = self.session
        pair = guarded(diagram_colours, s.cat_diagram, job.labels)
        self.query_one("#cat-diagram").set_class(not pair.ok, "-refused")
        drawn = guarded(colour_diagram, job, pair.value, s.cat_teff, stars, corrected, self._suffix) \
            if pair.ok else pair
        plot = self.query_one("#cat-ccd", XYPlot)
        if not drawn.ok:
            plot.draw([], title=f"no diagram: {drawn.error}")
            if report:
                self.query_one(StatusLine).show_outcome(drawn)
            return
        (b1, b2), (b3, b4) = pair.value
        plot.draw(drawn.value, xlabel=f"{b1} - {b2} [mag]", ylabel=f"{b3} - {b4} [mag]",
                  title=f"{what}; the arrow is E(B-V) = 1 mag from the locus")

    @staticmethod
    def _fill(table, frame, columns):
        table.clear(columns=True)
        table.add_columns(*columns)
        for _, row in frame[columns].iterrows():
            table.add_row(*(f"{v:.4f}" if isinstance(v, float) else str(v) for v in row))

    # -- running -----------------------------------------------------------------------------
    def action_run(self):
        """Check everything on the main thread, say what will be written and, if the user agrees, run."""
        if self.running:
            return
        s = self.session
        status = self.query_one(StatusLine)
        if self.preview is None:
            status.show("open a catalog first (ctrl+o)", "error")
            return
        if self.grain_pending(s.law):
            return
        if not self._mapped:
            status.show("the columns are not mapped: fix the bands, then open the catalog again (ctrl+o)", "error")
            return
        options = guarded(lambda: catalog_options(*self._choices()))
        if self._fitting():  # the correction reads the table the fit writes
            job = self._fit_job()
            if job is None:
                return
            checked = guarded(lambda: Correction(job.value.written_columns(self.columns), options.value)) \
                if options.ok and job.ok else combine(options, job)
        else:
            checked = guarded(Correction, self.columns, options.value) if options.ok else options
        if not checked.ok:
            status.show_outcome(checked)
            return
        output = s.cat_output.strip()
        what = (f"Correct {s.cat_input.strip()} ({'fit from the photometry, then ' if self._fitting() else ''}"
                f"dust {s.law}) and write {output}"
                + (" (it exists: it will be replaced)" if s.cat_overwrite and Path(output).exists() else "") + "?")
        self.app.push_screen(Confirm(what, "Run"), lambda yes: yes and self._start())

    def _start(self):
        """Correct the whole file in a worker thread (with the choices on screen now)."""
        if self.running:
            return
        s = self.session
        status = self.query_one(StatusLine)
        choices = self._choices(for_run=True)
        fit_choices = self._fit_choices(for_run=True) if self._fitting() else None
        self.running = True
        self._cancel.clear()
        self.query_one("#cat-run", Button).disabled = True
        self.query_one("#cat-cancel", Button).disabled = False
        self.query_one(ProgressBar).update(total=1.0, progress=0.0)
        status.show(f"{'fitting' if fit_choices else 'correcting'} {s.cat_input} …")
        self.correct_in_thread(s.cat_input.strip(), s.cat_output.strip(), choices, s.cat_overwrite, fit_choices)

    def action_cancel(self):
        """Ask the running correction to stop after the current chunk; nothing is written then."""
        if self.running:
            self._cancel.set()
            self.query_one(StatusLine).show("cancelling after the current chunk …", "warning")

    @work(thread=True, exclusive=True, group="catalog")
    def correct_in_thread(self, input_path, output_path, choices, overwrite, fit_choices=None):
        """`redcorr.io.batch.correct_file`, exactly as ``redcorr correct`` calls it.

        With ``fit_choices`` (a fit from the photometry) the file is fitted
        first, then the fitted table corrected (`redcorr.io.batch.fit_and_correct_file`).
        The options are built here, from the names (a grain model loads in this thread).
        """

        def progress(rows, fraction, step="correct"):
            if self._cancel.is_set():
                raise RunCancelled
            try:
                self.app.call_from_thread(self._progress, rows, fraction, step if fit_choices else None)
            except RuntimeError:  # the app has closed: stop, leaving no output
                raise RunCancelled from None

        def run():
            options = catalog_options(*choices)
            try:
                if fit_choices is None:
                    summary = correct_file(
                        input_path,
                        output_path,
                        lambda columns: Correction(columns, options),
                        overwrite=overwrite,
                        progress=progress,
                    )
                    return summary, options, None
                fit = catalog_fit_options(*fit_choices)
                fit_summary, summary = fit_and_correct_file(
                    input_path, output_path, lambda columns: CatalogFit(columns, fit), options,
                    overwrite=overwrite, progress=progress,
                )
            except RunCancelled:
                return None
            return summary, options, fit_summary

        outcome = guarded(run)
        with contextlib.suppress(RuntimeError):  # the app may have closed meanwhile
            self.app.call_from_thread(self._finished, outcome, output_path)

    def on_unmount(self):
        self._cancel.set()  # quitting during a run stops it safely

    def _progress(self, rows, fraction, step=None):
        """Show the rows done; a run from the photometry fills the bar half by the fit, half by the correction."""
        start, width, verb = _STEPS.get(step, (0.0, 1.0, "corrected"))
        if fraction is not None:
            self.query_one(ProgressBar).update(total=1.0, progress=start + width * fraction)
        self.query_one(StatusLine).show(f"{verb} {rows:,} rows …")

    def _finished(self, outcome, output_path):
        self.running = False
        self.query_one("#cat-run", Button).disabled = False
        self.query_one("#cat-cancel", Button).disabled = True
        status = self.query_one(StatusLine)
        if outcome.ok and outcome.value is None:
            self.query_one(ProgressBar).update(total=1.0, progress=0.0)
            status.show("cancelled: nothing was written", "warning")
            return
        status.show_outcome(outcome, done=f"wrote {output_path}")
        if not outcome.ok:
            self.query_one("#cat-output").set_class("output" in outcome.error, "-refused")
            return
        self.query_one("#cat-output").set_class(False, "-refused")
        self.query_one(ProgressBar).update(total=1.0, progress=1.0)
        self.summary, options, fit_summary = outcome.value
        lines = ([f"fit: {line}" for line in fit_summary.lines()] if fit_summary else []) + self.summary.lines()
        self.query_one("#cat-summary", Static).update("\n".join(lines))
        self._plot(output_path, options, fit_summary is not None)

    def _plot(self, output_path, options, fitted=False):
        """Before/after colour–magnitude diagram from the written file (first rows); the colour–colour one of a fit."""
        read = guarded(_first_rows, output_path, PLOT_ROWS)
        if not read.ok:
            self.query_one(StatusLine).show_outcome(read)
            return
        frame = read.value
        if fitted:
            job = self._fit_job()
            if job is not None and job.ok:
                self._diagram(job.value, frame, frame, f"{len(frame)} rows of {Path(output_path).name}")
        pair = options.bands.colours[0] if options.bands.colours else None
        if pair is None:
            self.query_one("#cat-plot", XYPlot).draw([], title="give a colour B1,B2 to see the diagram")
            return
        m1, m2 = (options.bands.mag_columns[b] for b in pair)
        cmd = guarded(colour_magnitude, frame, m1, m2, suffix=self._suffix)
        if not cmd.ok:
            self.query_one(StatusLine).show_outcome(cmd)
            return
        self.query_one("#cat-plot", XYPlot).draw(
            [(label, colour, mag) for label, (colour, mag) in cmd.value.items()],
            xlabel=f"{pair[0]} - {pair[1]} [mag]",
            ylabel=f"{pair[1]} [mag]",
            title=f"{len(frame)} rows of {Path(output_path).name}",
            points=True,
            invert_y=True,
        )


def _first_rows(path, rows):
    with open_catalog(path, chunk_rows=rows) as reader:
        return next(iter(reader))
