"""The Textual app: ``make_app`` builds it exactly as the command line runs it."""

from __future__ import annotations

import datetime as dt
from collections.abc import Callable
from pathlib import Path
from typing import Any

from textual import events
from textual.app import App
from textual.binding import Binding
from textual.screen import Screen

from benchwarden.workflows.session import SessionState, now_local


class BenchwardenApp(App[int]):
    """benchwarden: the bench overview and its tools."""

    CSS_PATH = "benchwarden.tcss"
    TITLE = "benchwarden"
    HORIZONTAL_BREAKPOINTS = [(0, "-narrow"), (120, "-wide")]
    ENABLE_COMMAND_PALETTE = False
    BINDINGS = [
        # priority: focus moves the moment Tab is read, so the keys typed right after it (a
        # paste, a scanner, a quick typist) land in the next field, not in the one being left
        Binding("tab", "focus_next", "Next field", show=False, priority=True, tooltip="next field or button"),
        Binding("shift+tab", "focus_previous", "Previous field", show=False, priority=True,
                tooltip="previous field or button"),
        Binding("c", "cautions", "Cautions", tooltip="cautions for this bench"),  # not priority: a field keeps "c"
        Binding("question_mark", "help", "Help", key_display="?", tooltip="every key of this screen"),
        Binding("q", "quit", "Quit", tooltip="quit (asks while a session runs or a reading is unsaved)"),
        # the same two while typing in a field, where ? and q are text
        Binding("f1", "help", "Help", tooltip="every key of this screen (also while typing)", priority=True),
        Binding("ctrl+q", "quit", "Quit", key_display="^q", tooltip="quit (also while typing)", priority=True),
    ]

    def __init__(self, state: SessionState) -> None:
        super().__init__()
        self.state = state

    def get_default_screen(self) -> Screen[Any]:
        """The overview is the app's first screen: drawn once, not after a blank default screen."""
        from benchwarden.tui.screens.overview import OverviewScreen

        return OverviewScreen(self.state)

    async def on_event(self, event: events.Event) -> None:
        """Keys read while a form is still opening are held for it, in order (see TypeAhead)."""
        from benchwarden.tui.screens.base import TypeAhead

        if isinstance(event, events.Key):
            if not self._screen_stack:
                return  # closing: no screen takes keys any more
            screen = self.screen
            if isinstance(screen, TypeAhead) and not screen.typing_ready:
                screen.hold_key(event)
                return
        await super().on_event(event)

    def action_cautions(self) -> None:
        from benchwarden.tui.screens.modals import CautionsScreen

        if not isinstance(self.screen, CautionsScreen):
            self.push_screen(CautionsScreen(self.state))

    def notify(self, message: str, **kwargs: Any) -> None:  # type: ignore[override]
        """Notifications are plain text: a typed "[/]" or "[@click=...]" is shown, never run."""
        kwargs["markup"] = False
        super().notify(message, **kwargs)

    async def action_quit(self) -> None:
        """Quit, asking first while a session runs or readings are not saved yet."""
        from benchwarden.tui.screens.modals import ConfirmScreen

        st = self.state
        if st.unsaved:
            st.retry_unsaved()
        worries = []
        if st.running:
            worries.append(f"session #{st.session_id} is running (it stays open and is offered again next time)")
        if st.unsaved:
            worries.append(f"{len(st.unsaved)} reading(s) are NOT saved to the journal and will be lost")
        if not worries:
            self.exit(0)
            return
        if isinstance(self.screen, ConfirmScreen):
            return
        self.push_screen(ConfirmScreen("Quit? " + "; ".join(worries) + "."),
                         lambda yes: self.exit(0) if yes else None)

    def action_help(self) -> None:
        from benchwarden.tui.screens.modals import HelpScreen

        if not isinstance(self.screen, HelpScreen):
            self.push_screen(HelpScreen(self.screen))


def make_app(profile_path: str | Path | None = None, journal_path: str | Path | None = None,
             clock: Callable[[], dt.datetime] = now_local) -> BenchwardenApp:
    """Build the app for a profile (default: the bundled demo bench) and a journal file
    (default: ``$BENCHWARDEN_JOURNAL`` or the user data directory)."""
    from benchwarden.workflows.computations import demo_profile_path, open_journal

    path = Path(profile_path) if profile_path else demo_profile_path()
    journal = open_journal(journal_path)
    return BenchwardenApp(SessionState(path, journal, clock))


def run_app(profile_path: str | None, journal_path: str | None) -> int:
    import os

    from benchwarden.errors import InputError

    if os.environ.get("TERM", "") in ("dumb", "unknown"):
        raise InputError("the app needs a full-screen terminal (TERM is 'dumb'); use the commands instead, "
                         "e.g. 'benchwarden status PROFILE'")
    app = make_app(profile_path, journal_path)  # a damaged or foreign journal: one line, before the screen
    if profile_path and app.state.first_view() is None:
        # a bad profile is a one-line error before the screen opens (a profile whose exact text
        # was validated before, by this version, is validated again after the first frame)
        try:
            app.state.load(plan=False)
        except BaseException:
            if app.state.journal is not None:
                app.state.journal.close()
            raise
    app.run()
    app.state.stop_watching()  # the live gauges' connections and serial ports are let go
    if app.state.shipper is not None:
        app.state.shipper.join()  # a push in flight finishes (or times out) before the journal closes
    if app.state.journal is not None:
        app.state.journal.close()
    return app.return_code or 0
