"""The record: the current cylinder's readings (strike a wrong one out), every cylinder of the
supply, the sessions with their operator, shots and notes, and the hold tests."""

from __future__ import annotations

import datetime as dt

from rich.text import Text
from textual.app import ComposeResult
from textual.binding import Binding
from textual.containers import VerticalScroll
from textual.widgets import DataTable, Header, Input, Select, Static

from benchwarden.errors import JournalError
from benchwarden.render.display import Display, cylinder_text, profile_display
from benchwarden.render.findings import SEVERITY_WORD
from benchwarden.render.numbers import fmt_count, fmt_uncertain
from benchwarden.tui.screens.base import ToolScreen, said
from benchwarden.tui.widgets import KeysFooter
from benchwarden.workflows.cylinders import cylinder_lives
from benchwarden.workflows.record import SessionRecord, session_records


class HistoryScreen(ToolScreen):
    """The current cylinder's readings (struck ones marked), the supply's cylinders, past
    sessions and hold tests; a wrong reading is struck out with a reason (kept, never deleted)."""

    BINDINGS = [Binding("escape", "app.pop_screen", "Back", tooltip="back to the overview"),
                Binding("x", "strike", "Strike out", tooltip="strike the selected reading out, with a reason")]

    def compose(self) -> ComposeResult:
        st = self.state
        assert st.profile is not None
        yield Header()
        with VerticalScroll():
            yield Select([(s.id, s.id) for s in st.profile.supplies], value=st.profile.supplies[0].id,
                         allow_blank=False, id="history-supply", compact=True)
            yield Static("Readings on the current cylinder (select one and press x to strike it out)",
                         classes="heading")
            yield DataTable(id="history-readings", cursor_type="row")
            yield Input(placeholder="reason for striking the selected reading out, then Enter", id="strike-reason")
            yield Static("", id="history-result")
            yield Static("Cylinders on this supply", classes="heading")
            yield Static("", id="history-cylinders", markup=False)
            yield Static("Sessions", classes="heading")
            yield Static("", id="history-sessions", markup=False)
            yield Static("Hold tests", classes="heading")
            yield Static("", id="history-holds", markup=False)
        yield KeysFooter()

    def on_mount(self) -> None:
        t = self.query_one("#history-readings", DataTable)
        # every column in view at 80 columns (the time carries its date when not today)
        for label, key, width in (("#", "id", 4), ("Time", "at", 16), ("Reading", "value", 12),
                                  ("Temp.", "t", 8), ("Where", "where", 10), ("Struck out", "struck", 14)):
            t.add_column(label, key=key, width=width)
        self.query_one("#strike-reason", Input).display = False
        self.fill()
        t.focus()

    def on_select_changed(self, event: Select.Changed) -> None:
        self.fill()

    def fill(self) -> None:
        st = self.state
        assert st.profile is not None
        d = profile_display(st.profile)
        now = st.clock()
        sid = str(self.query_one("#history-supply", Select).value)
        t = self.query_one("#history-readings", DataTable)
        t.clear()
        try:
            rows = st.history(sid)
        except JournalError as exc:
            self.query_one("#history-result", Static).update(Text(f"✖ {said(exc, self.state)}"))
            rows = []
        step = st.reading_step(sid)
        for r in rows:
            value = d.gauge(r.pressure_abs_pa, step) if r.pressure_abs_pa is not None else f"{r.weight_kg:g} kg"
            t.add_row(str(r.id), d.clock(r.at, now), value, d.temperature(r.temperature_k),
                      f"session {r.session_id}" if r.session_id else "idle",
                      Text(f"✖ {r.struck_reason}") if r.struck else "", key=str(r.id))
        self._cylinders(sid, d)
        if st.journal is None:
            return
        sessions = [r for r in session_records(st.journal) if r.session.bench == st.profile.bench.name][-8:]
        self.query_one("#history-sessions", Static).update("\n".join(_session_line(s, d, now) for s in sessions)
                                                           or "none yet")
        holds = st.judged_hold_tests()[-8:]
        self.query_one("#history-holds", Static).update("\n".join(
            f"{d.clock(h.row.at, now)}  {h.row.supply_id or '—'}  {h.row.verdict}  "
            f"{fmt_uncertain(h.row.leak_rate_sccm, h.row.leak_rate_uncertainty_sccm, 'sccm')}  "
            f"({h.row.kind or 'manual'})"
            + (f"  ✖ WITHDRAWN: {h.withdrawn_reason}" if h.withdrawn else "")
            + ("  (earlier cylinder)" if h.earlier_cylinder else "") for h in holds) or "none yet")

    def _cylinders(self, sid: str, d: Display) -> None:
        """One line per cylinder, oldest first (wrapped, never cut)."""
        st = self.state
        assert st.profile is not None
        self.query_one("#history-cylinders", Static).update(
            "\n".join(cylinder_text(c, d, st.clock()) for c in cylinder_lives(st.journal, st.profile, sid))
            or "none recorded")

    def action_strike(self) -> None:
        t = self.query_one("#history-readings", DataTable)
        if t.row_count == 0:
            return
        box = self.query_one("#strike-reason", Input)
        box.display = True
        box.focus()

    def on_input_submitted(self, event: Input.Submitted) -> None:
        t = self.query_one("#history-readings", DataTable)
        if event.input.id != "strike-reason" or t.row_count == 0:
            return
        key = t.coordinate_to_cell_key(t.cursor_coordinate).row_key.value
        out = self.query_one("#history-result", Static)
        try:
            self.state.strike(int(str(key)), event.value.strip())
        except (JournalError, ValueError) as exc:
            out.update(Text(f"✖ {said(exc, self.state)}"))
            return
        out.update(Text(f"reading {key} struck out: {event.value.strip()}"))
        event.input.value = ""
        event.input.display = False
        self.fill()
        t.focus()


def _session_line(rec: SessionRecord, d: Display, now: dt.datetime) -> str:
    """``#3  Tue 1 Dec 09:30 → 13:10  4 reading(s) · A. Example · 12 000 shots · note: …`` and
    each STOP accepted at its start."""
    s = rec.session
    stop = d.clock(s.stopped_at, now) if s.stopped_at else "left running"
    parts = [f"#{s.id}  {d.clock(s.started_at, now)} → {stop}  {s.readings} reading(s)",
             s.operator or "operator not recorded",
             f"{fmt_count(s.shots)} shots" if s.shots is not None else "shots not recorded"]
    parts += [f"note: {text}" for _, text in rec.notes]
    parts += [f"accepted {SEVERITY_WORD['stop']} {a.code} ({a.subject})" + (f" by {a.operator}" if a.operator else "")
              + f": {a.reason}" for a in rec.accepted_stops]
    return "  ·  ".join(parts)
