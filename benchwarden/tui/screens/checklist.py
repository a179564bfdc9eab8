"""The checklist preview, and its export to HTML and PDF."""

from __future__ import annotations

import os
import re
from pathlib import Path

from textual import work
from textual.app import ComposeResult
from textual.binding import Binding
from textual.containers import VerticalScroll
from textual.widgets import Header, Static

from benchwarden.errors import BenchwardenError
from benchwarden.tui.screens.base import ToolScreen
from benchwarden.tui.widgets import KeysFooter


class ChecklistScreen(ToolScreen):
    BINDINGS = [Binding("e", "export", "Export",
                        tooltip="export HTML and PDF next to the profile (for the demo: the current folder)")]

    def compose(self) -> ComposeResult:
        yield Header()
        with VerticalScroll():
            yield Static("Building the checklist…", id="checklist-text", markup=False)
        yield KeysFooter()

    def on_mount(self) -> None:
        self.checklist = self._build()
        from benchwarden.render.checklist.render import render_text

        # wrapped once, to the window (not pre-wrapped for paper and wrapped again)
        self.query_one("#checklist-text", Static).update(render_text(self.checklist, width=max(40, self.size.width - 4)))

    def _build(self):  # type: ignore[no-untyped-def]
        from benchwarden.render.checklist import build_checklist
        from benchwarden.render.display import profile_display

        st = self.state
        assert st.profile is not None and st.plan is not None
        return build_checklist(st.profile, st.assessment(), st.profile_path.parent, now=st.clock(),
                               display=profile_display(st.profile))

    def action_export(self) -> None:
        self.export()

    @work(thread=True, exclusive=True)
    def export(self, folder: Path | None = None) -> None:
        from benchwarden.render.checklist.render import render_html, render_pdf
        from benchwarden.render.files import write_output

        st = self.state
        slug = re.sub(r"[^A-Za-z0-9]+", "-", self.checklist.bench).strip("-").lower()[:40] or "bench"
        stamp = st.clock().strftime("%Y%m%d-%H%M%S")
        if folder is None:  # next to the profile; for the bundled demo, the current folder
            from benchwarden.workflows.computations import demo_profile_path

            folder = st.profile_path.resolve().parent
            if st.profile_path.resolve() == demo_profile_path().resolve() or not os.access(folder, os.W_OK):
                folder = Path.cwd()
        base = folder / f"checklist-{slug}-{stamp}"
        n = 2
        while base.with_suffix(".html").exists() or base.with_suffix(".pdf").exists():  # never overwrite
            base = folder / f"checklist-{slug}-{stamp}-{n}"
            n += 1
        try:
            write_output(base.with_suffix(".html"), render_html(self.checklist))
            write_output(base.with_suffix(".pdf"), lambda tmp: render_pdf(self.checklist, tmp))
        except (OSError, BenchwardenError) as exc:
            self.app.call_from_thread(self.notify, f"export failed: {exc}", severity="error", timeout=10)
            return
        self.last_export = base
        self.app.call_from_thread(self.notify, f"written {base}.html and {base}.pdf", title="Checklist exported",
                                  timeout=10)
