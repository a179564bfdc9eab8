"""The app's refresh reads only what changed (issue 28): the queries that replace whole-history
reads give what the whole history gives, and the figures kept between refreshes (in the app's
memo, by the bench's events) equal the same figures computed afresh on the same SQLite file."""

from __future__ import annotations

import datetime as dt
import json
import shutil
from pathlib import Path

import pytest

from benchwarden.storage.journal import Journal
from benchwarden.storage.profile import load_profile
from benchwarden.workflows import orders
from benchwarden.workflows.idledrops import idle_drops, record_idle_drops
from benchwarden.workflows.model import Memo
from benchwarden.workflows.session import SessionState

ROOT = Path(__file__).resolve().parents[1]
DEMO = (ROOT / "profiles" / "demo-teaching-bench.toml").read_text()
T0 = dt.datetime(2026, 10, 1, 9, 0, tzinfo=dt.UTC)
AMB = 101325.0


def _two_supplies(tmp: Path) -> Path:
    """The demo bench with a second nitrogen cylinder ``n2-1``."""
    start, end = DEMO.index("[[supplies]]"), DEMO.index("[[regulators]]")
    p = tmp / "bench.toml"
    p.write_text(DEMO[:end] + DEMO[start:end].replace('id = "n2-A"', 'id = "n2-1"') + DEMO[end:])
    return p


def _at(hours: float) -> str:
    return (T0 + dt.timedelta(hours=hours)).isoformat(timespec="seconds")


def _read(j: Journal, bench: str, sid: str, hours: float, bar: float) -> int:
    at = _at(hours)
    return j.add_reading(None, sid, at, bar * 1e5 + AMB, f"{bar} bar", 294.15, at, bench=bench, ambient_pa=AMB)


# ----------------------------------------------------------------------------- the queries


def test_the_narrow_queries_give_what_the_whole_history_gives(tmp_path):
    prof = load_profile(_two_supplies(tmp_path))
    bench = prof.bench.name
    with Journal(tmp_path / "j.sqlite") as j:
        for i in range(40):  # the two supplies' readings interleaved, one written with an older time
            _read(j, bench, "n2-A" if i % 3 else "n2-1", i if i != 17 else 2.5, 150 - i)
        for h in (5, 12, 12, 30):  # two changes at the same time: the later id is the latest
            j.add_change(bench, "n2-A", _at(h), _at(h), 200e5 + AMB, "200 bar")
        j.strike_reading(10, _at(41), "misread")
        everything = j.supply_readings(bench, "n2-A")
        for after in (0, 7, 23, 39, 40):  # by id, struck ones included (the independent reference: a filter)
            assert j.readings_after(bench, "n2-A", after) == sorted((r for r in everything if r.id > after),
                                                                     key=lambda r: r.id)
        changes = j.changes(bench, "n2-A")
        assert j.latest_change(bench, "n2-A") == changes[-1] and changes[-1].id == 4
        assert j.latest_change(bench, "n2-1") is None
        assert j.changes_from(bench, "n2-A", _at(12)) == [c for c in changes if c.at >= _at(12)]
        assert j.last_reading_id() == 40
        seq = j.last_event_seq(bench)
        _read(j, bench, "n2-1", 50, 100)
        assert j.last_event_seq(bench) > seq and j.event_supplies(bench, seq, ("reading",)) == {"n2-1"}
        assert j.event_supplies(bench, seq, ("strike",)) == set()


# ----------------------------------------------------------------------------- idle drops


def test_the_idle_drop_scan_by_id_stores_what_a_full_scan_finds(tmp_path):
    """Readings of two supplies written in turn, the scan run after each: the drops stored equal
    those of one scan of the finished journal with no mark (the first scan reads it all)."""
    prof = load_profile(_two_supplies(tmp_path))
    bench, path = prof.bench.name, tmp_path / "j.sqlite"
    now = T0 + dt.timedelta(days=30)
    with Journal(path) as j:
        for i in range(24):  # 20 bar a day on n2-A: a leak the demo gauge resolves
            _read(j, bench, "n2-A" if i % 2 else "n2-1", 12 * i, 190 - 7 * i if i % 2 else 120)
            record_idle_drops(j, prof, now)
        j.strike_reading(9, _at(200), "misread")
        _read(j, bench, "n2-A", 300, 25)
        record_idle_drops(j, prof, now)
        kept = sorted((h.supply_id, h.details) for h in j.hold_tests(bench))
    fresh = tmp_path / "fresh.sqlite"
    shutil.copyfile(path, fresh)
    with Journal(fresh) as j:  # scanned again from nothing: the drops stored are not stored twice
        j.db.execute("DELETE FROM marks")
        j.db.commit()
        assert record_idle_drops(j, prof, now) == [] and len(j.hold_tests(bench)) == len(kept)
    with Journal(fresh) as j:
        j.db.execute("DELETE FROM marks")
        j.db.execute("DROP TRIGGER events_immutable_delete")
        j.db.execute("DELETE FROM hold_tests")
        j.db.commit()
        record_idle_drops(j, prof, now)
        assert sorted((h.supply_id, h.details) for h in j.hold_tests(bench)) == kept
        # and the stored drops are the current cylinder's idle pairs that count
        assert {d.key for d in idle_drops(j, prof, "n2-A", now)} >= {json.loads(k)["idle_drop"] for sid, k in kept if sid == "n2-A"}
    assert len(kept) >= 5


# ----------------------------------------------------------------------------- kept in memory


def test_a_consumption_kept_in_memory_equals_a_fresh_one_after_every_change(tmp_path, monkeypatch):
    prof = load_profile(_two_supplies(tmp_path))
    bench, path = prof.bench.name, tmp_path / "j.sqlite"
    with Journal(path) as j:
        for i in range(30):
            _read(j, bench, "n2-A", 24 * i, 190 - 4 * i)
            _read(j, bench, "n2-1", 24 * i, 150 - 2 * i)
    calls: list[str] = []
    real = orders._kept_consumption
    monkeypatch.setattr(orders, "_kept_consumption", lambda j, p, s, m, *a: (m is not None and calls.append(s.id)) or real(j, p, s, m, *a))

    def fresh(sid: str) -> orders.Consumption | None:
        with Journal(path, readonly=True) as r:  # another connection, nothing kept
            return orders.consumption(r, prof, sid)

    memo = Memo()
    with Journal(path) as j, Journal(path) as other:
        def both() -> list[orders.Consumption | None]:
            return [orders.consumption(j, prof, sid, memo) for sid in ("n2-A", "n2-1")]

        first = both()
        assert first == [fresh("n2-A"), fresh("n2-1")] and calls == ["n2-A", "n2-1"]
        assert both() == first and len(calls) == 2  # nothing recorded: both kept
        _read(j, bench, "n2-A", 24 * 30, 60)  # a reading on n2-A: only n2-A again
        second = both()
        assert second == [fresh("n2-A"), fresh("n2-1")] and second[1] == first[1] and calls[2:] == ["n2-A"]
        rid = _read(other, bench, "n2-1", 24 * 30, 50)  # another connection (another process) writes
        assert both() == [fresh("n2-A"), fresh("n2-1")] and calls[3:] == ["n2-1"]
        other.strike_reading(rid, _at(24 * 31), "misread")
        assert both() == [fresh("n2-A"), fresh("n2-1")] == second and calls[4:] == ["n2-1"]
        j.add_change(bench, "n2-A", _at(24 * 20 + 1), _at(24 * 20 + 1), 200e5 + AMB, "200 bar")
        assert both() == [fresh("n2-A"), fresh("n2-1")] and calls[5:] == ["n2-A"]
        j.start_session(bench, str(path), _at(24 * 32))
        assert both() == [fresh("n2-A"), fresh("n2-1")] and len(calls) == 6
    bigger = prof.model_copy(update={"supplies": [prof.supplies[0].model_copy(update={"water_volume": 0.1})]
                                     + list(prof.supplies[1:])})
    with Journal(path) as j:  # another volume is another input
        assert orders.consumption(j, bigger, "n2-A", memo) == orders.consumption(j, bigger, "n2-A")


def _figures(st: SessionState) -> tuple[object, ...]:
    return st.plan, st._life, st.findings(), st.observed


@pytest.mark.parametrize("step", ["nothing", "reading", "other-supply", "strike", "change", "session"])
def test_the_apps_refresh_equals_a_fresh_open_of_the_same_file(tmp_path, step):
    """After each kind of record, the kept state's refresh gives the plan, findings and life
    findings a new app opened on the same file computes from nothing."""
    prof_path = _two_supplies(tmp_path)
    path = tmp_path / "j.sqlite"
    now = [T0 + dt.timedelta(days=40)]
    with Journal(path) as j:
        bench = load_profile(prof_path).bench.name
        for i in range(36):
            _read(j, bench, "n2-A", 24 * i, 190 - 3 * i)
            _read(j, bench, "n2-1", 24 * i + 1, 150 - 1 * i)
        st = SessionState(prof_path, j, lambda: now[0])
        st.load()
        st.recompute()
        now[0] += dt.timedelta(minutes=5)
        if step == "reading":
            st.add_reading(st.parse_reading("n2-A", "80 bar", "21 degC", "now"))
        elif step == "other-supply":
            _read(j, bench, "n2-1", 24 * 40, 110)
        elif step == "strike":
            j.strike_reading(j.latest_reading(bench, "n2-A").id, now[0].isoformat(timespec="seconds"), "misread")
        elif step == "change":
            st.change_cylinder(st.parse_reading("n2-A", "200 bar", "21 degC", "now"), "B-2", None)
        elif step == "session":
            st.start(accept_reason="test")
            st.add_reading(st.parse_reading("n2-1", "110 bar", "21 degC", "now"))
        st.recompute()
        kept = _figures(st)
    with Journal(path) as j:
        fresh = SessionState(prof_path, j, lambda: now[0])
        fresh.load()
        if step == "session":
            fresh.resume(st.session_id)
            fresh.recompute()
        assert _figures(fresh) == kept


def test_a_slid_consumption_window_equals_the_newest_readings_read_afresh(tmp_path, monkeypatch):
    """The app slides the kept window over each new reading (one interval computed); a reading
    older than the window, a strike or a change reads it afresh. Each step equals the
    computation on the newest readings queried from the file (nothing kept)."""
    from benchwarden.workflows.holds import profile_gauge_spec

    monkeypatch.setattr(orders, "CONSUMPTION_READINGS", 6)  # slides after six readings
    compute, interval = orders._consumption, orders._interval
    calls: list[int] = []
    monkeypatch.setattr(orders, "_interval", lambda *a: calls.append(1) or interval(*a))
    prof = load_profile(_two_supplies(tmp_path))
    bench, path = prof.bench.name, tmp_path / "j.sqlite"
    s = prof.supply("n2-A")
    spec = profile_gauge_spec(s.gauge)

    def fresh() -> orders.Consumption | None:
        with Journal(path, readonly=True) as r:
            rows = r.recent_readings(bench, "n2-A", 6)
            changes = sorted(orders.stamp(c.at) for c in r.changes(bench, "n2-A")
                             if rows and orders.stamp(c.at) >= orders.stamp(rows[0].at))
            return compute(prof, s, rows, changes, spec.resolved_drop_pa if spec else None)

    memo = Memo()
    with Journal(path) as j:
        def check() -> orders.Consumption | None:
            calls.clear()
            got = orders.consumption(j, prof, "n2-A", memo)
            n = len(calls)  # the intervals the app computed (the fresh computation counts too)
            assert got == fresh()
            del calls[n:]
            return got

        for i in range(4):
            _read(j, bench, "n2-A", 24 * i, 190 - 5 * i)
        assert check() is not None and len(calls) == 3
        for i in range(4, 12):  # each new reading: one interval, the window slid past six
            _read(j, bench, "n2-A", 24 * i, 190 - 5 * i - (3 if i == 7 else 0))
            _read(j, bench, "n2-1", 24 * i, 150)
            check()
            assert len(calls) == 1
        _read(j, bench, "n2-A", 24 * 12, 150)  # a rise: its interval does not count
        check()
        _read(j, bench, "n2-A", 24 * 11.5, 140)  # older than the newest: read afresh
        check()
        assert len(calls) == 5
        j.strike_reading(j.latest_reading(bench, "n2-A").id, _at(24 * 13), "misread")
        check()
        j.add_change(bench, "n2-A", _at(24 * 10 + 1), _at(24 * 10 + 1), 200e5 + AMB, "200 bar")
        check()
        for i in range(14, 17):
            _read(j, bench, "n2-A", 24 * i, 200 - 6 * (i - 14))
            check()
            assert len(calls) == 1


def test_a_consumption_kept_in_the_journal_is_taken_without_its_readings_until_they_change(tmp_path, monkeypatch):
    """A new process (no memo) takes the journal's kept consumption without reading the window
    while the events since it was kept name no reading, strike or change of the supply."""
    prof = load_profile(_two_supplies(tmp_path))
    bench, path = prof.bench.name, tmp_path / "j.sqlite"
    with Journal(path) as j:
        for i in range(20):
            _read(j, bench, "n2-A", 24 * i, 190 - 4 * i)
    reads: list[str] = []
    real = orders._read_window
    monkeypatch.setattr(orders, "_read_window", lambda j, p, s: reads.append(s.id) or real(j, p, s))

    def fresh() -> orders.Consumption | None:
        with Journal(path, readonly=True) as r:
            rows = r.recent_readings(bench, "n2-A", orders.CONSUMPTION_READINGS)
            changes = sorted(orders.stamp(c.at) for c in r.changes(bench, "n2-A")
                             if orders.stamp(c.at) >= orders.stamp(rows[0].at))
            return orders._consumption(prof, prof.supply("n2-A"), rows, changes, 0.0)

    def status(p=prof) -> orders.Consumption | None:
        with Journal(path) as j:  # as a new process opens it
            return orders.consumption(j, p, "n2-A")

    first = status()
    assert first == fresh() and reads == ["n2-A"]
    assert status() == first and reads == ["n2-A"]  # taken as kept: no reading read
    with Journal(path) as j:
        _read(j, bench, "n2-1", 24 * 30, 100)  # another supply's reading, a session: still kept
        j.start_session(bench, None, _at(24 * 31))
    assert status() == first and len(reads) == 1
    with Journal(path) as j:
        rid = _read(j, bench, "n2-A", 24 * 30, 90)
    second = status()
    assert second == fresh() != first and len(reads) == 2
    assert status() == second and len(reads) == 2
    with Journal(path) as j:
        j.strike_reading(rid, _at(24 * 32), "misread")
    assert status() == fresh() == first and len(reads) == 3
    with Journal(path) as j:
        j.add_change(bench, "n2-A", _at(24 * 10 + 1), _at(24 * 10 + 1), 200e5 + AMB, "200 bar")
    assert status() == fresh() != first and len(reads) == 4
    bigger = prof.model_copy(update={"supplies": [prof.supplies[0].model_copy(update={"water_volume": 0.1})]
                                     + list(prof.supplies[1:])})
    assert status(bigger) != status() and len(reads) == 6  # each profile reads it once (one kept per supply)


def test_the_judged_hold_tests_kept_in_memory_equal_a_fresh_judgement(tmp_path, monkeypatch):
    """Kept until a hold test, a strike or a change is recorded on the bench; readings, sessions
    and alarms leave them as they were."""
    from benchwarden.workflows import holds

    prof = load_profile(_two_supplies(tmp_path))
    bench, path = prof.bench.name, tmp_path / "j.sqlite"
    calls: list[int] = []
    real = holds._judged_hold_tests
    monkeypatch.setattr(holds, "_judged_hold_tests", lambda j, b: calls.append(1) or real(j, b))
    memo = Memo()

    def hold(j: Journal, sid: str, hours: float, details: str = "", kind: str | None = None) -> int:
        return j.add_hold_test(_at(hours), bench, sid, "nitrogen", 0.05, 3600.0, "leak", 40.0, 5.0, details, kind)

    with Journal(path) as j, Journal(path) as other:
        def check(n: int) -> None:
            calls.clear()
            kept = holds.judged_hold_tests(j, bench, memo)
            assert len(calls) == n
            assert kept == real(j, bench)  # the same judgement afresh
            assert holds.standing_leaks(j, bench, memo) == holds.standing_leaks(j, bench)
            now = T0 + dt.timedelta(days=20)
            assert holds.last_hold_test(j, bench, now, memo) == holds.last_hold_test(j, bench, now)

        a = _read(j, bench, "n2-A", 1, 150)
        b = _read(j, bench, "n2-A", 30, 140)
        check(1)
        hold(other, "n2-A", 30, f'{{"idle_drop": "{a}-{b}"}}', "idle-drop")  # another connection
        check(1)
        check(0)
        _read(j, bench, "n2-1", 40, 120)
        j.start_session(bench, None, _at(41))
        j.add_alarm(bench, "n2-1", "reserve-close", _at(42), "x")
        check(0)
        j.strike_reading(b, _at(43), "misread")  # the idle-drop test is withdrawn
        check(1)
        assert holds.judged_hold_tests(j, bench, memo)[0].withdrawn
        hold(j, "n2-1", 44)
        check(1)
        j.add_change(bench, "n2-1", _at(45), _at(45), 200e5 + AMB, "200 bar")  # n2-1's test: an earlier cylinder
        check(1)
        assert holds.judged_hold_tests(j, bench, memo)[1].earlier_cylinder
        assert holds.standing_leaks(j, bench, memo) == {}
