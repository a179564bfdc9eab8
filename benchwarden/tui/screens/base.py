"""The base of the tool screens: the session state, Escape goes back, the keys footer."""

from __future__ import annotations

from textual import events
from textual.binding import Binding
from textual.screen import Screen
from textual.widgets import Input

from benchwarden.render.display import profile_display
from benchwarden.render.errors import error_line
from benchwarden.workflows.session import SessionState


def said(exc: BaseException, state: SessionState) -> str:
    """An error as the person reads it: worded by the renderer in the bench's display unit."""
    return error_line(exc, profile_display(state.profile))


class TypeAhead:
    """A screen with fields, opened by a key: the keys typed while it is still opening (after the
    key that opened it, before its first field has the focus) are held by the app, in order,
    and replayed once it has — characters into the field with the focus, Tab and Shift+Tab
    moving the focus in their turn, Enter submitting — so a whole form typed at once (or
    pasted, or scanned) lands field by field."""

    #: the field that has the focus when the screen opens (None: the screen's own choice)
    FIRST_FIELD: str | None = None
    #: False until the first field has the focus; the app holds the keys until then
    typing_ready = False

    def hold_key(self, event: events.Key) -> None:
        self.__dict__.setdefault("_typed_ahead", []).append(event)

    def on_mount(self) -> None:  # Textual calls it besides the subclass's own (it walks the MRO)
        assert isinstance(self, Screen)
        if self.FIRST_FIELD is not None:
            self.set_focus(self.query_one(self.FIRST_FIELD))
        self.typing_ready = True
        pending: list[events.Key] = self.__dict__.pop("_typed_ahead", [])
        for i, event in enumerate(pending):
            target = self.focused
            if event.key in ("tab", "shift+tab"):
                self.focus_next() if event.key == "tab" else self.focus_previous()
            elif isinstance(target, Input) and event.is_printable and event.character:
                target.insert_text_at_cursor(event.character)
            elif isinstance(target, Input) and event.key == "enter":
                target.post_message(Input.Submitted(target, target.value))
            else:  # any other key: as if typed now, then the rest after it
                for later in [events.Key(event.key, event.character)] + pending[i + 1:]:
                    self.app.post_message(events.Key(later.key, later.character))
                return


class ToolScreen(TypeAhead, Screen[None]):
    """A full screen opened from the overview; Escape goes back to it."""

    BINDINGS = [Binding("escape", "app.pop_screen", "Back", tooltip="back to the overview")]

    def __init__(self, state: SessionState) -> None:
        super().__init__()
        self.state = state
