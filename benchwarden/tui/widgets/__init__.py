"""Reusable widgets: they show what they are given and post messages; no physics."""

from __future__ import annotations

from textual.widgets import Static

from benchwarden.render.display import Display
from benchwarden.render.findings import SEVERITY_MARK, describe
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
            self.update(Text("✔ no findings", style="green"))
            return
        style = {"stop": "bold red", "warning": "dark_orange", "attention": "yellow", "info": "dim"}
        out = Text()
        for i, f in enumerate(findings):
            if i:
                out.append("\n")
            text, figure = describe(f, display)
            out.append(f"{SEVERITY_MARK[f.severity]:<12}", style=style[f.severity])
            out.append(f" {f.subject}: {text} ")
            out.append(f"[{figure}]", style="bold")
        self.update(out)


def bar(fraction: float, width: int = 10) -> str:
    """A text bar: ``██████░░░░`` for 0.6 (clipped to 0..1)."""
    f = min(1.0, max(0.0, fraction)) if fraction == fraction else 0.0
    n = round(f * width)
    return "█" * n + "░" * (width - n)
