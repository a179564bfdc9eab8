"""Purging a line after a cylinder change: plan the pressure cycles (and a flush), then record
the purge that was run (who, when, cycles, the gas it used)."""

from __future__ import annotations

from rich.text import Text
from textual.app import ComposeResult
from textual.containers import Horizontal, VerticalScroll
from textual.widgets import Button, Header, Input, Label, Select, Static

from benchwarden.errors import BenchwardenError, InputError
from benchwarden.render.display import fmt_hours, profile_display
from benchwarden.tui.screens.base import ToolScreen, said
from benchwarden.tui.widgets import KeysFooter, field
from benchwarden.units import parse_flow, parse_volume, pressure_abs
from benchwarden.units.limits import in_range
from benchwarden.units.quantities import parse_fraction
from benchwarden.workflows import purges
from benchwarden.workflows.purges import PurgePlan
from benchwarden.workflows.session import SessionState


class PurgeScreen(ToolScreen):
    """Purge a line or channel after a cylinder change: pressure cycles and a flush."""

    FIRST_FIELD = "#purge-volume"

    def __init__(self, state: SessionState) -> None:
        super().__init__(state)
        self.plan: PurgePlan | None = None

    def compose(self) -> ComposeResult:
        st = self.state
        assert st.profile is not None
        yield Header()
        with VerticalScroll(id="purge-form", classes="form"):
            yield Label("Supply whose gas purges (its regulator, line and channel)", classes="field-label")
            yield Select([(s.id, s.id) for s in st.profile.supplies], value=st.profile.supplies[0].id,
                         allow_blank=False, id="purge-supply", compact=True)
            with Horizontal(classes="row"):
                yield field("Volume purged", "purge-volume", placeholder="0.8 L")
                yield field("Fill to", "purge-high", "4 bar")
                yield field("Vent to", "purge-low", "0 bar")
            with Horizontal(classes="row"):
                yield field("Oxygen target", "purge-target", "10 ppm")
                yield field("Flush flow (optional)", "purge-flow", placeholder="1 slpm")
                yield field("Run by (operator)", "purge-operator", placeholder="A. Example")
            with Horizontal(classes="buttons"):
                yield Button("Plan (Enter)", variant="primary", id="purge-plan")
                yield Button("Record: cycles run", id="purge-record-cycles")
                yield Button("Record: flush run", id="purge-record-flush")
            yield Static("", id="purge-result")
        yield KeysFooter()

    def _val(self, i: str) -> str:
        return self.query_one(f"#{i}", Input).value.strip()

    def on_input_submitted(self, event: Input.Submitted) -> None:
        self.compute()

    def on_button_pressed(self, event: Button.Pressed) -> None:
        if event.button.id == "purge-plan":
            self.compute()
        elif event.button.id in ("purge-record-cycles", "purge-record-flush"):
            self.record("flush" if event.button.id == "purge-record-flush" else "cycles")

    def compute(self) -> PurgePlan | None:
        st = self.state
        assert st.profile is not None
        out = self.query_one("#purge-result", Static)
        amb = st.profile.ambient_pa
        d = profile_display(st.profile)
        try:
            plan = purges.plan_purge(
                st.profile, str(self.query_one("#purge-supply", Select).value),
                in_range("purged volume", parse_volume(self._val("purge-volume"), "purged volume"),
                         text=self._val("purge-volume")),
                pressure_abs(self._val("purge-high"), amb, "fill pressure"),
                pressure_abs(self._val("purge-low"), amb, "vent pressure"),
                parse_fraction(self._val("purge-target"), "target oxygen"),
                parse_flow(self._val("purge-flow"), what="flush flow") if self._val("purge-flow") else None)
        except BenchwardenError as exc:
            out.update(Text(f"✖ {said(exc, self.state)}"))
            self.plan = None
            return None
        c, f = plan.cycles, plan.flush
        lines = [f"{c.cycles} cycles: fill to {d.gauge(plan.high_abs_pa)}, vent to {d.gauge(plan.low_abs_pa)}; "
                 f"{c.gas_standard_litres:.3g} standard L of gas (0 °C, 101.325 kPa)",
                 "oxygen after each: " + ", ".join(f"{x * 1e6:.3g} ppm" for x in c.fractions)]
        if f is not None:
            lines.append(f"or flush: {fmt_hours(f.time_s / 3600)} well mixed, at least "
                         f"{fmt_hours(f.plug_flow_time_s / 3600)}; {f.gas_standard_litres:.3g} standard L")
        lines.append("Vent purge gas outside or into extraction; measure the oxygen where it matters.")
        lines.append("When it is done, record it (the checklist shows it after a cylinder change).")
        out.update(Text("\n".join(lines)))
        self.plan = plan
        return plan

    def record(self, method: purges.Method) -> None:
        """Record the planned purge as run now, by the operator typed."""
        st = self.state
        assert st.profile is not None
        out = self.query_one("#purge-result", Static)
        plan = self.compute()
        if plan is None:
            return
        try:
            if st.journal is None:
                raise InputError("no journal: the purge cannot be recorded")
            now = st.clock()
            purges.record_purge(st.journal, st.profile, plan, method, now, now, self._val("purge-operator"))
        except BenchwardenError as exc:
            out.update(Text(f"✖ not recorded: {said(exc, self.state)}"))
            return
        litres = plan.flush.gas_standard_litres if method == "flush" and plan.flush else plan.cycles.gas_standard_litres
        what = "a flush" if method == "flush" else f"{plan.cycles.cycles} cycles"
        out.update(Text(f"✔ purge recorded: {what}, {litres:.3g} standard L, {st.clock():%H:%M}"
                        + (f" by {self._val('purge-operator')}" if self._val("purge-operator") else "")))
