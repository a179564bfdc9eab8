"""The overview's actions that open a dialog or a tool: starting a session (over accepted STOPs)
and stopping it, a reading and a cylinder change, and the tool screens. :class:`OverviewScreen` shows the figures."""

from __future__ import annotations

import datetime as dt

from textual.screen import Screen

from benchwarden.errors import BenchwardenError, JournalError
from benchwarden.render.display import Display
from benchwarden.render.errors import error_line
from benchwarden.render.findings import describe, question_text
from benchwarden.workflows.session import Reading, SessionState


class OverviewActions(Screen[None]):
    """Actions of the overview (the base of :class:`benchwarden.tui.screens.overview.OverviewScreen`)."""

    state: SessionState
    cautions_shown: bool

    @property
    def units(self) -> Display:  # pragma: no cover - the overview defines it
        raise NotImplementedError

    def refresh_view(self) -> None:  # pragma: no cover - the overview defines it
        raise NotImplementedError

    def load_plan(self) -> object:  # pragma: no cover - the overview defines it (a worker)
        raise NotImplementedError

    def action_toggle_session(self) -> None:
        from benchwarden.tui.screens.modals import StopScreen

        st = self.state
        if st.plan is None:
            return
        if st.running:
            self.app.push_screen(StopScreen(), self._stop_answered)
            return
        stops = st.standing_stops()
        if stops:
            from benchwarden.tui.screens.accept import AcceptStopsScreen

            words = [describe(f, self.units)[0] for f in stops]
            self.app.push_screen(AcceptStopsScreen(words), self._stops_answered)
            return
        self._start()

    def _stops_answered(self, answer: tuple[str, str] | None) -> None:
        if answer is None:
            self.notify("Session not started: STOP findings stand", title="Session", severity="warning")
            return
        self._start(*answer)

    def _start(self, operator: str | None = None, reason: str | None = None) -> None:
        st = self.state
        try:
            st.start(lambda f: describe(f, self.units)[0], operator, reason)
            self.notify(f"Session #{st.session_id} started" + (" over accepted STOP findings" if reason else ""),
                        title="Session", severity="warning" if reason else "information")
            if not self.cautions_shown:
                self.cautions_shown = True
                self.app.call_later(self.app.run_action, "cautions")
        except JournalError as exc:
            self.notify(str(exc), title="Journal", severity="error", timeout=10)
        self.refresh_view()

    def _stop_answered(self, record: tuple[str, int | None, str] | None) -> None:
        if record is None:
            return
        st = self.state
        try:
            st.record_session(*record)
            st.stop()
            self.notify("Session stopped and saved", title="Session")
        except JournalError as exc:
            self.notify(str(exc), title="Journal", severity="error", timeout=10)
        self.refresh_view()

    # -- a reading, a cylinder change

    def action_reading(self) -> None:
        from benchwarden.tui.screens.modals import ReadingScreen

        if self.state.plan is None:
            return
        self.app.push_screen(ReadingScreen(self.state), self._reading_entered)

    def _reading_entered(self, reading: Reading | None) -> None:
        from benchwarden.tui.screens.modals import ConfirmScreen

        if reading is None:
            return
        try:
            questions = self.state.questions(reading)
        except BenchwardenError as exc:
            self.notify(error_line(exc, self.units), severity="error", markup=False)
            return
        if questions:
            text = "; ".join(question_text(q, self.units) for q in questions)
            self.app.push_screen(ConfirmScreen(f"{text}. Record this reading anyway?"),
                                 lambda yes: self._save_reading(reading) if yes else None)
            return
        self._save_reading(reading)

    def _save_reading(self, reading: Reading) -> None:
        try:
            st = self.state
            st.add_reading(reading)
            where = ("in the session" if st.in_session(reading) else
                     "as an idle reading (before the session started)" if st.running else "as an idle reading")
            self.notify(f"{reading.supply_id} {reading.pressure_text} at {Display.clock(reading.at, st.clock())} "
                        f"saved {where}", timeout=4, markup=False)
        except JournalError as exc:
            self.notify(f"{exc}. The reading is kept on screen, marked unsaved, and retried.", title="Journal",
                        severity="error", timeout=15, markup=False)
        except BenchwardenError as exc:
            self.notify(error_line(exc, self.units), severity="error", markup=False)
            return
        self.load_plan()

    def action_change(self) -> None:
        from benchwarden.tui.screens.modals import ChangeScreen

        if self.state.plan is not None:
            self.app.push_screen(ChangeScreen(self.state), self._changed)

    def _changed(self, answer: tuple[Reading, str | None, dt.date | None] | None) -> None:
        from benchwarden.tui.screens.modals import ConfirmScreen

        if answer is None:
            return
        reading, label, retest = answer
        try:
            self.state.change_cylinder(reading, label, retest)
        except BenchwardenError as exc:
            self.notify(error_line(exc, self.units), title="Cylinder change", severity="error", timeout=10, markup=False)
            return
        self.load_plan()
        self.app.push_screen(ConfirmScreen(f"New cylinder on {reading.supply_id} recorded. Check the new "
                                           "connection for leaks now with a hold test? (Then purge the line "
                                           "of air with p.)"),
                             lambda yes: self.action_hold() if yes else None)

    # -- the tools

    def action_purge(self) -> None:
        from benchwarden.tui.screens.tools import PurgeScreen

        if self.state.plan is not None:
            self.app.push_screen(PurgeScreen(self.state))

    def action_history(self) -> None:
        from benchwarden.tui.screens.tools import HistoryScreen

        if self.state.plan is not None:
            self.app.push_screen(HistoryScreen(self.state))

    def action_graph(self) -> None:
        from benchwarden.tui.screens.tools import GraphScreen

        if self.state.plan is not None:
            self.app.push_screen(GraphScreen(self.state, self.units))

    def action_hold(self) -> None:
        from benchwarden.tui.screens.tools import HoldScreen

        if self.state.plan is not None:
            self.app.push_screen(HoldScreen(self.state))

    def action_oxygen(self) -> None:
        from benchwarden.tui.screens.tools import RoomScreen

        if self.state.plan is not None:
            self.app.push_screen(RoomScreen(self.state))

    def action_checklist(self) -> None:
        from benchwarden.tui.screens.tools import ChecklistScreen

        if self.state.plan is not None:
            self.app.push_screen(ChecklistScreen(self.state))
