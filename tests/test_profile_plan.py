"""Bench profiles (validation, errors with file, line and key) and the session plan."""

import datetime as dt
import json
import math
import re
from pathlib import Path

import pytest

from benchwarden.cli import main
from benchwarden.core import gas as g
from benchwarden.errors import ProfileError
from benchwarden.storage.profile import demo_profile_text, load_profile, parse_profile, with_reading
from benchwarden.units import parse_pressure
from benchwarden.workflows.build import SupplyModel as _SupplyModel
from benchwarden.workflows.build import build_plan

ROOT = Path(__file__).resolve().parents[1]
PROFILES = sorted((ROOT / "profiles").glob("*.toml"))


def test_shipped_profiles_load_and_demo_is_bundled():
    assert len(PROFILES) >= 2
    for p in PROFILES:
        load_profile(p)
    assert demo_profile_text() == (ROOT / "profiles" / "demo-teaching-bench.toml").read_text()


@pytest.mark.parametrize("path", PROFILES, ids=lambda p: p.name)
def test_plan_mass_balance(path):
    # Mass at start − draw × time to reserve = mass at the reserve pressure, and the projected
    # pressure at the reserve time equals the reserve pressure.
    prof = load_profile(path)
    plan = build_plan(prof)
    for sp in plan.supplies:
        s = prof.supply(sp.id)
        model = _SupplyModel(s.gas, s.water_volume, sp.temperature_k,
                             max(sp.pressure_abs_pa, s.service_pressure.abs_at(plan.ambient_pa)) * 1.02, plan.ambient_pa)
        m_end = sp.mass_kg - sp.draw_kg_s * sp.hours_to_reserve * 3600
        p_end = float(model.pressures([m_end])[0])
        if not sp.liquefied:
            assert p_end == pytest.approx(sp.reserve_abs_pa, rel=1e-4)
            # and the table agrees with a direct CoolProp density at the reserve (bounded error)
            assert m_end == pytest.approx(g.density(s.gas, sp.temperature_k, sp.reserve_abs_pa) * s.water_volume, rel=1e-4)
        assert sp.usable_mass_kg == pytest.approx(sp.draw_kg_s * sp.hours_to_reserve * 3600)
        assert len(sp.projection_pressure_abs_pa) == 200


def test_plan_agrees_with_runtime_command(capsys):
    prof = load_profile(ROOT / "profiles" / "demo-teaching-bench.toml")
    plan = build_plan(prof)
    sp = plan.supplies[0]
    main(["runtime", "--gas", "nitrogen", "--volume", "50 L", "--pressure", "64 bar",
          "--temperature", "21 degC", "--reserve", "15 bar", "--flow", f"{sp.draw_kg_s * 60000} g/min",
          "--ambient", f"{plan.ambient_pa} Pa", "--json"])
    d = json.loads(capsys.readouterr().out)
    assert d["hours_to_reserve"] == pytest.approx(sp.hours_to_reserve, rel=2e-4)


def test_plan_json_has_supplies_and_findings(capsys):
    code = main(["plan", str(ROOT / "profiles" / "premix-switch-bench.toml"), "--json"])
    d = json.loads(capsys.readouterr().out)
    assert code == 0
    assert all("hours_to_reserve" in s for s in d["supplies"])
    assert "findings" in d and all({"severity", "text", "figure"} <= set(f) for f in d["findings"])


def test_liquefied_supply_uses_weight():
    plan = build_plan(load_profile(ROOT / "profiles" / "premix-switch-bench.toml"))
    sf6 = next(s for s in plan.supplies if s.id == "sf6")
    assert sf6.liquefied and sf6.mass_kg == pytest.approx(27.9 - 18.4)
    # projected pressure stays at the vapour pressure while liquid remains
    assert sf6.projection_pressure_abs_pa[0] == pytest.approx(sf6.projection_pressure_abs_pa[-1])


def test_findings_ranked_and_demo_findings_present():
    plan = build_plan(load_profile(ROOT / "profiles" / "demo-teaching-bench.toml"))
    ranks = [("stop", "warning", "attention", "info").index(f.severity) for f in plan.findings]
    assert ranks == sorted(ranks)
    codes = {f.code for f in plan.findings}
    assert "room-release" in codes and "flashover" in codes


def test_outlet_drift_and_gap_voltage_follow_the_supply():
    plan = build_plan(load_profile(ROOT / "profiles" / "demo-teaching-bench.toml"))
    reg = next(r for r in plan.regulators if r.id == "reg-channel")
    sp = plan.supplies[0]
    outl = sp.projection_outlets_abs_pa["reg-channel"]
    assert outl[-1] > outl[0]  # single-stage outlet rises as the cylinder empties
    assert reg.outlet_at_reserve_abs_pa > reg.set_point_abs_pa
    kv = sp.projection_gap_kv["gap-main"]
    assert kv[-1] > kv[0]


BASE = demo_profile_text()


def _bad(replace_from: str, replace_to: str) -> str:
    assert replace_from in BASE
    return BASE.replace(replace_from, replace_to, 1)


@pytest.mark.parametrize(
    "text, fragment",
    [
        (_bad('water_volume = "50 L"', 'water_volume = "50 L"\nwater_colour = "blue"'), "unknown key"),
        (_bad('regulator = "reg-channel"', 'regulator = "reg-missing"'), "does not exist"),
        (_bad('set_point = "3 bar"', 'set_point = "12 bar"'), "out of range"),
        (_bad('spacing = "1.4 mm"', 'spacing = "0 mm"'), "greater than zero"),
        (_bad('reserve = "15 bar"', 'reserve = "250 bar"'), "reserve"),
        (_bad('reading = "64 bar"', 'reading = "400 bar"'), "test pressure"),
        (_bad('water_volume = "50 L"', 'water_volume = "50"'), "no unit"),
        (_bad('gas = "nitrogen"', 'gas = "nitrogenium"'), "unknown gas"),
        (_bad('water_volume = "50 L"', 'water_volume = 50'), "string"),
        ("[bench\nname=1", "not valid TOML"),
    ],
)
def test_bad_profiles_name_file_line_and_key(text, fragment):
    with pytest.raises(ProfileError) as exc:
        parse_profile(text, "bench.toml")
    msg = str(exc.value)
    assert fragment in msg and msg.startswith("bench.toml")
    assert "\n" not in msg


def test_error_line_points_at_the_key():
    text = _bad('set_point = "1.2 bar"', 'set_point = "1.2 bar"\nsetpoint = "1 bar"')
    with pytest.raises(ProfileError) as exc:
        parse_profile(text, "b.toml")
    line = int(str(exc.value).split(":")[1])
    assert text.splitlines()[line - 1].startswith("setpoint")
    assert "regulators[1].setpoint" in str(exc.value)


def test_bad_profile_on_command_line_exits_2(tmp_path, capsys):
    p = tmp_path / "b.toml"
    p.write_text(_bad('regulator = "reg-channel"', 'regulator = "nope"'))
    assert main(["plan", str(p)]) == 2
    err = capsys.readouterr().err
    assert err.count("\n") == 1 and "b.toml" in err
    assert main(["plan", str(tmp_path / "missing.toml")]) == 2


def test_altitude_sets_ambient():
    prof = parse_profile(BASE)
    assert prof.ambient_pa == pytest.approx(101325 * (1 - 2.25577e-5 * 120) ** 5.25588)
    assert not math.isnan(prof.ambient_pa)


def test_cost_shots_and_gauge_band_of_the_demo_supply():
    prof = load_profile(ROOT / "profiles" / "demo-teaching-bench.toml")
    plan = build_plan(prof)
    sp = plan.supplies[0]
    s = prof.supply(sp.id)
    amb = plan.ambient_pa
    # cost per hour = fill price / mass of a full cylinder (service pressure at 15 °C) × draw
    full = g.density(s.gas, 288.15, s.service_pressure.abs_at(amb)) * s.water_volume
    assert sp.cost_per_hour == pytest.approx(62.0 / full * sp.draw_kg_s * 3600)
    # shots to reserve at the session's 12 Hz
    assert sp.shots_to_reserve == pytest.approx(sp.hours_to_reserve * 3600 * 12)
    # gauge band: the reading ± the class 1.6 error on a 315 bar span (EN 837-1: 5.04 bar)
    mpe = 0.016 * 315e5
    lo, hi = sp.hours_band
    assert lo < sp.hours_to_reserve < hi
    m_res = g.density(s.gas, sp.temperature_k, sp.reserve_abs_pa) * s.water_volume
    m_hi = g.density(s.gas, sp.temperature_k, sp.pressure_abs_pa + mpe) * s.water_volume
    assert hi == pytest.approx((m_hi - m_res) / sp.draw_kg_s / 3600, rel=1e-4)


def test_plan_draws_and_regulators_come_from_the_core_functions():
    # Consistency (not an outside check): the plan must use the core functions unchanged; the
    # core functions are checked against outside sources in their own test files.
    from benchwarden.core import flow, regulator, supply

    prof = load_profile(ROOT / "profiles" / "demo-teaching-bench.toml")
    plan = build_plan(prof)
    amb, T = plan.ambient_pa, prof.ambient.temperature
    s = prof.supplies[0]
    p_now = s.reading.abs_at(amb)
    reg = {r.id: r for r in plan.regulators}
    d = {x.id: x for x in plan.draws}
    o = flow.orifice_flow(s.gas, 0.22e-3, reg["reg-channel"].set_point_abs_pa, 6000.0, T, 0.62)
    assert d["channel"].mass_flow_kg_s == pytest.approx(o.mass_flow_kg_s)
    assert d["gap-main"].mass_flow_kg_s == pytest.approx(
        flow.per_shot_mass_flow(s.gas, 1.5e-6, reg["reg-gaps"].set_point_abs_pa, T, 12.0))
    th = regulator.throttle(s.gas, p_now, reg["reg-gaps"].set_point_abs_pa, s.reading_temperature)
    assert reg["reg-gaps"].outlet_temperature_k == pytest.approx(th.outlet_temperature_k)
    hot = supply.heat_up(s.gas, p_now, s.reading_temperature, prof.ambient.hot_day, amb)
    assert reg["reg-gaps"].supply_hot_day_abs_pa == pytest.approx(hot.pressure_abs_pa)
    assert reg["reg-channel"].outlet_at_reserve_abs_pa == pytest.approx(
        regulator.outlet_drift(reg["reg-channel"].set_point_abs_pa, p_now, s.reserve.abs_at(amb), (0.012,)))


@pytest.mark.parametrize("old, new, line_of, key", [
    ('reserve = "15 bar"', 'reserve = "250 bar"', 'reserve = "250 bar"', "supplies[0].reserve"),
    ('supply = "n2-A"', 'supply = "n2-B"', 'supply = "n2-B"', "regulators[0].supply"),
    ('id = "gap-trigger"', 'id = "gap-main"', 'id = "gap-main"\nkind', "draws[1].id"),
])
def test_errors_across_sections_name_the_line_and_key(old, new, line_of, key):
    # the line is found by searching the edited text, independently of the profile's parser
    from benchwarden.errors import ProfileError
    from benchwarden.storage.profile import parse_profile

    text = (ROOT / "profiles" / "demo-teaching-bench.toml").read_text().replace(old, new, 1)
    first = text.index(line_of)
    if key == "draws[1].id":
        first = text.index(new, text.index(new) + 1)  # the second draw named gap-main
    line = text.count("\n", 0, first) + 1
    with pytest.raises(ProfileError, match=rf"b\.toml:{line}: {re.escape(key)}: "):
        parse_profile(text, "b.toml")


def test_a_kept_memo_gives_the_same_plan_as_a_fresh_computation():
    # issue 28: the app keeps property results between refreshes; the plan must not change
    import dataclasses as dc

    from benchwarden.workflows.build import build_plan
    from benchwarden.workflows.model import Memo

    for name in ("premix-switch-bench.toml", "demo-teaching-bench.toml"):
        prof = load_profile(ROOT / "profiles" / name)
        now = dt.datetime(2026, 12, 1, 9, 0, tzinfo=dt.UTC)
        fresh = build_plan(prof, now=now)
        memo = Memo()
        first = build_plan(prof, now=now, memo=memo)
        again = build_plan(prof, now=now, memo=memo)
        assert memo.values and dc.asdict(first) == dc.asdict(fresh) == dc.asdict(again)
        # a reading that changes the state is not served from the memo
        later = build_plan(with_reading(prof, prof.supplies[0].id, parse_pressure("40 bar"), 294.15), now=now, memo=memo)
        assert later.supplies[0].mass_kg < first.supplies[0].mass_kg


def test_co2_vapour_supply_gives_no_solid_stop_in_a_plan():
    # A CO2 cylinder read at 50 bar(g), 21 °C holds only vapour (vapour pressure 58.6 bar(a),
    # Span & Wagner 1996); throttled to a low set point it stays above the sublimation line.
    from benchwarden.storage.profile import demo_profile_text, parse_profile
    from benchwarden.workflows.build import build_plan

    text = (demo_profile_text().replace('gas = "nitrogen"', 'gas = "co2"')
            .replace('reading = "64 bar"', 'reading = "50 bar"')
            .replace('service_pressure = "200 bar"', 'service_pressure = "57 bar"')
            .replace('test_pressure = "300 bar"', 'test_pressure = "250 bar"')
            .replace('set_point = "3 bar"', 'set_point = "0.2 bar"'))
    plan = build_plan(parse_profile(text, "co2-bench.toml"))
    assert not any(f.code == "regulator-solid" for f in plan.findings)
    assert all(not r.solid_forms and r.outlet_temperature_k > 194.69 for r in plan.regulators)
    assert not plan.supplies[0].liquefied
