"""A cylinder's whole life through the scriptable journal: readings any time, idle drops turned
into hold tests, near-empty as a state, cylinder changes, struck readings, weights."""

from __future__ import annotations

import datetime as dt
import json
from pathlib import Path

import pytest
from clitools import run

from benchwarden.errors import InputError
from benchwarden.storage.journal import Journal
from benchwarden.workflows.cylinder import parse_at

ROOT = Path(__file__).resolve().parents[1]
DEMO = str(ROOT / "profiles" / "demo-teaching-bench.toml")
PREMIX = str(ROOT / "profiles" / "premix-switch-bench.toml")


@pytest.fixture
def journal(tmp_path):
    return str(tmp_path / "journal.sqlite3")




def status(capsys, profile, journal):
    code, out, err = run(capsys, "status", profile, "--journal", journal, "--json")
    assert code == 0, err
    return json.loads(out)


def test_idle_drop_becomes_a_hold_test_with_the_same_leak_rate_as_hold(capsys, journal):
    # Friday evening 148 bar at 21 °C, Monday morning 138 bar at 21 °C, no session between:
    # the app's automatic hold test must equal `benchwarden hold` on the same drop (same method,
    # same gauge budget: the demo's 315 bar class 1.6 gauge, 50 L, ambient at 120 m).
    for p, at in (("148 bar", "2026-11-27T18:00"), ("138 bar", "2026-11-30T08:00")):
        code, _, err = run(capsys, "reading", DEMO, "n2-A", "--pressure", p, "--temperature", "21 degC",
                           "--at", at, "--journal", journal)
        assert code == 0, err
    st = status(capsys, DEMO, journal)
    s = st["supplies"][0]
    assert s["leak_verdict"] == "leak" and s["hold_test_kind"] == "idle-drop"
    assert any(f["code"] == "idle-drop-leak" and f["severity"] == "stop" for f in st["findings"])
    code, out, _ = run(capsys, "hold", "--gas", "nitrogen", "--volume", "50 L", "--start", "148 bar", "--end",
                       "138 bar", "--duration", "62 h", "--t-start", "21 degC", "--t-end", "21 degC",
                       "--gauge-range", "315 bar", "--gauge-class", "1.6", "--altitude", "120 m", "--json")
    ref = json.loads(out)
    assert s["leak_rate_sccm"] == pytest.approx(ref["leak_rate_sccm"], rel=1e-9)
    assert s["leak_rate_uncertainty_sccm"] == pytest.approx(ref["leak_rate_uncertainty_sccm"], rel=1e-9)
    # stored once, however often the state is read
    status(capsys, DEMO, journal)
    with Journal(journal) as j:
        assert len([h for h in j.hold_tests() if h.kind == "idle-drop"]) == 1


def test_a_drop_bracketing_a_session_is_not_an_idle_drop(capsys, journal):
    with Journal(journal) as j:
        sid = j.start_session("Demo: Larkfield teaching lab, bench 2 (N2 laser)", DEMO, "2026-11-28T10:00:00+00:00")
        j.stop_session(sid, "2026-11-28T14:00:00+00:00")
    for p, at in (("148 bar", "2026-11-27T18:00+00:00"), ("120 bar", "2026-11-30T08:00+00:00")):
        assert run(capsys, "reading", DEMO, "n2-A", "--pressure", p, "--at", at, "--journal", journal,
                   "--confirm")[0] == 0
    st = status(capsys, DEMO, journal)
    assert st["supplies"][0]["leak_verdict"] is None


def test_reading_below_the_set_point_is_a_stop_not_an_error(capsys, journal):
    code, out, err = run(capsys, "reading", DEMO, "n2-A", "--pressure", "2 bar", "--journal", journal, "--confirm")
    assert code == 0, err
    st = status(capsys, DEMO, journal)
    codes = {(f["code"], f["severity"]) for f in st["findings"]}
    assert ("regulator-not-regulating", "stop") in codes and ("at-or-below-reserve", "stop") in codes
    assert st["supplies"][0]["pressure_gauge_pa"] == pytest.approx(2e5)
    assert st["supplies"][0]["time_to_reserve_s"] == 0.0
    # the plan and the checklist still print
    assert run(capsys, "plan", DEMO, "--journal", journal)[0] == 0
    assert run(capsys, "checklist", DEMO, "--journal", journal)[0] == 0


def test_swap_starts_a_new_cylinder_and_nothing_straddles_it(capsys, journal):
    run(capsys, "reading", DEMO, "n2-A", "--pressure", "40 bar", "--at", "2026-11-27T18:00", "--journal", journal)
    code, out, err = run(capsys, "swap", DEMO, "n2-A", "--pressure", "198 bar", "--label", "N2-0417",
                         "--retest", "2031-05-01", "--at", "2026-11-28T09:00", "--journal", journal)
    assert code == 0, err and "leak" in out
    st = status(capsys, DEMO, journal)
    s = st["supplies"][0]
    assert s["pressure_gauge_pa"] == pytest.approx(198e5) and s["reading_source"] == "cylinder change"
    assert s["cylinder_label"] == "N2-0417" and s["retest_due"] == "2031-05-01"
    # a reading after the change pairs only with readings after it: no rise from 40 bar to ask about
    code, _, err = run(capsys, "reading", DEMO, "n2-A", "--pressure", "197 bar", "--at", "2026-11-29T09:00",
                       "--journal", journal)
    assert code == 0, err
    # 198 → 197 bar over a day cannot resolve the target with a class 1.6 gauge of 315 bar: no hold
    # test is stored from it (issue 23), and nothing pairs the 40 bar of the old cylinder
    s = status(capsys, DEMO, journal)["supplies"][0]
    assert s["leak_verdict"] is None and s["hold_tests"] == []


def test_implausible_readings_ask_first_and_a_struck_reading_is_kept_but_not_used(capsys, journal):
    run(capsys, "reading", DEMO, "n2-A", "--pressure", "148 bar", "--at", "2026-11-30T08:00", "--journal", journal)
    # 150 psi typed for 150 bar: the unit looks swapped — refused, nothing written
    code, out, err = run(capsys, "reading", DEMO, "n2-A", "--pressure", "150 psi", "--at", "2026-11-30T09:00",
                         "--journal", journal)
    assert code == 2 and out == "" and "psi for bar" in err and err.count("\n") == 1
    # a rise with no cylinder change: refused too
    code, _, err = run(capsys, "reading", DEMO, "n2-A", "--pressure", "160 bar", "--at", "2026-11-30T09:00",
                       "--journal", journal)
    assert code == 2 and "no cylinder change" in err
    # confirmed, it is recorded; then struck out, it stays in the journal but no longer counts
    assert run(capsys, "reading", DEMO, "n2-A", "--pressure", "150 psi", "--at", "2026-11-30T09:00",
               "--journal", journal, "--confirm")[0] == 0
    st = status(capsys, DEMO, journal)
    assert st["supplies"][0]["pressure_gauge_pa"] == pytest.approx(150 * 6894.757293168361)
    rid = st["supplies"][0]["last_reading_id"]
    assert run(capsys, "strike", DEMO, str(rid), "--reason", "typed psi for bar", "--journal", journal)[0] == 0
    st = status(capsys, DEMO, journal)
    assert st["supplies"][0]["pressure_gauge_pa"] == pytest.approx(148e5)
    with Journal(journal) as j:
        rows = j.supply_readings("Demo: Larkfield teaching lab, bench 2 (N2 laser)", "n2-A")
    assert [r.struck for r in rows] == [False, True] and rows[1].struck_reason == "typed psi for bar"


def test_weight_readings_of_a_liquefied_supply_feed_its_contents(capsys, journal):
    # SF6 supply of the premix bench: tare 18.4 kg; 25.0 kg on the scale is 6.6 kg of gas
    code, _, err = run(capsys, "reading", PREMIX, "sf6", "--weight", "25.0 kg", "--journal", journal)
    assert code == 0, err
    s = next(x for x in status(capsys, PREMIX, journal)["supplies"] if x["id"] == "sf6")
    assert s["mass_kg"] == pytest.approx(6.6) and s["liquefied"] is True
    code, _, err = run(capsys, "reading", PREMIX, "sf6", "--weight", "10 kg", "--journal", journal)
    assert code == 2 and "at least the tare weight of sf6 18.4 kg" in err


def test_at_times():
    now = dt.datetime(2026, 12, 1, 0, 10, tzinfo=dt.UTC)
    # regression: "23:55" typed at 00:10 was refused as "in the future"
    assert parse_at("23:55", now) == dt.datetime(2026, 11, 30, 23, 55, tzinfo=dt.UTC)
    assert parse_at("00:05", now) == dt.datetime(2026, 12, 1, 0, 5, tzinfo=dt.UTC)
    assert parse_at("2026-11-27T18:00", now).tzinfo is not None
    with pytest.raises(InputError, match="future"):
        parse_at("2026-12-02T10:00", now)
    with pytest.raises(InputError, match="HH:MM"):
        parse_at("half past", now)


def test_a_profile_at_or_below_its_reserve_opens_and_plans(tmp_path, capsys):
    text = (ROOT / "profiles" / "demo-teaching-bench.toml").read_text().replace('reading = "64 bar"',
                                                                               'reading = "10 bar"')
    prof = tmp_path / "empty.toml"
    prof.write_text(text)
    code, out, err = run(capsys, "plan", str(prof), "--json")
    assert code == 0, err
    d = json.loads(out)
    assert any(f["code"] == "at-or-below-reserve" for f in d["findings"])


def test_export_reads_back_exactly_what_was_typed_at_altitude(capsys, journal, tmp_path):
    # regression: export converted stored absolute pressures back with 101 325 Pa although they
    # were stored with the profile's ambient (0.9989 bar at 120 m, ISO 2533): 146 bar came back
    # as 145.986 bar(g)
    import csv
    import io

    with Journal(journal) as j:
        sid = j.start_session("Demo: Larkfield teaching lab, bench 2 (N2 laser)", DEMO,
                              dt.datetime.now().astimezone().isoformat(timespec="seconds"))
    for p in ("146 bar", "145.5 bar"):
        assert run(capsys, "reading", DEMO, "n2-A", "--pressure", p, "--journal", journal)[0] == 0
    code, out, _ = run(capsys, "export", str(sid), "--journal", journal)
    rows = list(csv.DictReader(io.StringIO(out)))
    assert [float(r["pressure_gauge_pa"]) / 1e5 for r in rows] == [146.0, 145.5]
    assert [r["typed"] for r in rows] == ["146 bar", "145.5 bar"]


def test_a_fall_the_gauge_cannot_resolve_sets_no_order_date(capsys, journal):
    # a newcomer's trial: a new cylinder at 198 bar, then 190 bar 33 s later, gave "order the next
    # cylinder now: the gas lasts 0 days". The demo's 315 bar class 1.6 gauge (EN 837-1: MPE 5.04
    # bar) reads a difference to ±8.2 bar (k = 2, GUM): an 8 bar fall is no consumption
    for argv in (["swap", DEMO, "n2-A", "--pressure", "198 bar", "--at", "2026-11-25T09:00:00"],
                 ["reading", DEMO, "n2-A", "--pressure", "190 bar", "--at", "2026-11-25T09:00:33", "--confirm"]):
        code, _, err = run(capsys, *argv, "--journal", journal)
        assert code == 0, err
    st = status(capsys, DEMO, journal)
    sup = next(s for s in st["supplies"] if s["id"] == "n2-A")
    assert sup["order_by"] is None
    assert not [f for f in st["findings"] if f["code"] in ("order-now", "order-soon")]
    # a fall the gauge does resolve, 190 → 170 bar over a day, is consumption again
    code, _, err = run(capsys, "reading", DEMO, "n2-A", "--pressure", "170 bar", "--at", "2026-11-26T09:00",
                       "--journal", journal)
    assert code == 0, err
    sup = next(s for s in status(capsys, DEMO, journal)["supplies"] if s["id"] == "n2-A")
    assert sup["order_by"] is not None


def test_a_cylinder_change_fill_is_not_struck_out_alone(capsys, journal):
    # Regression: striking the fill reading of a swap left the change's own copy of the fill
    # counting (198 bar) while status named the profile as its source.
    run(capsys, "reading", DEMO, "n2-A", "--pressure", "146 bar", "--at", "2026-11-28T08:05", "--journal", journal)
    assert run(capsys, "swap", DEMO, "n2-A", "--pressure", "198 bar", "--at", "2026-11-28T08:10",
               "--journal", journal)[0] == 0
    fill = status(capsys, DEMO, journal)["supplies"][0]["last_reading_id"]
    code, out, err = run(capsys, "strike", DEMO, str(fill), "--reason", "typed 198 for 189", "--journal", journal)
    assert code == 2 and out == "" and err.count("\n") == 1 and "fill of the cylinder change" in err
    s = status(capsys, DEMO, journal)["supplies"][0]
    assert s["pressure_gauge_pa"] == pytest.approx(198e5) and s["reading_source"] == "cylinder change"
    # the way out it names: the change recorded again with the right fill takes its place
    assert run(capsys, "swap", DEMO, "n2-A", "--pressure", "189 bar", "--at", "2026-11-28T08:12",
               "--journal", journal)[0] == 0
    s = status(capsys, DEMO, journal)["supplies"][0]
    assert s["pressure_gauge_pa"] == pytest.approx(189e5) and s["reading_source"] == "cylinder change"
    # an ordinary reading of the new cylinder is struck out as before
    run(capsys, "reading", DEMO, "n2-A", "--pressure", "188 bar", "--at", "2026-11-28T09:00", "--journal", journal)
    rid = status(capsys, DEMO, journal)["supplies"][0]["last_reading_id"]
    assert run(capsys, "strike", DEMO, str(rid), "--reason", "wrong gauge", "--journal", journal)[0] == 0
    assert status(capsys, DEMO, journal)["supplies"][0]["pressure_gauge_pa"] == pytest.approx(189e5)
