"""The lab screen: every bench of the lab, read-only (``benchwarden lab open URL``)."""

from __future__ import annotations

import datetime as dt
import math

from rich.text import Text
from textual import work
from textual.app import App, ComposeResult
from textual.binding import Binding
from textual.containers import VerticalScroll
from textual.widgets import DataTable, Footer, Header, Static

from benchwarden.errors import BenchwardenError
from benchwarden.render.display import Display
from benchwarden.render.findings import SEVERITY_MARK
from benchwarden.tui.widgets import FindingsPanel
from benchwarden.workflows.lab import LabView, lab_view

#: The lab screen reads the database again this often [s].
REFRESH_S = 60.0


class LabApp(App[int]):
    """Every bench of a lab: supplies, leaks, what to order, findings. Reads only."""

    TITLE = "benchwarden — lab"
    ENABLE_COMMAND_PALETTE = False
    CSS = """
    #lab-status { height: 1; padding: 0 1; background: $boost; text-style: bold; }
    #lab-status.stop { background: $error; color: $text; }
    #lab-body { padding: 0 1; }
    .heading { text-style: bold; color: $accent; margin-top: 1; }
    #lab-supplies { height: auto; }
    """
    BINDINGS = [Binding("r", "refresh_lab", "Refresh"), Binding("q", "quit", "Quit")]

    def __init__(self, url: str, today: dt.date | None = None) -> None:
        super().__init__()
        self.url = url
        self.today = today
        self.view: LabView | None = None

    def compose(self) -> ComposeResult:
        yield Header()
        yield Static("Reading the lab database…", id="lab-status")
        with VerticalScroll(id="lab-body"):
            yield Static("Supplies", classes="heading")
            yield DataTable(id="lab-supplies", cursor_type="row", zebra_stripes=True)
            yield Static("To order", classes="heading")
            yield Static("", id="lab-orders")
            yield Static("Findings", classes="heading")
            yield FindingsPanel(id="lab-findings")
        yield Footer()

    def on_mount(self) -> None:
        t = self.query_one("#lab-supplies", DataTable)
        for label, width in (("Bench", 10), ("Supply", 8), ("Gas", 10), ("Pressure", 12), ("To reserve", 12),
                             ("Order by", 10), ("Leak", 12), ("Snapshot", 12)):
            t.add_column(label, width=width)
        self.load()
        self.set_interval(REFRESH_S, self.load)

    def action_refresh_lab(self) -> None:
        self.load()

    @work(thread=True, exclusive=True)
    def load(self) -> None:
        try:
            v = lab_view(self.url, self.today or dt.date.today())
        except BenchwardenError as exc:
            self.call_from_thread(self._error, str(exc))
            return
        self.call_from_thread(self.show, v)

    def _error(self, msg: str) -> None:
        self.query_one("#lab-status", Static).update(Text(f"✖ {msg}"))

    def show(self, v: LabView) -> None:
        self.view = v
        d = Display()
        t = self.query_one("#lab-supplies", DataTable)
        t.clear()
        for b in v.benches:
            age = b["snapshot_age_s"]
            when = d.ago(age / 86400.0) if age is not None else "never"
            if not b["supplies"]:
                t.add_row(b["bench_id"], "—", "", "", "", "", "", when)
            for s in b["supplies"]:
                p = s["pressure_gauge_pa"]
                ttr = s["time_to_reserve_s"]
                t.add_row(b["bench_id"], s["id"], str(s["gas"])[:10],
                          d.gauge(p + d.ambient_pa) if p is not None else "—",
                          d.hours(ttr / 3600.0) if ttr is not None and math.isfinite(ttr) else "—",
                          s["order_by"] or "—", s["leak_verdict"] or "—", when)
        self.query_one("#lab-orders", Static).update(
            "\n".join(f"{o['gas']}: {o['cylinders']} cylinder(s) by {o['by']} ({', '.join(o['supplies'])})"
                      for o in v.orders) or "nothing within two weeks")
        self.query_one("#lab-findings", FindingsPanel).show(v.findings, d)
        stops = sum(1 for f in v.findings if f.severity == "stop")
        status = self.query_one("#lab-status", Static)
        status.update(Text((f"{SEVERITY_MARK['stop']} ({stops})  " if stops else "") + f"{len(v.benches)} bench(es) — "
                           f"read {dt.datetime.now().astimezone():%H:%M}; r refreshes"))
        status.set_class(bool(stops), "stop")


def make_lab_app(url: str, today: dt.date | None = None) -> LabApp:
    """The lab screen as ``lab open`` runs it (tests build it the same way)."""
    return LabApp(url, today)
