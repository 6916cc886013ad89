"""The Dust screen: choose a law, R_V and a dust column; see A(λ)/A(V) against 1/λ.

Its emission view (Ctrl+L) shows, for a grain model, the equilibrium
temperatures of its grains and their emission in the interstellar field times
U: the numbers of ``redcorr thermal``, computed in a worker thread.
"""

import contextlib

import numpy as np
from astropy import units as u
from textual import work
from textual.app import ComposeResult
from textual.containers import Horizontal, Vertical, VerticalScroll
from textual.screen import Screen
from textual.widgets import Footer, Header, Input, Select, Static

from redcorr.curves import list_curves
from redcorr.grains.fields import MMP83Field
from redcorr.io.grains import default_cache, list_grain_models
from redcorr.thermal_summary import stochastic_caution, thermal_summary
from redcorr.tui import _cache
from redcorr.tui._guard import Outcome, combine, guarded
from redcorr.tui._inputs import band_rows, dust_state, fixed_r_v, is_grain
from redcorr.tui.keys import bindings
from redcorr.tui.screens._grain import GrainWait
from redcorr.tui.widgets import BandGrid, CommitInput, CurvePlot, Field, NamePicker, StatusLine, XYPlot

__all__ = ["DustScreen", "dust_entries"]

AMOUNT_KINDS = ("A_V", "E(B-V)")
_FIELDS = {"r-v": "r_v", "amount": "amount"}
ACCEPTS = ("law", "r_v", "amount", "amount_kind")
"""The session fields this screen checks: remembered once its view is computed from them."""
SPECTRUM_DEPTH = 1e-4
"""The emission view draws λI_λ down to this fraction of its peak (the log axis would otherwise span
hundreds of decades where grains in equilibrium barely emit)."""


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
        self.heat = None
        """What the emission view shows: `redcorr.thermal_summary.thermal_summary`'s 4-tuple."""
        self._heat_key = None  # (grain model, U) shown or being computed
        self._heat_status = ("", "information")

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
                with Vertical(id="dust-heat"):
                    with Horizontal(id="dust-heat-form", classes="form"):
                        yield Field("field scale U", self.session.dust_u, input_id="field-u", placeholder="> 0")
                    yield StatusLine(id="dust-heat-status")
                    yield Static(id="dust-heat-info", classes="info")
                    with Horizontal(id="dust-heat-plots"):
                        yield XYPlot(id="dust-heat-temps")
                        yield XYPlot(id="dust-heat-spectrum")
        yield Footer()

    def on_mount(self):
        self.query_one(NamePicker).highlight(self.session.law)
        self.refresh_view()

    def on_name_picker_picked(self, event):
        if event.name != self.session.law:
            self.session.law = event.name
            self.refresh_view()

    def on_commit_input_committed(self, event):
        if event.input.id == "field-u":
            self.session.dust_u = event.value
            self.refresh_emission()
            return
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
        self.refresh_emission()
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

    # -- the emission view (Ctrl+L) ---------------------------------------------------------------
    def action_toggle_emission(self):
        """Show the emission view instead of the curve and the band table, and go to its U field; or back."""
        on = not self.has_class("-emission")
        self.set_class(on, "-emission")
        if on:
            self.query_one("#field-u", Input).focus()
            self.refresh_emission()
        else:
            self.query_one("#dust-picker .picker-search").focus()

    def _heat_show(self, message, severity="information"):
        self._heat_status = (message, severity)
        self.query_one("#dust-heat-status", StatusLine).show(message, severity)

    def refresh_emission(self):
        """While the emission view is shown: compute it for the grain model and U, in a worker thread."""
        if not self.has_class("-emission"):
            return
        law = self.session.law
        field = guarded(MMP83Field, self.session.dust_u)
        self.query_one("#field-u", Input).set_class(not field.ok, "-refused")
        if field.ok:
            self.app.accept("dust_u")  # a valid U is remembered; a refused one never is
        if not is_grain(law):
            self._heat_key, self.heat = None, None
            for plot in self.query("#dust-heat-plots XYPlot").results(XYPlot):
                plot.draw([])
            self.query_one("#dust-heat-info", Static).update("")
            self._heat_show(f"{law} is an extinction curve, not a grain model: pick one (e.g. wd01-rv3.1) to see "
                            "the temperatures and emission of its grains", "warning")
        elif not field.ok:
            self.query_one("#dust-heat-status", StatusLine).show_outcome(field)  # the last view stays
        elif (law, field.value.scale) == self._heat_key:
            self._heat_show(*self._heat_status)  # shown, or on its way, already
        elif not _cache.grain_ready(law):
            self._heat_show(f"waiting for grain model {law} …", "warning")
        else:
            self._heat_key = (law, field.value.scale)
            self._heat_show(f"computing the temperatures and emission of {law} in {field.value.name} … "
                            "(the screen stays usable)", "warning")
            self.compute_emission(self._heat_key, field.value)

    @work(thread=True, exclusive=True, group="emission")
    def compute_emission(self, key, field):
        """`redcorr.thermal_summary.thermal_summary` off the UI thread, then hand over to `_emission_done`."""
        outcome = guarded(_heat, key[0], field)
        with contextlib.suppress(RuntimeError):  # the app may have closed meanwhile
            self.app.call_from_thread(self._emission_done, key, outcome)

    def _emission_done(self, key, outcome):
        if key != self._heat_key:  # the model or U changed meanwhile: a newer result is on its way
            return
        if not outcome.ok:
            self._heat_show(outcome.error, "error")
            return
        drawn = guarded(self._draw_emission, key[0], outcome.value)
        caution = stochastic_caution(outcome.value[1])
        done = combine(outcome, drawn, Outcome(warnings=[caution] if caution else []))
        if done.error:
            self._heat_show(done.error, "error")
        elif done.warnings:
            self._heat_show("warning: " + "; ".join(done.warnings), "warning")
        else:
            self._heat_show("")

    def _draw_emission(self, law, result):
        out, emission, _, fit = result
        self.heat = result
        model = _cache.grain_curve(law).model
        labels = [f"{i + 1}: {c.material.name}" for i, c in enumerate(model.components)]
        temps = []
        for label, t in zip(labels, emission.temperatures, strict=True):
            temps.append((label, t.radius_um, t.temperature_k, False))
            temps.append((f"{label} stochastic", t.radius_um[t.stochastic], t.temperature_k[t.stochastic], True))
        self.query_one("#dust-heat-temps", XYPlot).draw(
            temps, xlabel="radius [µm]", ylabel="T [K]", title="equilibrium temperature (dots: stochastic)", xlog=True
        )
        floor = SPECTRUM_DEPTH * np.nanmax(emission.lam_i_lam)
        shown = [("all", emission.lam_i_lam)] + list(zip(labels, emission.by_component, strict=True))
        self.query_one("#dust-heat-spectrum", XYPlot).draw(
            [(label, emission.wave_um, np.where(y >= floor, y, np.nan)) for label, y in shown],
            xlabel="λ [µm]", ylabel="λI_λ/N_H [erg/s/sr/H]", title="emission of the grains in equilibrium",
            xlog=True, ylog=True,
        )
        lo, hi = fit.wave_range_um
        self.query_one("#dust-heat-info", Static).update(
            f"[b]{law}[/] in {out['field']}: absorbs {emission.absorbed:.3e} erg s⁻¹ per H   modified blackbody "
            f"over {lo:g}–{hi:g} µm: T = {fit.temperature_k:.2f} K, β = {fit.beta:.3f}"
        )


def _heat(law, field):
    """`redcorr.thermal_summary.thermal_summary` for the grain model ``law`` on the default wavelengths."""
    return thermal_summary(_cache.grain_curve(law).model, field, None, cache=default_cache())
