"""Starting a session over standing STOP findings: each STOP named, who accepts and why."""

from __future__ import annotations

from rich.text import Text
from textual.app import ComposeResult
from textual.binding import Binding
from textual.containers import Horizontal, Vertical, VerticalScroll
from textual.screen import ModalScreen
from textual.widgets import Button, Input, Label, Static

from benchwarden.render.findings import SEVERITY_MARK
from benchwarden.tui.screens.base import TypeAhead


class AcceptStopsScreen(TypeAhead, ModalScreen[tuple[str, str] | None]):
    """Lists every STOP that stands; the session starts only when a person gives their name and
    the reason they accept them (both recorded in the journal). Escape: do not start. The name
    and reason typed right after ``s``, before the form is open, land in their fields."""

    FIRST_FIELD = "#operator"
    BINDINGS = [Binding("escape", "cancel", "Do not start")]

    def __init__(self, stops: list[str]) -> None:
        super().__init__()
        self.stops = stops

    def compose(self) -> ComposeResult:
        with Vertical(id="dialog", classes="dialog wide"):
            yield Static(Text(f"{SEVERITY_MARK['stop']}: {len(self.stops)} finding(s) stand", style="bold"),
                         classes="heading stop")
            with VerticalScroll(id="stops"):
                for words in self.stops:
                    yield Static(Text(f"✖ {words}"), classes="stop-item")
            yield Static("Fix them first. To start anyway, say who accepts them and why; both go into the "
                         "journal with each STOP.")
            yield Label("Your name")
            yield Input(placeholder="who accepts", id="operator", compact=True)
            yield Label("Why it is safe to start")
            yield Input(placeholder="reason (required)", id="reason", compact=True)
            yield Static("", id="error", classes="error")
            with Horizontal(classes="buttons"):
                yield Button("Accept and start", variant="error", id="accept")
                yield Button("Do not start", variant="primary", id="cancel")

    def on_input_submitted(self, event: Input.Submitted) -> None:
        if event.input.id == "operator":
            self.query_one("#reason", Input).focus()
        else:
            self._accept()

    def on_button_pressed(self, event: Button.Pressed) -> None:
        if event.button.id == "accept":
            self._accept()
        else:
            self.dismiss(None)

    def _accept(self) -> None:
        operator = self.query_one("#operator", Input).value.strip()
        reason = self.query_one("#reason", Input).value.strip()
        if not operator or not reason:
            self.query_one("#error", Static).update(Text("✖ give your name and the reason to accept the STOPs"))
            return
        self.dismiss((operator, reason))

    def action_cancel(self) -> None:
        self.dismiss(None)
