"""Modal screens: reading entry, cautions, help, yes/no."""

from __future__ import annotations

import datetime as dt
from typing import Any

from rich.text import Text
from textual.app import ComposeResult
from textual.binding import Binding
from textual.containers import Horizontal, Vertical, VerticalScroll
from textual.screen import ModalScreen, Screen
from textual.widgets import Button, Input, Label, Select, Static

from benchwarden.errors import InputError
from benchwarden.tui.screens.base import TypeAhead, said
from benchwarden.tui.widgets import field
from benchwarden.units.constants import T0_K
from benchwarden.workflows.computations import DEFER, ESTIMATES, GENERAL, gas_cautions
from benchwarden.workflows.session import Reading, SessionState


class ReadingScreen(TypeAhead, ModalScreen[Reading | None]):
    """Enter a gauge reading: supply, pressure, temperature (prefilled), time (now by default).
    A wrong entry is shown inline and the typed values stay."""

    FIRST_FIELD = "#pressure"

    BINDINGS = [Binding("escape", "cancel", "Cancel")]

    def __init__(self, state: SessionState) -> None:
        super().__init__()
        self.state = state

    def compose(self) -> ComposeResult:
        st = self.state
        assert st.profile is not None
        first = st.profile.supplies[0].id
        with VerticalScroll(id="dialog", classes="dialog"):
            yield Static("New reading", classes="heading")
            yield Label("Supply", classes="field-label")
            yield Select([(s.id, s.id) for s in st.profile.supplies], value=first, allow_blank=False, id="supply",
                         compact=True)
            yield field("Gauge pressure (142 bar, 2060 psi; bar(a) absolute) or gross weight (74.1 kg)", "pressure",
                        placeholder="142 bar")
            yield field("Cylinder temperature", "temperature", self._last_temperature(first))
            yield field("Time: now, 18:05 (its latest past one), yesterday 18:05, 2026-12-01 09:30", "time", "now")
            yield Static("", id="error", classes="error")
            with Horizontal(classes="buttons"):
                yield Button("Save", variant="primary", id="save", compact=True)
                yield Button("Cancel", id="cancel", compact=True)

    def _last_temperature(self, supply_id: str) -> str:
        st = self.state
        last = st.last_reading(supply_id)
        if last is not None:
            return f"{last.temperature_k - T0_K:.1f} degC"
        assert st.plan is not None
        sp = next(s for s in st.plan.supplies if s.id == supply_id)
        return f"{sp.temperature_k - T0_K:.1f} degC"

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
            self.query_one("#error", Static).update(Text(f"✖ {said(exc, self.state)}"))
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


#: What the help says beyond the keys.
HELP_NOTES = """\
Pressures are gauge unless marked absolute: 200 bar = 200 bar(g); 150 bar(a), 14.7 psia.
Times: now, HH:MM (its latest past occurrence), yesterday 18:00, or 2026-12-01 09:30.
Every reading is saved to the journal the moment you press Save."""


def key_lines(screen: Screen[Any]) -> list[tuple[str, str]]:
    """Every key of a screen and of the app, with what it does: (key as shown, description).
    A key the app takes first (priority) is listed once, as the app's; the terminal's copy keys
    are left out."""
    app = screen.app

    def bindings(node: Any) -> list[Any]:
        return [b for bs in node._bindings.key_to_bindings.values() for b in bs
                if not b.system and not b.action.endswith("copy_text")]

    app_first = {b.key for b in bindings(app) if b.priority}
    out: list[tuple[str, str]] = []
    seen: set[str] = set()
    for b in [b for b in bindings(screen) if b.key not in app_first] + bindings(app):
        if b.key in seen:
            continue
        seen.add(b.key)
        out.append((app.get_key_display(b), b.tooltip or b.description or b.action))
    return out


class HelpScreen(ModalScreen[None]):
    """Every key of the screen it was opened from (and the app's), generated from the bindings."""

    BINDINGS = [Binding("escape,question_mark,enter", "close", "Close")]

    def __init__(self, under: Screen[Any] | None = None) -> None:
        super().__init__()
        self.under = under

    def lines(self) -> list[tuple[str, str]]:
        return key_lines(self.under) if self.under is not None else []

    def compose(self) -> ComposeResult:
        name = getattr(self.under, "TITLE_WORDS", None) or type(self.under).__name__.removesuffix("Screen")
        width = max((len(k) for k, _ in self.lines()), default=1)
        text = "\n".join(f"  {k:<{width}}  {d}" for k, d in self.lines())
        with VerticalScroll(id="dialog", classes="dialog wide"):
            yield Static(f"Keys: {name}", classes="heading", markup=False)
            yield Static(text, id="help-keys", markup=False)
            yield Static(HELP_NOTES, markup=False)
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


class _Form(TypeAhead, ModalScreen[Any]):
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

    FIRST_FIELD = "#fill"

    def __init__(self, state: SessionState) -> None:
        super().__init__()
        self.state = state

    def compose(self) -> ComposeResult:
        st = self.state
        assert st.profile is not None
        with VerticalScroll(id="dialog", classes="dialog"):
            yield Static("Cylinder change: the new fill", classes="heading")
            yield Label("Supply", classes="field-label")
            yield Select([(s.id, s.id) for s in st.profile.supplies], value=st.profile.supplies[0].id,
                         allow_blank=False, id="supply", compact=True)
            yield field("New fill: gauge pressure, or gross weight for CO2/SF6", "fill",
                        placeholder="198 bar, or 75.2 kg gross")
            yield field("Label or serial (optional)", "label", placeholder="N2-0417")
            yield field("Retest due, YYYY-MM-DD (optional)", "retest", placeholder="2031-05-01")
            yield field("Cylinder temperature", "temperature", f"{st.profile.ambient.temperature - T0_K:.1f} degC")
            yield Static("", id="error", classes="error")
            with Horizontal(classes="buttons"):
                yield Button("Save", variant="primary", id="save", compact=True)
                yield Button("Cancel", id="cancel", compact=True)

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
            self.query_one("#error", Static).update(Text(f"✖ {said(exc, self.state)}"))
            return
        self.dismiss((reading, val("label") or None, retest))


class StopScreen(_Form):
    """Stopping a session: who ran it, how many shots were fired, a note (all optional)."""

    FIRST_FIELD = "#operator"

    BINDINGS = [Binding("escape", "cancel", "Keep running")]
    SAVE_ID = "stop"

    def compose(self) -> ComposeResult:
        with VerticalScroll(id="dialog", classes="dialog"):
            yield Static("Stop the session? Its record:", classes="heading")
            yield field("Operator (optional)", "operator", placeholder="A. Example")
            yield field("Shots fired (optional, a whole number)", "shots", placeholder="12000")
            yield field("Note (optional)", "note", placeholder="what happened, what to remember")
            yield Static("", id="error", classes="error")
            with Horizontal(classes="buttons"):
                yield Button("Stop session", variant="error", id="stop", compact=True)
                yield Button("Keep running", id="cancel", compact=True)

    def save(self) -> None:
        val = lambda i: self.query_one(f"#{i}", Input).value.strip()  # noqa: E731
        shots = None
        if val("shots"):
            if not val("shots").isdigit() or int(val("shots")) > 10**10:
                self.query_one("#error", Static).update(Text("✖ shots fired: a whole number, e.g. 12000"))
                return
            shots = int(val("shots"))
        self.dismiss((val("operator")[:100], shots, val("note")[:1000]))
