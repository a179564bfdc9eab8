"""The app as an operator uses it (issue 29): keystrokes where the eye is, every field visible,
the whole record on screen. Each case at 80×24 and at one larger size, headless (Pilot)."""

from __future__ import annotations

import datetime as dt
import json
import re
from pathlib import Path

import pytest
from apptools import T0, Clock, burst, screen_text, settle
from textual.widgets import Input, Label

from benchwarden.storage.journal import Journal
from benchwarden.tui.app import make_app
from benchwarden.tui.screens.modals import (
    ChangeScreen,
    HelpScreen,
    ReadingScreen,
    StopScreen,
    key_lines,
)
from benchwarden.tui.screens.overview import OverviewScreen

pytestmark = pytest.mark.slow

ROOT = Path(__file__).resolve().parents[1]
BENCH = "Demo: Larkfield teaching lab, bench 2 (N2 laser)"
SIZES = [(80, 24), (120, 34)]
async def until(app, pilot, condition, what: str, rounds: int = 200) -> None:
    for _ in range(rounds):
        if condition():
            return
        await app.workers.wait_for_complete()
        await pilot.pause()
    raise AssertionError(f"timed out waiting for {what}")


async def start_session(app, pilot) -> None:
    from benchwarden.tui.screens.modals import CautionsScreen

    await pilot.press("s")
    await until(app, pilot, lambda: isinstance(app.screen, CautionsScreen), "the cautions")
    await pilot.press("escape")
    await until(app, pilot, lambda: isinstance(app.screen, OverviewScreen), "the overview")


@pytest.fixture
def jpath(tmp_path):
    return tmp_path / "journal.sqlite3"


# ----------------------------------------------------------------------------- 1. fast typing


@pytest.mark.parametrize("size", SIZES)
async def test_fast_typing_lands_in_the_focused_field_of_every_form(jpath, size):
    """Each form typed in one burst, from the key that opens it to Enter (a quick typist, a
    paste, a barcode scanner): every stored field is the one typed for it."""
    clock = Clock()
    app = make_app(None, jpath, clock=clock)
    async with app.run_test(size=size) as pilot:
        await settle(app, pilot)
        # a reading
        burst(app, "r", "63 bar", "enter")
        await until(app, pilot, lambda: len(app.state.history("n2-A")) == 1, "the reading")
        # the cylinder change: fill, label, retest date
        clock.t = T0 + dt.timedelta(minutes=5)
        burst(app, "n", "199 bar", "tab", "N2-0417", "tab", "2031-05-01", "enter")
        await until(app, pilot, lambda: app.screen.__class__.__name__ == "ConfirmScreen", "the change saved")
        await pilot.press("n")  # no hold test now
        await settle(app, pilot)
        # the stop dialog, from the key that opens it
        await start_session(app, pilot)
        burst(app, "s", "J. Tester", "tab", "1000", "tab", "gap re-set at noon", "enter")
        await until(app, pilot, lambda: not app.state.running, "the session to stop")
        # the purge screen and its record
        burst(app, "p", "0.8 L", "tab", "tab", "tab", "tab", "1 slpm", "tab", "A. Example", "enter")
        await until(app, pilot, lambda: app.screen.__class__.__name__ == "PurgeScreen"
                    and "cycles" in str(app.screen.query_one("#purge-result").render()), "the plan")
        assert [app.screen.query_one(f"#{i}", Input).value for i in (
            "purge-volume", "purge-high", "purge-low", "purge-target", "purge-flow", "purge-operator")] == [
            "0.8 L", "4 bar", "0 bar", "10 ppm", "1 slpm", "A. Example"]
    with Journal(jpath) as j:
        first = j.supply_readings(BENCH, "n2-A")[0]
        (change,) = j.changes(BENCH, "n2-A")
        (session,) = j.sessions()
        notes = j.notes(session.id)
    assert first.pressure_text == "63 bar"
    assert (change.pressure_text, change.label, change.retest_due) == ("199 bar", "N2-0417", "2031-05-01")
    assert (session.operator, session.shots) == ("J. Tester", 1000)
    assert [t for _, t in notes] == ["gap re-set at noon"]


# ----------------------------------------------------------------------------- 2. every field visible


def _region_text(app, region) -> str:
    lines = screen_text(app)
    return " ".join(lines[y][region.x:region.right] for y in range(region.y, region.bottom))


def _words(text: str) -> str:
    return " ".join(str(text).split())


async def _check_every_field_visible(app, pilot, screen) -> None:
    """Each input, focused in turn (by Tab, as a person would), is on screen with its whole
    label; typing there lands there."""
    inputs = [i for i in screen.query(Input) if i.display and i.id != "strike-reason"]
    assert inputs
    for inp in inputs:
        inp.focus()
        await pilot.pause()
        await pilot.pause()
        full = app.screen.region
        assert inp.region.height >= 1 and full.contains_region(inp.region), f"#{inp.id} is hidden"
        label = inp.parent.query_one(Label) if inp.parent is not None and inp.parent.has_class("field") else None
        assert label is not None, f"#{inp.id} has no label"
        assert label.region.height >= 1 and full.contains_region(label.region), f"label of #{inp.id} is hidden"
        shown = _words(_region_text(app, label.region))
        assert shown == _words(label.content), f"label of #{inp.id} is cut: {shown!r}"


@pytest.mark.parametrize("size", SIZES)
@pytest.mark.parametrize("key", ["r", "n", "p", "t", "o", "stop"])
async def test_every_form_shows_all_its_fields_and_labels(jpath, size, key):
    app = make_app(None, jpath, clock=Clock())
    async with app.run_test(size=size) as pilot:
        await settle(app, pilot)
        if key == "stop":
            await start_session(app, pilot)
            key = "s"
        await pilot.press(key)
        await until(app, pilot, lambda: not isinstance(app.screen, OverviewScreen), "the form")
        await settle(app, pilot)
        await _check_every_field_visible(app, pilot, app.screen)


@pytest.mark.parametrize("size", SIZES)
async def test_purge_screen_every_input_reachable_by_tab(jpath, size):
    # regression: fill, vent and flush flow were hidden; Tab typed into them unseen
    app = make_app(None, jpath, clock=Clock())
    async with app.run_test(size=size) as pilot:
        await settle(app, pilot)
        await pilot.press("p")
        await settle(app, pilot)
        scr = app.screen
        for i in ("purge-high", "purge-low", "purge-target"):
            scr.query_one(f"#{i}", Input).value = ""
        scr.query_one("#purge-volume", Input).focus()
        burst(app, "0.8 L", "tab", "4 bar", "tab", "0 bar", "tab", "10 ppm", "tab", "1 slpm", "tab", "A. Example",
              "enter")
        await until(app, pilot, lambda: "cycles" in str(scr.query_one("#purge-result").render()), "the plan")
        assert [scr.query_one(f"#{i}", Input).value for i in ("purge-volume", "purge-high", "purge-low",
                                                                "purge-target", "purge-flow", "purge-operator")] == [
            "0.8 L", "4 bar", "0 bar", "10 ppm", "1 slpm", "A. Example"]
        assert "7 cycles" in str(scr.query_one("#purge-result").render())
        assert "flush" in str(scr.query_one("#purge-result").render())


# ----------------------------------------------------------------------------- 3. keys


@pytest.mark.parametrize("size", SIZES)
@pytest.mark.parametrize("key", [None, "g", "t", "o", "k", "h", "p"])
async def test_help_lists_every_key_of_its_screen_and_the_footer_shows_help_and_quit(jpath, size, key, tmp_path,
                                                                                   monkeypatch):
    monkeypatch.chdir(tmp_path)
    app = make_app(None, jpath, clock=Clock())
    async with app.run_test(size=size) as pilot:
        await settle(app, pilot)
        if key:
            await pilot.press(key)
            await settle(app, pilot)
        screen = app.screen
        # the footer: help and quit first, every key whole
        from textual.widgets._footer import FooterKey

        keys = list(screen.query(FooterKey))
        assert [k.action for k in keys[:2]] == ["help", "quit"]
        for k in keys:
            assert k.region.right <= size[0] and k.region.width >= 1
            text = _words(_region_text(app, k.region))
            assert _words(k.description) in text and _words(k.key_display) in text, f"footer key {text!r} is cut"
        # ? (or F1 while typing in a field) lists every key of this screen and of the app
        await pilot.press("f1")
        await until(app, pilot, lambda: isinstance(app.screen, HelpScreen), "the help")
        shown = str(app.screen.query_one("#help-keys").render())
        bound = {app.get_key_display(b) for node in (screen, app) for bs in node._bindings.key_to_bindings.values()
                 for b in bs if not b.system and not b.action.endswith("copy_text")}
        assert bound == {k for k, _ in key_lines(screen)}
        for k, d in key_lines(screen):
            assert re.search(rf"^\s*{re.escape(k)}\s+{re.escape(d[:20])}", shown, re.M), (k, d)
        if key == "g":
            assert re.search(r"^\s*n\s+the next supply", shown, re.M)  # n here is the graph's own
        if key is None:
            for k in "snhpu":
                assert re.search(rf"^\s*{k}\s+\S", shown, re.M), k


def test_readme_key_list_matches_the_help():
    """README's key list is the overview's ? list (key for key)."""
    from benchwarden.tui.screens.overview import OverviewScreen as O

    text = (ROOT / "README.md").read_text()
    section = text[text.index("## The app"):text.index("## Live gauges")]
    listed = set(re.findall(r"^- `([^`]+)` ", section, re.M))
    keys = {b.key_display or b.key for b in O.BINDINGS}  # type: ignore[union-attr]
    from benchwarden.tui.app import BenchwardenApp

    keys |= {(b.key_display or b.key) for b in BenchwardenApp.BINDINGS}  # type: ignore[union-attr]
    display = {"question_mark": "?", "ctrl+q": "^q", "shift+tab": "shift+tab"}
    assert listed == {display.get(k, k) for k in keys}


# ----------------------------------------------------------------------------- 4. times


async def _reading(app, pilot, value: str, when: str) -> str:
    await pilot.press("r")
    await until(app, pilot, lambda: isinstance(app.screen, ReadingScreen), "the reading form")
    app.screen.query_one("#time", Input).value = when
    app.screen.query_one("#pressure", Input).value = value
    await pilot.press("enter")
    await settle(app, pilot)
    if isinstance(app.screen, ReadingScreen):
        return str(app.screen.query_one("#error").render())
    from benchwarden.tui.screens.modals import ConfirmScreen

    if isinstance(app.screen, ConfirmScreen):
        await pilot.press("y")
        await settle(app, pilot)
    return ""


@pytest.mark.parametrize("size", SIZES)
async def test_reading_times_date_yesterday_most_recent_past_and_outside_the_session(jpath, size):
    clock = Clock(T0 + dt.timedelta(hours=1))  # 10:30 on Tue 1 Dec
    app = make_app(None, jpath, clock=clock)
    async with app.run_test(size=size) as pilot:
        await settle(app, pilot)
        await start_session(app, pilot)  # at 10:30
        # the future is refused, in the form, the typed values kept
        err = await _reading(app, pilot, "64 bar", "2026-12-01 11:00")
        assert "future" in err and app.screen.query_one("#time", Input).value == "2026-12-01 11:00"
        await pilot.press("escape")
        await settle(app, pilot)
        assert await _reading(app, pilot, "64.5 bar", "11:25") == ""   # yesterday 11:25: before the session
        assert await _reading(app, pilot, "64.8 bar", "yesterday 18:00") == ""
        assert await _reading(app, pilot, "64.2 bar", "2026-12-01 10:00") == ""  # today, before the start
        assert await _reading(app, pilot, "63 bar", "10:45") == ""      # 10:45 > now: yesterday
        clock.t = T0 + dt.timedelta(hours=2)
        assert await _reading(app, pilot, "62 bar", "11:20") == ""      # in the session
        assert len(app.state.readings["n2-A"]) == 1                     # only that one counts in it
        await pilot.press("h")
        await settle(app, pilot)
        table = app.screen.query_one("#history-readings")
        assert sum(c.width + 2 for c in table.columns.values()) <= 78  # every column in view at 80
        times = [str(table.get_row_at(i)[1]) for i in range(table.row_count)]
        assert times == ["Mon 30 Nov 10:45", "Mon 30 Nov 11:25", "Mon 30 Nov 18:00", "10:00", "11:20"]
    with Journal(jpath) as j:
        rows = j.supply_readings(BENCH, "n2-A")
    assert [(r.at[:16], r.session_id) for r in rows] == [
        ("2026-11-30T10:45", None), ("2026-11-30T11:25", None), ("2026-11-30T18:00", None),
        ("2026-12-01T10:00", None), ("2026-12-01T11:20", 1)]


# ----------------------------------------------------------------------------- 5. the record


@pytest.mark.parametrize("size", SIZES)
async def test_history_shows_cylinders_and_sessions_with_operator_shots_and_note(jpath, size, capsys):
    clock = Clock()
    app = make_app(None, jpath, clock=clock)
    async with app.run_test(size=size) as pilot:
        await settle(app, pilot)
        await start_session(app, pilot)
        clock.t = T0 + dt.timedelta(minutes=30)
        assert await _reading(app, pilot, "60 bar", "now") == ""
        await pilot.press("s")
        await until(app, pilot, lambda: isinstance(app.screen, StopScreen), "the stop form")
        for i, v in (("operator", "A. Example"), ("shots", "12000"), ("note", "trigger gap cleaned")):
            app.screen.query_one(f"#{i}", Input).value = v
        await pilot.press("enter")
        await settle(app, pilot)
        clock.t = T0 + dt.timedelta(hours=2)
        await pilot.press("n")
        await until(app, pilot, lambda: isinstance(app.screen, ChangeScreen), "the change form")
        for i, v in (("fill", "198 bar"), ("label", "N2-0417"), ("retest", "2031-05-01")):
            app.screen.query_one(f"#{i}", Input).value = v
        await pilot.press("enter")
        await settle(app, pilot)
        await pilot.press("n")
        await settle(app, pilot)
        clock.t = T0 + dt.timedelta(hours=3)
        assert await _reading(app, pilot, "190 bar", "now") == ""
        await pilot.press("h")
        await settle(app, pilot)
        cyl = str(app.screen.query_one("#history-cylinders").render()).splitlines()
        assert len(cyl) == 2
        assert "fill 64 bar" in cyl[0] and "→ 11:30" in cyl[0] and "1 reading(s)" in cyl[0]
        assert cyl[1].startswith("N2-0417") and "fill 198 bar" in cyl[1] and "in use" in cyl[1]
        assert "2 reading(s)" in cyl[1] and "kg used" in cyl[1] and "retest 2031-05-01" in cyl[1]
        sessions = str(app.screen.query_one("#history-sessions").render())
        assert "A. Example" in sessions and "12\u2009000 shots" in sessions and "note: trigger gap cleaned" in sessions
    # the command line shows the same record
    from benchwarden.cli import main

    assert main(["sessions", "--journal", str(jpath), "--json"]) == 0
    (s,) = json.loads(capsys.readouterr().out)["sessions"]
    assert (s["operator"], s["shots"], s["note"]) == ("A. Example", 12000, "trigger gap cleaned")
    assert [n["text"] for n in s["notes"]] == ["trigger gap cleaned"]
    assert main(["sessions", "--journal", str(jpath)]) == 0
    out = capsys.readouterr().out
    assert "A. Example" in out and "note: trigger gap cleaned" in out and "12\u2009000" in out
    assert main(["export", "1", "--journal", str(jpath)]) == 0
    import csv
    import io

    head, row = list(csv.reader(io.StringIO(capsys.readouterr().out)))[:2]
    cols = dict(zip(head, row, strict=True))
    assert (cols["session_operator"], cols["session_shots"], cols["session_notes"]) == (
        "A. Example", "12000", "trigger gap cleaned")


# ----------------------------------------------------------------------------- 6. purge, deferred hold


@pytest.mark.parametrize("size", SIZES)
async def test_purge_run_is_recorded_and_shown_on_the_checklist_after_a_change(jpath, size):
    clock = Clock()
    app = make_app(None, jpath, clock=clock)
    async with app.run_test(size=size) as pilot:
        await settle(app, pilot)
        await pilot.press("n")
        await until(app, pilot, lambda: isinstance(app.screen, ChangeScreen), "the change form")
        app.screen.query_one("#fill", Input).value = "198 bar"
        await pilot.press("enter")
        await settle(app, pilot)
        await pilot.press("n")
        await settle(app, pilot)
        items = {it.id: it for s in _checklist(app).sections for it in s.items}
        assert items["purge-after-change:n2-A"].status is None  # a box to tick: none recorded
        clock.t = T0 + dt.timedelta(minutes=20)
        await pilot.press("p")
        await settle(app, pilot)
        scr = app.screen
        scr.query_one("#purge-volume", Input).value = "0.8 L"
        scr.query_one("#purge-operator", Input).value = "B. Sample"
        scr.query_one("#purge-record-cycles").press()
        await settle(app, pilot)
        assert "purge recorded: 7 cycles" in str(scr.query_one("#purge-result").render())
        await pilot.press("escape")
        await settle(app, pilot)
        await pilot.press("k")
        await settle(app, pilot)
        text = _words(app.screen.query_one("#checklist-text").render())
        assert "line purged after the cylinder change" in text and "B. Sample" in text
        item = {it.id: it for s in app.screen.checklist.sections for it in s.items}["purge-after-change:n2-A"]
        assert item.status == "ok" and "7 pressure cycles" in (item.figure or "") and "09:50" in (item.figure or "")
    with Journal(jpath) as j:
        (p,) = j.purges(BENCH, "n2-A")
        (event,) = j.db.execute("SELECT payload FROM events WHERE kind = 'purge'").fetchall()  # shipped too
    assert json.loads(event[0])["operator"] == "B. Sample"
    assert (p.operator, p.method, p.cycles, p.at[:16]) == ("B. Sample", "cycles", 7, "2026-12-01T09:50")
    assert p.gas_standard_litres > 0


def _checklist(app):
    from benchwarden.render.checklist import build_checklist
    from benchwarden.render.display import profile_display

    st = app.state
    return build_checklist(st.profile, st.assessment(), None, now=st.clock(), display=profile_display(st.profile))


@pytest.mark.parametrize("size", SIZES)
async def test_hold_test_started_now_finished_later_with_a_reminder(jpath, size):
    clock = Clock(T0.replace(hour=18, minute=2))
    app = make_app(None, jpath, clock=clock)
    async with app.run_test(size=size) as pilot:
        await settle(app, pilot)
        await pilot.press("t")
        await settle(app, pilot)
        scr = app.screen
        for i, v in (("hold-start", "62 bar"), ("hold-duration", "12 h"), ("hold-tstart", "20 degC")):
            scr.query_one(f"#{i}", Input).value = v
        scr.query_one("#hold-begin").press()
        await settle(app, pilot)
        assert "started and saved" in str(scr.query_one("#hold-result").render())
        await pilot.press("escape")
        await settle(app, pilot)
        observed = _words(app.screen.query_one("#observed").render())
        assert "hold test on n2-A started at 18:02 with 62 bar(g); finish after 12 h 00 min (Wed 2 Dec 06:02)" in observed
        assert "hold test on n2-A" in "".join(screen_text(app))  # in view at this size
        clock.t += dt.timedelta(hours=12, minutes=5)
        app.screen.load_plan()
        await settle(app, pilot)
        assert "started at Tue 1 Dec 18:02 with 62 bar(g); due now" in _words(app.screen.query_one("#observed").render())
        await pilot.press("t")
        await settle(app, pilot)
        scr = app.screen
        assert "due now" in str(scr.query_one("#hold-open").render())
        scr.query_one("#hold-end", Input).value = "61.6 bar"
        scr.query_one("#hold-tend", Input).value = "19 degC"
        scr.query_one("#hold-finish").press()
        await settle(app, pilot)
        assert "finished after 12 h 05 min" in str(scr.query_one("#hold-result").render())
        await pilot.press("escape")
        await settle(app, pilot)
        assert "hold test on" not in str(app.screen.query_one("#observed").render())
    with Journal(jpath) as j:
        (h,) = j.hold_tests(BENCH)
        (start,) = j.hold_starts(BENCH)
        last = j.last_hold_test(BENCH)
        kinds = [k for (k,) in j.db.execute("SELECT kind FROM events WHERE kind IN ('hold-start', 'hold-test')")]
    assert kinds == ["hold-start", "hold-test"]  # each an event, in order
    assert start.finished_by == h.id and last is not None and last.id == h.id
    assert h.supply_id == "n2-A" and h.kind == "two-readings"
    assert json.loads(h.details or "{}")["start_abs_pa"] == pytest.approx(62e5 + 101325, rel=1e-3)


# ----------------------------------------------------------------------------- 7. precision


@pytest.mark.parametrize("size", SIZES)
async def test_reading_precision_follows_the_gauge_in_every_unit_and_is_never_cut(jpath, size):
    app = make_app(None, jpath, clock=Clock())
    async with app.run_test(size=size) as pilot:
        await settle(app, pilot)
        assert await _reading(app, pilot, "198 bar", "now") == ""  # a rise: asked, confirmed
        shown = []
        for _ in range(4):
            table = app.screen.query_one("#supplies")
            cell = str(table.get_cell("n2-A", "reading"))
            width = next(c for c in table.columns.values() if c.key.value == "reading").width
            assert len(cell) <= width, cell
            shown.append(cell)
            await pilot.press("u")
            await settle(app, pilot)
    # the demo's gauge: 315 bar class 1.6, good to ±5 bar: no decimals that it cannot read
    assert shown == ["198 bar(g)", "2872 psig", "19800 kPa(g)", "19.8 MPa(g)"]


# ----------------------------------------------------------------------------- 8. small things


def test_plan_groups_digits_with_a_thin_space_and_json_times_are_iso(capsys):
    from benchwarden.cli import main

    prof = ROOT / "profiles" / "demo-teaching-bench.toml"
    assert main(["plan", str(prof)]) == 0
    out = capsys.readouterr().out
    shots = re.search(r"shots to reserve (\S+(?:\u2009\d{3})*)", out)
    assert shots is not None and "," not in shots.group(1) and "\u2009" in shots.group(1)
    assert main(["checklist", str(prof), "--format", "json"]) == 0
    generated = json.loads(capsys.readouterr().out)["generated_at"]
    assert dt.datetime.fromisoformat(generated).utcoffset() is not None


def test_pdf_checklist_does_not_cut_attention(tmp_path):
    from pypdf import PdfReader

    from benchwarden.render.checklist import Checklist, Item, Section
    from benchwarden.render.checklist.render import render_pdf

    cl = Checklist("b", "Tue 1 Dec 2026, 09:30", "4 h", (Section("s", "S", (
        Item("a", "one", "attention", "1", "r"), Item("w", "two", "warning", "2", "r"))),), ())
    text = "".join(p.extract_text() for p in PdfReader(str(render_pdf(cl, tmp_path / "c.pdf"))).pages)
    assert "ATTENTION" in text and "WARNING" in text


@pytest.mark.parametrize("mask", [0o022, 0o027])
def test_exported_files_follow_the_umask(tmp_path, mask):
    import os

    from benchwarden.render.files import write_output

    old = os.umask(mask)
    try:
        out = write_output(tmp_path / "x.csv", "a,b\n")
    finally:
        os.umask(old)
    assert out.stat().st_mode & 0o777 == 0o666 & ~mask


# ----------------------------------------------------------------------------- 9. README


def test_readme_says_what_a_newcomer_needs():
    text = (ROOT / "README.md").read_text()
    assert "real journal" in text and "BENCHWARDEN_JOURNAL=" in text
    assert re.search(r"full test run takes about \d+", text)
    assert "exports" in text.lower() and "current folder" in text
    ignore = (ROOT / ".gitignore").read_text().splitlines()
    for pattern in ("checklist-*.html", "checklist-*.pdf", "session-*.csv", "my-bench.toml", "*.sqlite3"):
        assert pattern in ignore


async def test_footer_chooses_its_keys_again_when_the_terminal_narrows(jpath):
    from textual.widgets._footer import FooterKey

    app = make_app(None, jpath, clock=Clock())
    async with app.run_test(size=(140, 36)) as pilot:
        await settle(app, pilot)
        assert len(app.screen.query(FooterKey)) > 12
        await pilot.resize_terminal(80, 24)
        await settle(app, pilot)
        keys = list(app.screen.query(FooterKey))
        assert [k.action for k in keys[:2]] == ["help", "quit"]
        assert all(k.region.right <= 80 for k in keys) and len(keys) < 12


async def test_history_shows_the_stops_accepted_at_a_session_start(jpath):
    with Journal(jpath) as j:
        sid = j.start_session(BENCH, None, (T0 - dt.timedelta(hours=3)).isoformat(), "C. Lead",
                              [("at-or-below-reserve", "n2-A", "n2-A is at its reserve")], "swap due at noon")
        j.stop_session(sid, (T0 - dt.timedelta(hours=2)).isoformat())
    app = make_app(None, jpath, clock=Clock())
    async with app.run_test(size=(80, 24)) as pilot:
        await settle(app, pilot)
        await pilot.press("h")
        await settle(app, pilot)
        line = _words(app.screen.query_one("#history-sessions").render())
        assert "accepted STOP at-or-below-reserve (n2-A) by C. Lead: swap due at noon" in line
