"""One source of truth: the plan, the checklist JSON, the app's findings panel and the command
line give the same finding codes and severities for the same bench; the same hold test stores
the same record whether typed in the app or on the command line; --pressure-unit reaches every
pressure a command prints."""

from __future__ import annotations

import json
import re
import sqlite3
from pathlib import Path

import pytest

from benchwarden.cli import main
from benchwarden.render.findings import TEMPLATES
from benchwarden.tui.app import make_app
from benchwarden.tui.widgets import FindingsPanel

ROOT = Path(__file__).resolve().parents[1]
DEMO = (ROOT / "profiles" / "demo-teaching-bench.toml").read_text()

#: bench states → (edits to the demo profile, a finding code that must appear)
STATES = {
    "reserve-before-end": ({'reading = "64 bar"': 'reading = "22 bar"'}, "reserve-before-end"),
    "near-empty": ({'reading = "64 bar"': 'reading = "15.5 bar"'}, "reserve-before-end"),
    "low-room-oxygen": ({'volume = "48 m3"': 'volume = "8 m3"'}, "room-release"),
    "hot-day-rating": ({'inlet_rating = "230 bar"': 'inlet_rating = "66 bar"'}, "inlet-rating-hot"),
    "flashover-margin": ({}, "flashover"),
    "leak": ({}, "hold-test-leak"),
    # issue 25 item 1: fuel at a spark — the demo's gaps fed with hydrogen
    "fuel-at-spark": ({'gas = "nitrogen"': 'gas = "hydrogen"'}, "gap-fuel"),
}


def _bench(tmp_path: Path, state: str) -> tuple[Path, Path]:
    edits, _ = STATES[state]
    text = DEMO
    for a, b in edits.items():
        assert a in text
        text = text.replace(a, b)
    prof = tmp_path / f"{state}.toml"
    prof.write_text(text)
    journal = tmp_path / "journal.sqlite3"
    from benchwarden.storage.journal import Journal

    Journal(journal).close()
    if state == "leak":
        # a hold test that finds a leak, filed under the bench
        assert main(["hold", "--gas", "nitrogen", "--volume", "50 L", "--start", "150 bar", "--end", "140 bar",
                     "--duration", "12 h", "--t-start", "20 degC", "--t-end", "20 degC", "--gauge-range",
                     "250 bar", "--gauge-class", "0.25", "--bench", "Demo: Larkfield teaching lab, bench 2 (N2 laser)",
                     "--supply", "n2-A", "--journal", str(journal), "--json"]) == 0
    return prof, journal


def _codes(findings) -> set[tuple[str, str, str]]:
    return {(f["code"], f["severity"], f["subject"]) for f in findings}


@pytest.mark.parametrize("state", sorted(STATES))
async def test_plan_checklist_app_and_cli_agree(state, tmp_path, capsys):
    prof, journal = _bench(tmp_path, state)
    capsys.readouterr()
    assert main(["plan", str(prof), "--json", "--journal", str(journal)]) == 0
    plan = json.loads(capsys.readouterr().out)
    from_plan = _codes(plan["findings"])
    assert STATES[state][1] in {c for c, _, _ in from_plan}

    # the checklist: every item that names a finding carries that finding's severity
    assert main(["checklist", str(prof), "--format", "json", "--journal", str(journal)]) == 0
    cl = json.loads(capsys.readouterr().out)
    by_code = {(c, s) for c, s, _ in from_plan}
    for sec in cl["sections"]:
        for it in sec["items"]:
            if it["code"] and it["id"] != "open-findings":
                assert (it["code"], it["status"]) in by_code, it
    assert cl["finding_counts"] == {k: plan["finding_counts"][k] for k in ("stop", "warning", "attention")}

    # the text plan prints every finding with its severity word
    assert main(["plan", str(prof), "--journal", str(journal)]) == 0
    text = capsys.readouterr().out
    for f in plan["findings"]:
        assert f"{ {'stop': 'STOP', 'warning': 'WARNING', 'attention': 'ATTENTION', 'info': 'INFO'}[f['severity']] }".strip() in text

    # the app's findings panel
    app = make_app(prof, journal)
    async with app.run_test(size=(120, 40)) as pilot:
        await pilot.pause()
        await app.workers.wait_for_complete()
        await pilot.pause()
        panel = app.screen.query_one("#findings", FindingsPanel)
        in_app = {(f.code, f.severity, f.subject) for f in panel.shown}
    assert in_app == from_plan


def test_every_finding_code_has_words():
    src = (ROOT / "benchwarden" / "workflows" / "findings.py").read_text()
    room_src = (ROOT / "benchwarden" / "workflows" / "findings_room.py").read_text()
    codes = set(re.findall(r'Finding\("([a-z0-9-]+)"', src)) | set(re.findall(r'_finding\("([a-z0-9-]+)"', room_src))
    assert {"room-toxic", "room-flammable", "room-enrichment", "segregation", "gap-fuel"} <= codes
    assert codes and codes <= set(TEMPLATES), codes - set(TEMPLATES)


async def test_same_hold_test_stores_the_same_record_from_app_and_cli(tmp_path):
    from benchwarden.storage.journal import Journal
    from benchwarden.tui.screens.tools import HoldScreen

    journal = tmp_path / "journal.sqlite3"
    Journal(journal).close()
    bench = "Demo: Larkfield teaching lab, bench 2 (N2 laser)"
    # the demo supply: 50 L nitrogen, gauge 315 bar class 1.6
    assert main(["hold", "--gas", "nitrogen", "--volume", "50 L", "--start", "152 bar", "--end", "150 bar",
                 "--duration", "14 h", "--t-start", "21 degC", "--t-end", "18 degC", "--gauge-range", "315 bar",
                 "--gauge-class", "1.6", "--reserve", "15 bar", "--altitude", "120 m", "--bench", bench,
                 "--supply", "n2-A", "--journal", str(journal)]) == 0
    app = make_app(None, journal)
    async with app.run_test(size=(120, 40)) as pilot:
        await pilot.pause()
        await app.workers.wait_for_complete()
        await pilot.press("t")
        await pilot.pause()
        screen = app.screen
        assert isinstance(screen, HoldScreen)
        for wid, value in (("hold-start", "152 bar"), ("hold-end", "150 bar"), ("hold-duration", "14 h"),
                           ("hold-tstart", "21 degC"), ("hold-tend", "18 degC")):
            screen.query_one(f"#{wid}").value = value
        screen.compute()
        await pilot.pause()
        result = str(screen.query_one("#hold-result").render())
    assert "saved to the journal" in result, result
    db = sqlite3.connect(journal)
    rows = db.execute("SELECT bench, supply_id, gas, volume_m3, duration_s, verdict, leak_rate_sccm,"
                      " leak_rate_uncertainty_sccm, details FROM hold_tests ORDER BY id").fetchall()
    assert len(rows) == 2
    cli_row, app_row = rows
    assert cli_row[:5] == app_row[:5] and cli_row[5] == app_row[5]
    assert cli_row[6] == pytest.approx(app_row[6], rel=1e-9) and cli_row[7] == pytest.approx(app_row[7], rel=1e-9)
    a, b = json.loads(cli_row[8]), json.loads(app_row[8])
    assert a.keys() == b.keys()
    for k in a:
        assert a[k] == (pytest.approx(b[k], rel=1e-9) if isinstance(b[k], float) else b[k]), k


PRESSURE_IN_BAR = re.compile(r"\bbar\((?:g|a)\)")


@pytest.mark.parametrize("argv", [
    ["contents", "--gas", "nitrogen", "--volume", "50 L", "--pressure", "200 bar", "--temperature", "15 degC"],
    ["heat", "--gas", "nitrogen", "--pressure", "200 bar", "--temperature", "15 degC", "--to", "60 degC",
     "--service", "200 bar", "--test", "300 bar"],
    ["runtime", "--gas", "nitrogen", "--volume", "50 L", "--pressure", "150 bar", "--temperature", "20 degC",
     "--reserve", "10 bar", "--flow", "2 slpm"],
    ["throttle", "--gas", "nitrogen", "--inlet", "150 bar", "--outlet", "3 bar", "--temperature", "20 degC"],
    ["gap", "--gas", "nitrogen", "--spacing", "2 mm", "--pressure", "3 bar"],
    ["orifice", "--gas", "nitrogen", "--diameter", "0.2 mm", "--upstream", "2 bar", "--downstream", "0 bar",
     "--temperature", "20 degC"],
    ["hold", "--gas", "nitrogen", "--volume", "50 L", "--start", "152 bar", "--end", "150 bar", "--duration", "14 h",
     "--gauge-range", "250 bar", "--gauge-class", "1.6", "--reserve", "15 bar"],
    ["plan", str(ROOT / "profiles" / "demo-teaching-bench.toml")],
    ["plan", str(ROOT / "profiles" / "premix-switch-bench.toml")],
    ["checklist", str(ROOT / "profiles" / "demo-teaching-bench.toml")],
], ids=lambda a: a[0] + ("-" + Path(a[1]).stem if a[0] in ("plan", "checklist") else ""))
def test_pressure_unit_psi_changes_every_printed_pressure(argv, capsys):
    assert main([*argv, "--pressure-unit", "psi"]) == 0
    out = capsys.readouterr().out
    assert "psig" in out or "psia" in out
    assert not PRESSURE_IN_BAR.search(out), PRESSURE_IN_BAR.findall(out)[:3]


def test_unknown_pressure_unit_is_one_line(capsys):
    code = main(["contents", "--gas", "nitrogen", "--volume", "50 L", "--pressure", "200 bar", "--temperature",
                 "15 degC", "--pressure-unit", "atm"])
    err = capsys.readouterr().err
    assert code == 2 and err.count("\n") == 1 and "bar, psi, kPa, MPa" in err


async def test_app_units_key_cycles_the_pressure_unit(tmp_path):
    app = make_app(None, tmp_path / "j.sqlite3")
    async with app.run_test(size=(120, 40)) as pilot:
        await pilot.pause()
        await app.workers.wait_for_complete()
        await pilot.pause()
        table = app.screen.query_one("#supplies")
        assert "bar(g)" in str(table.get_row_at(0))
        await pilot.press("u")
        await pilot.pause()
        row = str(table.get_row_at(0))
        assert "psig" in row and "bar(g)" not in row


def test_countdown_severity_follows_the_reserve_rule():
    """The overview's countdown colours come from one rule in the findings: a reserve before the
    session's end is a warning, before half of what is left a stop (benchwarden rule, the same
    fraction as the plan's reserve-before-end)."""
    import datetime as dt

    from benchwarden.workflows.findings import RESERVE_STOP_FRACTION, countdown_findings

    now = dt.datetime(2026, 12, 2, 9, 0)
    end = now + dt.timedelta(hours=4)
    got = {f.subject: (f.code, f.severity) for f in countdown_findings(
        {"lasts": 4.0, "tight": 3.9, "edge": RESERVE_STOP_FRACTION * 4.0, "short": 1.9}, now, end, 8.0)}
    assert got == {"tight": ("countdown-before-end", "warning"), "edge": ("countdown-before-end", "warning"),
                   "short": ("countdown-short", "stop")}
    # before a session starts, the whole planned session counts
    assert [f.severity for f in countdown_findings({"a": 3.0}, now, None, 8.0)] == ["stop"]


async def test_the_overview_colours_its_countdowns_from_the_findings(tmp_path):
    # (its OVER TIME words come from the alarm finding: tests/test_app_life.py)
    from apptools import Clock

    from benchwarden.render.findings import OK_STYLE, SEVERITY_STYLE
    from benchwarden.workflows.findings import countdown_findings

    prof, journal = _bench(tmp_path, "reserve-before-end")
    app = make_app(prof, journal, clock=Clock())
    async with app.run_test(size=(120, 40)) as pilot:
        await pilot.pause()
        await app.workers.wait_for_complete()
        await pilot.pause()
        st, scr = app.state, app.screen
        now = st.clock()
        hours = {s.id: st.hours_left(s.id, now) for s in st.plan.supplies}
        judged = {f.subject: f.severity for f in countdown_findings(hours, now, st.session_end, st.plan.session_hours)}
        assert judged  # the 22 bar supply runs short
        table = scr.query_one("#supplies")
        for sid in hours:
            cell = table.get_cell(sid, "bar")
            assert cell.style == (SEVERITY_STYLE[judged[sid]] if sid in judged else OK_STYLE), sid
