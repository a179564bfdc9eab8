"""The graph: a supply's pressure over the session, planned and read."""

from __future__ import annotations

import datetime as dt

from rich.text import Text
from textual.app import ComposeResult
from textual.binding import Binding
from textual.widgets import Header, Static
from textual_plotext import PlotextPlot

from benchwarden.render.display import Display, profile_display
from benchwarden.tui.screens.base import ToolScreen
from benchwarden.tui.widgets import KeysFooter
from benchwarden.workflows.session import SessionState

#: The graph shows live samples this far back when there is no session [h].
LIVE_LOOKBACK_H = 24.0


class GraphScreen(ToolScreen):
    """Supply pressure over the session: planned projection, readings, fitted line, reserve."""

    BINDINGS = [Binding("n", "next_supply", "Next supply", tooltip="the next supply's graph")]

    def __init__(self, state: SessionState, units: Display | None = None) -> None:
        super().__init__(state)
        self.index = 0
        #: the overview's display unit (its u key), else the profile's
        self.units = units or profile_display(state.profile)

    def compose(self) -> ComposeResult:
        yield Header()
        yield Static("", id="graph-title")
        yield PlotextPlot(id="plot")
        yield KeysFooter()

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

        d = Display(self.units.pressure_unit, amb)
        gauge = d.gauge_value  # every pressure as a gauge number in the display unit

        plt = self.query_one(PlotextPlot).plt
        plt.clear_data()
        plt.clear_figure()
        floor = gauge(0.0)  # nothing reads below vacuum: no line is drawn under it
        xs = [off + h for h in s.projection_hours]
        plt.plot(xs, [max(floor, gauge(p)) for p in s.projection_pressure_abs_pa], label="planned",
                 marker="braille")
        plt.hline(gauge(s.reserve_abs_pa), "red")
        plt.vline(st.plan.session_hours + (off if not st.started_at else 0.0), "blue")  # the planned end
        rs = sorted((r for r in st.readings.get(s.id, []) if r.pressure_abs_pa is not None), key=lambda r: r.at)
        ob = st.observed.get(s.id)
        if ob is not None and ob.fit_at:
            fx = [(dt.datetime.fromisoformat(a) - origin).total_seconds() / 3600.0 for a in ob.fit_at]
            plt.plot(fx, [max(floor, gauge(p)) for p in ob.fit_pressure_abs_pa], label="fitted", marker="braille")
        now = st.clock()
        since = min(origin, now - dt.timedelta(hours=LIVE_LOOKBACK_H))
        trace = st.live_trace(s.id, since, now, max(20, self.size.width - 12))
        live_ys: list[float] = []
        if trace is not None:  # the live gauge: its lowest and highest sample in each column
            keep = trace.vmin == trace.vmin
            tx = [(float(t) - origin.timestamp()) / 3600.0 for t in trace.t[keep]]
            live_ys = [gauge(float(p)) for p in trace.vmin[keep]] + [gauge(float(p)) for p in trace.vmax[keep]]
            plt.plot(tx, [gauge(float(p)) for p in trace.vmax[keep]], label="live (max)", marker="braille")
            plt.plot(tx, [gauge(float(p)) for p in trace.vmin[keep]], label="live (min)", marker="braille")
        inside = [((r.at - origin).total_seconds() / 3600.0, r.pressure_abs_pa or 0.0) for r in rs
                  if r.at >= origin]
        # the readings of this cylinder taken before the session (they do not count in it)
        outside = [((dt.datetime.fromisoformat(r.at) - origin).total_seconds() / 3600.0, r.pressure_abs_pa)
                   for r in st.history(s.id) if not r.struck and r.pressure_abs_pa is not None
                   and since <= dt.datetime.fromisoformat(r.at) < origin] if st.started_at else []
        if inside:  # drawn last so they stay visible
            plt.scatter([h for h, _ in inside], [gauge(p) for _, p in inside], label="readings", marker="o")
        if outside:
            plt.scatter([h for h, _ in outside], [gauge(p) for _, p in outside], label="before the session",
                        marker="x")
        ys = ([gauge(p) for p in s.projection_pressure_abs_pa] + [gauge(p) for _, p in inside + outside]
              + live_ys)
        lo, hi = gauge(s.reserve_abs_pa), max(ys)
        plt.ylim(min(lo, min(ys)) - 0.05 * (hi - lo), hi + 0.6 * (hi - lo))  # room above for the legend (four lines)
        plt.xlabel("hours since " + ("session start" if st.started_at else "plan"))
        plt.ylabel(d.gauge_label)
        self.query_one("#graph-title", Static).update(
            Text(f"{s.id} ({s.gas_name}): supply pressure, {d.gauge_label}; reserve {d.gauge(s.reserve_abs_pa)} "
                 "(red line), planned end (blue line)" + (f"; {len(outside)} reading(s) before the session (x)"
                                                         if outside else "") + " — n: next supply, escape: back"))
        self.query_one(PlotextPlot).refresh()
