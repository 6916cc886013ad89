"""The Bands screen: choose filters and the source spectrum; the band table, exported on demand."""

from pathlib import Path

from textual.app import ComposeResult
from textual.containers import Horizontal, Vertical, VerticalScroll
from textual.screen import Screen
from textual.widgets import Button, Footer, Header, Label, OptionList, Static
from textual.widgets.option_list import Option

from redcorr.io.band_summary_files import write_band_summary
from redcorr.io.filters import list_bands, project_bands
from redcorr.tui import _cache
from redcorr.tui._guard import combine, guarded
from redcorr.tui._inputs import band_rows, dust_state
from redcorr.tui.keys import bindings
from redcorr.tui.screens._grain import GrainWait
from redcorr.tui.screens.dialogs import AskPath, Confirm
from redcorr.tui.widgets import BandGrid, Field, FileTree, NamePicker, StatusLine

__all__ = ["BandsScreen", "band_entries"]


def band_entries():
    """``(name, where it comes from)`` of every band known by name."""
    own = set(project_bands())
    return [(name, "filters/" if name in own else "speclite") for name in list_bands()]


class BandsScreen(GrainWait, Screen):
    """Choose bands (library, project, user files) and the source; the table updates as they change."""

    TITLE = "Bands"
    HELP = (
        "choose filters (library names, the project's filters/, your filter files from the file tree or "
        "file:PATH, tophat:C:W, gauss:C:FWHM) and the source spectrum (blackbody:T, powerlaw:ALPHA, flat, "
        "vega, sun, file:PATH); the table of A_b, A_b/A_V, "
        "A_b/E(B-V), λ_eff; export it"
    )
    BINDINGS = bindings("bands")

    def __init__(self, **kwargs):
        super().__init__(**kwargs)
        self.curve = None
        self.a_v = None

    def compose(self) -> ComposeResult:
        s = self.session
        yield Header()
        with Horizontal(id="bands-body"):
            with Vertical(id="bands-left"):
                yield NamePicker(
                    band_entries(), placeholder="search bands… (Enter adds)", accept=("file:", "tophat:", "gauss:"),
                    id="bands-picker",
                )
                yield Label("filter files (Enter adds)", classes="section")
                yield FileTree(Path(s.band_dir) if Path(s.band_dir).is_dir() else Path.cwd(), id="bands-tree")
            with VerticalScroll(id="bands-main"):
                with Horizontal(classes="form"):
                    yield Field("add", "", input_id="band-spec", placeholder="file:PATH, tophat:C:W …", width=30)
                    yield Field("source", s.sed, input_id="sed", placeholder="blackbody:T", width=22)
                yield StatusLine(id="bands-status")
                yield Static(id="bands-dust", classes="info")
                with Horizontal(id="bands-tables"):
                    with Vertical(id="bands-chosen-box"):
                        yield Label("chosen (Delete removes)")
                        yield OptionList(id="bands-chosen")
                    yield BandGrid(id="bands-table")
                with Horizontal(classes="form"):
                    yield Field("export to", s.band_output, input_id="band-output", width=40)
                    yield Button("Export (ctrl+s)", id="band-export", variant="primary")
        yield Footer()

    def on_mount(self):
        self._show_chosen()
        self.refresh_view()

    def _show_chosen(self):
        chosen = self.query_one("#bands-chosen", OptionList)
        chosen.clear_options()
        chosen.add_options([Option(spec, id=f"b{i}") for i, spec in enumerate(self.session.bands)])

    def _add(self, spec):
        """Add a band spec after the core has loaded it; a refused spec only shows a message."""
        spec = spec.strip()
        loaded = guarded(_cache.band, spec)
        if not loaded.ok:
            self.query_one(StatusLine).show_outcome(loaded)
            return False
        if spec not in self.session.bands:
            self.session.bands.append(spec)
            self._show_chosen()
        self.refresh_view()
        return True

    def on_name_picker_picked(self, event):
        self._add(event.name)

    def on_directory_tree_file_selected(self, event):
        """A filter file chosen in the tree is added as ``file:PATH`` (the core reads and checks it)."""
        event.stop()
        self.session.band_dir = str(Path(event.path).parent)
        self.app.accept("band_dir")
        self._add(f"file:{event.path}")

    def on_input_submitted(self, event):
        if event.input.id == "band-spec" and event.value.strip() and self._add(event.value):
            event.input.show_value("")

    def on_commit_input_committed(self, event):
        if event.input.id == "sed":
            self.session.sed = event.value
            self.refresh_view()
        elif event.input.id == "band-output":
            self.session.band_output = event.value

    def on_button_pressed(self, event):
        if event.button.id == "band-export":
            self.action_export()

    def action_open(self):
        """Ask for a filter file's path and add it as ``file:PATH``."""
        self.app.push_screen(AskPath("Add the filter curve in which file?", placeholder="path to a filter file"),
                             lambda path: path and self._add(f"file:{path}"))

    def action_export(self):
        """Say where the table will be written, and write it if the user agrees."""
        self.session.band_output = self.query_one("#band-output").value  # as typed, committed or not
        target = self.session.band_output.strip()
        what = (f"Write the band table ({len(self.session.bands)} bands, source {self.session.sed}) to {target}"
                + (" (it exists: it will be replaced)" if target and Path(target).exists() else "") + "?")
        self.app.push_screen(Confirm(what, "Write"), lambda yes: yes and self.export())

    def action_remove_band(self):
        chosen = self.query_one("#bands-chosen", OptionList)
        if chosen.highlighted is None or not self.session.bands:
            return
        index = chosen.highlighted
        del self.session.bands[index]
        self._show_chosen()
        if self.session.bands:
            chosen.highlighted = min(index, len(self.session.bands) - 1)
        self.refresh_view()

    def _compute(self):
        s = self.session
        return guarded(dust_state, s.law, s.r_v, s.amount, s.amount_kind)

    def refresh_view(self):
        """Recompute the table through the core; on a refused input keep the last table."""
        self._seen = self._shared()
        s = self.session
        status = self.query_one(StatusLine)
        if self.grain_pending(s.law):
            return
        dust = self._compute()
        if not dust.ok:
            status.show("the Dust screen's values are refused (F2 to fix): " + dust.error, "error")
            return
        self.curve, self.a_v, ebv = dust.value
        self.query_one("#bands-dust", Static).update(
            f"dust: [b]{self.curve.name}[/] R_V = {self.curve.r_v:g}, A_V = {self.a_v:.4g} mag, "
            f"E(B-V) = {ebv:.4g} mag (set on the Dust screen, F2)"
        )
        table = guarded(band_rows, self.curve, s.bands, s.sed, self.a_v)
        self.query_one("#sed").set_class(bool(table.error) and "sed=" in table.error, "-refused")
        if table.ok:
            self.query_one(BandGrid).show_rows(table.value)
            self.app.accept("bands", "sed")
        status.show_outcome(combine(dust, table))

    def export(self):
        """Write the table on screen (recomputed by the core) to the chosen file, atomically."""
        s = self.session
        status = self.query_one(StatusLine)
        if self.grain_pending(s.law):
            return
        dust = self._compute()
        if not dust.ok:
            status.show_outcome(dust)
            return
        curve, a_v, _ = dust.value
        meta = {
            "curve": curve.name,
            "citation": curve.citation,
            "R_V": curve.r_v,
            "A_V": a_v,
            "source": s.sed,
            "bands": list(s.bands),
        }
        written = guarded(
            lambda: write_band_summary(band_rows(curve, s.bands, s.sed, a_v), s.band_output.strip(), meta)
        )
        self.query_one("#band-output").set_class(not written.ok, "-refused")
        if written.ok:
            self.app.accept("band_output")
        status.show_outcome(written, done=f"wrote {written.value}" if written.ok else "")
