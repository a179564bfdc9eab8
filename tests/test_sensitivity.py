"""The contents' sensitivity to temperature, ∂m/∂T at constant pressure (issue 28).

A single-phase state takes CoolProp's analytic (∂ρ/∂T)_p instead of a central difference of two
more flashes (two full phase-equilibrium flashes for a mixture). References: CoolProp's
``PropsSI`` (an independent call, its own state) for the analytic derivative, and a central
difference (±0.05 K) of ``PropsSI`` densities, the method used before.
"""

from __future__ import annotations

import pytest

from benchwarden.core import gas as g
from benchwarden.core import supply

V = 0.05

CASES = [
    ("helium:0.78,nitrogen:0.14,carbon dioxide:0.08", "HEOS::Helium[0.78]&Nitrogen[0.14]&CarbonDioxide[0.08]",
     118e5 + 99800.0, 292.15),
    ("nitrogen", "Nitrogen", 200e5 + 101325.0, 288.15),
    ("co2", "CO2", 30e5, 293.15),  # vapour below its vapour pressure (57.3 bar at 20 °C)
    ("argon", "Argon", 150e5, 253.15),
]


@pytest.mark.parametrize("name, fluid, p, T", CASES, ids=[c[1][:20] for c in CASES])
def test_single_phase_slope_is_coolprops_derivative_and_the_central_difference(name, fluid, p, T):
    CP = g.coolprop().CoolProp
    gas = g.parse_gas(name)
    slope, u_m, liquid = supply.temperature_sensitivity(gas, V, p, T, 1.0)
    analytic = CP.PropsSI("d(Dmass)/d(T)|P", "P", p, "T", T, fluid) * V
    central = (CP.PropsSI("Dmass", "P", p, "T", T + 0.05, fluid) - CP.PropsSI("Dmass", "P", p, "T", T - 0.05, fluid)) / 0.1 * V
    assert slope == pytest.approx(analytic, rel=1e-9)
    assert slope == pytest.approx(central, rel=1e-5)
    # the uncertainty still evaluates the model at T ± u_T (GUM 5.1.2, non-linear)
    m = CP.PropsSI("Dmass", "P", p, "T", T, fluid) * V
    ends = [CP.PropsSI("Dmass", "P", p, "T", T + d, fluid) * V - m for d in (-1.0, 1.0)]
    assert u_m == pytest.approx(max(abs(e) for e in ends), rel=1e-9) and not liquid


def test_a_saturated_vapour_keeps_the_central_difference():
    # CO2 just above its vapour pressure at 20 °C: the cylinder holds at least the saturated
    # vapour at p; where the vapour pressure at T' is above p, vapour at (p, T'). That model from
    # PropsSI, differenced over ±0.05 K and evaluated at T ± 1 K.
    CP = g.coolprop().CoolProp
    gas = g.parse_gas("co2")
    T = 293.15
    p = g.saturation_pressure(gas, T) * 1.001

    def m_ref(Tx: float) -> float:
        if p >= CP.PropsSI("P", "T", Tx, "Q", 0, "CO2"):
            return CP.PropsSI("Dmass", "P", p, "Q", 1, "CO2") * V
        return CP.PropsSI("Dmass", "P", p, "T", Tx, "CO2") * V

    slope, u_m, liquid = supply.temperature_sensitivity(gas, V, p, T, 1.0)
    assert liquid
    assert slope == pytest.approx((m_ref(T + 0.05) - m_ref(T - 0.05)) / 0.1, rel=1e-6)
    assert u_m == pytest.approx(max(abs(m_ref(T + d) - m_ref(T)) for d in (-1.0, 1.0)), rel=1e-6)
