"""The base of the tool screens: the session state, Escape goes back, the keys footer."""

from __future__ import annotations

from textual.binding import Binding
from textual.screen import Screen

from benchwarden.workflows.session import SessionState


class ToolScreen(Screen[None]):
    """A full screen opened from the overview; Escape goes back to it."""

    BINDINGS = [Binding("escape", "app.pop_screen", "Back", tooltip="back to the overview")]

    def __init__(self, state: SessionState) -> None:
        super().__init__()
        self.state = state
