"""The app over a cylinder's life (headless, Pilot): each case reproduced in the issue tracker."""

from __future__ import annotations

import datetime as dt
from pathlib import Path

import pytest
from apptools import T0, Clock, settle

from benchwarden.storage.journal import Journal
from benchwarden.tui.app import make_app
from benchwarden.tui.screens.modals import ChangeScreen, ConfirmScreen, ReadingScreen, StopScreen
from benchwarden.tui.screens.overview import OverviewScreen
from benchwarden.tui.widgets import FindingsPanel

ROOT = Path(__file__).resolve().parents[1]
BENCH = "Demo: Larkfield teaching lab, bench 2 (N2 laser)"



async def _ready(app, pilot):
    await settle(app, pilot)


async def _reading(app, pilot, value, when="now"):
    await pilot.press("r")
    await pilot.pause()
    assert isinstance(app.screen, ReadingScreen)
    app.screen.query_one("#time").value = when
    app.screen.query_one("#pressure").value = value
    await pilot.press("enter")
    await _ready(app, pilot)


def _codes(app):
    return {(f.code, f.severity) for f in app.screen.query_one("#findings", FindingsPanel).shown}


def _cell(app, table, row, col):
    return str(app.screen.query_one(f"#{table}").get_cell(row, col))


@pytest.fixture
def jpath(tmp_path):
    return tmp_path / "journal.sqlite3"


async def test_reading_below_the_set_point_shows_stop_not_old_figures_and_survives_a_restart(jpath):
    app = make_app(None, jpath, clock=Clock())
    async with app.run_test(size=(100, 32)) as pilot:
        await _ready(app, pilot)
        # no session needed: an idle reading
        await _reading(app, pilot, "2 bar")
        if isinstance(app.screen, ConfirmScreen):  # a fast drop from 64 bar asks first
            await pilot.press("y")
            await _ready(app, pilot)
        assert isinstance(app.screen, OverviewScreen)
        assert _cell(app, "supplies", "n2-A", "reading") == "2 bar(g)"
        codes = _codes(app)
        assert ("regulator-not-regulating", "stop") in codes and ("at-or-below-reserve", "stop") in codes
    # restart: the journal, not the profile's 64 bar, is the state
    app = make_app(None, jpath, clock=Clock(T0 + dt.timedelta(hours=1)))
    async with app.run_test(size=(100, 32)) as pilot:
        await _ready(app, pilot)
        assert _cell(app, "supplies", "n2-A", "reading") == "2 bar(g)"


async def test_idle_drop_between_sessions_shows_its_verdict(jpath):
    with Journal(jpath) as j:
        for at, p in (("2026-11-27T18:00:00+00:00", 148e5), ("2026-11-30T08:00:00+00:00", 138e5)):
            j.add_reading(None, "n2-A", at, p + 99891.7, f"{p / 1e5:g} bar", 294.15, at, bench=BENCH)
    app = make_app(None, jpath, clock=Clock())
    async with app.run_test(size=(100, 32)) as pilot:
        await _ready(app, pilot)
        assert ("idle-drop-leak", "stop") in _codes(app)
        assert "leak" in str(app.screen.query_one("#banner").render())


async def test_cylinder_change_in_the_app_then_offers_a_leak_check(jpath):
    app = make_app(None, jpath, clock=Clock())
    async with app.run_test(size=(100, 32)) as pilot:
        await _ready(app, pilot)
        await pilot.press("n")
        await pilot.pause()
        assert isinstance(app.screen, ChangeScreen)
        app.screen.query_one("#fill").value = "199 bar"
        app.screen.query_one("#label").value = "N2-0417"
        await pilot.press("enter")
        await _ready(app, pilot)
        assert isinstance(app.screen, ConfirmScreen)  # proposes a hold test of the new connection
        await pilot.press("n")
        await _ready(app, pilot)
        assert _cell(app, "supplies", "n2-A", "reading") == "199 bar(g)"
    with Journal(jpath) as j:
        (change,) = j.changes(BENCH, "n2-A")
    assert change.label == "N2-0417"


async def test_implausible_reading_asks_and_struck_reading_no_longer_counts(jpath):
    app = make_app(None, jpath, clock=Clock())
    async with app.run_test(size=(100, 32)) as pilot:
        await _ready(app, pilot)
        await _reading(app, pilot, "63 bar", when="09:00")
        await _reading(app, pilot, "900 psi", when="09:20")   # 62 bar in psi: fine
        await _reading(app, pilot, "75 bar", when="09:25")    # a rise with no cylinder change
        assert isinstance(app.screen, ConfirmScreen)
        await pilot.press("y")
        await _ready(app, pilot)
        assert _cell(app, "supplies", "n2-A", "reading") == "75 bar(g)"
        # strike it out in the history screen
        await pilot.press("h")
        await pilot.pause()
        table = app.screen.query_one("#history-readings")
        table.move_cursor(row=table.row_count - 1)
        await pilot.press("x")
        await pilot.pause()
        app.screen.query_one("#strike-reason").value = "misread the dial"
        await pilot.press("enter")
        await pilot.pause()
        await pilot.press("escape")
        await _ready(app, pilot)
        assert _cell(app, "supplies", "n2-A", "reading") == "62 bar(g)"  # 900 psi, to the gauge's ±5 bar
    with Journal(jpath) as j:
        rows = j.supply_readings(BENCH, "n2-A")
    assert [r.struck for r in rows] == [False, False, True]


async def test_weight_reading_of_a_liquefied_supply(tmp_path):
    jpath = tmp_path / "j.sqlite3"
    app = make_app(ROOT / "profiles" / "premix-switch-bench.toml", jpath, clock=Clock())
    async with app.run_test(size=(120, 40)) as pilot:
        await _ready(app, pilot)
        await pilot.press("r")
        await pilot.pause()
        app.screen.query_one("#supply").value = "sf6"
        app.screen.query_one("#pressure").value = "25.0 kg"
        await pilot.press("enter")
        await _ready(app, pilot)
        assert _cell(app, "supplies-more", "sf6", "contents") == "6.60 kg"
        # the state of the fill, not "by weight" (issue 24): 0.66 kg/L of SF6 at 19 °C is two-phase,
        # at its vapour pressure (Guder & Wagner 2009: about 21 bar(a) at 19 °C, from memory)
        reading = _cell(app, "supplies", "sf6", "reading")
        assert reading.startswith("2-phase ") and 19.0 < float(reading.split()[1]) < 21.0


async def test_stop_and_quit_ask_first_and_no_to_resume_closes_the_session(jpath):
    app = make_app(None, jpath, clock=Clock())
    async with app.run_test(size=(100, 32)) as pilot:
        await _ready(app, pilot)
        await pilot.press("s")
        await pilot.pause()
        await pilot.press("escape")  # the cautions shown at the first start
        await pilot.pause()
        assert app.state.running
        await pilot.press("s")
        await pilot.pause()
        assert isinstance(app.screen, StopScreen)
        await pilot.press("escape")  # keep running
        await pilot.pause()
        assert app.state.running
        await pilot.press("q")
        await pilot.pause()
        assert isinstance(app.screen, ConfirmScreen) and app.is_running
        await pilot.press("n")
        await pilot.pause()
        assert app.is_running
    # the session was left running: the next start asks; "no" closes it with an end time
    app = make_app(None, jpath, clock=Clock(T0 + dt.timedelta(hours=2)))
    async with app.run_test(size=(100, 32)) as pilot:
        await _ready(app, pilot)
        assert isinstance(app.screen, ConfirmScreen)
        await pilot.press("n")
        await pilot.pause()
    with Journal(jpath) as j:
        assert j.unfinished_session(BENCH) is None


async def test_over_time_is_shown_plainly(jpath):
    clock = Clock()
    app = make_app(None, jpath, clock=clock)
    async with app.run_test(size=(100, 32)) as pilot:
        await _ready(app, pilot)
        await pilot.press("s")
        await pilot.pause()
        await pilot.press("escape")
        clock.t = T0 + dt.timedelta(hours=4, minutes=20)
        app.screen.tick()
        await pilot.pause()
        assert "OVER TIME by 0 h 20 min" in str(app.screen.query_one("#status").render())


async def test_every_supply_figure_has_a_heading_and_shows_at_80_columns(jpath):
    app = make_app(None, jpath, clock=Clock())
    async with app.run_test(size=(80, 24)) as pilot:
        await _ready(app, pilot)
        for table in ("supplies", "supplies-more"):
            t = app.screen.query_one(f"#{table}")
            assert all(str(c.label).strip() for c in t.columns.values())
            assert sum(c.width + 2 for c in t.columns.values()) <= 78


async def test_checklist_export_never_overwrites(jpath, tmp_path, monkeypatch):
    monkeypatch.chdir(tmp_path)
    app = make_app(None, jpath, clock=Clock())
    async with app.run_test(size=(100, 32)) as pilot:
        await _ready(app, pilot)
        await pilot.press("k")
        await pilot.pause()
        for _ in range(2):
            await pilot.press("e")
            await _ready(app, pilot)
    pdfs = sorted(tmp_path.glob("checklist-*.pdf"))
    assert len(pdfs) == 2 and pdfs[0].name.count("-") >= 4  # names carry seconds: ...-YYYYmmdd-HHMMSS


async def test_purge_screen_plans_cycles(jpath):
    app = make_app(None, jpath, clock=Clock())
    async with app.run_test(size=(100, 32)) as pilot:
        await _ready(app, pilot)
        await pilot.press("p")
        await pilot.pause()
        assert type(app.screen).__name__ == "PurgeScreen"
        await pilot.press(*"0.8 L")  # focus is in the volume field
        await pilot.press("enter")
        await pilot.pause()
        assert "7 cycles" in str(app.screen.query_one("#purge-result").render())


async def test_a_rise_is_pressure_rose_and_striking_it_withdraws_the_test_in_the_app(jpath):
    # issue 23: Fri evening 62 bar, the next morning 70.8 bar on the same cylinder (no change)
    app = make_app(None, jpath, clock=Clock())
    async with app.run_test(size=(100, 32)) as pilot:
        await _ready(app, pilot)
        await _reading(app, pilot, "62 bar", when="18:00")   # yesterday 18:00 (the clock is 09:30)
        await _reading(app, pilot, "70.8 bar", when="09:00")
        assert isinstance(app.screen, ConfirmScreen)  # a rise without a change: asked first
        await pilot.press("y")
        await _ready(app, pilot)
        assert ("hold-test-pressure-rose", "attention") in _codes(app)
        assert not any(c == "hold-test-ok" for c, _ in _codes(app))
        await pilot.press("h")
        await pilot.pause()
        assert "pressure-rose" in str(app.screen.query_one("#history-holds").render())
        table = app.screen.query_one("#history-readings")
        table.move_cursor(row=table.row_count - 1)
        await pilot.press("x")
        await pilot.pause()
        app.screen.query_one("#strike-reason").value = "read the wrong cylinder"
        await pilot.press("enter")
        await pilot.pause()
        holds = str(app.screen.query_one("#history-holds").render())
        assert "WITHDRAWN" in holds and "read the wrong cylinder" in holds
        await pilot.press("escape")
        await _ready(app, pilot)
        codes = _codes(app)
        assert not any(c.startswith("hold-test-pressure") for c, _ in codes)
        assert ("no-hold-test", "attention") in codes or ("no-hold-test", "warning") in codes
        assert _cell(app, "supplies", "n2-A", "reading") == "62 bar(g)"  # to the gauge's ±5 bar
