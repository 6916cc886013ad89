"""The Plan screen: instrument and target → exposure table and S/N against time, behind the dust."""

from textual.app import ComposeResult
from textual.containers import Horizontal, Vertical, VerticalScroll
from textual.screen import Screen
from textual.widgets import DataTable, Footer, Header, Label, Select, Static

from redcorr.exposure import CAUTION
from redcorr.tui._guard import combine, guarded
from redcorr.tui._inputs import GOALS, av_table, dust_state, plan_state
from redcorr.tui.keys import bindings
from redcorr.tui.screens._grain import GrainWait
from redcorr.tui.widgets import Field, StatusLine, XYPlot

__all__ = ["PlanScreen", "PLAN_COLUMNS"]

PLAN_COLUMNS = {
    "band": ("band", "{}"),
    "mag": ("AB mag", "{:.3f}"),
    "A_band": ("A_b", "{:.3f}"),
    "t_clear_s": ("t no dust [s]", "{:.4g}"),
    "t_dust_s": ("t dust [s]", "{:.4g}"),
    "time_factor": ("factor", "{:.3g}"),
    "snr": ("S/N", "{:.1f}"),
    "limiting_mag": ("limit mag", "{:.2f}"),
    "noise": ("noise", "{}"),
}
"""`redcorr.exposure.BandPlan` fields shown, with their headers and formats (as ``redcorr plan``)."""

_FIELDS = {
    "plan-instrument": "plan_instrument",
    "plan-mag": "plan_mag",
    "plan-mag-band": "plan_mag_band",
    "plan-sed": "plan_sed",
    "plan-goal-value": "plan_goal_value",
    "plan-limit": "plan_limit_snr",
    "plan-av-grid": "plan_av_grid",
}


class PlanScreen(GrainWait, Screen):
    """Exposure times per band for a source behind the dust chosen on the Dust screen."""

    TITLE = "Plan"
    HELP = (
        "an instrument (TOML or 'demo') and a target (AB mag, band, spectrum, S/N or time) → "
        "exposure times with and without the dust, S/N against time, and the time needed against A_V"
    )
    BINDINGS = bindings("plan")

    def __init__(self, **kwargs):
        super().__init__(**kwargs)
        self.plans = []
        self.av = None
        """``(snr, a_v, times)`` of the time-against-A_V table shown (`redcorr.exposure.time_vs_av`)."""

    def compose(self) -> ComposeResult:
        s = self.session
        yield Header()
        with VerticalScroll(id="plan-body"):
            with Horizontal(classes="form"):
                yield Field(
                    "instrument",
                    s.plan_instrument,
                    input_id="plan-instrument",
                    placeholder="demo or PATH.toml",
                    width=30,
                )
                yield Field("AB mag", s.plan_mag, input_id="plan-mag", width=10)
                yield Field("in", s.plan_mag_band, input_id="plan-mag-band", placeholder="every band", width=14)
                yield Field("source", s.plan_sed, input_id="plan-sed", width=20)
            with Horizontal(classes="form"):
                yield Select([(g, g) for g in GOALS], value=s.plan_goal, allow_blank=False, id="plan-goal")
                yield Field("=", s.plan_goal_value, input_id="plan-goal-value", width=12)
                yield Field("limit S/N", s.plan_limit_snr, input_id="plan-limit", width=8)
                yield Field("A_V grid", s.plan_av_grid, input_id="plan-av-grid", placeholder="0, 1, 2 …", width=24)
            yield StatusLine(id="plan-status")
            yield Static(id="plan-dust", classes="info")
            yield DataTable(id="plan-table", cursor_type="row", zebra_stripes=True)
            with Horizontal(id="plan-lower"):
                yield XYPlot(id="plan-plot")
                with Vertical(id="plan-av-box"):
                    yield Label("time (s) against A_V", id="plan-av-title", classes="section")
                    yield DataTable(id="plan-av", cursor_type="row", zebra_stripes=True)
            yield Static(CAUTION, classes="info caution")
        yield Footer()

    def on_mount(self):
        table = self.query_one("#plan-table", DataTable)
        for key, (header, _) in PLAN_COLUMNS.items():
            table.add_column(header, key=key)
        self.refresh_view()

    def on_commit_input_committed(self, event):
        attr = _FIELDS.get(event.input.id)
        if attr is not None:
            setattr(self.session, attr, event.value)
            self.refresh_view()

    def on_select_changed(self, event):
        if event.select.id == "plan-goal" and event.value in GOALS:
            self.session.plan_goal = event.value
            self.refresh_view()

    def refresh_view(self):
        """Recompute the plan through the core; on a refused input keep the last plan shown."""
        self._seen = self._shared()
        s = self.session
        status = self.query_one(StatusLine)
        if self.grain_pending(s.law):
            return
        dust = guarded(dust_state, s.law, s.r_v, s.amount, s.amount_kind)
        if not dust.ok:
            status.show("the Dust screen's values are refused (F2 to fix): " + dust.error, "error")
            return
        curve, a_v, _ = dust.value
        self.query_one("#plan-dust", Static).update(
            f"dust: [b]{curve.name}[/] R_V = {curve.r_v:g}, A_V = {a_v:.4g} mag (set on the Dust screen, F2)"
        )
        outcome = guarded(
            plan_state,
            curve,
            a_v,
            s.plan_instrument,
            s.plan_mag,
            s.plan_mag_band,
            s.plan_sed,
            s.plan_goal,
            s.plan_goal_value,
            s.plan_limit_snr,
        )
        if outcome.ok:
            av = guarded(
                av_table,
                curve,
                outcome.value[1],
                s.plan_instrument,
                s.plan_mag,
                s.plan_mag_band,
                s.plan_sed,
                s.plan_goal,
                s.plan_goal_value,
                s.plan_limit_snr,
                s.plan_av_grid,
            )
        else:
            av = outcome
        self._mark_refused(outcome.error or av.error or "")
        status.show_outcome(combine(dust, outcome, av))
        if av.ok:
            self._show_av(*av.value)
            self.app.accept("plan_goal", *_FIELDS.values())
        if not outcome.ok:
            return
        instrument, self.plans, t, snr = outcome.value
        table = self.query_one("#plan-table", DataTable)
        table.clear()
        for p in self.plans:
            table.add_row(*(fmt.format(getattr(p, key)) for key, (_, fmt) in PLAN_COLUMNS.items()))
        target = float(s.plan_goal_value) if s.plan_goal == GOALS[0] else None
        self.query_one(XYPlot).draw(
            [(name, t, dusty) for name, (_, dusty) in snr.items()],
            xlabel="exposure time [s]",
            ylabel="S/N behind the dust",
            title=f"{instrument.name}: AB {s.plan_mag} {s.plan_mag_band or 'in each band'}, A_V = {a_v:g}",
            xlog=True,
            ylog=True,
            hline=target,
        )

    def _show_av(self, snr, a_v, times):
        """The time-against-A_V table, formatted as ``redcorr plan --av-grid`` prints it."""
        self.av = (snr, a_v, times)
        self.query_one("#plan-av-title", Label).update(f"time (s) to reach S/N {snr:g} against A_V")
        table = self.query_one("#plan-av", DataTable)
        table.clear(columns=True)
        table.add_column("A_V", width=4)
        for band in times:  # fixed widths: ".4g" takes at most 9 characters (1.234e+05)
            table.add_column(band, width=max(len(band), 9))
        for i, value in enumerate(a_v):
            table.add_row(f"{value:.2f}", *(f"{t[i]:.4g}" for t in times.values()))

    def _mark_refused(self, error):
        """Colour the field the core's message names (its messages start with the argument)."""
        owners = {
            "plan-instrument": ("instrument", "instrument "),
            "plan-mag": ("mag=",),
            "plan-mag-band": ("band=", "band "),
            "plan-sed": ("sed=",),
            "plan-goal-value": ("snr=", "time="),
            "plan-limit": ("limit_snr=",),
            "plan-av-grid": ("av_grid=", "a_v must"),
        }
        for input_id, prefixes in owners.items():
            self.query_one(f"#{input_id}").set_class(error.startswith(prefixes), "-refused")
