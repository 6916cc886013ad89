"""The Plan screen: instrument and target → exposure table and S/N against time, behind the dust;
a target list → every target in every band, sortable, with the totals."""

import math
from pathlib import Path

from rich.markup import escape
from rich.text import Text
from textual.app import ComposeResult
from textual.containers import Horizontal, Vertical, VerticalScroll
from textual.screen import Screen
from textual.widgets import Button, DataTable, Footer, Header, Label, Select, Static

from redcorr._format import human_time, time_cell
from redcorr.exposure import CAUTION
from redcorr.target_plan import TARGET_FLAGS
from redcorr.tui._guard import combine, guarded
from redcorr.tui._inputs import GOALS, TARGET_DUST, av_table, dust_state, plan_state, target_list_plan, write_list_plan
from redcorr.tui.keys import bindings
from redcorr.tui.screens._grain import GrainWait
from redcorr.tui.screens.dialogs import AskPath, Confirm
from redcorr.tui.widgets import Field, StatusLine, XYPlot

__all__ = ["PlanScreen", "PLAN_COLUMNS", "LIST_COLUMNS"]

PLAN_COLUMNS = {
    "band": ("band", "{}"),
    "mag": ("AB mag", "{:.3f}"),
    "A_band": ("A_b", "{:.3f}"),
    "t_clear_s": ("t no dust [s]", time_cell),
    "t_dust_s": ("t dust [s]", time_cell),
    "time_factor": ("factor", "{:.3g}"),
    "snr": ("S/N", "{:.1f}"),
    "limiting_mag": ("limit mag", "{:.2f}"),
    "noise": ("noise", "{}"),
}
"""`redcorr.exposure.BandPlan` fields shown, with their headers and formats (as ``redcorr plan``)."""

LIST_COLUMNS = {
    "name": ("name", "{}"),
    "band": ("band", "{}"),
    "A_V": ("A_V", "{:.3f}"),
    "A_band": ("A_b", "{:.3f}"),
    "t_dust_s": ("t dust [s]", time_cell),
    "time_factor": ("factor", "{:.3g}"),
    "snr": ("S/N", "{:.1f}"),
    "limiting_mag": ("limit mag", "{:.2f}"),
    "flags": ("flags", "{}"),
    "best": ("best", "{}"),
}
"""Columns of the target list's plan (`redcorr.target_plan.TargetPlan.rows`; ``best`` marks each target's
cheapest band with ``*``), with their headers and formats (as ``redcorr plan --targets``)."""

_LIST_FIELDS = {
    "plan-list": "plan_list",
    "plan-list-map": "plan_list_map",
    "plan-list-max-time": "plan_list_max_time",
}
_LIST_CHECKED = ("plan_list", "plan_list_dust", "plan_list_map", "plan_list_max_time")
"""Session fields a target list planned without error has checked (remembered then)."""


class SortCell(Text):
    """A table cell: the text shown, and the value it shows (``value``) to sort the rows on."""

    def __init__(self, text, value):
        super().__init__(text, justify="left" if isinstance(value, str) else "right")
        self.value = value

    @staticmethod
    def key(cell):
        """Sort key: numbers by value with NaN (no plan) last, texts alphabetically."""
        value = cell.value
        if isinstance(value, str):
            return (0, value)
        return (1, 0.0) if math.isnan(value) else (0, value)


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
        "exposure times with and without the dust, S/N against time, and the time needed against A_V; "
        "a target list (open it with ctrl+o; its dust the Dust screen's A_V or a dust map, 2D or to each "
        "target's parallax or distance) → every target in every band, sorted by a column (click its header or "
        "a cell, or move to it and press Enter; again for the other way round), the total time per band and "
        "in each target's cheapest band, the targets that miss the goal within the time limit; ctrl+s writes "
        "the plan"
    )
    BINDINGS = bindings("plan")

    def __init__(self, **kwargs):
        super().__init__(**kwargs)
        self.plans = []
        self.av = None
        """``(snr, a_v, times)`` of the time-against-A_V table shown (`redcorr.exposure.time_vs_av`)."""
        self.targets = None
        self.target_plan = None
        """The target list and its `redcorr.target_plan.TargetPlan` shown (None before one is planned)."""
        self._list_key = None
        self._list_meta = {}
        self._sort = None

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
            yield Label("Target list: every target in every band (instrument, goal and limit S/N as above)",
                        classes="section")
            with Horizontal(classes="form"):
                yield Field("targets", s.plan_list, input_id="plan-list", placeholder="CSV, ECSV, FITS, Parquet",
                            width=30)
                yield Select([(v, k) for k, v in TARGET_DUST.items()], value=s.plan_list_dust, allow_blank=False,
                             id="plan-list-dust")
            with Horizontal(classes="form"):
                yield Field("map", s.plan_list_map, input_id="plan-list-map", placeholder="2D or 3D dust map",
                            width=30, id="plan-list-map-field")
                yield Field("max time (s)", s.plan_list_max_time, input_id="plan-list-max-time",
                            placeholder="no limit", width=10)
            yield StatusLine(id="plan-list-status")
            yield DataTable(id="plan-list-table", cursor_type="column", zebra_stripes=True)
            yield Static(id="plan-list-summary", classes="info")
            with Horizontal(classes="form"):
                yield Field("write to", s.plan_list_output, input_id="plan-list-output",
                            placeholder="plan file (.csv, .ecsv …)", width=30)
                yield Button("Write (ctrl+s)", id="plan-list-write", variant="primary")
            yield Static(CAUTION, classes="info caution")
        yield Footer()

    def on_mount(self):
        table = self.query_one("#plan-table", DataTable)
        for key, (header, _) in PLAN_COLUMNS.items():
            table.add_column(Text(header), key=key)  # as text: "[s]" is not markup
        listed = self.query_one("#plan-list-table", DataTable)
        for key, (header, _) in LIST_COLUMNS.items():
            listed.add_column(Text(header), key=key)
        self.refresh_view()

    def on_commit_input_committed(self, event):
        attr = _FIELDS.get(event.input.id) or _LIST_FIELDS.get(event.input.id)
        if attr is not None:
            setattr(self.session, attr, event.value)
            self.refresh_view()
        elif event.input.id == "plan-list-output":
            self.session.plan_list_output = event.value

    def on_select_changed(self, event):
        if event.select.id == "plan-goal" and event.value in GOALS:
            self.session.plan_goal = event.value
            self.refresh_view()
        elif event.select.id == "plan-list-dust" and event.value in TARGET_DUST:
            self.session.plan_list_dust = event.value
            self.refresh_view()

    def on_button_pressed(self, event):
        if event.button.id == "plan-list-write":
            self.action_write_list()

    def on_data_table_header_selected(self, event):
        if event.data_table.id == "plan-list-table":
            self._sort_by(event.column_key.value)

    def on_data_table_column_selected(self, event):
        if event.data_table.id == "plan-list-table":
            self._sort_by(event.column_key.value)

    def _sort_by(self, column):
        """Sort the target list's rows by ``column``; the same column again reverses the order."""
        reverse = self._sort is not None and self._sort == (column, False)
        self._sort = (column, reverse)
        self.query_one("#plan-list-table", DataTable).sort(column, key=SortCell.key, reverse=reverse)

    # -- the target list ---------------------------------------------------------------------------------------
    def action_open(self):
        """Plan the target list named in its box (read again); with the box empty, ask for its path first."""
        field = self.query_one("#plan-list")
        self.session.plan_list = field.value
        if field.value.strip():
            self._list_key = None  # read the file again: it may have changed
            self.refresh_view()
            return
        self.app.push_screen(AskPath("Plan which target list?", placeholder="target list: CSV, ECSV, FITS …"),
                             self._open_path)

    def _open_path(self, path):
        if path:
            self.query_one("#plan-list").show_value(path)
            self.session.plan_list = path
            self._list_key = None
            self.refresh_view()

    def action_write_list(self):
        """Say where the target list's plan (on screen) will be written, and write it if the user agrees."""
        s = self.session
        s.plan_list_output = self.query_one("#plan-list-output").value  # as typed, committed or not
        status = self.query_one("#plan-list-status", StatusLine)
        output = s.plan_list_output.strip()
        if self.target_plan is None:
            status.show("no target list planned: give one first (ctrl+o)", "error")
            return
        if not output:
            status.show("output='' is empty; give the file to write the plan to (any catalog format, by suffix)",
                        "error")
            self.query_one("#plan-list-output").set_class(True, "-refused")
            return
        n, nb = len(self.target_plan.names), len(self.target_plan.bands)
        what = (f"Write the plan of {n} targets in {nb} bands ({self._list_meta['targets']}) to {output}, "
                f"with {output}.summary.json beside it"
                + (" (it exists: it will be replaced)" if Path(output).exists() else "") + "?")
        self.app.push_screen(Confirm(what, "Write"), lambda yes: yes and self._write_list())

    def _write_list(self):
        output = self.session.plan_list_output.strip()
        written = guarded(write_list_plan, self.targets, self.target_plan, output, self._list_meta["targets"],
                          self._list_meta)
        self.query_one("#plan-list-output").set_class(not written.ok, "-refused")
        if written.ok:
            self.app.accept("plan_list_output")
        self.query_one("#plan-list-status", StatusLine).show_outcome(written, done=f"wrote {output} and its summary")

    def _refresh_list(self, curve, a_v):
        """Plan the target list through the core (when its inputs changed); keep the last plan if refused."""
        s = self.session
        self.query_one("#plan-list-map-field").display = s.plan_list_dust == "map"
        status = self.query_one("#plan-list-status", StatusLine)
        if not s.plan_list.strip():
            self._list_key = None
            self.targets = self.target_plan = None
            self.query_one("#plan-list-table", DataTable).clear()
            self.query_one("#plan-list-summary", Static).update("")
            status.show("give a target list (ctrl+o) to plan every target in every band")
            return
        args = (s.plan_instrument, s.plan_list, s.plan_list_dust, s.plan_list_map, s.plan_mag_band, s.plan_sed,
                s.plan_goal, s.plan_goal_value, s.plan_limit_snr, s.plan_list_max_time)
        key = (s.law, s.r_v, s.amount, s.amount_kind, *args)
        if key == self._list_key:
            return
        outcome = guarded(target_list_plan, curve, a_v, *args)
        error = outcome.error or ""
        owners = {
            "plan-list": ("input ", "targets=", "target "),
            "plan-list-map": ("map",),
            "plan-list-max-time": ("max_time=",),
        }
        for input_id, prefixes in owners.items():
            self.query_one(f"#{input_id}").set_class(error.startswith(prefixes), "-refused")
        status.show_outcome(outcome, done=f"planned {s.plan_list.strip()}")
        if not outcome.ok:
            self._list_key = None  # going back to the last good values plans (and clears the error) again
            return
        self._list_key = key
        instrument, self.targets, self.target_plan = outcome.value
        value = float(s.plan_goal_value)  # checked by the core
        goal = f"S/N {value:g}" if s.plan_goal == GOALS[0] else f"{value:g} s exposures"  # as the CLI says it
        dust = f"map {s.plan_list_map.strip()}" if s.plan_list_dust == "map" else f"A_V {a_v:g}"
        self._list_meta = {"instrument": instrument.name, "targets": s.plan_list.strip(), "goal": goal,
                           "dust": dust, "law": curve.name, "R_V": float(curve.r_v),
                           "limit_snr": float(s.plan_limit_snr), "spectra": self.targets.spectra}
        self.app.accept(*_LIST_CHECKED)
        self._show_list(goal)

    def _show_list(self, goal):
        """The target list's rows (`TargetPlan.rows`) and its totals (`TargetPlan.summary`), as the CLI prints them."""
        rows = {key: value.tolist() for key, value in self.target_plan.rows().items()}  # Python numbers, as the CLI
        rows["best"] = [("*" if b == best else "") for b, best in zip(rows["band"], rows["best_band"], strict=True)]
        table = self.query_one("#plan-list-table", DataTable)
        table.clear()
        for i in range(len(rows["name"])):
            cells = []
            for key, (_, fmt) in LIST_COLUMNS.items():
                value = rows[key][i]
                cells.append(SortCell(_cell(fmt, value), value))
            table.add_row(*cells)
        if self._sort is not None:
            table.sort(self._sort[0], key=SortCell.key, reverse=self._sort[1])
        self.query_one("#plan-list-summary", Static).update(summary_text(self.target_plan.summary(), goal))

    # -- one target --------------------------------------------------------------------------------------------
    def refresh_view(self):
        """Recompute the plan through the core; on a refused input keep the last plan shown."""
        self._seen = self._shared()
        s = self.session
        status = self.query_one("#plan-status", StatusLine)
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
        self._refresh_list(curve, a_v)
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
            table.add_row(*(_cell(fmt, getattr(p, key)) for key, (_, fmt) in PLAN_COLUMNS.items()))
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
        for band in times:  # fixed widths: a time cell takes at most 19 characters (1.234e+08 (3.91 yr))
            table.add_column(band, width=max(len(band), 19))
        for i, value in enumerate(a_v):
            table.add_row(f"{value:.2f}", *(time_cell(t[i]) for t in times.values()))

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


def summary_text(summary, goal):
    """The totals of a target list's plan (`redcorr.target_plan.TargetPlan.summary`) in a few lines.

    ``goal`` says what the plan aims at (``"S/N 50"``, ``"600 s exposures"``).
    """
    limit = f" within {summary['max_time']:g} s" if summary["max_time"] is not None else ""
    per_band = ", ".join(f"{band} {human_time(v['total_s'])} ({v['targets']})" for band, v in summary["bands"].items())
    total = summary["best_total_s"]
    lines = [
        f"total time per band (targets planned{limit}): {per_band}",
        f"[b]each target in its cheapest band: {total:.4g} s ({human_time(total)}) in all[/]",
        f"reach {goal}{limit} in no band: " + (escape(", ".join(summary["missed"])) or "none"),
    ]
    if summary["no_plan"]:
        lines.append("no plan (no magnitude or no reddening): " + escape(", ".join(summary["no_plan"])))
    lines.append("flags: " + ", ".join(f"{bit} {name}" for name, bit in TARGET_FLAGS.items()))
    return "\n".join(lines)


def _cell(fmt, value):
    """A table cell: ``fmt`` is a format string or a function (:func:`redcorr._format.time_cell`)."""
    return fmt(value) if callable(fmt) else fmt.format(value)
