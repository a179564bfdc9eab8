"""Tool screens: graph, hold test, room oxygen, checklist preview and export."""

from __future__ import annotations

import datetime as dt
import re
from pathlib import Path

from textual import work
from textual.app import ComposeResult
from textual.binding import Binding
from textual.containers import Horizontal, VerticalScroll
from textual.screen import Screen
from textual.widgets import Button, Footer, Header, Input, Label, Select, Static
from textual_plotext import PlotextPlot

from gasbench.errors import GasbenchError, InputError, JournalError
from gasbench.units import fmt_hours, fmt_pressure
from gasbench.workflows.session import SessionState


class _Tool(Screen[None]):
    BINDINGS = [Binding("escape", "app.pop_screen", "Back")]

    def __init__(self, state: SessionState) -> None:
        super().__init__()
        self.state = state


# ----------------------------------------------------------------------------- graph


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
            return (p - amb) / 1e5

        plt = self.query_one(PlotextPlot).plt
        plt.clear_data()
        plt.clear_figure()
        xs = [off + h for h in s.projection_hours]
        plt.plot(xs, [bar_g(p) for p in s.projection_pressure_abs_pa], label="planned", marker="braille")
        plt.hline(bar_g(s.reserve_abs_pa), "red")
        rs = sorted(st.readings.get(s.id, []), key=lambda r: r.at)
        ob = st.observed.get(s.id)
        if ob is not None and ob.fit_at:
            fx = [(dt.datetime.fromisoformat(a) - origin).total_seconds() / 3600.0 for a in ob.fit_at]
            plt.plot(fx, [bar_g(p) for p in ob.fit_pressure_abs_pa], label="fitted", marker="braille")
        if rs:  # drawn last so they stay visible
            plt.scatter([(r.at - origin).total_seconds() / 3600.0 for r in rs], [bar_g(r.pressure_abs_pa) for r in rs],
                        label="readings", marker="o")
        ys = [bar_g(p) for p in s.projection_pressure_abs_pa] + [bar_g(r.pressure_abs_pa) for r in rs]
        lo, hi = bar_g(s.reserve_abs_pa), max(ys)
        plt.ylim(min(lo, min(ys)) - 0.05 * (hi - lo), hi + 0.25 * (hi - lo))  # room above for the legend
        plt.xlabel("hours since " + ("session start" if st.started_at else "plan"))
        plt.ylabel("bar(g)")
        self.query_one("#graph-title", Static).update(
            f"{s.id} ({s.gas_name}): supply pressure, bar(g); reserve {fmt_pressure(s.reserve_abs_pa, amb)} (red line)"
            f" — n: next supply, escape: back")
        self.query_one(PlotextPlot).refresh()


# ----------------------------------------------------------------------------- hold test


class HoldScreen(_Tool):
    """A hold test on a supply: two readings, or a logged CSV series."""

    def compose(self) -> ComposeResult:
        st = self.state
        assert st.profile is not None
        yield Header()
        with VerticalScroll(id="hold-form"):
            yield Static(self._last_line(), id="last-hold")
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

    def _last_line(self) -> str:
        st = self.state
        if st.journal is None or st.profile is None:
            return "No journal: hold tests are not stored."
        last = st.last_hold_test()
        if last is None:
            return "No hold test recorded for this bench yet."
        return (f"Last hold test: {last.verdict}, {last.leak_rate_sccm:.3g} ± {last.leak_rate_uncertainty_sccm:.2g} "
                f"sccm, {last.age_days:.1f} days ago ({last.supply_id or 'no supply'})")

    def on_button_pressed(self, event: Button.Pressed) -> None:
        if event.button.id == "hold-go":
            self.compute()

    def on_input_submitted(self, event: Input.Submitted) -> None:
        self.compute()

    def compute(self) -> None:
        from gasbench import hold as hd
        from gasbench.units import parse_duration, parse_temperature, pressure_abs
        from gasbench.workflows import holds

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
                try:
                    text = Path(val("hold-log")).expanduser().read_text(encoding="utf-8")
                except (OSError, UnicodeDecodeError) as exc:
                    raise InputError(f"cannot read {val('hold-log')}: {exc}") from None
                fit = hd.hold_from_log(s.gas, s.water_volume, hd.parse_log(text, None, amb), gauge,
                                       ambient_pa=amb, reserve_abs=s.reserve.abs_at(amb))
                r = fit.result
            else:
                r = hd.hold_two_readings(
                    s.gas, s.water_volume, pressure_abs(val("hold-start"), amb, "start"),
                    pressure_abs(val("hold-end"), amb, "end"), parse_duration(val("hold-duration")),
                    parse_temperature(val("hold-tstart")) if val("hold-tstart") else None,
                    parse_temperature(val("hold-tend")) if val("hold-tend") else None, gauge,
                    reserve_abs=s.reserve.abs_at(amb), ambient_pa=amb)
        except GasbenchError as exc:
            out.update(f"✖ {exc}")
            return
        lines = [f"[b]{r.verdict.upper()}[/b]",
                 f"leak rate {r.leak_rate_sccm:.4g} ± {r.leak_rate_uncertainty_sccm:.3g} sccm (1σ, 0 °C, 101.325 kPa)"
                 f" = {r.leak_rate_pa_m3_s:.3g} Pa·m³/s",
                 f"mass loss {r.mass_loss_kg * 1000:.3g} ± {r.mass_loss_uncertainty_kg * 1000:.3g} g; "
                 f"{r.percent_per_day:.3g} % of contents per day",
                 f"smallest leak this test resolves: {r.smallest_resolvable_sccm:.3g} sccm; "
                 f"hold needed for the {r.target_sccm:.3g} sccm target ≈ {fmt_hours(r.hold_needed_h)}"]
        lines += [f"! {n}" for n in r.notes]
        lines += [f"• {g}" for g in hd.GUIDANCE]
        if st.journal is not None:
            try:
                holds.store(st.journal, holds.record_of(r, st.clock(), st.profile.bench.name, s.id,
                                                        "log" if fit is not None else "two-readings"))
                lines.insert(1, "saved to the journal")
            except JournalError as exc:
                lines.insert(1, f"✖ not saved: {exc}")
            self.query_one("#last-hold", Static).update(self._last_line())
        out.update("\n".join(lines))
        self._plot(fit)

    def _plot(self, fit: object) -> None:
        """Held mass against time with the least-squares line (logged series only)."""
        widget = self.query_one("#hold-plot", PlotextPlot)
        widget.display = fit is not None
        if fit is None:
            return
        from gasbench.hold import LogFit

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
        from gasbench import room as rm

        st = self.state
        assert st.plan is not None
        r = st.plan.room
        if r is None:
            self.query_one("#room-figures", Static).update("The profile has no [room]: add its volume and ventilation.")
            return
        sealed = rm.release(r.volume_m3, r.release.release_volume_m3, "sealed", r.release.c0_percent)
        lines = [f"[b]Room[/b] {r.volume_m3:g} m³, ventilation {r.ventilation_m3_s * 3600:.0f} m³/h ({r.ventilation_kind})",
                 f"[b]All of {r.release_supply_id} released[/b] ({r.release.release_volume_m3:.2f} m³ at room conditions):",
                 f"  {r.release.o2_percent_after_release:5.2f} % O2  {r.release.method}",
                 f"  {r.release_mixed.o2_percent_after_release:5.2f} % O2  {r.release_mixed.method}",
                 f"  {sealed.o2_percent_after_release:5.2f} % O2  {sealed.method}",
                 f"  {r.release.effect or 'stays above 19.5 %'}"]
        if r.leak is not None:
            lk = r.leak
            lines += [f"[b]Draws venting into the room[/b] {r.vented_m3_s * 6e4:.2f} L/min: steady "
                      f"{lk.o2_percent_steady:.2f} % O2; to 19.5 % {fmt_hours(lk.minutes_to_19_5 / 60)}; "
                      f"to 18 % {fmt_hours(lk.minutes_to_18 / 60)} ({lk.method})"]
        lines += [f"! {n}" for n in r.notes]
        lines.append("Estimates of a well-mixed room: use a fixed oxygen monitor with alarm where gas can "
                     "accumulate; follow local codes and the supplier's safety data sheet.")
        self.query_one("#room-figures", Static).update("\n".join(lines))
        last = st.last_hold_test()
        if last is not None and last.leak_rate_sccm > 0:
            self.query_one("#room-leak", Input).value = f"{last.leak_rate_sccm:.3g} sccm"

    def on_input_submitted(self, event: Input.Submitted) -> None:
        from gasbench import room as rm
        from gasbench.units import parse_flow

        st = self.state
        assert st.plan is not None and st.profile is not None
        r = st.plan.room
        out = self.query_one("#room-extra", Static)
        if r is None:
            return
        gas = st.profile.supply(r.release_supply_id).gas
        try:
            extra = rm.leak_volume_flow(gas, parse_flow(event.value, what="leak"), st.plan.temperature_k,
                                        st.plan.ambient_pa)
            lk = rm.leak_o2(r.volume_m3, r.vented_m3_s + extra, r.ventilation_m3_s, r.ventilation_kind,
                            r.release.c0_percent)
        except GasbenchError as exc:
            out.update(f"✖ {exc}")
            return
        out.update(f"with {event.value} more: steady {lk.o2_percent_steady:.2f} % O2; to 19.5 % "
                   f"{fmt_hours(lk.minutes_to_19_5 / 60)}; recovery {fmt_hours(lk.minutes_to_recover / 60)}; "
                   f"{lk.effect or 'stays above 19.5 %'}")


# ----------------------------------------------------------------------------- checklist


class ChecklistScreen(_Tool):
    BINDINGS = [Binding("e", "export", "Export HTML+PDF")]

    def compose(self) -> ComposeResult:
        yield Header()
        with VerticalScroll():
            yield Static("Building the checklist…", id="checklist-text", markup=False)
        yield Footer()

    def on_mount(self) -> None:
        self.checklist = self._build()
        from gasbench.checklist.render import render_text

        self.query_one("#checklist-text", Static).update(render_text(self.checklist))

    def _build(self):  # type: ignore[no-untyped-def]
        from gasbench.checklist import build_checklist
        from gasbench.render.display import profile_display

        st = self.state
        assert st.profile is not None and st.plan is not None
        return build_checklist(st.profile, st.assessment(), st.profile_path.parent, now=st.clock(),
                               display=profile_display(st.profile))

    def action_export(self) -> None:
        self.export()

    @work(thread=True, exclusive=True)
    def export(self, folder: Path | None = None) -> None:
        from gasbench.checklist.render import render_html, render_pdf

        st = self.state
        slug = re.sub(r"[^A-Za-z0-9]+", "-", self.checklist.bench).strip("-").lower()[:40] or "bench"
        stamp = st.clock().strftime("%Y%m%d-%H%M")
        folder = folder or Path.cwd()
        base = folder / f"checklist-{slug}-{stamp}"
        try:
            base.with_suffix(".html").write_text(render_html(self.checklist), encoding="utf-8")
            render_pdf(self.checklist, base.with_suffix(".pdf"))
        except OSError as exc:
            self.app.call_from_thread(self.notify, f"export failed: {exc}", severity="error", timeout=10)
            return
        self.last_export = base
        self.app.call_from_thread(self.notify, f"written {base}.html and {base}.pdf", title="Checklist exported",
                                  timeout=10)
