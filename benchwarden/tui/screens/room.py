"""Room oxygen: the safety case and today's contents released, plus a leak typed in."""

from __future__ import annotations

from rich.text import Text
from textual.app import ComposeResult
from textual.containers import VerticalScroll
from textual.widgets import Header, Input, Static

from benchwarden.errors import BenchwardenError
from benchwarden.render.display import fmt_hours
from benchwarden.render.room import room_lines
from benchwarden.tui.screens.base import ToolScreen, said
from benchwarden.tui.widgets import KeysFooter, field
from benchwarden.units.limits import in_range
from benchwarden.workflows.room_tool import sealed_release, with_extra_leak


class RoomScreen(ToolScreen):
    """Room oxygen from the plan, plus an extra leak the person types."""

    FIRST_FIELD = "#room-leak"

    def compose(self) -> ComposeResult:
        yield Header()
        with VerticalScroll(classes="form"):
            yield Static("", id="room-figures")
            yield field("Add a leak (e.g. the last hold test's, or '5 slpm') and press Enter", "room-leak",
                        placeholder="5 slpm")
            yield Static("", id="room-extra")
        yield KeysFooter()

    def on_mount(self) -> None:
        st = self.state
        assert st.plan is not None
        r = st.plan.room
        if r is None:
            self.query_one("#room-figures", Static).update(Text("The profile has no [room]: add its volume and "
                                                                "ventilation."))
            return
        lines = [f"Room {line}" if i == 0 else line for i, line in enumerate(room_lines(r))]
        sealed = sealed_release(st.plan)
        if sealed is not None:
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

    def on_input_submitted(self, event: Input.Submitted) -> None:
        from benchwarden.units import parse_flow

        st = self.state
        assert st.plan is not None and st.profile is not None
        r = st.plan.room
        out = self.query_one("#room-extra", Static)
        if r is None:
            return
        try:
            leak = parse_flow(event.value, what="leak")
            in_range("flow", leak.value, "leak", event.value)
            lk = with_extra_leak(st.profile, st.plan, leak)
        except BenchwardenError as exc:
            out.update(Text(f"✖ {said(exc, self.state)}"))
            return
        if lk is None:
            return
        out.update(Text(f"with {event.value} more: steady {lk.o2_percent_steady:.2f} % O2; to 19.5 % "
                   f"{fmt_hours(lk.minutes_to_19_5 / 60)}; recovery {fmt_hours(lk.minutes_to_recover / 60)}; "
                   f"{lk.effect or 'stays above 19.5 %'}"))
