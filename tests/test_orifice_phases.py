"""Liquid or two-phase at an orifice (issue 24, item 3).

Reference: CoolProp's PropsSI in a fresh process (default, superancillary build): the maximum of
ρ·√(2Δh) along the isentrope on a 400-point grid and the quality there; the liquid density for
the incompressible orifice equation; the audit's figures in issue 24 (86 % vapour, ~2.7×).
"""

from __future__ import annotations

import json
import math
import subprocess
import sys
import textwrap

import numpy as np
import pytest
from clitools import limit_s

from benchwarden.cli import main
from benchwarden.core import flow
from benchwarden.core import gas as g
from benchwarden.core.flow import orifice_flow

N2 = g.parse_gas("nitrogen")

CO2 = g.parse_gas("co2")
A = math.pi / 4 * 0.3e-3**2
P_UP = 55e5 + 101325.0

_REFERENCE = textwrap.dedent("""
    import json, math
    import CoolProp.CoolProp as CP
    out = {}
    for T in (293.15, 288.15):
        p1 = 55e5 + 101325.0
        h1, s1 = CP.PropsSI("H", "P", p1, "T", T, "CO2"), CP.PropsSI("S", "P", p1, "T", T, "CO2")
        best = (0.0, 0.0, -1.0)
        for i in range(400):
            p = p1 * (0.3 + 0.65 * i / 399)
            rho, h = CP.PropsSI("D", "P", p, "S", s1, "CO2"), CP.PropsSI("H", "P", p, "S", s1, "CO2")
            G = rho * math.sqrt(max(0.0, 2 * (h1 - h)))
            if G > best[0]:
                best = (G, p, CP.PropsSI("Q", "P", p, "S", s1, "CO2"))
        out[str(T)] = {"G": best[0], "q": best[2], "rho1": CP.PropsSI("D", "P", p1, "T", T, "CO2")}
    print(json.dumps(out))
""")


@pytest.fixture(scope="module")
def ref():
    out = subprocess.run([sys.executable, "-c", _REFERENCE], capture_output=True, text=True, timeout=limit_s(180), check=True)
    return json.loads(out.stdout.strip().splitlines()[-1])


def test_co2_vapour_condenses_at_the_throat(ref):
    o = orifice_flow(CO2, 0.3e-3, P_UP, 101325.0, 293.15)
    assert (o.inlet_phase, o.throat_phase) == ("gas", "two-phase")
    assert o.throat_vapour_fraction == pytest.approx(0.86, abs=0.01)          # audit: 86 % vapour
    assert o.throat_vapour_fraction == pytest.approx(ref["293.15"]["q"], abs=0.01)
    assert o.mass_flow_kg_s / (0.62 * A) == pytest.approx(ref["293.15"]["G"], rel=0.003)
    assert o.mass_flow_liquid_kg_s is None and o.mass_flow_hem_kg_s == o.mass_flow_kg_s
    # the comparison uses the ideal-gas ratio cp0/cv0 (CO2 at 20 °C: cp0 ≈ 37.1 J/(mol·K),
    # NIST-JANAF, from memory: 37.1/(37.1 − 8.314) ≈ 1.289), not the real cp/cv near saturation
    assert o.k == pytest.approx(1.289, abs=0.005)


def test_liquid_co2_feeds_the_larger_liquid_figure(ref):
    o = orifice_flow(CO2, 0.3e-3, P_UP, 101325.0, 288.15)
    assert o.inlet_phase == "liquid" and o.throat_phase == "two-phase"
    # homogeneous equilibrium against the fresh-process isentrope
    assert o.mass_flow_hem_kg_s / (0.62 * A) == pytest.approx(ref["288.15"]["G"], rel=0.003)
    # incompressible orifice: ṁ = Cd·A·√(2·ρ_L·Δp) (closed form, CoolProp's liquid density)
    liquid = 0.62 * A * math.sqrt(2 * ref["288.15"]["rho1"] * (P_UP - 101325.0))
    assert o.mass_flow_liquid_kg_s == pytest.approx(liquid, rel=1e-6)
    assert o.mass_flow_liquid_kg_s / o.mass_flow_hem_kg_s == pytest.approx(2.7, abs=0.1)   # audit: ~2.7×
    assert o.mass_flow_kg_s == o.mass_flow_liquid_kg_s
    assert o.ideal_mass_flow_kg_s is None and o.k is None


def test_orifice_json_keys_and_words(capsys):
    base = ["orifice", "--gas", "co2", "--diameter", "0.3 mm", "--upstream", "55 bar", "--downstream", "0 bar"]
    assert main([*base, "--temperature", "15 degC", "--json"]) == 0
    d = json.loads(capsys.readouterr().out)
    for key in ("inlet_phase", "throat_phase", "mass_flow_hem_kg_s", "mass_flow_liquid_kg_s", "mass_flow_kg_s"):
        assert key in d
    assert d["ideal_mass_flow_kg_s"] is None
    assert main([*base, "--temperature", "15 degC"]) == 0
    out = capsys.readouterr().out
    assert "inlet phase" in out and "liquid (short orifice)" in out and "ideal-gas" not in out
    assert main([*base, "--temperature", "20 degC"]) == 0
    assert "two-phase (86 % vapour by mass)" in capsys.readouterr().out


@pytest.mark.parametrize("name, thermo_id, p_bar, ideal_off, tol", [
    ("hydrogen", "hydrogen", 700.0, -0.10, 0.04),
    ("co2", "carbon dioxide", 40.0, 0.17, 0.01),
    ("nitrogen", "nitrogen", 200.0, -0.02, 0.01),
])
def test_real_gas_nozzle_against_peng_robinson_isentrope(pr_flash, name, thermo_id, p_bar, ideal_off, tol):
    # Maximum of ρ·√(2Δh) along the isentrope, computed independently with thermo's
    # Peng–Robinson (p, s) flash on a 200-point grid. The ideal-gas nozzle with real k is off
    # by about ideal_off (sign and size as reproduced in the issue).
    gas_ = g.parse_gas(name)
    p1, T1 = (p_bar + 1.01325) * 1e5, 293.15
    fl = pr_flash([thermo_id])
    s0 = fl.flash(T=T1, P=p1)
    MW = s0.MW() / 1000.0
    best = max(
        st.rho_mass() * math.sqrt(max(0.0, 2.0 * (s0.H() - st.H()) / MW))
        for st in (fl.flash(P=p1 * x, S=s0.S()) for x in np.linspace(0.3, 0.7, 200))
    )
    G, choked, _ = flow.real_nozzle_mass_flux(gas_, p1, T1, 1e5)
    assert choked and G == pytest.approx(best, rel=tol)
    rho = g.density(gas_, T1, p1)
    G_ideal, _ = flow.ideal_nozzle_mass_flux(rho, p1, g.heat_capacity_ratio(gas_, T1, p1), 1e5 / p1)
    assert G_ideal / G - 1 == pytest.approx(ideal_off, abs=0.03)


@pytest.mark.parametrize("p_up, p_down", [(3e5, 1e5), (2e5, 1.5e5), (5e5, 1e5)])
def test_real_nozzle_agrees_with_ideal_formula_at_a_few_bar(p_up, p_down):
    # Shapiro (1953) ideal-gas nozzle: within 0.5 % where nitrogen is nearly ideal.
    o = flow.orifice_flow(N2, 0.3e-3, p_up, p_down, 293.15)
    assert o.mass_flow_kg_s == pytest.approx(o.ideal_mass_flow_kg_s, rel=0.005)


def test_nitrogen_critical_flow_function_at_low_pressure():
    # ISO 9300 critical flow function of an ideal gas with γ = 1.4: C* = 0.6847; nitrogen at
    # 1 bar, 20 °C is within 0.1 % of it: G* = C*·p0/√(R·T0/M).
    p0, T0 = 1.0e5, 293.15
    G, _, _ = flow.real_nozzle_mass_flux(N2, p0, T0, 0.2e5)
    c_star = G * math.sqrt(g.R / N2.molar_mass * T0) / p0
    assert c_star == pytest.approx(0.6847, rel=0.002)
