"""Property-based tests of the core (hypothesis)."""

import math

import pytest
from hypothesis import HealthCheck, assume, given, settings
from hypothesis import strategies as st

from benchwarden.core import gas as g
from benchwarden.core import hold, supply
from benchwarden.units import ATM_PA, parse_flow, parse_pressure, pressure_abs

N2 = g.parse_gas("nitrogen")
GASES = ["nitrogen", "argon", "helium", "air", "oxygen", "hydrogen"]
FAST = settings(max_examples=40, deadline=None, suppress_health_check=[HealthCheck.too_slow])

pressures = st.floats(min_value=2e5, max_value=300e5)
temps = st.floats(min_value=250.0, max_value=330.0)


@FAST
@given(gas=st.sampled_from(GASES), p=pressures, dp=st.floats(min_value=1e3, max_value=50e5), T=temps)
def test_contents_rise_with_pressure(gas, p, dp, T):
    G = g.parse_gas(gas)
    assert supply.contents(G, 0.05, p + dp, T).mass_kg > supply.contents(G, 0.05, p, T).mass_kg


@FAST
@given(gas=st.sampled_from(GASES), p=pressures, T=temps, dT=st.floats(min_value=0.5, max_value=40.0))
def test_contents_fall_with_temperature_at_fixed_pressure(gas, p, T, dT):
    G = g.parse_gas(gas)
    assert supply.contents(G, 0.05, p, T + dT).mass_kg < supply.contents(G, 0.05, p, T).mass_kg


@FAST
@given(gas=st.sampled_from(GASES), p=pressures, T1=temps, T2=temps)
def test_heating_then_cooling_returns_the_start_pressure(gas, p, T1, T2):
    G = g.parse_gas(gas)
    up = supply.heat_up(G, p, T1, T2)
    back = supply.heat_up(G, up.pressure_abs_pa, T2, T1)
    assert back.pressure_abs_pa == pytest.approx(p, rel=1e-6)


@FAST
@given(p=st.floats(min_value=30e5, max_value=250e5), draw=st.floats(min_value=1e-6, max_value=1e-2),
       k=st.floats(min_value=1.1, max_value=10.0))
def test_runtime_scales_inversely_with_flow(p, draw, k):
    a = supply.runtime(N2, 0.05, p, 11e5, 293.15, draw)
    b = supply.runtime(N2, 0.05, p, 11e5, 293.15, draw * k)
    assert a.hours_to_reserve == pytest.approx(k * b.hours_to_reserve, rel=1e-9)
    # mass balance: mass at start − draw × time = mass at the reserve
    assert a.mass_now_kg - draw * a.hours_to_reserve * 3600 == pytest.approx(a.mass_reserve_kg, rel=1e-9)


@FAST
@given(p=pressures, T1=temps, T2=temps)
def test_hold_with_no_mass_change_gives_zero_leak_at_any_temperature_pair(p, T1, T2):
    rho = g.density(N2, T1, p)
    p2 = g.pressure_from_density(N2, rho, T2)
    r = hold.hold_two_readings(N2, 0.05, p, p2, 3600.0, T1, T2)
    assert abs(r.leak_rate_kg_s) < 1e-9 * r.mass_start_kg


@FAST
@given(v=st.floats(min_value=-0.9, max_value=1e4), unit=st.sampled_from(["bar", "psi", "kPa", "MPa", "mbar"]),
       amb=st.floats(min_value=70e3, max_value=110e3))
def test_gauge_absolute_round_trip(v, unit, amb):
    factor = {"bar": 1e5, "psi": 6894.757293168361, "kPa": 1e3, "MPa": 1e6, "mbar": 100.0}[unit]
    assume(v * factor + amb > 0)  # a gauge reading cannot be below vacuum
    p = parse_pressure(f"{v!r} {unit}", amb)
    a = parse_pressure(f"{p.abs_at(amb)!r} Pa(a)", amb)
    assert a.abs_at(amb) == pytest.approx(p.abs_at(amb))
    assert p.gauge_pa(amb) == pytest.approx(p.abs_at(amb) - amb)


@FAST
@given(v=st.floats(min_value=1e-3, max_value=1e4),
       unit=st.sampled_from(["sccm", "slpm", "slm", "scfh", "scfm", "Nm3/h", "NL/min", "g/min", "kg/h"]))
def test_flow_units_round_trip_through_kg_s(v, unit):
    f = parse_flow(f"{v!r} {unit}")
    m = supply.mass_flow(N2, f)
    assert m > 0
    # back: the same mass flow expressed in the unit's own terms
    if f.kind == "standard":
        rho_ref = g.density(N2, f.reference.temperature_k, f.reference.pressure_pa)
        assert m / rho_ref == pytest.approx(f.value, rel=1e-12)
        one = supply.mass_flow(N2, parse_flow(f"1 {unit}"))
        assert m / one == pytest.approx(v, rel=1e-9)
    else:
        assert m == pytest.approx(f.value)


@FAST
@given(amb=st.floats(min_value=60e3, max_value=110e3))
def test_zero_gauge_is_ambient(amb):
    assert pressure_abs("0 bar", amb) == amb
    assert not math.isnan(ATM_PA)
