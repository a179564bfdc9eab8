"""Modal screens: reading entry, cautions, help, yes/no."""

from __future__ import annotations

import datetime as dt
from typing import Any

from rich.text import Text
from textual.app import ComposeResult
from textual.binding import Binding
from textual.containers import Horizontal, Vertical, VerticalScroll
from textual.screen import ModalScreen
from textual.widgets import Button, Input, Label, Select, Static

from benchwarden.core.cautions import DEFER, ESTIMATES, GENERAL, gas_cautions
from benchwarden.errors import InputError
from benchwarden.units.constants import T0_K
from benchwarden.workflows.session import Reading, SessionState


class ReadingScreen(ModalScreen[Reading | None]):
    """Enter a gauge reading: supply, pressure, temperature (prefilled), time (now by default).
    A wrong entry is shown inline and the typed values stay."""

    BINDINGS = [Binding("escape", "cancel", "Cancel")]

    def __init__(self, state: SessionState) -> None:
        super().__init__()
        self.state = state

    def compose(self) -> ComposeResult:
        st = self.state
        assert st.profile is not None
        first = st.profile.supplies[0].id
        with Vertical(id="dialog", classes="dialog"):
            yield Static("New reading", classes="heading")
            yield Label("Supply")
            yield Select([(s.id, s.id) for s in st.profile.supplies], value=first, allow_blank=False, id="supply",
                         compact=True)
            yield Label("Gauge pressure (142 bar, 2050 psi; bar(a) absolute) or gross weight (74.1 kg)")
            yield Input(placeholder="142 bar", id="pressure", compact=True)
            yield Label("Cylinder temperature")
            yield Input(value=self._last_temperature(first), id="temperature", compact=True)
            yield Label("Time (HH:MM, or leave 'now')")
            yield Input(value="now", id="time", compact=True)
            yield Static("", id="error", classes="error")
            with Horizontal(classes="buttons"):
                yield Button("Save", variant="primary", id="save")
                yield Button("Cancel", id="cancel")

    def _last_temperature(self, supply_id: str) -> str:
        st = self.state
        last = st.last_reading(supply_id)
        if last is not None:
            return f"{last.temperature_k - T0_K:.1f} degC"
        assert st.plan is not None
        sp = next(s for s in st.plan.supplies if s.id == supply_id)
        return f"{sp.temperature_k - T0_K:.1f} degC"

    def on_mount(self) -> None:
        self.query_one("#pressure", Input).focus()

    def on_select_changed(self, event: Select.Changed) -> None:
        if isinstance(event.value, str):
            self.query_one("#temperature", Input).value = self._last_temperature(event.value)

    def on_input_submitted(self, event: Input.Submitted) -> None:
        self.save()

    def on_button_pressed(self, event: Button.Pressed) -> None:
        if event.button.id == "save":
            self.save()
        else:
            self.dismiss(None)

    def save(self) -> None:
        supply = self.query_one("#supply", Select).value
        try:
            reading = self.state.parse_reading(
                str(supply), self.query_one("#pressure", Input).value, self.query_one("#temperature", Input).value,
                self.query_one("#time", Input).value)
        except InputError as exc:
            self.query_one("#error", Static).update(Text(f"✖ {exc}"))
            return
        self.dismiss(reading)

    def action_cancel(self) -> None:
        self.dismiss(None)


class CautionsScreen(ModalScreen[None]):
    BINDINGS = [Binding("escape,enter,c", "close", "Close")]

    def __init__(self, state: SessionState) -> None:
        super().__init__()
        self.state = state

    def compose(self) -> ComposeResult:
        gases = [s.gas for s in self.state.profile.supplies] if self.state.profile else []
        text = []
        for c in list(GENERAL) + gas_cautions(gases):
            text.append(f"[b]{c.topic}[/b]\n{c.text}\n")
        text.append(f"[i]{ESTIMATES}[/i]\n\n[b]{DEFER}[/b]")
        with Vertical(id="dialog", classes="dialog wide"):
            yield Static("Cautions for this bench", classes="heading")
            with VerticalScroll():
                yield Static("\n".join(text), markup=True)
            yield Button("Understood", variant="primary", id="close")

    def on_button_pressed(self, event: Button.Pressed) -> None:
        self.dismiss(None)

    def action_close(self) -> None:
        self.dismiss(None)


HELP = """\
[b]Overview[/b]
  s  start or stop a session        r  enter a gauge reading
  g  graph: supply pressure          t  hold test (leak rate)
  o  room oxygen                     k  checklist preview and export
  l  reload the profile after editing it
[b]Everywhere[/b]
  c  cautions for this bench         ?  this help
  escape  back                       q  quit
[b]In the graph[/b]  n  next supply
[b]In the checklist[/b]  e  export HTML and PDF next to the profile

Pressures are gauge unless marked absolute: 200 bar = 200 bar(g); 150 bar(a), 14.7 psia.
Every reading is saved to the journal the moment you press Save.
"""


class HelpScreen(ModalScreen[None]):
    BINDINGS = [Binding("escape,question_mark,enter", "close", "Close")]

    def compose(self) -> ComposeResult:
        with Vertical(id="dialog", classes="dialog wide"):
            yield Static("Keys", classes="heading")
            yield Static(HELP, markup=True)
            yield Button("Close", id="close")

    def on_button_pressed(self, event: Button.Pressed) -> None:
        self.dismiss(None)

    def action_close(self) -> None:
        self.dismiss(None)


class ConfirmScreen(ModalScreen[bool]):
    BINDINGS = [Binding("y", "yes", "Yes"), Binding("n,escape", "no", "No")]

    def __init__(self, question: str) -> None:
        super().__init__()
        self.question = question

    def compose(self) -> ComposeResult:
        with Vertical(id="dialog", classes="dialog"):
            yield Static(self.question, markup=False)
            with Horizontal(classes="buttons"):
                yield Button("Yes (y)", variant="primary", id="yes")
                yield Button("No (n)", id="no")

    def on_button_pressed(self, event: Button.Pressed) -> None:
        self.dismiss(event.button.id == "yes")

    def action_yes(self) -> None:
        self.dismiss(True)

    def action_no(self) -> None:
        self.dismiss(False)


class _Form(ModalScreen[Any]):
    """A modal form: Enter in a field or the primary button saves, the other button or Escape
    cancels; errors show inline and the typed values stay."""

    BINDINGS = [Binding("escape", "cancel", "Cancel")]
    SAVE_ID = "save"

    def on_input_submitted(self, event: Input.Submitted) -> None:
        self.save()

    def on_button_pressed(self, event: Button.Pressed) -> None:
        if event.button.id == self.SAVE_ID:
            self.save()
        else:
            self.dismiss(None)

    def save(self) -> None:  # pragma: no cover - every form defines it
        raise NotImplementedError

    def action_cancel(self) -> None:
        self.dismiss(None)


class ChangeScreen(_Form):
    """A cylinder change: the supply, the new fill (pressure, or gross weight for a liquefied
    gas), an optional label and retest date. Errors inline; typed values stay."""

    def __init__(self, state: SessionState) -> None:
        super().__init__()
        self.state = state

    def compose(self) -> ComposeResult:
        st = self.state
        assert st.profile is not None
        with Vertical(id="dialog", classes="dialog"):
            yield Static("Cylinder change: the new fill", classes="heading")
            yield Select([(s.id, s.id) for s in st.profile.supplies], value=st.profile.supplies[0].id,
                         allow_blank=False, id="supply", compact=True)
            yield Input(placeholder="new fill: 198 bar, or 75.2 kg gross", id="fill", compact=True)
            yield Input(placeholder="label or serial (optional)", id="label", compact=True)
            yield Input(placeholder="retest due YYYY-MM-DD (optional)", id="retest", compact=True)
            yield Input(value=f"{st.profile.ambient.temperature - T0_K:.1f} degC", id="temperature", compact=True)
            yield Static("", id="error", classes="error")
            with Horizontal(classes="buttons"):
                yield Button("Save", variant="primary", id="save")
                yield Button("Cancel", id="cancel")

    def on_mount(self) -> None:
        self.query_one("#fill", Input).focus()

    def save(self) -> None:
        val = lambda i: self.query_one(f"#{i}", Input).value.strip()  # noqa: E731
        try:
            reading = self.state.parse_reading(str(self.query_one("#supply", Select).value), val("fill"),
                                               val("temperature"), "now")
            retest = None
            if val("retest"):
                try:
                    retest = dt.date.fromisoformat(val("retest"))
                except ValueError:
                    raise InputError(f"retest date {val('retest')!r}: write it as YYYY-MM-DD") from None
        except InputError as exc:
            self.query_one("#error", Static).update(Text(f"✖ {exc}"))
            return
        self.dismiss((reading, val("label") or None, retest))


class StopScreen(_Form):
    """Stopping a session: who ran it, how many shots were fired, a note (all optional)."""

    BINDINGS = [Binding("escape", "cancel", "Keep running")]
    SAVE_ID = "stop"

    def compose(self) -> ComposeResult:
        with Vertical(id="dialog", classes="dialog"):
            yield Static("Stop the session? Its record:", classes="heading")
            yield Input(placeholder="operator (optional)", id="operator", compact=True)
            yield Input(placeholder="shots fired (optional), e.g. 12000", id="shots", compact=True)
            yield Input(placeholder="note (optional)", id="note", compact=True)
            yield Static("", id="error", classes="error")
            with Horizontal(classes="buttons"):
                yield Button("Stop session", variant="error", id="stop")
                yield Button("Keep running", id="cancel")

    def on_mount(self) -> None:
        self.query_one("#operator", Input).focus()

    def save(self) -> None:
        val = lambda i: self.query_one(f"#{i}", Input).value.strip()  # noqa: E731
        shots = None
        if val("shots"):
            if not val("shots").isdigit() or int(val("shots")) > 10**10:
                self.query_one("#error", Static).update(Text("✖ shots fired: a whole number, e.g. 12000"))
                return
            shots = int(val("shots"))
        self.dismiss((val("operator")[:100], shots, val("note")[:1000]))
