"""Liquefied gases by weight and contents near the critical point (issue 24, items 1 and 2).

References: CoolProp in a fresh process with its default (superancillary) build — a different
code path for saturation than ours — computing (ρ, T) pressures, saturated liquid densities and
the analytic derivative (∂ρ/∂T)_p; the audit's figures quoted in issue 24 (another CoolProp
release); closed forms where they exist.
"""

from __future__ import annotations

import json
import subprocess
import sys
import textwrap

import pytest
from clitools import limit_s, run

from benchwarden.core import gas as g
from benchwarden.core import supply
from benchwarden.render.checklist import build_checklist
from benchwarden.render.display import Display
from benchwarden.render.plan import format_plan
from benchwarden.render.supply import contents_refusal
from benchwarden.storage.profile import load_profile
from benchwarden.workflows.bench import assess
from benchwarden.workflows.findings import contents_findings

CO2 = g.parse_gas("co2")

CO2, SF6 = g.parse_gas("co2"), g.parse_gas("sf6")

_REFERENCE = textwrap.dedent("""
    import json
    import CoolProp.CoolProp as CP
    AS = CP.AbstractState("HEOS", "CO2")
    out = {}
    for name, fluid, rho, T in (("co2_750_303", "CO2", 750.0, 303.15), ("co2_750_308", "CO2", 750.0, 308.15),
                                ("sf6_1040_318", "SF6", 1040.0, 318.15), ("sf6_1040_323", "SF6", 1040.0, 323.15)):
        out[name] = CP.PropsSI("P", "D", rho, "T", T, fluid)
    out["co2_rhoL_295"] = CP.PropsSI("D", "T", 295.15, "Q", 0, "CO2")
    out["co2_rhoL_296"] = CP.PropsSI("D", "T", 296.15, "Q", 0, "CO2")
    for T in (304.05, 304.15):
        AS.update(CP.PT_INPUTS, 72e5 + 101325.0, T)
        out[f"co2_72_{T}"] = [AS.rhomass(), AS.first_partial_deriv(CP.iDmass, CP.iT, CP.iP)]
    print(json.dumps(out))
""")


@pytest.fixture(scope="module")
def ref():
    out = subprocess.run([sys.executable, "-c", _REFERENCE], capture_output=True, text=True, timeout=limit_s(120), check=True)
    return json.loads(out.stdout.strip().splitlines()[-1])




# ----------------------------------------------------------------------------- item 1: by weight


def test_co2_at_its_filling_ratio_is_two_phase_then_liquid_full_then_supercritical(ref):
    # issue 24: 0.75 kg/L in 50 L is liquid-full above about 22 °C and supercritical at 35 °C
    cold = supply.state_by_weight(CO2, 37.5, 0.05, 293.15)
    warm = supply.state_by_weight(CO2, 37.5, 0.05, 303.15)
    hot = supply.state_by_weight(CO2, 37.5, 0.05, 308.15)
    assert (cold.phase, warm.phase, hot.phase) == ("two-phase", "liquid-full", "supercritical")
    # two-phase at the vapour pressure: Span & Wagner (1996) 5.7291 MPa at 20 °C (from memory)
    assert cold.pressure_abs_pa == pytest.approx(5.7291e6, rel=2e-4)
    assert warm.pressure_abs_pa == pytest.approx(ref["co2_750_303"], rel=1e-6)  # hydraulic, ~91.8 bar(a)
    assert hot.pressure_abs_pa == pytest.approx(ref["co2_750_308"], rel=1e-6)
    # becomes liquid-full where the saturated liquid density falls to 750 kg/m³: between 22 and 23 °C
    assert ref["co2_rhoL_295"] > 750.0 > ref["co2_rhoL_296"]
    assert 295.15 < cold.liquid_full_temperature_k < 296.15
    assert warm.liquid_full_temperature_k == cold.liquid_full_temperature_k


def test_sf6_at_its_filling_ratio_is_liquid_full_at_45_and_supercritical_at_50(ref):
    # issue 24: SF6 at 1.04 kg/L is liquid-full at 45 °C and supercritical at 50 °C (Tc 45.57 °C)
    at45 = supply.state_by_weight(SF6, 52.0, 0.05, 318.15)
    at50 = supply.state_by_weight(SF6, 52.0, 0.05, 323.15)
    assert (at45.phase, at50.phase) == ("liquid-full", "supercritical")
    assert at45.pressure_abs_pa == pytest.approx(ref["sf6_1040_318"], rel=1e-6)
    assert at50.pressure_abs_pa == pytest.approx(ref["sf6_1040_323"], rel=1e-6)


def test_a_light_fill_never_becomes_liquid_full():
    # below the critical density (CO2: 467.6 kg/m³, Span & Wagner 1996) the liquid boils away on warming
    light = supply.state_by_weight(CO2, 10.0, 0.05, 293.15)   # 200 kg/m³
    assert light.phase == "two-phase" and light.liquid_full_temperature_k is None
    gas_only = supply.state_by_weight(CO2, 1.0, 0.05, 293.15)  # 20 kg/m³, below the vapour's 194 kg/m³
    assert gas_only.phase == "gas" and gas_only.pressure_abs_pa < g.saturation_pressure(CO2, 293.15)


@pytest.mark.parametrize("temperature", ["30 degC", "35 degC"])
def test_contents_by_weight_json_always_has_the_state_and_its_pressure(capsys, temperature):
    code, out, err = run(capsys, "contents", "--gas", "co2", "--volume", "50 L", "--gross", "87.5 kg", "--tare",
                         "50 kg", "--temperature", temperature, "--json")
    assert code == 0, err
    d = json.loads(out)
    assert d["phase"] in ("liquid-full", "supercritical")
    assert d["pressure_abs_pa"] > 9e6 and d["pressure_gauge_pa"] == pytest.approx(d["pressure_abs_pa"] - 101325.0)
    codes = {f["code"] for f in d["findings"]}
    assert ("liquid-full" in codes) == (d["phase"] == "liquid-full")
    if d["phase"] == "liquid-full":
        f = next(f for f in d["findings"] if f["code"] == "liquid-full")
        assert f["severity"] == "warning" and "relief" in f["text"]
        assert f["values"]["liquid_full_temperature_k"] == pytest.approx(d["liquid_full_temperature_k"])


def test_contents_by_weight_needs_the_water_volume(capsys):
    code, out, err = run(capsys, "contents", "--gas", "co2", "--gross", "75 kg", "--tare", "68.5 kg")
    assert code == 2 and out == "" and "--volume" in err and "Traceback" not in err


def test_liquid_full_reaches_plan_checklist_and_findings(tmp_path):
    prof = tmp_path / "co2.toml"
    prof.write_text(textwrap.dedent("""
        [bench]
        name = "CO2 by weight"
        [ambient]
        temperature = "30 degC"
        hot_day = "38 degC"
        [session]
        duration = "1 h"
        [[supplies]]
        id = "co2-A"
        gas = "co2"
        water_volume = "50 L"
        service_pressure = "200 bar"
        test_pressure = "250 bar"
        gross = "87.5 kg"
        tare = "50 kg"
        reserve = "10 bar"
    """))
    p = load_profile(prof)
    a = assess(p, None)
    sp_ = a.plan.supplies[0]
    assert sp_.phase == "liquid-full" and sp_.pressure_abs_pa > 9e6  # not the vapour pressure
    assert any(f.code == "liquid-full" and f.subject == "co2-A" for f in a.findings)
    assert "LIQUID-FULL" in format_plan(a, Display())
    items = {i.id: i for sec in build_checklist(p, a).sections for i in sec.items}
    item = items["supply-contents:co2-A"]
    assert item.status == "warning" and "LIQUID-FULL" in item.figure


# ----------------------------------------------------------------------------- item 2: critical region


def test_co2_at_72_bar_is_answered_on_both_sides_of_the_critical_temperature(ref):
    # issue 24: refused at 30.9 °C before (73.0 bar(a) is below the vapour pressure there, 73.6);
    # audit figures 16.34 kg at 30.9 °C and 16.06 kg at 31.0 °C in 50 L
    p = 72e5 + 101325.0
    a = supply.contents(CO2, 0.05, p, 304.05)
    b = supply.contents(CO2, 0.05, p, 304.15)
    assert a.mass_kg == pytest.approx(16.34, abs=0.01) and b.mass_kg == pytest.approx(16.06, abs=0.01)
    assert a.mass_kg == pytest.approx(ref["co2_72_304.05"][0] * 0.05, rel=1e-6)
    assert b.mass_kg == pytest.approx(ref["co2_72_304.15"][0] * 0.05, rel=1e-6)
    # the local sensitivity against CoolProp's analytic (∂ρ/∂T)_p × V (audit: 2.6 kg/K at 31.0 °C)
    assert b.mass_sensitivity_kg_per_k == pytest.approx(ref["co2_72_304.15"][1] * 0.05, rel=0.02)
    assert abs(b.mass_sensitivity_kg_per_k) == pytest.approx(2.6, abs=0.05)
    for c in (a, b):
        assert c.mass_uncertainty_kg > 0.05 * c.mass_kg
        assert "contents-temperature-sensitive" in {f.code for f in contents_findings(c)}


def test_no_step_across_the_critical_region():
    # every 0.1 K from 30.7 to 31.4 °C is answered, and the mass changes smoothly (≤ 0.6 kg a step
    # where the sensitivity is ~3 kg/K) — no refusal next to an answer
    p = 72e5 + 101325.0
    masses = [supply.contents(CO2, 0.05, p, 273.15 + 30.7 + 0.1 * i).mass_kg for i in range(8)]
    assert all(m is not None for m in masses)
    steps = [m0 - m1 for m0, m1 in zip(masses, masses[1:], strict=False)]
    assert all(0 < s < 0.6 for s in steps), steps


def test_temperature_uncertainty_option_and_a_quiet_nitrogen_cylinder(capsys):
    base = ["contents", "--gas", "co2", "--volume", "50 L", "--pressure", "72 bar", "--temperature", "31 degC", "--json"]
    wide = json.loads(run(capsys, *base)[1])
    narrow = json.loads(run(capsys, *base, "--temperature-uncertainty", "0.1 K")[1])
    assert wide["temperature_uncertainty_k"] == 1.0 and narrow["temperature_uncertainty_k"] == 0.1
    # small interval: the uncertainty is the local slope × 0.1 K (to within the curvature)
    assert narrow["mass_uncertainty_kg"] == pytest.approx(abs(narrow["mass_sensitivity_kg_per_k"]) * 0.1, rel=0.15)
    assert wide["mass_uncertainty_kg"] > narrow["mass_uncertainty_kg"]
    code, out, _ = run(capsys, *base[:-1])
    assert code == 0 and "weigh the cylinder" in out and "kg/K" in out
    n2 = json.loads(run(capsys, "contents", "--gas", "n2", "--volume", "50 L", "--pressure", "200 bar",
                        "--temperature", "15 degC", "--json")[1])
    # nitrogen at 200 bar: m ∝ 1/(Z·T) roughly, so ∂m/∂T ≈ −m/T × ~1.3: well under 5 % for 1 K
    assert -0.08 < n2["mass_sensitivity_kg_per_k"] < -0.03 and n2["mass_uncertainty_kg"] < 0.01 * n2["mass_kg"]
    assert n2["findings"] == []


def test_liquid_full_co2_cylinder_is_a_hazard_not_a_vapour_pressure(capsys):
    c = supply.contents(CO2, 0.05, 81e5, 293.15)
    assert c.phase == "liquid-full" and "hydraulic" in contents_refusal(c, Display())
    for extra in ((), ("--json",)):
        code, out, err = run(capsys, "contents", "--gas", "co2", "--volume", "50 L", "--pressure", "80 bar",
                             "--temperature", "20 degC", *extra)
        assert code == 2 and out == "" and "liquid" in err and "vapour pressure" in err


def test_co2_filling_ratio_above_common_practice_is_flagged():
    # Common practice for CO2: at most 0.75 kg per litre of water capacity.
    ok = supply.contents_by_weight(CO2, 20.0, 13.0, volume_m3=0.010)   # 0.70 kg/L
    over = supply.contents_by_weight(CO2, 21.0, 13.0, volume_m3=0.010)  # 0.80 kg/L
    assert not ok.overfilled and over.overfilled and over.filling_ratio_kg_l == pytest.approx(0.8)
