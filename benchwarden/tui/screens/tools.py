"""Tool screens: graph, hold test, room oxygen, checklist preview and export."""

from __future__ import annotations

import datetime as dt
import os
import re
from pathlib import Path

from rich.text import Text
from textual import work
from textual.app import ComposeResult
from textual.binding import Binding
from textual.containers import Horizontal, VerticalScroll
from textual.screen import Screen
from textual.widgets import Button, Footer, Header, Input, Label, Select, Static
from textual_plotext import PlotextPlot

from benchwarden.errors import BenchwardenError, JournalError
from benchwarden.render.budget import budget_assumption
from benchwarden.render.numbers import fmt_uncertain
from benchwarden.render.room import room_lines
from benchwarden.storage.holdlog import parse_log
from benchwarden.units import fmt_hours, fmt_pressure
from benchwarden.units.constants import BAR_PA
from benchwarden.units.limits import in_range
from benchwarden.workflows.session import SessionState


class _Tool(Screen[None]):
    BINDINGS = [Binding("escape", "app.pop_screen", "Back")]

    def __init__(self, state: SessionState) -> None:
        super().__init__()
        self.state = state


# ----------------------------------------------------------------------------- graph


#: The graph shows live samples this far back when there is no session [h].
LIVE_LOOKBACK_H = 24.0


class GraphScreen(_Tool):
    """Supply pressure over the session: planned projection, readings, fitted line, reserve."""

    BINDINGS = [Binding("n", "next_supply", "Next supply")]

    def __init__(self, state: SessionState) -> None:
        super().__init__(state)
        self.index = 0

    def compose(self) -> ComposeResult:
        yield Header()
        yield Static("", id="graph-title")
        yield PlotextPlot(id="plot")
        yield Footer()

    def on_mount(self) -> None:
        self.draw()

    def action_next_supply(self) -> None:
        assert self.state.plan is not None
        self.index = (self.index + 1) % len(self.state.plan.supplies)
        self.draw()

    def draw(self) -> None:
        st = self.state
        assert st.plan is not None and st.plan_at is not None
        s = st.plan.supplies[self.index]
        amb = st.plan.ambient_pa
        origin = st.started_at or st.plan_at
        off = (st.plan_at - origin).total_seconds() / 3600.0

        def bar_g(p: float) -> float:
            return (p - amb) / BAR_PA

        plt = self.query_one(PlotextPlot).plt
        plt.clear_data()
        plt.clear_figure()
        floor = bar_g(0.0)  # nothing reads below vacuum: no line is drawn under it
        xs = [off + h for h in s.projection_hours]
        plt.plot(xs, [max(floor, bar_g(p)) for p in s.projection_pressure_abs_pa], label="planned",
                 marker="braille")
        plt.hline(bar_g(s.reserve_abs_pa), "red")
        plt.vline(st.plan.session_hours + (off if not st.started_at else 0.0), "blue")  # the planned end
        rs = sorted((r for r in st.readings.get(s.id, []) if r.pressure_abs_pa is not None), key=lambda r: r.at)
        ob = st.observed.get(s.id)
        if ob is not None and ob.fit_at:
            fx = [(dt.datetime.fromisoformat(a) - origin).total_seconds() / 3600.0 for a in ob.fit_at]
            plt.plot(fx, [max(floor, bar_g(p)) for p in ob.fit_pressure_abs_pa], label="fitted", marker="braille")
        now = st.clock()
        since = min(origin, now - dt.timedelta(hours=LIVE_LOOKBACK_H))
        trace = st.live_trace(s.id, since, now, max(20, self.size.width - 12))
        live_ys: list[float] = []
        if trace is not None:  # the live gauge: its lowest and highest sample in each column
            keep = trace.vmin == trace.vmin
            tx = [(float(t) - origin.timestamp()) / 3600.0 for t in trace.t[keep]]
            live_ys = [bar_g(float(p)) for p in trace.vmin[keep]] + [bar_g(float(p)) for p in trace.vmax[keep]]
            plt.plot(tx, [bar_g(float(p)) for p in trace.vmax[keep]], label="live (max)", marker="braille")
            plt.plot(tx, [bar_g(float(p)) for p in trace.vmin[keep]], label="live (min)", marker="braille")
        inside = [r for r in rs if (r.at - origin).total_seconds() >= 0]
        outside = [r for r in rs if (r.at - origin).total_seconds() < 0]
        if inside:  # drawn last so they stay visible
            plt.scatter([(r.at - origin).total_seconds() / 3600.0 for r in inside],
                        [bar_g(r.pressure_abs_pa or 0.0) for r in inside], label="readings", marker="o")
        if outside:
            plt.scatter([(r.at - origin).total_seconds() / 3600.0 for r in outside],
                        [bar_g(r.pressure_abs_pa or 0.0) for r in outside], label="before the session", marker="x")
        ys = ([bar_g(p) for p in s.projection_pressure_abs_pa] + [bar_g(r.pressure_abs_pa or 0.0) for r in rs]
              + live_ys)
        lo, hi = bar_g(s.reserve_abs_pa), max(ys)
        plt.ylim(min(lo, min(ys)) - 0.05 * (hi - lo), hi + 0.25 * (hi - lo))  # room above for the legend
        plt.xlabel("hours since " + ("session start" if st.started_at else "plan"))
        plt.ylabel("bar(g)")
        self.query_one("#graph-title", Static).update(
            Text(f"{s.id} ({s.gas_name}): supply pressure, bar(g); reserve {fmt_pressure(s.reserve_abs_pa, amb)} "
                 "(red line), planned end (blue line)" + (f"; {len(outside)} reading(s) before the session (x)"
                                                         if outside else "") + " — n: next supply, escape: back"))
        self.query_one(PlotextPlot).refresh()


# ----------------------------------------------------------------------------- hold test


def _hold_duration(seconds: float, text: str) -> float:
    """The hold's length in its range (one below zero is the core's to refuse, in its words)."""
    return in_range("hold duration", seconds, text=text) if seconds > 0 else seconds


class HoldScreen(_Tool):
    """A hold test on a supply: two readings, or a logged CSV series."""

    def compose(self) -> ComposeResult:
        st = self.state
        assert st.profile is not None
        yield Header()
        with VerticalScroll(id="hold-form"):
            yield Static(self._last_line(), id="last-hold", markup=False)
            yield Label("Supply (its water volume, gas and gauge are used)")
            yield Select([(s.id, s.id) for s in st.profile.supplies], value=st.profile.supplies[0].id,
                         allow_blank=False, id="hold-supply")
            with Horizontal(classes="row"):
                yield Input(placeholder="start, e.g. 152 bar", id="hold-start")
                yield Input(placeholder="end, e.g. 150 bar", id="hold-end")
                yield Input(placeholder="duration, e.g. 14 h", id="hold-duration")
            with Horizontal(classes="row"):
                yield Input(placeholder="start temperature, e.g. 21 degC", id="hold-tstart")
                yield Input(placeholder="end temperature, e.g. 18 degC", id="hold-tend")
            yield Input(placeholder="or a log file: /path/to/log.csv", id="hold-log")
            yield Button("Compute and save", variant="primary", id="hold-go")
            yield Static("", id="hold-result")
            yield PlotextPlot(id="hold-plot")
        yield Footer()

    def on_mount(self) -> None:
        self.query_one("#hold-plot").display = False
        self.query_one("#hold-start", Input).focus()

    def _last_line(self) -> str:
        st = self.state
        if st.journal is None or st.profile is None:
            return "No journal: hold tests are not stored."
        last = st.last_hold_test()
        if last is None:
            return "No hold test recorded for this bench yet."
        from benchwarden.render.display import Display

        return (f"Last hold test: {last.verdict}, "
                f"{fmt_uncertain(last.leak_rate_sccm, last.leak_rate_uncertainty_sccm, 'sccm')}, "
                f"{Display.ago(last.age_days)} ({last.supply_id or 'no supply'})")

    def on_button_pressed(self, event: Button.Pressed) -> None:
        if event.button.id == "hold-go":
            self.compute()

    def on_input_submitted(self, event: Input.Submitted) -> None:
        self.compute()

    def compute(self) -> None:
        from benchwarden.core import hold as hd
        from benchwarden.units import parse_duration, parse_temperature, pressure_abs
        from benchwarden.workflows import holds

        st = self.state
        assert st.profile is not None
        val = lambda i: self.query_one(f"#{i}", Input).value.strip()  # noqa: E731
        s = st.profile.supply(str(self.query_one("#hold-supply", Select).value))
        amb = st.profile.ambient_pa
        out = self.query_one("#hold-result", Static)
        fit = None
        try:
            gauge = holds.profile_gauge_spec(s.gauge)
            if val("hold-log"):
                from benchwarden.workflows.ranges import read_log

                text = read_log(val("hold-log"))  # a regular file, read with a size limit
                fit = hd.hold_from_log(s.gas, s.water_volume, parse_log(text, None, amb), gauge,
                                       ambient_pa=amb, reserve_abs=s.reserve.abs_at(amb))
                r = fit.result
            else:
                r = hd.hold_two_readings(
                    s.gas, s.water_volume, pressure_abs(val("hold-start"), amb, "start"),
                    pressure_abs(val("hold-end"), amb, "end"),
                    _hold_duration(parse_duration(val("hold-duration")), val("hold-duration")),
                    parse_temperature(val("hold-tstart")) if val("hold-tstart") else None,
                    parse_temperature(val("hold-tend")) if val("hold-tend") else None, gauge,
                    reserve_abs=s.reserve.abs_at(amb), ambient_pa=amb)
        except BenchwardenError as exc:
            out.update(Text(f"✖ {exc}"))
            return
        lines = [f"{r.verdict.upper()}",
                 f"leak rate {fmt_uncertain(r.leak_rate_sccm, r.leak_rate_uncertainty_sccm, 'sccm')} (1σ, 0 °C, "
                 "101.325 kPa)"
                 f" = {r.leak_rate_pa_m3_s:.3g} Pa·m³/s",
                 f"mass loss {fmt_uncertain(r.mass_loss_kg * 1000, r.mass_loss_uncertainty_kg * 1000, 'g')}; "
                 f"{r.percent_per_day:.3g} % of contents per day",
                 f"smallest leak this test resolves: {r.smallest_resolvable_sccm:.3g} sccm; "
                 f"hold needed for the {r.target_sccm:.3g} sccm target ≈ {fmt_hours(r.hold_needed_h)}"]
        lines += [f"! {n}" for n in r.notes]
        assumption = budget_assumption(r)
        if assumption:
            lines.append(f"! {assumption}")
        lines += [f"• {g}" for g in hd.GUIDANCE]
        if st.journal is not None:
            try:
                holds.store(st.journal, holds.record_of(r, st.clock(), st.profile.bench.name, s.id,
                                                        "log" if fit is not None else "two-readings"))
                lines.insert(1, "saved to the journal")
            except JournalError as exc:
                lines.insert(1, f"✖ not saved: {exc}")
            self.query_one("#last-hold", Static).update(Text(self._last_line()))
        out.update(Text("\n".join(lines)))
        self._plot(fit)

    def _plot(self, fit: object) -> None:
        """Held mass against time with the least-squares line (logged series only)."""
        widget = self.query_one("#hold-plot", PlotextPlot)
        widget.display = fit is not None
        if fit is None:
            return
        from benchwarden.core.hold import LogFit

        assert isinstance(fit, LogFit)
        hours = [t / 3600.0 for t in fit.t_s]
        plt = widget.plt
        plt.clear_data()
        plt.clear_figure()
        plt.scatter(hours, [m * 1000 for m in fit.mass_kg], label="held mass, g", marker="o")
        plt.plot(hours, [m * 1000 for m in fit.fit_kg], label="least-squares fit", marker="braille")
        plt.xlabel("hours")
        widget.refresh()


# ----------------------------------------------------------------------------- room


class RoomScreen(_Tool):
    """Room oxygen from the plan, plus an extra leak the person types."""

    def compose(self) -> ComposeResult:
        yield Header()
        with VerticalScroll():
            yield Static("", id="room-figures")
            yield Label("Add a leak (e.g. the last hold test's, or '5 slpm') and press Enter")
            yield Input(placeholder="5 slpm", id="room-leak")
            yield Static("", id="room-extra")
        yield Footer()

    def on_mount(self) -> None:
        from benchwarden.core import room as rm

        st = self.state
        assert st.plan is not None
        r = st.plan.room
        self.query_one("#room-leak", Input).focus()
        if r is None:
            self.query_one("#room-figures", Static).update(Text("The profile has no [room]: add its volume and "
                                                                "ventilation."))
            return
        lines = [f"Room {line}" if i == 0 else line for i, line in enumerate(room_lines(r))]
        if r.release is not None:
            sealed = rm.release(r.volume_m3, r.release.release_volume_m3, "sealed", r.c0_percent,
                                r.release.gas_o2_percent)
            lines.append(f"today's contents of {r.release_supply_id} in a sealed room: "
                         f"{sealed.o2_percent_after_release:.2f} % O2 ({sealed.method})")
        if r.leak is not None:
            lk = r.leak
            lines += [f"Draws venting into the room {r.vented_m3_s * 6e4:.2f} L/min: steady "
                      f"{lk.o2_percent_steady:.2f} % O2; to 19.5 % {fmt_hours(lk.minutes_to_19_5 / 60)}; "
                      f"to 18 % {fmt_hours(lk.minutes_to_18 / 60)} ({lk.method})"]
        lines.append("Estimates of a well-mixed room: use a fixed oxygen monitor with alarm where gas can "
                     "accumulate; follow local codes and the supplier's safety data sheet.")
        self.query_one("#room-figures", Static).update(Text("\n".join(lines)))
        last = st.last_hold_test()
        if last is not None and last.leak_rate_sccm > 0:
            self.query_one("#room-leak", Input).value = f"{last.leak_rate_sccm:.3g} sccm"
        self.query_one("#room-leak", Input).focus()

    def on_input_submitted(self, event: Input.Submitted) -> None:
        from benchwarden.core import room as rm
        from benchwarden.units import parse_flow

        st = self.state
        assert st.plan is not None and st.profile is not None
        r = st.plan.room
        out = self.query_one("#room-extra", Static)
        if r is None:
            return
        gas = st.profile.supply(r.release_supply_id or st.profile.supplies[0].id).gas
        try:
            leak = parse_flow(event.value, what="leak")
            in_range("flow", leak.value, "leak", event.value)
            extra = rm.leak_volume_flow(gas, leak, st.plan.temperature_k, st.plan.ambient_pa)
            lk = rm.leak_o2(r.volume_m3, r.vented_m3_s + extra, r.ventilation_m3_s, r.ventilation_kind,
                            r.c0_percent)
        except BenchwardenError as exc:
            out.update(Text(f"✖ {exc}"))
            return
        out.update(Text(f"with {event.value} more: steady {lk.o2_percent_steady:.2f} % O2; to 19.5 % "
                   f"{fmt_hours(lk.minutes_to_19_5 / 60)}; recovery {fmt_hours(lk.minutes_to_recover / 60)}; "
                   f"{lk.effect or 'stays above 19.5 %'}"))


# ----------------------------------------------------------------------------- checklist


class ChecklistScreen(_Tool):
    BINDINGS = [Binding("e", "export", "Export HTML+PDF next to the profile")]

    def compose(self) -> ComposeResult:
        yield Header()
        with VerticalScroll():
            yield Static("Building the checklist…", id="checklist-text", markup=False)
        yield Footer()

    def on_mount(self) -> None:
        self.checklist = self._build()
        from benchwarden.render.checklist.render import render_text

        # wrapped once, to the window (not pre-wrapped for paper and wrapped again)
        self.query_one("#checklist-text", Static).update(render_text(self.checklist, width=max(40, self.size.width - 4)))

    def _build(self):  # type: ignore[no-untyped-def]
        from benchwarden.render.checklist import build_checklist
        from benchwarden.render.display import profile_display

        st = self.state
        assert st.profile is not None and st.plan is not None
        return build_checklist(st.profile, st.assessment(), st.profile_path.parent, now=st.clock(),
                               display=profile_display(st.profile))

    def action_export(self) -> None:
        self.export()

    @work(thread=True, exclusive=True)
    def export(self, folder: Path | None = None) -> None:
        from benchwarden.render.checklist.render import render_html, render_pdf
        from benchwarden.render.files import write_output

        st = self.state
        slug = re.sub(r"[^A-Za-z0-9]+", "-", self.checklist.bench).strip("-").lower()[:40] or "bench"
        stamp = st.clock().strftime("%Y%m%d-%H%M%S")
        if folder is None:  # next to the profile; for the bundled demo, the current folder
            from benchwarden.storage.profile import demo_profile_path

            folder = st.profile_path.resolve().parent
            if st.profile_path.resolve() == demo_profile_path().resolve() or not os.access(folder, os.W_OK):
                folder = Path.cwd()
        base = folder / f"checklist-{slug}-{stamp}"
        n = 2
        while base.with_suffix(".html").exists() or base.with_suffix(".pdf").exists():  # never overwrite
            base = folder / f"checklist-{slug}-{stamp}-{n}"
            n += 1
        try:
            write_output(base.with_suffix(".html"), render_html(self.checklist))
            write_output(base.with_suffix(".pdf"), lambda tmp: render_pdf(self.checklist, tmp))
        except (OSError, BenchwardenError) as exc:
            self.app.call_from_thread(self.notify, f"export failed: {exc}", severity="error", timeout=10)
            return
        self.last_export = base
        self.app.call_from_thread(self.notify, f"written {base}.html and {base}.pdf", title="Checklist exported",
                                  timeout=10)


# ----------------------------------------------------------------------------- history


class HistoryScreen(_Tool):
    """The current cylinder's readings (struck ones marked), past sessions and hold tests; a
    wrong reading is struck out with a reason (kept, never deleted)."""

    BINDINGS = [Binding("escape", "app.pop_screen", "Back"), Binding("x", "strike", "Strike out")]

    def compose(self) -> ComposeResult:
        from textual.widgets import DataTable

        st = self.state
        assert st.profile is not None
        yield Header()
        with VerticalScroll():
            yield Select([(s.id, s.id) for s in st.profile.supplies], value=st.profile.supplies[0].id,
                         allow_blank=False, id="history-supply", compact=True)
            yield Static("Readings on the current cylinder (select one and press x to strike it out)",
                         classes="heading")
            yield DataTable(id="history-readings", cursor_type="row")
            yield Input(placeholder="reason for striking the selected reading out, then Enter", id="strike-reason")
            yield Static("", id="history-result")
            yield Static("Sessions", classes="heading")
            yield Static("", id="history-sessions", markup=False)
            yield Static("Hold tests", classes="heading")
            yield Static("", id="history-holds", markup=False)
        yield Footer()

    def on_mount(self) -> None:
        from textual.widgets import DataTable

        t = self.query_one("#history-readings", DataTable)
        for label, key, width in (("#", "id", 5), ("Time", "at", 16), ("Reading", "value", 14),
                                  ("Temp.", "t", 8), ("Where", "where", 10), ("Struck out", "struck", 24)):
            t.add_column(label, key=key, width=width)
        self.query_one("#strike-reason", Input).display = False
        self.fill()
        t.focus()

    def on_select_changed(self, event: Select.Changed) -> None:
        self.fill()

    def fill(self) -> None:
        from textual.widgets import DataTable

        from benchwarden.render.display import profile_display

        st = self.state
        assert st.profile is not None
        d = profile_display(st.profile)
        sid = str(self.query_one("#history-supply", Select).value)
        t = self.query_one("#history-readings", DataTable)
        t.clear()
        try:
            rows = st.history(sid)
        except JournalError as exc:
            self.query_one("#history-result", Static).update(Text(f"✖ {exc}"))
            rows = []
        for r in rows:
            value = d.gauge(r.pressure_abs_pa) if r.pressure_abs_pa is not None else f"{r.weight_kg:g} kg"
            t.add_row(str(r.id), r.at[:16].replace("T", " "), value, d.temperature(r.temperature_k),
                      f"session {r.session_id}" if r.session_id else "idle",
                      Text(f"✖ {r.struck_reason}") if r.struck else "", key=str(r.id))
        if st.journal is None:
            return
        sessions = st.journal.bench_sessions(st.profile.bench.name)[-8:]
        self.query_one("#history-sessions", Static).update("\n".join(
            f"#{s.id}  {s.started_at[:16].replace('T', ' ')} → "
            f"{(s.stopped_at or 'left running')[:16].replace('T', ' ')}  {s.readings} reading(s)" for s in sessions)
            or "none yet")
        holds = st.judged_hold_tests()[-8:]
        self.query_one("#history-holds", Static).update("\n".join(
            f"{h.row.at[:16].replace('T', ' ')}  {h.row.supply_id or '—'}  {h.row.verdict}  "
            f"{h.row.leak_rate_sccm:.3g} ± {h.row.leak_rate_uncertainty_sccm:.2g} sccm  ({h.row.kind or 'manual'})"
            + (f"  ✖ WITHDRAWN: {h.withdrawn_reason}" if h.withdrawn else "")
            + ("  (earlier cylinder)" if h.earlier_cylinder else "") for h in holds) or "none yet")

    def action_strike(self) -> None:
        from textual.widgets import DataTable

        t = self.query_one("#history-readings", DataTable)
        if t.row_count == 0:
            return
        box = self.query_one("#strike-reason", Input)
        box.display = True
        box.focus()

    def on_input_submitted(self, event: Input.Submitted) -> None:
        from textual.widgets import DataTable

        t = self.query_one("#history-readings", DataTable)
        if event.input.id != "strike-reason" or t.row_count == 0:
            return
        key = t.coordinate_to_cell_key(t.cursor_coordinate).row_key.value
        out = self.query_one("#history-result", Static)
        try:
            self.state.strike(int(str(key)), event.value.strip())
        except (JournalError, ValueError) as exc:
            out.update(Text(f"✖ {exc}"))
            return
        out.update(Text(f"reading {key} struck out: {event.value.strip()}"))
        event.input.value = ""
        event.input.display = False
        self.fill()
        t.focus()


# ----------------------------------------------------------------------------- purge


class PurgeScreen(_Tool):
    """Purge a line or channel after a cylinder change: pressure cycles and a flush."""

    def compose(self) -> ComposeResult:
        st = self.state
        assert st.profile is not None
        yield Header()
        with VerticalScroll():
            yield Label("Supply whose gas purges (its regulator, line and channel)")
            yield Select([(s.id, s.id) for s in st.profile.supplies], value=st.profile.supplies[0].id,
                         allow_blank=False, id="purge-supply")
            with Horizontal(classes="row"):
                yield Input(placeholder="volume, e.g. 0.8 L", id="purge-volume")
                yield Input(value="4 bar", id="purge-high")
                yield Input(value="0 bar", id="purge-low")
            with Horizontal(classes="row"):
                yield Input(value="10 ppm", id="purge-target")
                yield Input(placeholder="flush flow, e.g. 1 slpm (optional)", id="purge-flow")
            yield Static("", id="purge-result")
        yield Footer()

    def on_mount(self) -> None:
        self.query_one("#purge-volume", Input).focus()

    def on_input_submitted(self, event: Input.Submitted) -> None:
        from benchwarden.core import purge as pg
        from benchwarden.core import supply as sp
        from benchwarden.render.display import profile_display
        from benchwarden.units import parse_flow, parse_volume, pressure_abs
        from benchwarden.units.quantities import parse_fraction

        st = self.state
        assert st.profile is not None
        val = lambda i: self.query_one(f"#{i}", Input).value.strip()  # noqa: E731
        out = self.query_one("#purge-result", Static)
        s = st.profile.supply(str(self.query_one("#purge-supply", Select).value))
        amb, T = st.profile.ambient_pa, st.profile.ambient.temperature
        d = profile_display(st.profile)
        try:
            V = in_range("purged volume", parse_volume(val("purge-volume"), "purged volume"), text=val("purge-volume"))
            hi, lo = pressure_abs(val("purge-high"), amb, "fill pressure"), pressure_abs(val("purge-low"), amb,
                                                                                        "vent pressure")
            target = parse_fraction(val("purge-target"), "target oxygen")
            c = pg.cycle_purge(s.gas, V, hi, lo, T, pg.O2_IN_AIR, target)
            lines = [f"{c.cycles} cycles: fill to {d.gauge(hi)}, vent to {d.gauge(lo)}; "
                     f"{c.gas_standard_litres:.3g} standard L of gas",
                     "oxygen after each: " + ", ".join(f"{x * 1e6:.3g} ppm" for x in c.fractions)]
            if val("purge-flow"):
                f = pg.flush(s.gas, V, sp.mass_flow(s.gas, parse_flow(val("purge-flow"), what="flush flow"), T, amb),
                             amb, T, pg.O2_IN_AIR, target)
                lines.append(f"or flush: {fmt_hours(f.time_s / 3600)} well mixed, at least "
                             f"{fmt_hours(f.plug_flow_time_s / 3600)}; {f.gas_standard_litres:.3g} standard L")
            lines.append("Vent purge gas outside or into extraction; measure the oxygen where it matters.")
        except BenchwardenError as exc:
            out.update(Text(f"✖ {exc}"))
            return
        out.update(Text("\n".join(lines)))
