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


# -- the first frame: what a validated profile says, kept in the journal (issue 28)

PROFILES = [ROOT / "profiles" / "demo-teaching-bench.toml", ROOT / "profiles" / "premix-switch-bench.toml"]
T0 = dt.datetime(2026, 11, 20, 9, 0, tzinfo=dt.UTC)


def _at(minutes: int) -> str:
    return (T0 + dt.timedelta(minutes=minutes)).isoformat(timespec="seconds")


def _record(j: Journal, prof, step: str) -> None:
    """One more thing happens to every supply of the bench (see STEPS)."""
    from benchwarden.storage.samples import SampleStore

    b = prof.bench.name
    for k, s in enumerate(prof.supplies):
        p = 120e5 + 1e5 * k + prof.ambient_pa
        if step == "change":
            j.add_change(b, s.id, _at(10), _at(10), p, "120 bar", None, 293.15)
        elif step == "weighed change":
            j.add_change(b, s.id, _at(20), _at(20), None, None, 60.0, 293.15)
        elif step == "reading":
            j.add_reading(None, s.id, _at(30), p - 3e5, "x", 293.15, _at(30), bench=b, ambient_pa=prof.ambient_pa)
        elif step == "weight":
            j.add_reading(None, s.id, _at(40), None, "", 293.15, _at(40), bench=b, weight_kg=55.0)
        elif step in ("old sample", "new sample"):
            store = SampleStore(j)
            sid = store.stream(b, s.id, "pressure", 0.0)
            assert sid is not None
            t = (T0 + dt.timedelta(minutes=5 if step == "old sample" else 90)).timestamp()
            store.add(sid, [(t, p - 7e5)])


STEPS = ["change", "reading", "old sample", "new sample", "weight", "weighed change"]


@pytest.mark.parametrize("path", PROFILES, ids=lambda p: p.stem)
def test_first_figures_from_the_kept_view_equal_the_journal_state_of_the_validated_profile(tmp_path, path):
    # reference: the full path (the validated profile with the journal applied, as the plan and
    # status see it); the first frame's figures must be exactly those, at every step of a life
    from benchwarden.workflows.cylinder import first_readings, journal_profile, profile_view

    prof = load_profile(path)
    with Journal(tmp_path / "j.sqlite") as j:
        for n in range(len(STEPS) + 1):
            if n:
                _record(j, prof, STEPS[n - 1])
            full = journal_profile(prof, j)
            expected = {s.id: s.reading.abs_at(full.ambient_pa) for s in full.supplies
                        if s.reading is not None and s.gross is None and not s.gas.sold_liquefied}
            got = first_readings(profile_view(prof), j)
            assert got == expected, STEPS[:n]
    assert n == len(STEPS) and not got  # weighed at the end: no pressure before the equation of state


def test_a_view_is_kept_only_for_the_exact_text_validated(tmp_path, monkeypatch):
    from benchwarden.storage import profile_view as pv
    from benchwarden.workflows.cylinder import profile_view
    from benchwarden.workflows.session import SessionState

    path = tmp_path / "bench.toml"
    text = PROFILES[1].read_text()
    path.write_text(text)
    with Journal(tmp_path / "j.sqlite") as j:
        st = SessionState(path, j)
        assert st.first_view() is None  # never validated
        st.load(plan=False)
        assert st.first_view() == profile_view(load_profile(path))
        assert [s.weighed for s in st.first_view().supplies] == [False, True]
        path.write_text(text + "# a comment changes the text\n")
        assert st.first_view() is None
        path.write_text(text)
        assert st.first_view() is not None
        monkeypatch.setattr(pv, "__version__", "0.0.0-another")
        assert st.first_view() is None  # kept by another version of benchwarden
        monkeypatch.undo()
        what = f"profile-view {path.resolve()}"
        key = j.derived("", "", what)[0]
        for bad in ["{", '{"bench": "b"}', '{"bench":"b","ambient_pa":NaN,"pressure_unit":"bar","supplies":[]}',
                    '{"bench":"b","ambient_pa":-1,"pressure_unit":"bar","supplies":[]}']:
            j.keep_derived("", "", what, key, bad)
            assert st.first_view() is None, bad  # a malformed kept view is ignored, never an error


FIRST_FRAME = """
import sys
from benchwarden.storage.journal import Journal
from benchwarden.workflows.session import SessionState
from benchwarden.workflows.cylinder import first_readings
with Journal(sys.argv[2]) as j:
    view = SessionState(sys.argv[1], j).first_view()
    figures = first_readings(view, j)
print(sorted(m for m in sys.modules if m.split(".")[0] in ("pydantic", "CoolProp", "numpy")), figures)
"""


def test_a_start_with_a_kept_view_reads_no_profile_models_before_its_first_figures(tmp_path):
    import subprocess
    import sys

    from benchwarden.workflows.session import SessionState

    with Journal(tmp_path / "j.sqlite") as j:
        SessionState(PROFILES[0], j).load(plan=False)
    out = subprocess.run([sys.executable, "-c", FIRST_FRAME, str(PROFILES[0]), str(tmp_path / "j.sqlite")],
                         capture_output=True, text=True, check=True).stdout
    assert out.startswith("[] {'n2-A': ") and "6499891.7" in out  # 64 bar(g) on the demo's ambient


def test_a_profile_broken_after_its_view_was_kept_is_refused_before_the_screen(tmp_path, capsys, monkeypatch):
    from clitools import run

    from benchwarden.workflows.session import SessionState

    path = tmp_path / "bench.toml"
    text = PROFILES[0].read_text()
    path.write_text(text)
    with Journal(tmp_path / "j.sqlite") as j:
        SessionState(path, j).load(plan=False)
    path.write_text(text.replace('id = "n2-A"', 'id = "n2 A!"', 1))
    monkeypatch.setenv("TERM", "xterm-256color")
    code, out, err = run(capsys, "--journal", str(tmp_path / "j.sqlite"), str(path))
    assert code == 2 and err.count("\n") == 1 and "bench.toml" in err
