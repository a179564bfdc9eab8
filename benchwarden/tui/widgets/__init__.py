"""Reusable widgets: they show what they are given and post messages; no physics."""

from __future__ import annotations

from typing import TYPE_CHECKING

from textual.app import ComposeResult
from textual.containers import Vertical
from textual.widgets import Footer, Static

from benchwarden.render.display import Display
from benchwarden.render.findings import OK_STYLE, SEVERITY_MARK, SEVERITY_STYLE, describe, where

if TYPE_CHECKING:
    from benchwarden.workflows.findings import Finding


class FindingsPanel(Static):
    """Findings ranked by severity; severity in words and symbols as well as colour."""

    DEFAULT_CSS = """
    FindingsPanel { height: auto; padding: 0 1; }
    """

    #: the findings on screen (codes and severities, for tests and other widgets)
    shown: tuple[Finding, ...] = ()

    def show(self, findings: list[Finding], display: Display | None = None) -> None:
        from rich.text import Text

        self.shown = tuple(findings)
        if not findings:
            self.update(Text("✔ no findings", style=OK_STYLE))
            return
        style = SEVERITY_STYLE
        out = Text()
        for i, f in enumerate(findings):
            if i:
                out.append("\n")
            text, figure = describe(f, display)
            out.append(f"{SEVERITY_MARK[f.severity]:<12}", style=style[f.severity])
            out.append(f" {where(f)}: {text} ")
            out.append(f"[{figure}]", style="bold")
        self.update(out)


def bar(fraction: float, width: int = 10) -> str:
    """A text bar: ``██████░░░░`` for 0.6 (clipped to 0..1)."""
    f = min(1.0, max(0.0, fraction)) if fraction == fraction else 0.0
    n = round(f * width)
    return "█" * n + "░" * (width - n)


def field(label: str, input_id: str, value: str = "", placeholder: str = "") -> Vertical:
    """One form field: its label above its input, so a filled input keeps its label in view.
    The label wraps rather than being cut."""
    from textual.widgets import Input, Label

    return Vertical(Label(label, classes="field-label", markup=False),
                    Input(value=value, placeholder=placeholder, id=input_id, compact=True), classes="field")


#: Keys the footer shows first, whatever the screen: help and quit are always in view.
FIRST_KEYS = ("question_mark", "f1", "q", "ctrl+q")


class KeysFooter(Footer):
    """The footer: help and quit first, then the screen's own keys for as long as each one fits
    whole in the window (every key, fitting or not, is listed by ``?``)."""

    def compose(self) -> ComposeResult:
        from textual.widgets._footer import FooterKey

        if not self._bindings_ready:
            return
        shown = [ab for ab in self.screen.active_bindings.values() if ab.binding.show]
        shown.sort(key=lambda ab: (ab.binding.key not in FIRST_KEYS, FIRST_KEYS.index(ab.binding.key)
                                   if ab.binding.key in FIRST_KEYS else 0))
        self._composed_for = self.app.size.width
        room = self._composed_for - 1
        seen: set[str] = set()
        keys = []
        for ab in shown:
            b = ab.binding
            if b.action in seen:
                continue
            need = footer_width(self.app.get_key_display(b), b.description)
            if need > room:
                break
            room -= need
            seen.add(b.action)
            keys.append(ab)
        self.styles.grid_size_columns = max(1, len(keys))
        for ab in keys:
            b = ab.binding
            yield FooterKey(b.key, self.app.get_key_display(b), b.description, b.action, disabled=not ab.enabled,
                            tooltip=ab.tooltip or b.description).data_bind(compact=Footer.compact)


    _composed_for = 0

    def on_resize(self) -> None:
        """A resized terminal: the keys that fit are chosen again."""
        if self._bindings_ready and self.app.size.width != self._composed_for:
            self.call_after_refresh(self.recompose)


def footer_width(key_display: str, description: str) -> int:
    """Columns one footer key takes: its key and description, each padded by one column."""
    from rich.cells import cell_len

    return cell_len(key_display) + cell_len(description) + 3
