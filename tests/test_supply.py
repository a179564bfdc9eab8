"""Contents, heat-up and run time of a supply.

Outside references: the ideal-gas law (exact in the low-pressure limit), the magnitude of the
real-gas correction quoted by gas suppliers (about 5 % for nitrogen and 12 % for helium at
200–300 bar: common practice), and a Peng-Robinson isochoric heat-up from `thermo` as a band.
"""

import json
import math

import pytest
from clitools import run

from benchwarden.core import gas as g
from benchwarden.core import supply
from benchwarden.errors import InputError
from benchwarden.render.display import Display
from benchwarden.render.supply import contents_refusal
from benchwarden.units import ATM_PA, REFERENCES, parse_flow, pressure_abs

CO2 = g.parse_gas("co2")




N2 = g.parse_gas("nitrogen")
HE = g.parse_gas("helium")


def test_real_gas_correction_magnitude_common_practice():
    # Common practice: a 200 bar nitrogen cylinder holds ~5 % less than p·V/T says, a
    # 300 bar helium cylinder ~12 % less; argon holds *more* than p·V/T at 200 bar (Z < 1).
    n2 = supply.contents(N2, 0.05, 200e5, 288.15)
    he = supply.contents(HE, 0.05, 300e5, 288.15)
    ar = supply.contents(g.parse_gas("argon"), 0.05, 200e5, 288.15)
    assert -6.5 < n2.real_vs_ideal_percent < -3.5
    assert -14 < he.real_vs_ideal_percent < -10
    assert ar.real_vs_ideal_percent > 2


def test_low_pressure_contents_equal_ideal_gas():
    # Ideal-gas law m = pVM/(RT), exact as p → 0.
    c = supply.contents(N2, 0.05, 2000.0, 293.15)
    assert c.mass_kg == pytest.approx(2000.0 * 0.05 * N2.molar_mass / (g.R * 293.15), rel=1e-4)
    # the free volume uses the real density at 15 °C, 1 atm, where Z(N2) = 0.9997
    assert c.free_volume_m3 == pytest.approx(c.ideal_free_volume_m3, rel=5e-4)


def test_reading_gauge_as_absolute_changes_mass_by_about_half_a_percent():
    # 200 bar(g) vs 200 bar(a): the 1.013 bar difference is ~0.5 % of the pressure; with Z
    # rising with pressure the mass changes a little less (~0.45 %).
    m_g = supply.contents(N2, 0.05, 200e5 + ATM_PA, 288.15).mass_kg
    m_a = supply.contents(N2, 0.05, 200e5, 288.15).mass_kg
    assert 0.003 < (m_g - m_a) / m_a < 0.006


def test_reference_choice_changes_free_volume_by_temperature_ratio():
    m0 = supply.contents(N2, 0.05, 150e5, 288.15, REFERENCES["0C"]).free_volume_m3
    m15 = supply.contents(N2, 0.05, 150e5, 288.15, REFERENCES["15C"]).free_volume_m3
    assert m15 / m0 == pytest.approx(288.15 / 273.15, rel=1e-3)


def test_liquefied_co2_has_no_pressure_based_contents():
    co2 = g.parse_gas("co2")
    c = supply.contents(co2, 0.05, 58e5, 293.15)
    assert c.liquefied and c.mass_kg is None and c.flags == ("liquefied",)
    assert "weigh" in contents_refusal(c, Display())
    # above the critical temperature the pressure does tell the contents
    assert supply.contents(co2, 0.05, 80e5, 313.15).mass_kg > 0
    # below the vapour pressure only vapour is left: pressure-based contents again
    v = supply.contents(co2, 0.05, 20e5, 293.15)
    assert not v.liquefied and v.mass_kg > 0


def test_contents_by_weight():
    c = supply.contents_by_weight(g.parse_gas("sf6"), 60.0, 50.0, volume_m3=0.01)
    assert c.mass_kg == pytest.approx(10.0)
    # ideal free volume of 10 kg SF6 at 15 °C, 1 atm: n·R·T/p
    assert c.ideal_free_volume_m3 == pytest.approx(10.0 / 0.1460554 * g.R * 288.15 / ATM_PA)
    with pytest.raises(InputError, match="at least the tare weight"):
        supply.contents_by_weight(g.parse_gas("sf6"), 40.0, 50.0, volume_m3=0.01)
    with pytest.raises(InputError, match="water volume"):
        supply.contents_by_weight(g.parse_gas("sf6"), 60.0, 50.0)


def test_heat_up_low_pressure_is_gay_lussac():
    # Gay-Lussac (ideal gas, isochoric): p2/p1 = T2/T1.
    h = supply.heat_up(N2, 1e5, 288.15, 323.15)
    assert h.pressure_abs_pa / 1e5 == pytest.approx(323.15 / 288.15, rel=5e-4)


def test_heat_up_against_peng_robinson_band():
    # Independent check: Peng-Robinson (thermo) at the same molar volume, ±3 % on the rise.
    from chemicals import Pc, Tc, omega
    from thermo import PR

    cas = "7727-37-9"
    p1, T1, T2 = 201e5, 288.15, 338.15
    e1 = PR(Tc=Tc(cas), Pc=Pc(cas), omega=omega(cas), T=T1, P=p1)
    V = getattr(e1, "V_g", None) or e1.V_l
    e2 = PR(Tc=Tc(cas), Pc=Pc(cas), omega=omega(cas), T=T2, V=V)
    h = supply.heat_up(N2, p1, T1, T2)
    assert (h.pressure_abs_pa - p1) == pytest.approx(e2.P - p1, rel=0.05)


def test_heat_up_warnings():
    # 65 °C is above the 52 °C storage limit (CGA P-1, from memory)
    h = supply.heat_up(N2, 201e5, 288.15, 338.15, service_abs=201e5, test_abs=301e5)
    assert h.above_storage_limit and h.above_service_pressure and not h.above_test_pressure
    h = supply.heat_up(N2, 290e5, 288.15, 338.15, test_abs=301e5)
    assert h.above_test_pressure


def test_heat_up_findings_are_codes_worded_by_the_renderer():
    from benchwarden.render.display import Display
    from benchwarden.render.findings import describe
    from benchwarden.workflows.findings import heat_findings

    h = supply.heat_up(N2, 201e5, 288.15, 338.15, service_abs=201e5, test_abs=301e5)
    assert {(f.code, f.severity) for f in heat_findings(h)} == {("heat-above-service", "warning"),
                                                               ("heat-storage-limit", "warning")}
    h = supply.heat_up(N2, 290e5, 288.15, 338.15, service_abs=201e5, test_abs=301e5)
    found = heat_findings(h)
    assert [(f.code, f.severity) for f in found] == [("heat-above-test", "stop"), ("heat-storage-limit", "warning")]
    # worded in the display unit: 300 bar(g) = 4351 psig (1 psi = 6894.757 Pa, NIST SP 811)
    assert "above its test pressure 4351 psig" in describe(found[0], Display("psi", 101325.0))[0]


def test_mass_flow_of_standard_flow_uses_real_density_at_reference():
    # 1 slpm of N2 at 0 °C, 1 atm: ρ = 1.2504 kg/m³ (Z = 0.99955; NIST Webbook, from memory).
    assert supply.mass_flow(N2, parse_flow("1 slpm")) == pytest.approx(1.2504e-3 / 60, rel=2e-4)
    with pytest.raises(InputError, match="actual volume"):
        supply.mass_flow(N2, parse_flow("1 L/min"))


def test_runtime_mass_balance_and_inverse_scaling():
    r1 = supply.runtime(N2, 0.05, 181e5, 11e5, 293.15, 1e-4)
    r2 = supply.runtime(N2, 0.05, 181e5, 11e5, 293.15, 2e-4)
    assert r1.hours_to_reserve == pytest.approx(2 * r2.hours_to_reserve)
    assert r1.usable_mass_kg == pytest.approx(r1.mass_now_kg - r1.mass_reserve_kg)
    assert r1.hours_to_reserve * 3600 * 1e-4 == pytest.approx(r1.usable_mass_kg)
    assert math.isinf(supply.runtime(N2, 0.05, 181e5, 11e5, 293.15, 0.0).hours_to_reserve)


def test_runtime_rejects_reserve_above_reading():
    with pytest.raises(InputError, match="reserve"):
        supply.runtime(N2, 0.05, 10e5, 11e5, 293.15, 1e-4)


def test_two_phase_mixture_contents_use_a_real_flash(capsys, pr_flash):
    # Regression: the gas branch was forced and gave 158.6 kg/m³. thermo's Peng–Robinson flash
    # of the same state gives ~217 kg/m³ with vapour fraction ~0.64.
    mix = g.parse_gas("co2:0.95,nitrogen:0.05")
    T, p = 283.15, pressure_abs("50 bar")
    ref = pr_flash(["carbon dioxide", "nitrogen"]).flash(T=T, P=p, zs=[0.95, 0.05])
    c = supply.contents(mix, 0.05, p, T)
    assert c.phase == "two-phase"
    assert c.density_kg_m3 == pytest.approx(ref.rho_mass(), rel=0.03)
    assert c.vapour_fraction == pytest.approx(ref.VF, abs=0.03)
    code, out, _ = run(capsys, "contents", "--gas", "co2:0.95,nitrogen:0.05", "--volume", "50 L",
                       "--pressure", "50 bar", "--temperature", "10 degC", "--json")
    d = json.loads(out)
    assert code == 0 and d["phase"] == "two-phase" and d["density_kg_m3"] == pytest.approx(212.7, rel=1e-3)


def test_empty_cylinder_by_weight_is_a_clear_error():
    with pytest.raises(InputError, match="empty"):
        supply.contents_by_weight(CO2, 13.0, 13.0, volume_m3=0.01)
