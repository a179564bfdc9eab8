"""Throttle edges (issue 24, item 6): a gas sold liquefied read far above its vapour pressure is
refused; the dry-ice margin is reported and warned below 2 K; a reading just below the vapour
pressure is treated as saturated, and the output says so."""

from __future__ import annotations

import json
import math

import pytest
from clitools import run

from benchwarden.core import gas as g
from benchwarden.core import regulator
from benchwarden.core.regulator import throttle
from benchwarden.errors import InputError
from benchwarden.render.display import Display
from benchwarden.render.equipment import throttle_notes
from benchwarden.workflows.findings import outlet_findings

CO2 = g.parse_gas("co2")




def span_wagner_sublimation_k(p_pa: float) -> float:
    """Closed form: Span & Wagner (1996) eq. 3.12, ln(p/pt) = (Tt/T)·Σ a_i (1 − T/Tt)^t_i with
    Tt = 216.592 K, pt = 0.51795 MPa, a = (−14.740846, 2.4327015, −5.3061778), t = (1, 1.9, 2.9),
    solved here by bisection (written independently of the package)."""
    lo, hi = 150.0, 216.592
    for _ in range(200):
        T = 0.5 * (lo + hi)
        th = 1.0 - T / 216.592
        p = 0.51795e6 * math.exp(216.592 / T * (-14.740846 * th + 2.4327015 * th**1.9 - 5.3061778 * th**2.9))
        lo, hi = (T, hi) if p < p_pa else (lo, T)
    return 0.5 * (lo + hi)


def test_co2_far_above_its_vapour_pressure_is_refused(capsys):
    # issue 24: 150 bar(g) at 20 °C (vapour pressure 57.29 bar(a), Span & Wagner 1996, from memory)
    with pytest.raises(InputError, match="far above the vapour pressure") as exc:
        throttle(CO2, 151.01325e5, 4.01325e5, 293.15)
    assert "liquid-full" in str(exc.value) and "warmer" in str(exc.value) and "another gas" in str(exc.value)
    code, out, err = run(capsys, "throttle", "--gas", "co2", "--inlet", "150 bar", "--outlet", "3 bar",
                         "--temperature", "20 degC", "--json")
    assert code == 2 and out == "" and "vapour pressure" in err and "…" not in err


def test_co2_at_0c_to_3_bar_reports_its_dry_ice_margin(capsys):
    # issue 24 audit: leaves at −59.1 °C, 1.1 K above the dry-ice line
    p_sat = g.saturation_pressure(CO2, 273.15)
    t = throttle(CO2, p_sat, 4.01325e5, 273.15, saturated_vapour=True)
    assert t.outlet_temperature_k - 273.15 == pytest.approx(-59.1, abs=0.05)
    assert t.dry_ice_margin_k == pytest.approx(t.outlet_temperature_k - span_wagner_sublimation_k(4.01325e5), abs=1e-3)
    assert t.dry_ice_margin_k == pytest.approx(1.1, abs=0.05) and not t.solid_forms
    assert [f.code for f in outlet_findings("r", "co2", t.outlet_temperature_k, False, False, t.dry_ice_margin_k)] \
        == ["regulator-near-dry-ice"]
    code, out, _ = run(capsys, "throttle", "--gas", "co2", "--inlet", "33.8 bar", "--outlet", "3 bar",
                       "--temperature", "0 degC", "--json")
    d = json.loads(out)
    assert d["dry_ice_margin_k"] == pytest.approx(1.1, abs=0.1)
    assert [f["code"] for f in d["findings"]] == ["regulator-near-dry-ice"]
    assert d["findings"][0]["severity"] == "warning"


def test_margin_is_zero_where_dry_ice_forms_and_absent_for_nitrogen():
    t = throttle(CO2, 58.01e5, 1.5133e5, 293.15)
    assert t.solid_forms and t.dry_ice_margin_k == 0.0 and 0 < (t.solid_fraction or 0) < 1
    assert throttle(g.parse_gas("nitrogen"), 200e5, 5e5, 293.15).dry_ice_margin_k is None
    # far from the line: no warning (CO2 vapour at 40 °C, 60 bar(a) to 10 bar(a): above the triple point)
    warm = throttle(CO2, 60e5, 10e5, 313.15)
    assert warm.dry_ice_margin_k is not None and warm.dry_ice_margin_k > 2.0


def test_a_reading_within_5_percent_below_saturation_is_treated_as_saturated_and_said(capsys):
    p_sat = g.saturation_pressure(CO2, 293.15)
    near = throttle(CO2, 0.96 * p_sat, 1.5133e5, 293.15)
    assert near.inlet_saturated and "inlet-near-vapour-pressure" in near.flags
    sat = throttle(CO2, 0.96 * p_sat, 1.5133e5, 293.15, saturated_vapour=True)
    assert near.solid_fraction == pytest.approx(sat.solid_fraction, rel=1e-12)
    # conservative: the superheated vapour the reading alone means (here 94 %, outside the band) forms less
    superheated = throttle(CO2, 0.94 * p_sat, 1.5133e5, 293.15)
    assert not superheated.inlet_saturated and (superheated.solid_fraction or 0.0) < (near.solid_fraction or 0.0)
    code, out, _ = run(capsys, "throttle", "--gas", "co2", "--inlet", f"{0.96 * p_sat / 1e5:.3f} bar(a)",
                       "--outlet", "0.5 bar", "--temperature", "20 degC")
    assert code == 0 and "within 5 % below the vapour pressure" in out and "treated as saturated" in out


def test_the_plan_warns_near_the_dry_ice_line_and_shows_the_margin():
    import textwrap

    from benchwarden.render.display import Display
    from benchwarden.render.plan import format_plan
    from benchwarden.storage.profile import parse_profile
    from benchwarden.workflows.bench import assess

    prof = parse_profile(textwrap.dedent("""
        [bench]
        name = "CO2 at 0 °C"
        [ambient]
        temperature = "0 degC"
        [session]
        duration = "1 h"
        [[supplies]]
        id = "co2-A"
        gas = "co2"
        water_volume = "50 L"
        service_pressure = "200 bar"
        gross = "80 kg"
        tare = "50 kg"
        reserve = "10 bar"
        [[regulators]]
        id = "reg-A"
        supply = "co2-A"
        inlet_rating = "200 bar"
        outlet_max = "10 bar"
        set_point = "3 bar"
    """))
    a = assess(prof, None)
    rp = a.plan.regulators[0]
    # the same state as the throttle test above (saturated vapour at 0 °C to 3 bar(g)): 1.1 K
    assert rp.dry_ice_margin_k == pytest.approx(1.1, abs=0.05)
    assert any(f.code == "regulator-near-dry-ice" and f.severity == "warning" for f in a.findings)
    assert "K above the dry-ice line" in format_plan(a, Display())


def test_mixture_throttle_says_when_a_component_condenses(pr_flash):
    # CO2-rich mixture from 70 bar(a), 30 °C to 20 bar(a): the outlet enters the two-phase
    # region. thermo's Peng–Robinson (h, p) flash agrees: about −21.5 °C, vapour fraction 0.92.
    mix = g.parse_gas("co2:0.95,nitrogen:0.05")
    flasher = pr_flash(["carbon dioxide", "nitrogen"])
    for p_in, T_in, p_out in ((70e5, 303.15, 20e5), (60e5, 293.15, 15e5)):
        t = regulator.throttle(mix, p_in, p_out, T_in)
        inlet = flasher.flash(T=T_in, P=p_in, zs=[0.95, 0.05])
        outlet = flasher.flash(H=inlet.H(), P=p_out, zs=[0.95, 0.05])
        assert outlet.VF < 1.0
        assert t.liquid_forms and "component-condenses" in t.flags
        assert any("condenses" in n for n in throttle_notes(t, Display()))
        assert t.outlet_temperature_k == pytest.approx(outlet.T, abs=1.0)
        assert t.vapour_fraction == pytest.approx(outlet.VF, abs=0.03)
    # and a case that stays gas in both: 51 bar(a), 30 °C to 11 bar(a)
    t = regulator.throttle(mix, 51.01325e5, 11e5, 303.15)
    inlet = flasher.flash(T=303.15, P=51.01325e5, zs=[0.95, 0.05])
    outlet = flasher.flash(H=inlet.H(), P=11e5, zs=[0.95, 0.05])
    assert not t.liquid_forms and outlet.VF == 1.0
    assert t.outlet_temperature_k == pytest.approx(outlet.T, abs=2.0)


def test_liquid_co2_cylinder_to_half_a_bar_leaves_on_the_sublimation_line(capsys):
    # Regression: the outlet was pinned at the triple point (−56.6 °C). On the sublimation
    # line at 1.51 bar(a) it is about −73.5 °C (Span & Wagner 1996 eq. 3.12).
    code, out, _ = run(capsys, "throttle", "--gas", "co2", "--inlet", "57 bar", "--outlet", "0.5 bar",
                       "--temperature", "20 degC", "--json")
    d = json.loads(out)
    assert code == 0 and d["solid_forms"] is True
    assert d["outlet_temperature_k"] - 273.15 == pytest.approx(-73.5, abs=0.2)


def test_co2_vapour_inlet_leaves_as_vapour(capsys):
    # 50 bar(g) at 20 °C is below the vapour pressure (56.3 bar(g)): gas. Expanded to 1 atm it
    # leaves near −69 °C, above the −78.5 °C sublimation point: no solid.
    code, out, _ = run(capsys, "throttle", "--gas", "co2", "--inlet", "50 bar", "--outlet", "0 bar",
                       "--temperature", "20 degC", "--json")
    d = json.loads(out)
    assert code == 0 and d["solid_forms"] is False
    assert d["outlet_temperature_k"] - 273.15 == pytest.approx(-69.2, abs=0.5)
    assert d["outlet_temperature_k"] > g.sublimation_temperature(CO2, 101325.0)
