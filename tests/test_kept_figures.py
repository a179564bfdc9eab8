"""Figures the record keeps (issue 28): a status recomputes only what changed, and a kept figure is
never stale — each is checked against the same figure computed afresh."""

from __future__ import annotations

import datetime as dt
from pathlib import Path

import pytest

from benchwarden.core import gas as g
from benchwarden.storage.journal import Journal
from benchwarden.storage.profile import load_profile
from benchwarden.workflows import orders

ROOT = Path(__file__).resolve().parents[1]
N2 = g.parse_gas("nitrogen")
COMPUTE = orders._consumption  # the computation itself, before any test counts its calls


def _journal(path: Path, prof, weeks: int = 4) -> None:
    # 1.0 kg of nitrogen a week (real-gas mass from CoolProp's density, as in test_around_session)
    s, T = prof.supplies[0], 294.15
    m0 = g.density(N2, T, 150e5) * s.water_volume
    t0 = dt.datetime(2026, 11, 1, 9, 0, tzinfo=dt.UTC)
    with Journal(path) as j:
        for week in range(weeks):
            p = g.pressure_from_density(N2, (m0 - 1.0 * week) / s.water_volume, T)
            at = (t0 + dt.timedelta(days=7 * week)).isoformat(timespec="seconds")
            j.add_reading(None, s.id, at, p, "x", T, at, bench=prof.bench.name, ambient_pa=prof.ambient_pa)


def _fresh(path: Path, prof):
    # the same figure computed afresh from the rows, nothing kept
    with Journal(path, readonly=True) as j:
        s = prof.supply(prof.supplies[0].id)
        rows = j.recent_readings(prof.bench.name, s.id, orders.CONSUMPTION_READINGS)
        changes = sorted(orders.stamp(c.at) for c in j.changes(prof.bench.name, s.id))
        return COMPUTE(prof, s, rows, changes)


def test_a_kept_consumption_is_used_until_what_it_depends_on_changes(tmp_path, monkeypatch):
    prof = load_profile(ROOT / "profiles" / "demo-teaching-bench.toml")
    sid = prof.supplies[0].id
    path = tmp_path / "j.sqlite3"
    _journal(path, prof)
    with Journal(path) as j:
        first = orders.consumption(j, prof, sid)
    assert first is not None and first.kg_per_week == pytest.approx(1.0, rel=1e-6)
    calls = []
    real = orders._consumption
    monkeypatch.setattr(orders, "_consumption", lambda *a: calls.append(1) or real(*a))
    with Journal(path) as j:
        assert orders.consumption(j, prof, sid) == first and calls == []  # kept: no density computed
        # a new reading (losing 3 kg in a week) changes it
        s, T = prof.supplies[0], 294.15
        m = g.density(N2, T, 150e5) * s.water_volume - 6.0
        at = "2026-11-29T09:00:00+00:00"
        rid = j.add_reading(None, sid, at, g.pressure_from_density(N2, m / s.water_volume, T), "x", T, at,
                            bench=prof.bench.name, ambient_pa=prof.ambient_pa)
        second = orders.consumption(j, prof, sid)
        assert calls == [1] and second == _fresh(path, prof) and second.kg_per_week > first.kg_per_week
        # striking it brings back the first figure
        j.strike_reading(rid, "2026-11-29T10:00:00+00:00", "misread")
        assert orders.consumption(j, prof, sid) == first == _fresh(path, prof) and len(calls) == 2
        # a cylinder change between two readings removes that interval
        j.add_change(prof.bench.name, sid, "2026-11-20T09:00:00+00:00", "2026-11-20T09:00:00+00:00")
        third = orders.consumption(j, prof, sid)
        assert third == _fresh(path, prof) and third.intervals == first.intervals - 1 and len(calls) == 3
    # another volume in the profile (the same journal) is another key
    bigger = prof.model_copy(update={"supplies": [prof.supplies[0].model_copy(update={"water_volume": 0.1})]
                                     + list(prof.supplies[1:])})
    with Journal(path) as j:
        assert orders.consumption(j, bigger, sid) == _fresh(path, bigger) and len(calls) == 4


def test_a_read_only_journal_computes_consumption_without_keeping_it(tmp_path):
    prof = load_profile(ROOT / "profiles" / "demo-teaching-bench.toml")
    path = tmp_path / "j.sqlite3"
    _journal(path, prof)
    with Journal(path, readonly=True) as j:
        c = orders.consumption(j, prof, prof.supplies[0].id)
        assert c is not None and c.kg_per_week == pytest.approx(1.0, rel=1e-6)
        assert j.derived(prof.bench.name, prof.supplies[0].id, "consumption") is None


# ----------------------------------------------------------------------------- hold-test logs


def _log_text(head: str, rows: int) -> str:
    body = "".join(f"{i * 0.5:.2f},{150 - 0.01 * i:.3f},{20 + 0.001 * i:.3f}\n" for i in range(rows))
    return head + "time (h),pressure (bar),temperature (degC)\n" + body


def test_a_log_reads_the_same_whatever_its_head_and_length():
    # the header found in the log's head or after a long block of comments, the numbers read by
    # numpy's parser or row by row (a comment line in the body): one result
    from benchwarden.storage.holdlog import parse_log

    plain = parse_log(_log_text("", 50))
    long_head = parse_log(_log_text("# exported by a data logger\n" * 400, 50))  # > 8 kB of comments
    commented = parse_log(_log_text("", 50).replace("\n3.00,", "\n# a note\n3.00,"))
    assert plain == long_head == commented
    assert list(plain.t_s[:2]) == [0.0, 1800.0] and plain.p_abs_pa[0] == pytest.approx(150e5 + 101325.0)
    assert plain.T_k is not None and plain.T_k[-1] == pytest.approx(20.049 + 273.15)


@pytest.mark.parametrize("cell", ["nan", "inf", "1_000", "0x10"])
def test_a_log_with_a_cell_numpy_would_take_is_read_row_by_row_and_refused(cell):
    from benchwarden.errors import InputError
    from benchwarden.storage.holdlog import parse_log

    text = _log_text("", 20).replace("\n2.00,149.960,", f"\n2.00,{cell},")
    with pytest.raises(InputError, match="log row 6"):
        parse_log(text)
