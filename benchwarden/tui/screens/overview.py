"""The bench overview: supplies with countdowns, draws and gaps, ranked findings."""

from __future__ import annotations

import asyncio
import datetime as dt
import math
from collections.abc import Callable
from typing import TYPE_CHECKING

from rich.text import Text
from textual import work
from textual.app import ComposeResult
from textual.binding import Binding
from textual.containers import Horizontal, Vertical, VerticalScroll
from textual.timer import Timer
from textual.widgets import DataTable, Header, Static

from benchwarden.errors import BenchwardenError, JournalError
from benchwarden.render.display import (
    Display,
    display_for,
    fmt_hours,
    lab_link_text,
    live_text,
    open_hold_text,
    profile_display,
)
from benchwarden.render.errors import error_line
from benchwarden.render.findings import (
    OK_STYLE,
    SEVERITY_MARK,
    SEVERITY_STYLE,
    describe,
    short_words,
)
from benchwarden.render.numbers import fmt_uncertain, fmt_value
from benchwarden.render.supply import mass_words, phase_short
from benchwarden.tui.screens.overview_actions import OverviewActions
from benchwarden.tui.widgets import FindingsPanel, KeysFooter, bar
from benchwarden.workflows.session import SessionState

if TYPE_CHECKING:  # the findings' rules load with the plan, after the first frame
    from benchwarden.workflows.cylinder import ProfileView
    from benchwarden.workflows.findings import Finding

#: How often the live figures (plan, leak watch, alarms) are recomputed from new samples [s].
LIVE_REFRESH_S = 5.0
#: STOP findings listed one line each above the scrolling body (more are summed up in one line).
MAX_STOP_LINES = 5


class OverviewScreen(OverviewActions):
    # priority: acted on the moment the key is read, so keys typed right after (the reading
    # itself) reach the form it opens; the overview has no field of its own to type into
    BINDINGS = [
        Binding("s", "toggle_session", "Session", tooltip="start or stop a session", priority=True),
        Binding("r", "reading", "Reading", tooltip="enter a gauge reading or a weight (any time)", priority=True),
        Binding("n", "change", "New cyl.", tooltip="record a new cylinder (a cylinder change)", priority=True),
        Binding("h", "history", "History", tooltip="history: readings, cylinders, sessions, hold tests", priority=True),
        Binding("g", "graph", "Graph", tooltip="graph: supply pressure over the session", priority=True),
        Binding("t", "hold", "Hold", tooltip="hold test: now, from a log, or start now and finish later", priority=True),
        Binding("o", "oxygen", "O2", tooltip="room oxygen", priority=True),
        Binding("k", "checklist", "Checklist", tooltip="checklist preview and export", priority=True),
        Binding("p", "purge", "Purge", tooltip="purge a line after a cylinder change, and record it", priority=True),
        Binding("u", "units", "Units", tooltip="pressure unit: bar, psi, kPa, MPa", priority=True),
        Binding("l", "reload", "Reload", tooltip="reload the profile after editing it", priority=True),
    ]

    def __init__(self, state: SessionState) -> None:
        super().__init__()
        self.state = state
        self.cautions_shown = False
        self._shown: dict[str, object] = {}
        #: the pressure unit shown; starts from the profile's [display] setting, `u` cycles it
        self.pressure_unit: str | None = None
        self._findings: list[Finding] = []
        #: what the tables and the findings panel show, so that an unchanged refresh redraws nothing
        self._rows: list[tuple[str, ...]] | None = None
        self._findings_shown: tuple[list[Finding], Display] | None = None
        self._observed_lines: list[str] | None = None
        self._live_at: dt.datetime | None = None
        self._live_timer: Timer | None = None
        self._polling = False

    @property
    def units(self) -> Display:
        return profile_display(self.state.profile, self.pressure_unit)

    def action_units(self) -> None:
        """Show pressures in the next unit (bar, psi, kPa, MPa)."""
        self.pressure_unit = self.units.next_unit().pressure_unit
        self.refresh_view()
        self.notify(f"pressures in {self.units.gauge_label}", timeout=3)

    def compose(self) -> ComposeResult:
        yield Header()
        yield Static("Loading the bench profile and computing the plan…", id="status")
        yield Static("", id="banner")
        yield Static("", id="stops")
        with VerticalScroll(id="body"):
            yield Static("Supplies", classes="heading")
            yield DataTable(id="supplies", cursor_type="none", zebra_stripes=True)
            yield DataTable(id="supplies-more", cursor_type="none", zebra_stripes=True)
            yield Static("", id="observed")
            yield Static("", id="lab-link")
            with Horizontal(id="lower"):
                with Vertical(id="draws-box"):
                    yield Static("Draws and gaps", classes="heading")
                    yield DataTable(id="draws", cursor_type="row")
                with Vertical(id="findings-box"):
                    yield Static("Findings", classes="heading")
                    yield FindingsPanel(id="findings")
        yield KeysFooter()

    def on_mount(self) -> None:
        sup = self.query_one("#supplies", DataTable)
        # fixed widths: the layout does not jump as figures change, and is the same every run
        # two tables so that every figure shows at 80 columns: the countdown, then the contents
        for label, key, width in (("Supply", "id", 8), ("Reading", "reading", 15), ("To reserve", "left", 10),
                                  ("At", "at", 12), ("Left", "bar", 8)):
            sup.add_column(label, key=key, width=width)
        more = self.query_one("#supplies-more", DataTable)
        for label, key, width in (("Supply", "id", 8), ("Gas", "gas", 9), ("Contents", "contents", 9),
                                  ("Usable", "usable", 9), ("Regulator outlet", "outlet", 24)):
            more.add_column(label, key=key, width=width)
        dr = self.query_one("#draws", DataTable)
        for label, key, width in (("Draw", "id", 12), ("Kind", "kind", 7), ("Flow", "flow", 11),
                                  ("Fires at", "kv", 8), ("Margin", "margin", 19)):
            dr.add_column(label, key=key, width=width)
        self._first_figures()
        self.call_after_refresh(self.load_plan)  # drawn first: the plan's imports and CoolProp wait
        self.set_interval(1.0, self.tick)

    def _first_figures(self) -> None:
        """The supplies' readings as the journal records them, in the first frame drawn: what the
        profile said when last validated (kept in the journal; else the profile, validated now)
        and a few indexed queries, no equation of state (the plan follows in a worker)."""
        from benchwarden.workflows.cylinder import first_readings, profile_view

        try:
            view = self.state.first_view()
            if view is None:
                self.state.load(plan=False)
                assert self.state.profile is not None
                view = profile_view(self.state.profile)
            self._show_first(view, first_readings(view, self.state.journal))
        except BenchwardenError:
            self.state.profile = None  # the worker loads it again and says what is wrong

    # -- workers: CoolProp and the journal never block the screen

    @work(thread=True, exclusive=True, group="plan")
    def load_plan(self) -> None:
        try:
            if self.state.profile is None:  # draw first: the readings as recorded, then the plan
                from benchwarden.workflows.cylinder import first_readings, profile_view

                self.state.load(plan=False)
                assert self.state.profile is not None
                view = profile_view(self.state.profile)
                self.app.call_from_thread(self._show_first, view, first_readings(view, self.state.journal))
            self.state.recompute()
        except BenchwardenError as exc:
            self.app.call_from_thread(self._error, error_line(exc, self.units))
            return
        self.app.call_from_thread(self._plan_ready)

    def _show_first(self, view: ProfileView, pressures: dict[str, float]) -> None:
        """The supplies' readings as the journal has them, while the plan is computed."""
        sup = self.query_one("#supplies", DataTable)
        if self.state.plan is None and not sup.row_count:
            d = display_for(self.pressure_unit or view.pressure_unit, view.ambient_pa)
            steps = {s.id: s.step_pa for s in view.supplies}
            for sid, p in pressures.items():
                sup.add_row(sid, d.gauge(p, steps.get(sid)), "", "", "", key=sid)

    def _plan_ready(self) -> None:
        self.refresh_view()
        st = self.state
        if st.watcher is None:
            self._start_live()
        if st.journal is not None and st.profile is not None and not st.running:
            row = st.journal.unfinished_session(st.profile.bench.name)
            if row is not None:
                from benchwarden.tui.screens.modals import ConfirmScreen

                self.app.push_screen(
                    ConfirmScreen(f"Session #{row.id} started {row.started_at[:16].replace('T', ' ')} was left "
                                  f"running with {row.readings} reading(s). Resume it?"),
                    lambda yes: self._resume(row.id) if yes else self._close_left_running(row.id))

    def _close_left_running(self, session_id: int) -> None:
        try:
            self.state.close_left_running(session_id)
            self.notify(f"Session #{session_id} closed at its last reading", title="Session")
        except JournalError as exc:
            self.notify(str(exc), title="Journal", severity="error", timeout=10, markup=False)

    def _resume(self, session_id: int) -> None:
        self.state.resume(session_id)
        self.notify(f"Session #{session_id} resumed", title="Session")
        self.load_plan()

    def _start_live(self) -> None:
        """Read the profile's live gauges (again, after a reload), if it has any."""
        st = self.state
        if self._live_timer is not None:
            self._live_timer.stop()
            self._live_timer = None
        st.stop_watching()
        st.live = {}
        if st.start_watching(lambda f: describe(f, self.units)[0]):
            assert st.watcher is not None
            every = min(f.interval_s for f in st.watcher.feeds)
            self._live_timer = self.set_interval(max(0.2, min(every, 5.0)), self.poll_live)
            self._live_at = None
            self.notify(f"Reading {len(st.watcher.feeds)} live gauge(s)", title="Live")

    async def poll_live(self) -> None:
        """Read the live gauges that are due; every few seconds the plan, the leak watch and the
        alarms follow. The work runs in a pooled thread (sources and CoolProp never block the
        screen), one poll at a time, and none starts while no source is due and no refresh is."""
        st = self.state
        if self._polling or st.watcher is None:
            return
        now = st.clock()
        refresh = self._live_at is None or (now - self._live_at).total_seconds() >= LIVE_REFRESH_S
        if not refresh and st.watcher.next_due() > 0:
            return  # nothing to read yet: no thread, no journal
        self._polling = True
        try:
            await asyncio.to_thread(self._poll_live, refresh, now)
        except BenchwardenError as exc:
            self.notify(error_line(exc, self.units), title="Live gauges", severity="error", timeout=10)
            return
        finally:
            self._polling = False
        if refresh:
            self.refresh_view()

    def _poll_live(self, refresh: bool, now: dt.datetime) -> None:
        """In the pool's thread: the sources that are due, then, when ``refresh``, the live figures."""
        self.state.poll_sources()
        if refresh:
            self._live_at = now
            self.state.refresh_live()

    def _error(self, msg: str) -> None:
        self.query_one("#status", Static).update(Text(f"✖ {msg}"))
        self.notify(msg, title="Error", severity="error", timeout=10)

    # -- display

    def refresh_view(self) -> None:
        st = self.state
        if st.plan is None or st.profile is None:
            return
        self.app.sub_title = st.plan.bench_name
        disp = self.units
        rows: list[tuple[str, ...]] = []  # (table, row key, cells)
        for s in st.plan.supplies:
            regs = [r for r in st.plan.regulators if r.supply_id == s.id]
            outlet = "—"
            if regs and not all(r.regulating for r in regs):
                outlet = "not regulating"  # inlet at or below a set point: the outlet follows the cylinder
            elif regs:
                coldest = min(r.outlet_temperature_k for r in regs)
                outlet = ("/".join(disp.gauge_number(r.set_point_abs_pa) for r in regs)
                          + f" {disp.gauge_label} {disp.temperature(coldest).replace(' °C', '°C')}")
            reading = (phase_short(s, disp) if s.liquefied or s.phase == "liquid-full"
                       else disp.gauge(s.pressure_abs_pa, st.reading_step(s.id)))
            rows.append(("supplies", s.id, s.id, reading, "", "", ""))
            rows.append(("supplies-more", s.id, s.id, s.gas_short[:9], mass_words(s.mass_kg, s.mass_uncertainty_kg, 2),
                         f"{s.usable_mass_kg:.2f} kg", outlet))
        for d in st.plan.draws:
            kv = margin = "—"
            if d.gap is not None:
                w = min([*d.gap.margins_start, *d.gap.margins_reserve], key=lambda m: m.margin_kv, default=None)
                fires = w.firing_kv if w is not None and math.isfinite(w.firing_kv) else d.gap.breakdown_start_kv
                kv = f"{fires:.1f} kV"  # what the smallest margin is taken against (the row adds up), else now
                if w is not None:
                    margin = f"{w.margin_kv:+.1f} kV {w.status}"
            rows.append(("draws", d.id, d.id, d.kind, f"{d.standard_flow_slpm:.3g} slpm", kv, margin))
        if rows != self._rows:  # only what changed is redrawn (idle CPU): the cells, or the tables when rows differ
            before, self._rows = self._rows, rows
            tables = {n: self.query_one(f"#{n}", DataTable) for n in ("supplies", "supplies-more", "draws")}
            if before is not None and [r[:2] for r in before] == [r[:2] for r in rows]:
                for (name, key, *cells), (_, _, *was) in zip(rows, before, strict=True):
                    for col, new, old in zip(tables[name].columns, cells, was, strict=True):
                        if new != old:  # fixed widths: no layout
                            tables[name].update_cell(key, col, new, update_width=False)
            else:
                self._shown.clear()
                for t in tables.values():
                    t.clear()
                for name, key, *cells in rows:
                    tables[name].add_row(*cells, key=key)
        self._observed_line()
        self._findings = st.findings()
        if (self._findings, disp) != self._findings_shown:
            self._findings_shown = (self._findings, disp)
            self.query_one("#findings", FindingsPanel).show(self._findings, disp)
        self._show_stops()
        self.tick()

    def _show_stops(self) -> None:
        """Every STOP finding, one line each, above everything that scrolls (seen at 80×24)."""
        stops = [f for f in self._findings if f.severity == "stop"]
        box = self.query_one("#stops", Static)
        lines = [f"{SEVERITY_MARK['stop']}  {f.subject}: {describe(f, self.units)[0]}" for f in stops]
        if len(lines) > MAX_STOP_LINES:  # each STOP still counted on screen; the findings list has all
            lines = lines[:MAX_STOP_LINES - 1] + [f"{SEVERITY_MARK['stop']} … and {len(lines) - MAX_STOP_LINES + 1} more"]
        self._set("stops", "\n".join(lines), lambda v: box.update(Text(str(v), no_wrap=True, overflow="ellipsis")))
        box.display = bool(stops)

    def _observed_line(self) -> None:
        from benchwarden.workflows.hold_runs import open_holds  # after the first figures

        st = self.state
        assert st.plan is not None and st.profile is not None
        parts = []
        fast = {f.subject: f for f in self._findings if f.code == "faster-than-planned"}
        for s in st.plan.supplies:
            ob = st.observed.get(s.id)
            if ob is None:
                n = len(st.readings.get(s.id, []))
                if st.running:
                    parts.append(f"{s.id}: {n} reading(s); two give the observed draw")
                continue
            parts.append(f"{s.id}: observed {fmt_uncertain(ob.draw_kg_s * 6e4, ob.draw_uncertainty_kg_s * 6e4, 'g/min')}"
                         f" vs planned {fmt_value(s.draw_kg_s * 6e4)} g/min"
                         + (f"  {short_words(fast[s.id], self.units)}" if s.id in fast else "")
                         + ("" if ob.resolved else "  (not resolved yet: the plan's projection stands)"))
        for sid, lv in st.live.items():
            parts.append(f"{sid}: {live_text(lv, self.units)}")
        parts += [f"⏲ {open_hold_text(h, self.units, st.clock(), st.reading_step(h.supply_id))}"
                  for h in open_holds(st.journal, st.profile)]  # a hold test started, to finish
        self._set("observed", "\n".join(parts), self._update_observed)

    def _update_observed(self, text: object) -> None:
        """The observed line; laid out again only when its height may change (a live sample's
        new time every few seconds redraws the line alone)."""
        box = self.query_one("#observed", Static)
        lines, before = str(text).split("\n"), self._observed_lines
        same = (before is not None and len(lines) == len(before) and box.content_size.width > 0
                and all(len(ln) < box.content_size.width for ln in lines + before))
        self._observed_lines = lines
        box.update(Text(str(text)), layout=not same)

    def tick(self) -> None:
        """Once a second: elapsed time and countdowns (only these cells change)."""
        st = self.state
        if st.plan is None:
            return
        now = st.clock()
        alarms = st.alarms(now, {f.code for f in self._findings})  # the rules live in the application layer
        if st.running and st.started_at is not None:
            status = (f"● SESSION #{st.session_id} running {Display.elapsed((now - st.started_at).total_seconds())} "
                      f"of {fmt_hours(st.plan.session_hours)}")
            status += "".join(f"   {short_words(a, self.units)}" for a in alarms if a.code == "alarm-over-time")
        else:
            status = f"○ no session — press s to start ({fmt_hours(st.plan.session_hours)} planned)"
        n_stops = sum(1 for f in self._findings if f.severity == "stop")
        if n_stops:
            status = f"{SEVERITY_MARK['stop']} ({n_stops})  " + status
        self.query_one("#status", Static).set_class(bool(n_stops), "stop")
        if st.unsaved and int(now.timestamp()) % 10 == 0:
            st.retry_unsaved()  # the journal may be free again
        if st.unsaved:
            status += f"   ✖ {len(st.unsaved)} reading(s) NOT saved to the journal (retrying)"
        self._alerts(alarms, now)
        self._lab_link(now)
        self._set("status", status, lambda v: self.query_one("#status", Static).update(Text(str(v))))
        sup = self.query_one("#supplies", DataTable)
        # the plan may have been recomputed and the table not yet refreshed: only the rows shown
        hours = {s.id: st.hours_left(s.id, now) for s in st.plan.supplies if s.id in sup.rows}
        from benchwarden.workflows.findings import countdown_findings

        judged = {f.subject: f for f in countdown_findings(hours, now, st.session_end, st.plan.session_hours)}
        for s in st.plan.supplies:
            if s.id not in hours:
                continue
            h = hours[s.id]
            at = now + dt.timedelta(hours=h) if math.isfinite(h) else None
            colour = SEVERITY_STYLE[judged[s.id].severity] if s.id in judged else OK_STYLE
            b = bar(h / st.plan.session_hours if st.plan.session_hours else 0.0, 8)
            for col, val in (("left", fmt_hours(h)), ("bar", (b, colour)),
                             ("at", Display.short_clock(at, now) if at else "never")):
                self._set(f"{s.id}/{col}", val, self._cell_setter(sup, s.id, col))

    def _lab_link(self, now: dt.datetime) -> None:
        """Push to the lab in the background when the profile has one; say when it last received."""
        import time

        link = self.state.poll_lab(time.monotonic())
        box = self.query_one("#lab-link", Static)
        box.display = link is not None
        if link is not None:
            self._set("lab-link", lab_link_text(link, now), lambda v: box.update(Text(str(v))))

    @staticmethod
    def _cell_setter(table: DataTable[object], row: str, col: str) -> Callable[[object], object]:
        def apply(v: object) -> None:
            shown = Text(str(v[0]), style=str(v[1])) if isinstance(v, tuple) else v
            table.update_cell(row, col, shown, update_width=False)

        return apply

    def _set(self, key: str, value: object, apply: Callable[[object], object]) -> None:
        """Apply a display change only when the shown value changes (keeps the idle app quiet)."""
        if self._shown.get(key) != value:
            self._shown[key] = value
            apply(value)

    # -- actions

    def on_screen_resume(self) -> None:
        # back from a tool (a hold test saved, a reading struck): the figures and findings follow
        if self.state.plan is not None:
            self.load_plan()

    def _alerts(self, alarms: list[Finding], now: dt.datetime) -> None:
        """Bell and banner for the alarms (the rule lives in the application layer); the bell
        rings, and the journal gets a line, once per new alarm."""
        st = self.state
        new = st.new_alarms(alarms, now, lambda f: describe(f, self.units)[0])
        text = "   ▲ ".join(describe(a, self.units)[0] for a in alarms)
        banner = self.query_one("#banner", Static)
        self._set("banner", text, lambda v: banner.update(Text(f"▲ {v}" if v else "")))
        banner.display = bool(alarms)
        banner.set_class(any(a.severity == "stop" for a in alarms), "stop")
        if new:
            self.app.bell()

    def action_reload(self) -> None:
        self.reload_profile()

    @work(thread=True, exclusive=True, group="plan")
    def reload_profile(self) -> None:
        try:
            self.state.reload()
        except BenchwardenError as exc:
            self.app.call_from_thread(self.notify, f"{error_line(exc, self.units)} — the profile loaded before stays in use.",
                                      title="Profile not reloaded", severity="error", timeout=15)
            return
        self.app.call_from_thread(self.notify, "Profile reloaded", title="Profile")
        self.app.call_from_thread(self._start_live)  # the sources may have changed
        self.app.call_from_thread(self.refresh_view)

