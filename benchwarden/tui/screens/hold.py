"""The hold test: two readings now, a logged series, or a test started now and finished later."""

from __future__ import annotations

from rich.text import Text
from textual.app import ComposeResult
from textual.containers import Horizontal, VerticalScroll
from textual.widgets import Button, Header, Input, Label, Select, Static
from textual_plotext import PlotextPlot

from benchwarden.errors import BenchwardenError, InputError, JournalError
from benchwarden.render.display import Display, fmt_hours, open_hold_text, profile_display
from benchwarden.render.hold import hold_lines
from benchwarden.render.numbers import fmt_uncertain
from benchwarden.tui.screens.base import ToolScreen, said
from benchwarden.tui.widgets import KeysFooter, field
from benchwarden.units import parse_duration, parse_temperature, pressure_abs
from benchwarden.units.limits import in_range
from benchwarden.workflows import hold_runs
from benchwarden.workflows.hold_runs import HoldRun, OpenHold
from benchwarden.workflows.ranges import read_log


def hold_duration(seconds: float, text: str) -> float:
    """The hold's length in its range (one below zero is the core's to refuse, in its words)."""
    return in_range("hold duration", seconds, text=text) if seconds > 0 else seconds


class HoldScreen(ToolScreen):
    """A hold test on a supply: two readings, a logged CSV series, or start now, finish later."""

    FIRST_FIELD = "#hold-start"

    def compose(self) -> ComposeResult:
        st = self.state
        assert st.profile is not None
        yield Header()
        with VerticalScroll(id="hold-form", classes="form"):
            yield Static(self._last_line(), id="last-hold", markup=False)
            yield Static("", id="hold-open", markup=False)
            yield Label("Supply (its water volume, gas and gauge are used)", classes="field-label")
            yield Select([(s.id, s.id) for s in st.profile.supplies], value=st.profile.supplies[0].id,
                         allow_blank=False, id="hold-supply", compact=True)
            with Horizontal(classes="row"):
                yield field("Start pressure", "hold-start", placeholder="152 bar")
                yield field("End pressure", "hold-end", placeholder="150 bar")
                yield field("Duration (or hold for)", "hold-duration", placeholder="14 h")
            with Horizontal(classes="row"):
                yield field("Start temperature", "hold-tstart", placeholder="21 degC")
                yield field("End temperature", "hold-tend", placeholder="18 degC")
            yield field("Or a logged series: a CSV file", "hold-log", placeholder="/path/to/log.csv")
            with Horizontal(classes="buttons"):
                yield Button("Compute and save", variant="primary", id="hold-go")
                yield Button("Start now, finish later", id="hold-begin")
                yield Button("Finish the started test", id="hold-finish")
            yield Static("", id="hold-result")
            yield PlotextPlot(id="hold-plot")
        yield KeysFooter()

    def on_mount(self) -> None:
        self.query_one("#hold-plot").display = False
        self._show_open()  # the focus: FIRST_FIELD, set by TypeAhead

    def _supply(self) -> str:
        return str(self.query_one("#hold-supply", Select).value)

    def _open(self) -> OpenHold | None:
        assert self.state.profile is not None
        return next((h for h in hold_runs.open_holds(self.state.journal, self.state.profile)
                     if h.supply_id == self._supply()), None)

    def _show_open(self) -> None:
        h = self._open()
        d = profile_display(self.state.profile)
        text = ""
        if h is not None:
            text = (open_hold_text(h, d, self.state.clock(), self.state.reading_step(h.supply_id))
                    + " — type the end pressure (and temperature), then 'Finish the started test'")
        self.query_one("#hold-open", Static).update(Text(text))
        self.query_one("#hold-finish", Button).display = h is not None

    def _last_line(self) -> str:
        st = self.state
        if st.journal is None or st.profile is None:
            return "No journal: hold tests are not stored."
        last = st.last_hold_test()
        if last is None:
            return "No hold test recorded for this bench yet."
        return (f"Last hold test: {last.verdict}, "
                f"{fmt_uncertain(last.leak_rate_sccm, last.leak_rate_uncertainty_sccm, 'sccm')}, "
                f"{Display.ago(last.age_days)} ({last.supply_id or 'no supply'})")

    def on_select_changed(self, event: Select.Changed) -> None:
        self._show_open()

    def on_button_pressed(self, event: Button.Pressed) -> None:
        {"hold-go": self.compute, "hold-begin": self.begin, "hold-finish": self.finish}[str(event.button.id)]()

    def on_input_submitted(self, event: Input.Submitted) -> None:
        self.compute()

    def _val(self, i: str) -> str:
        return self.query_one(f"#{i}", Input).value.strip()

    def _duration(self, default: str = "") -> float:
        text = self._val("hold-duration") or default
        return hold_duration(parse_duration(text), text)

    def _temperature(self, i: str) -> float | None:
        return parse_temperature(self._val(i)) if self._val(i) else None

    def _fail(self, exc: Exception) -> None:
        self.query_one("#hold-result", Static).update(Text(f"✖ {said(exc, self.state)}"))

    def compute(self) -> None:
        st = self.state
        assert st.profile is not None
        amb = st.profile.ambient_pa
        try:
            if self._val("hold-log"):
                text = read_log(self._val("hold-log"))  # a regular file, read with a size limit
                run = hold_runs.from_log(st.profile, self._supply(), text)
            else:
                run = hold_runs.two_readings(
                    st.profile, self._supply(), pressure_abs(self._val("hold-start"), amb, "start"),
                    pressure_abs(self._val("hold-end"), amb, "end"), self._duration(),
                    self._temperature("hold-tstart"), self._temperature("hold-tend"))
        except BenchwardenError as exc:
            self._fail(exc)
            return
        saved = None
        if st.journal is not None:
            try:
                hold_runs.save(st.journal, st.profile, run, st.clock())
                saved = "saved to the journal"
            except JournalError as exc:
                saved = f"✖ not saved: {said(exc, self.state)}"
        self._show(run, saved)

    def begin(self) -> None:
        """Store the start reading now; the overview reminds until the test is finished."""
        st = self.state
        assert st.profile is not None
        if st.journal is None:
            self._fail(JournalError("no journal: a started hold test cannot be kept"))
            return
        amb = st.profile.ambient_pa
        try:
            p = pressure_abs(self._val("hold-start"), amb, "start")
            hold_s = self._duration("12 h")
            t = self._temperature("hold-tstart")
            if t is None:
                raise InputError("give the start temperature: the test compensates it at the end")
            hold_runs.start_hold(st.journal, st.profile, self._supply(), p, self._val("hold-start"), t, hold_s,
                                 st.clock())
        except BenchwardenError as exc:
            self._fail(exc)
            return
        self._show_open()
        self.query_one("#hold-result", Static).update(Text(
            f"started and saved: {self.query_one('#hold-open', Static).render()}"))

    def finish(self) -> None:
        st = self.state
        assert st.profile is not None and st.journal is not None
        h = self._open()
        if h is None:
            self._fail(InputError("no started hold test on this supply"))
            return
        try:
            run = hold_runs.finish_hold(st.journal, st.profile, h,
                                        pressure_abs(self._val("hold-end"), st.profile.ambient_pa, "end"),
                                        self._temperature("hold-tend"), st.clock())
        except BenchwardenError as exc:
            self._fail(exc)
            return
        self._show_open()
        self._show(run, f"finished after {fmt_hours((st.clock() - h.at).total_seconds() / 3600)} and saved to the "
                        "journal")

    def _show(self, run: HoldRun, saved: str | None) -> None:
        # the same words as `benchwarden hold` (render.hold), in the bench's display unit
        lines = ([saved] if saved else []) + hold_lines(run, profile_display(self.state.profile))
        lines += [f"• {g}" for g in hold_runs.GUIDANCE]
        self.query_one("#last-hold", Static).update(Text(self._last_line()))
        self.query_one("#hold-result", Static).update(Text("\n".join(lines)))
        self._plot(run)

    def _plot(self, run: HoldRun) -> None:
        """Held mass against time with the least-squares line (logged series only)."""
        widget = self.query_one("#hold-plot", PlotextPlot)
        fit = run.fit
        widget.display = fit is not None
        if fit is None:
            return
        hours = [t / 3600.0 for t in fit.t_s]
        plt = widget.plt
        plt.clear_data()
        plt.clear_figure()
        plt.scatter(hours, [m * 1000 for m in fit.mass_kg], label="held mass, g", marker="o")
        plt.plot(hours, [m * 1000 for m in fit.fit_kg], label="least-squares fit", marker="braille")
        plt.xlabel("hours")
        widget.refresh()
