"""Around the session: the room's safety case, toxic gases judged as themselves, a leak from a
finite cylinder, and the purge planner — each against a closed form or an independent solver."""

from __future__ import annotations

import json
import math
from pathlib import Path

import pytest
from clitools import run
from scipy.integrate import solve_ivp

from benchwarden.core import gas as g
from benchwarden.core import purge, room
from benchwarden.storage.profile import load_profile
from benchwarden.workflows.bench import assess

ROOT = Path(__file__).resolve().parents[1]
N2 = g.parse_gas("nitrogen")




def test_demo_room_is_judged_on_the_largest_cylinder_full(capsys, tmp_path):
    # The demo's 50 L nitrogen cylinder at 64 bar gives ~19.5 % if it escapes; full (200 bar at
    # 15 °C: 11.2 kg, 9.8 m³ at room conditions) into the 48 m³ room, displacement model
    # (BCGA GN11): C = 20.95·(48 − 9.8)/48 ≈ 16.7 % — hazardous: a STOP without its controls
    # (the uncontrolled case: the demo bench as shipped declares them, issue 23). Below 16 % it
    # would stay a STOP whatever is fitted (issue 25 item 4): the 36 m³ room it had before.
    text = (ROOT / "profiles" / "demo-teaching-bench.toml").read_text()
    assert "oxygen_monitor = true" in text
    uncontrolled = tmp_path / "uncontrolled.toml"
    uncontrolled.write_text(text.replace("oxygen_monitor = true", "oxygen_monitor = false"))
    prof = load_profile(uncontrolled)
    a = assess(prof)
    r = a.plan.room
    assert r is not None and r.release is not None and r.release.o2_percent_after_release > 18.5
    amb, T = prof.ambient_pa, prof.ambient.temperature
    m_full = g.density(N2, 288.15, prof.supplies[0].service_pressure.abs_at(amb)) * 0.05
    vg = m_full / g.density(N2, T, amb)
    assert r.o2_percent_worst_case == pytest.approx(20.95 * (48 - vg) / 48, rel=1e-9)
    assert r.o2_percent_worst_case == pytest.approx(16.7, abs=0.2)
    f = next(f for f in a.findings if f.code == "room-release")
    assert f.severity == "stop"
    shipped = assess(load_profile(ROOT / "profiles" / "demo-teaching-bench.toml"))
    assert not [f for f in shipped.findings if f.severity == "stop"]  # a STOP on the demo means something
    assert next(f for f in shipped.findings if f.code == "room-release").severity == "warning"
    small = tmp_path / "small.toml"
    small.write_text(text.replace('volume = "48 m3"', 'volume = "36 m3"'))
    assert next(f for f in assess(load_profile(small)).findings if f.code == "room-release").severity == "stop"
    code, out, _ = run(capsys, "plan", str(uncontrolled), "--json")
    assert json.loads(out)["room"]["o2_percent_worst_case"] == pytest.approx(r.o2_percent_worst_case)


def test_co2_at_ten_percent_is_toxic_whatever_the_oxygen_says(capsys):
    # 6.7 kg of CO2 into 36 m³: ~10 % CO2 while oxygen is still ~18.8 %. Exposure limits:
    # OSHA TWA 0.5 % (29 CFR 1910.1000), STEL 3 % (NIOSH, from memory).
    code, out, _ = run(capsys, "room", "--gas", "co2", "--room-volume", "36 m3", "--release", "6.7 kg", "--json")
    d = json.loads(out)
    assert code == 0 and d["gas_percent_after_release"] == pytest.approx(10.1, abs=0.3)
    assert d["o2_percent_after_release"] > 18.0
    assert any(h["kind"] == "toxic" for h in d["hazards"])
    code, out, _ = run(capsys, "room", "--gas", "co2", "--room-volume", "36 m3", "--release", "6.7 kg")
    lines = out.splitlines()
    assert lines.index(next(x for x in lines if "TOXIC" in x)) < lines.index(next(x for x in lines if "oxygen after" in x))


def test_finite_leak_against_numerical_integration():
    # Well-mixed room with exhaust ventilation and a leak that stops when its cylinder is empty:
    # integrate V·dC/dt = −R·C + (Q − R)·C0 (leak running, R < Q) then V·dC/dt = Q·(C0 − C) with scipy.
    V, R, Q, C0, gas_m3 = 36.0, 600 / 60e3, 54 / 3600, 20.95, 4.0  # 600 L/min, below the extract
    lk = room.leak_o2(V, R, Q, "exhaust", C0)
    fin = room.finite_leak(lk, gas_m3)
    T = gas_m3 / R
    sol = solve_ivp(lambda t, c: [(-Q * c[0] + (Q - R) * C0) / V], (0, T), [C0], rtol=1e-10, atol=1e-12)
    assert fin.minutes_to_empty == pytest.approx(T / 60)
    assert fin.o2_percent_minimum == pytest.approx(sol.y[0, -1], rel=1e-6)
    # it recovers afterwards (the old model's never-ending source gave a steady state instead)
    assert fin.o2_percent_minimum > lk.o2_percent_steady


def test_recovery_is_shown_only_when_the_level_fell_below_19_5(capsys):
    code, out, _ = run(capsys, "room", "--gas", "n2", "--room-volume", "40 m3", "--leak", "1 slpm",
                       "--ventilation", "2/h", "--json")
    assert json.loads(out)["minutes_to_recover"] is None  # NaN: it never fell below
    code, out, _ = run(capsys, "room", "--gas", "n2", "--room-volume", "40 m3", "--leak", "1 slpm",
                       "--ventilation", "2/h")
    assert "never below it" in out


def test_cycle_purge_against_the_closed_form():
    # x_n = x0·(p_low/p_high)^n (the dilution of each fill-and-vent cycle, well mixed)
    r = purge.cycle_purge(N2, 0.8e-3, 5.01e5, 1.01e5, 293.15, 0.2095, 10e-6)
    ratio = 1.01 / 5.01
    n = math.ceil(math.log(10e-6 / 0.2095) / math.log(ratio))
    assert r.cycles == n
    assert r.fractions[-1] == pytest.approx(0.2095 * ratio**n, rel=1e-12)
    assert r.fractions[-2] > 10e-6 >= r.fractions[-1]
    # gas used per cycle: the real-gas mass from 1.01 to 5.01 bar(a) in 0.8 L (~3.7 g of N2)
    assert r.gas_per_cycle_kg == pytest.approx(4.0e5 * 0.8e-3 * 0.0280134 / (8.314462618 * 293.15), rel=0.01)


def test_purge_floor_of_the_purge_gas_itself():
    with pytest.raises(Exception, match="own impurity"):
        purge.cycle_purge(N2, 1e-3, 5e5, 1e5, 293.15, 0.2095, 2e-6, purity_impurity=5e-6)
    r = purge.cycle_purge(N2, 1e-3, 5e5, 1e5, 293.15, 0.2095, 10e-6, purity_impurity=5e-6)
    assert all(x > 5e-6 for x in r.fractions)


def test_flush_against_numerical_integration():
    # V·dx/dt = Q·(x_f − x), solved with scipy until x = target; compare with the closed form
    V, p, T = 1.5e-3, 101325.0, 293.15
    mdot = 1.2505e-3 / 60 * 2  # 2 slpm of N2
    f = purge.flush(N2, V, mdot, p, T, 0.2095, 10e-6, 1e-6)
    Q = mdot / g.density(N2, T, p)

    def hit(t, x):
        return x[0] - 10e-6

    hit.terminal = True
    sol = solve_ivp(lambda t, x: [Q * (1e-6 - x[0]) / V], (0, 1e5), [0.2095], events=hit, rtol=1e-10, atol=1e-14)
    assert f.time_s == pytest.approx(sol.t_events[0][0], rel=1e-6)
    assert f.plug_flow_time_s == pytest.approx(V / Q)


def test_purge_command_json(capsys):
    code, out, err = run(capsys, "purge", "--gas", "nitrogen", "--volume", "0.8 L", "--high", "4 bar", "--low",
                         "0 bar", "--target", "10 ppm", "--flow", "1 slpm", "--json")
    d = json.loads(out)
    assert code == 0, err
    assert d["cycles"] == 7 and d["flush_time_s"] > 0
    code, out, err = run(capsys, "purge", "--gas", "nitrogen", "--volume", "0.8 L", "--high", "4 bar", "--low",
                         "0 bar", "--target", "10 furlongs")
    assert code == 2 and "ppm" in err


def test_order_by_date_from_a_synthetic_journal(tmp_path, capsys):
    # Readings losing exactly 1.0 kg of nitrogen a week (real-gas mass, CoolProp) for three weeks;
    # 10 days' lead time, no spares: order-by = now + (usable / (1 kg/week) in days) − 10 days.
    import datetime as dt

    from benchwarden.storage.journal import Journal
    from benchwarden.workflows.orders import consumption

    text = (ROOT / "profiles" / "demo-teaching-bench.toml").read_text().replace(
        'currency = "EUR"', 'currency = "EUR"\nlead_time = "10 d"')
    prof_path = tmp_path / "b.toml"
    prof_path.write_text(text)
    prof = load_profile(prof_path)
    s = prof.supplies[0]
    amb, T = prof.ambient_pa, 294.15
    now = dt.datetime.now().astimezone().replace(microsecond=0)
    m0 = g.density(N2, T, 150e5) * s.water_volume
    jpath = tmp_path / "j.sqlite3"
    with Journal(jpath) as j:
        for week in range(4):
            m = m0 - 1.0 * week
            p = g.pressure_from_density(N2, m / s.water_volume, T)
            at = (now - dt.timedelta(days=7 * (3 - week))).isoformat(timespec="seconds")
            j.add_reading(None, s.id, at, p, "x", T, at, bench=prof.bench.name, ambient_pa=amb)
        c = consumption(j, prof, s.id)
    assert c is not None and c.kg_per_week == pytest.approx(1.0, rel=1e-6) and c.spread_kg_per_week < 1e-6
    code, out, err = run(capsys, "status", str(prof_path), "--journal", str(jpath), "--json")
    st = json.loads(out)["supplies"][0]
    days = st["usable_mass_kg"] / (1.0 / 7.0)
    expected = (now + dt.timedelta(days=days - 10)).date().isoformat()
    assert st["consumption_kg_per_week"] == pytest.approx(1.0, rel=1e-6)
    assert st["order_by"] == expected


def test_retest_and_service_dates_are_findings(tmp_path):
    import datetime as dt

    from benchwarden.storage.profile import parse_profile

    text = (ROOT / "profiles" / "demo-teaching-bench.toml").read_text()
    past = (dt.date.today() - dt.timedelta(days=3)).isoformat()
    text = text.replace('currency = "EUR"', f'currency = "EUR"\nretest_due = {past}')
    text = text.replace('id = "reg-gaps"', f'id = "reg-gaps"\nservice_due = {past}')
    a = assess(parse_profile(text, "b.toml"))
    codes = {(f.code, f.severity) for f in a.findings}
    # a cylinder past its periodic test must not be used or refilled: a stop (issue 25 item 6)
    assert ("retest-overdue", "stop") in codes and ("service-overdue", "warning") in codes
