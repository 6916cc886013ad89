"""The Dust screen: choose a law, R_V and a dust column; see A(λ)/A(V) against 1/λ."""

import numpy as np
from astropy import units as u
from textual.app import ComposeResult
from textual.containers import Horizontal, VerticalScroll
from textual.screen import Screen
from textual.widgets import Footer, Header, Input, Select, Static

from redcorr.curves import list_curves
from redcorr.io.grains import list_grain_models
from redcorr.tui import _cache
from redcorr.tui._guard import combine, guarded
from redcorr.tui._inputs import band_rows, dust_state, fixed_r_v, is_grain
from redcorr.tui.keys import bindings
from redcorr.tui.screens._grain import GrainWait
from redcorr.tui.widgets import BandGrid, CommitInput, CurvePlot, Field, NamePicker, StatusLine

__all__ = ["DustScreen", "dust_entries"]

AMOUNT_KINDS = ("A_V", "E(B-V)")
_FIELDS = {"r-v": "r_v", "amount": "amount"}
ACCEPTS = ("law", "r_v", "amount", "amount_kind")
"""The session fields this screen checks: remembered once its view is computed from them."""


def dust_entries():
    """``(name, description)`` of every law and grain model the picker offers."""
    out = []
    for info in list_curves():
        r_v = f"R_V {info['default_r_v']:g}" + (" fixed" if info["r_v_limits"] is None else "")
        lo, hi = info["wave_range_um"]
        out.append((info["name"], f"{r_v} · {lo:.3g}–{hi:.3g} µm"))
    for info in list_grain_models():
        out.append((info["name"], f"grain model · {info['description']}"))
    return out


class DustScreen(GrainWait, Screen):
    """Pick the dust: a searchable law list, R_V, A_V or E(B-V), and a live plot."""

    TITLE = "Dust"
    HELP = "choose an extinction law or grain model, R_V and the dust column; see the curve"
    BINDINGS = bindings("dust")

    def __init__(self, **kwargs):
        super().__init__(**kwargs)
        self.curve = None
        self.a_v = None
        self.ebv = None

    def compose(self) -> ComposeResult:
        s = self.session
        yield Header()
        with Horizontal(id="dust-body"):
            yield NamePicker(
                dust_entries(), placeholder="search, or file:PATH / grain:PATH.toml", accept=("file:", "grain:"),
                id="dust-picker",
            )
            with VerticalScroll(id="dust-main"):
                with Horizontal(id="dust-form", classes="form"):
                    yield Field("R_V", s.r_v, input_id="r-v", placeholder="law default")
                    yield Select(
                        [(k, k) for k in AMOUNT_KINDS], value=s.amount_kind, allow_blank=False, id="amount-kind"
                    )
                    yield Field("=", s.amount, input_id="amount", placeholder="mag")
                yield StatusLine(id="dust-status")
                yield Static(id="dust-info", classes="info")
                yield CurvePlot(id="dust-plot")
                yield Static(id="dust-bands-source", classes="section")
                yield BandGrid(id="dust-bands")
        yield Footer()

    def on_mount(self):
        self.query_one(NamePicker).highlight(self.session.law)
        self.refresh_view()

    def on_name_picker_picked(self, event):
        if event.name != self.session.law:
            self.session.law = event.name
            self.refresh_view()

    def on_commit_input_committed(self, event):
        attr = _FIELDS.get(event.input.id)
        if attr is not None and not event.input.disabled:
            setattr(self.session, attr, event.value)
            self.refresh_view()

    def on_select_changed(self, event):
        if event.select.id == "amount-kind" and event.value in AMOUNT_KINDS:
            self.session.amount_kind = event.value
            self.refresh_view()

    def _sync_r_v_field(self):
        """A law with a fixed R_V (or a grain model) shows it, greyed; otherwise the typed value is back.

        The field is rewritten only when the law's kind changes, never while R_V is typed.
        """
        law = self.session.law
        rv_input = self.query_one("#r-v", CommitInput)
        fixed = fixed_r_v(law)
        if is_grain(law):
            fixed = _cache.grain_curve(law).r_v if _cache.grain_ready(law) else float("nan")
        if fixed is not None:
            rv_input.disabled = True
            rv_input.show_value("" if fixed != fixed else f"{fixed:.4g}")
        elif rv_input.disabled:
            rv_input.disabled = False
            rv_input.show_value(self.session.r_v)
        return fixed is not None

    def refresh_view(self):
        """Recompute from the inputs through the core and redraw; keep the old view on an error."""
        self._seen = self._shared()
        s = self.session
        fixed = self._sync_r_v_field()
        if self.grain_pending(s.law):
            return
        outcome = guarded(dust_state, s.law, "" if fixed else s.r_v, s.amount, s.amount_kind)
        status = self.query_one(StatusLine)
        refused = outcome.error or ""
        self.query_one("#r-v", Input).set_class(refused.startswith("r_v="), "-refused")
        self.query_one("#amount", Input).set_class(refused.startswith(s.amount_kind + "="), "-refused")
        if not outcome.ok:
            status.show_outcome(outcome)
            return
        self.curve, self.a_v, self.ebv = outcome.value
        self.app.accept(*ACCEPTS)
        table = guarded(band_rows, self.curve, s.bands, s.sed, self.a_v)
        rows = table.value if table.ok else []
        self.query_one("#dust-bands-source", Static).update(
            f"Bands and source spectrum {s.sed} of the Bands screen (F3)"
            + ("" if table.ok else ": refused there, no table")
        )
        drawn = guarded(self._draw, rows)
        status.show_outcome(combine(outcome, table, drawn))

    def _draw(self, rows):
        curve = self.curve
        self.query_one(BandGrid).show_rows(rows)
        lo, hi = curve.wavenumber_limits
        x = np.linspace(lo, min(hi, 11.0), 240)
        y = curve(x * u.um**-1)
        wmin, wmax = curve.wave_range.to_value(u.um)
        self.query_one("#dust-info", Static).update(
            f"[b]{curve.name}[/]  R_V = {curve.r_v:g}   A_V = {self.a_v:.4g} mag   "
            f"E(B-V) = {self.ebv:.4g} mag   valid {wmin:.4g}–{wmax:.4g} µm\n[dim]{curve.citation}[/]"
        )
        lo_um, hi_um = sorted((wmin, wmax))
        inside = [r for r in rows if lo_um <= r["lambda_eff_um"] <= hi_um]
        marks = [(r["band"], 1.0 / r["lambda_eff_um"], curve(r["lambda_eff_um"])) for r in inside]
        self.query_one(CurvePlot).draw(f"{curve.name} R_V={curve.r_v:g}", x, y, marks, title=curve.citation)
