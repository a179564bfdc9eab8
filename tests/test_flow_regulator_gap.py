"""Draw flows, regulator throttling and gap breakdown against outside sources."""

import json
import math

import numpy as np
import pytest
from clitools import run

from benchwarden.core import flow, gap, regulator
from benchwarden.core import gas as g
from benchwarden.errors import InputError

N2 = g.parse_gas("nitrogen")


# ----------------------------------------------------------------------------- flows


def test_critical_pressure_ratio_gamma_1_4():
    # Textbook value 0.528 for k = 1.4 (e.g. Shapiro 1953); cross-check with `fluids`.
    from fluids.compressible import P_critical_flow

    assert flow.critical_pressure_ratio(1.4) == pytest.approx(0.5283, abs=1e-4)
    assert flow.critical_pressure_ratio(1.4) == pytest.approx(P_critical_flow(1.0, 1.4), rel=1e-9)


def test_choked_orifice_matches_ideal_gas_textbook_formula_at_low_pressure():
    # Ideal-gas choked mass flow (Shapiro 1953, eq. 4.17):
    # ṁ = Cd·A·p0·√(k·M/(R·T0))·(2/(k+1))^((k+1)/(2(k−1)))
    p0, T0, d, cd, k = 3e5, 293.15, 0.2e-3, 0.62, 1.4
    A = math.pi * d**2 / 4
    ideal = cd * A * p0 * math.sqrt(k * N2.molar_mass / (g.R * T0)) * (2 / (k + 1)) ** ((k + 1) / (2 * (k - 1)))
    r = flow.orifice_flow(N2, d, p0, 1e5, T0, cd)
    assert r.choked
    assert r.mass_flow_kg_s == pytest.approx(ideal, rel=5e-3)


def test_orifice_is_continuous_at_the_critical_ratio():
    o = flow.orifice_flow(N2, 0.3e-3, 2e5, 1e5, 293.15)
    r_star = o.critical_ratio
    below = flow.orifice_flow(N2, 0.3e-3, 2e5, 2e5 * r_star * 0.9999, 293.15)
    above = flow.orifice_flow(N2, 0.3e-3, 2e5, 2e5 * r_star * 1.0001, 293.15)
    assert below.choked and not above.choked
    assert below.mass_flow_kg_s == pytest.approx(above.mass_flow_kg_s, rel=1e-3)


def test_valve_flow_against_iec_60534_hand_calculation():
    # IEC 60534-2-1 gas equation (turbulent), Q [m³/h at 0 °C, 1 atm] = N9·Kv·p1·Y·√(x/(M·T1·Z)),
    # N9 = 24.6 for p in kPa (from memory), Y = 1 − x/(3·Fγ·xT), x limited to Fγ·xT.
    p1, p2, T1, kv, xT = 3e5, 2.5e5, 293.15, 0.02, 0.7
    k = flow.heat_capacity_ratio(N2, T1, p1)
    Z = g.z_factor(N2, T1, p1)
    x = (p1 - p2) / p1
    Fg = k / 1.4
    Y = 1 - x / (3 * Fg * xT)
    Q = 24.6 * kv * (p1 / 1000) * Y * math.sqrt(x / (N2.molar_mass * 1000 * T1 * Z))
    v = flow.valve_flow(N2, kv, p1, p2, T1, xT)
    assert not v.choked
    assert v.standard_flow_slpm == pytest.approx(Q * 1000 / 60, rel=0.01)


def test_per_shot_flow():
    # 2 cm³ of N2 at 4 bar(a), 20 °C, 10 Hz. Hand calculation with the ideal gas
    # (ρ = p·M/(R·T) = 4.598 kg/m³; N2 at 4 bar is ideal within 0.2 %, Span et al. 2000):
    # ṁ = ρ·V·f = 9.197e-5 kg/s
    m = flow.per_shot_mass_flow(N2, 2e-6, 4e5, 293.15, 10.0)
    assert m == pytest.approx(4e5 * 0.0280134 / (8.314462618 * 293.15) * 2e-6 * 10.0, rel=0.003)
    with pytest.raises(InputError):
        flow.per_shot_mass_flow(N2, 0.0, 4e5, 293.15, 10.0)


def test_orifice_bad_input():
    with pytest.raises(InputError, match="below the upstream pressure"):
        flow.orifice_flow(N2, 0.2e-3, 1e5, 2e5, 293.15)
    with pytest.raises(InputError, match="above 0"):
        flow.orifice_flow(N2, 0.0, 2e5, 1e5, 293.15)


# ----------------------------------------------------------------------------- regulator


def test_joule_thomson_coefficients_near_room_temperature():
    # NIST Chemistry WebBook fluid data (from memory): μ_JT of N2 at 300 K, 1 bar ≈ 0.21 K/bar;
    # helium ≈ −0.06 K/bar (above its inversion temperature); hydrogen negative at 300 K
    # (inversion ≈ 200 K).
    mu_n2 = regulator.joule_thomson_coefficient(N2, 300.0, 1e5) * 1e5
    mu_he = regulator.joule_thomson_coefficient(g.parse_gas("helium"), 300.0, 1e5) * 1e5
    mu_h2 = regulator.joule_thomson_coefficient(g.parse_gas("hydrogen"), 300.0, 1e5) * 1e5
    assert mu_n2 == pytest.approx(0.21, abs=0.02)
    assert mu_he == pytest.approx(-0.06, abs=0.01)
    assert mu_h2 < 0


def test_nitrogen_cools_helium_and_neon_warm():
    assert regulator.throttle(N2, 150e5, 3e5, 293.15).temperature_change_k < -15
    assert regulator.throttle(g.parse_gas("argon"), 150e5, 3e5, 293.15).temperature_change_k < -20
    assert regulator.throttle(g.parse_gas("helium"), 150e5, 3e5, 293.15).temperature_change_k > 0
    assert regulator.throttle(g.parse_gas("neon"), 150e5, 3e5, 293.15).temperature_change_k > 0


def test_co2_forms_dry_ice_below_triple_point_pressure():
    # CO2 triple point 5.18 bar(a) (Span & Wagner 1996): vapour off liquid at 20 °C expanded
    # to 1.5 bar(a) leaves on the sublimation line (about −73.6 °C there) — solid forms.
    # Expanded only to 20 bar(a) it does not.
    co2 = g.parse_gas("co2")
    t = regulator.throttle(co2, 57e5, 1.5e5, 293.15, saturated_vapour=True)
    assert t.solid_forms
    assert t.outlet_temperature_k == pytest.approx(g.sublimation_temperature(co2, 1.5e5), abs=1e-6)
    t2 = regulator.throttle(co2, 57e5, 20e5, 293.15, saturated_vapour=True)
    assert not t2.solid_forms


def test_mixture_throttle_solves_enthalpy_balance():
    mix = g.parse_gas("helium:0.78,nitrogen:0.14,carbon dioxide:0.08")
    t = regulator.throttle(mix, 120e5, 2.5e5, 293.15)
    assert g.enthalpy(mix, t.outlet_temperature_k, 2.5e5) == pytest.approx(g.enthalpy(mix, 293.15, 120e5), rel=1e-6, abs=5.0)


def test_throttle_outlet_above_inlet_is_an_error():
    with pytest.raises(InputError, match="only reduces"):
        regulator.throttle(N2, 3e5, 5e5, 293.15)


def test_drift_single_vs_two_stage():
    # Common practice: single-stage regulators drift far more than two-stage ones. Hand
    # calculation from the supply-pressure effect as makers define it (outlet rise per unit
    # inlet fall): 1.5 % over a 180 bar fall is 2.7 bar; behind a 2 % second stage, 0.054 bar.
    one = regulator.outlet_drift(5e5, 200e5, 20e5, (0.015,))
    two = regulator.outlet_drift(5e5, 200e5, 20e5, (0.015, 0.02))
    assert one - 5e5 == pytest.approx(0.015 * 180e5)
    assert two - 5e5 == pytest.approx(0.015 * 0.02 * 180e5)
    with pytest.raises(InputError):
        regulator.outlet_drift(5e5, 200e5, 20e5, (1.5,))


# ----------------------------------------------------------------------------- gap


def test_air_breaks_down_near_30_kv_per_cm_at_1_atm():
    # Common textbook figure: about 30 kV/cm for a 1 cm uniform gap in air at 1 atm, 20 °C
    # (Kuffel, Zaengl & Kuffel 2000, ch. 2: ≈ 31.5 kV at 1 cm).
    b = gap.breakdown(g.parse_gas("air"), 0.01, 101325.0, 293.15)
    assert 29.0 < b.breakdown_kv < 33.0


def test_kuffel_formula_worked_values():
    # U = 6.72·√(pd) + 24.36·pd kV (pd in bar·cm at 20 °C): at pd = 1 → 31.08 kV; pd = 10 → 264.85 kV.
    assert gap.air_uniform_field_kv(1.0) == pytest.approx(31.08, abs=0.01)
    assert gap.air_uniform_field_kv(10.0) == pytest.approx(264.85, abs=0.01)


def test_paschen_minimum_for_air():
    # Measured Paschen minimum for air: ≈ 327 V near 0.57 Torr·cm (widely quoted, from memory).
    # Paschen's law with Raizer's A = 15, B = 365 and γ = 0.01 puts it at 305 V, 0.84 Torr·cm:
    # within 10 % in voltage and a factor 1.6 in p·d, the accuracy of the two-constant law.
    pd, v = gap.paschen_minimum(15.0, 365.0)
    assert v == pytest.approx(327.0, rel=0.10)
    assert 0.57 / 1.6 < pd < 0.57 * 1.6
    # a 7.5 µm gap at 1 atm is near that minimum: p·d = 0.57 Torr·cm
    assert 760 * 7.5e-4 == pytest.approx(0.57, abs=0.005)


def test_breakdown_rises_with_pressure_and_falls_with_temperature():
    lo = gap.breakdown(N2, 2e-3, 3e5, 293.15).breakdown_kv
    hi = gap.breakdown(N2, 2e-3, 5e5, 293.15).breakdown_kv
    hot = gap.breakdown(N2, 2e-3, 5e5, 330.0).breakdown_kv
    assert hi > lo and hot < hi


def test_sf6_is_stronger_and_helium_weaker_than_air():
    air = gap.breakdown(g.parse_gas("air"), 2e-3, 2e5).breakdown_kv
    # SF6 by its own streamer relation (89·pd + 0.38 kV, issue 24), no longer 2.5 × air
    assert gap.breakdown(g.parse_gas("sf6"), 2e-3, 2e5).breakdown_kv > 2.5 * air
    assert gap.breakdown(g.parse_gas("helium"), 2e-3, 2e5).breakdown_kv < 0.3 * air


def test_flashover_margin_statuses():
    assert gap.flashover_margin("a", 10.0, 30e-3, None).status == "ok"
    assert gap.flashover_margin("a", 26.0, 30e-3, None).status == "attention"
    assert gap.flashover_margin("a", 31.0, 30e-3, None).status == "stop"
    assert gap.flashover_margin("a", 21.0, 30e-3, 20.0).status == "stop"


def test_gap_zero_spacing_is_an_error():
    with pytest.raises(InputError, match="spacing"):
        gap.breakdown(N2, 0.0, 3e5)


@pytest.mark.parametrize("name", ["nitrogen", "air", "sf6", "helium", "argon", "neon:0.99,xenon:0.01"])
def test_breakdown_series_equals_scalar(name):
    import numpy as np

    gas = g.parse_gas(name)
    ps = np.geomspace(50.0, 20e5, 60)
    series = gap.breakdown_series(gas, 2e-3, ps, 300.0)
    scalar = [gap.breakdown(gas, 2e-3, float(p), 300.0).breakdown_kv for p in ps]
    np.testing.assert_allclose(series, scalar, rtol=1e-12)  # infinities (no breakdown) must match too


@pytest.mark.parametrize("name", sorted(gap.RELATIVE_STRENGTH) + ["he:0.8,n2:0.135,co2:0.065"])
def test_firing_voltage_never_falls_as_pressure_rises(name):
    # Right of the Paschen minimum the uniform-field breakdown voltage rises with p·d
    # (Paschen's law and the empirical formula are both increasing there).
    gas_ = g.parse_gas(name)
    p = np.geomspace(50.0, 2e7, 4000)
    v = gap.breakdown_series(gas_, 1e-3, p)
    finite = np.isfinite(v)
    i = int(np.argmin(np.where(finite, v, np.inf)))
    assert np.all(np.diff(v[i:]) >= -1e-12)


@pytest.mark.parametrize("name", sorted(gap.PASCHEN))
def test_firing_voltage_is_continuous_where_the_method_changes(name):
    # Regression: argon 1 mm gave 2.56 kV at 0.999 bar(a) and 0.91 kV at 1.000 bar(a).
    gas_ = g.parse_gas(name)
    p_join = gap.PD_JOIN * 1e5 / 0.1  # 1 mm: p·d = 0.1 bar·cm at 1 bar(a)
    below = gap.breakdown(gas_, 1e-3, p_join * (1 - 1e-6)).breakdown_kv
    above = gap.breakdown(gas_, 1e-3, p_join * (1 + 1e-6)).breakdown_kv
    assert below == pytest.approx(above, rel=1e-4)


def test_paschen_far_below_the_join_is_unchanged():
    # At 1 Torr·cm in air the joined curve is Paschen's law within 1 % (Raizer's constants).
    p = 1.0 * gap.TORR_PA / 0.1  # 1 Torr·cm over 1 mm
    kv = gap.breakdown(g.parse_gas("air"), 1e-3, p, gap.T_REF).breakdown_kv
    assert kv * 1000 == pytest.approx(gap.paschen_voltage(1.0, 15.0, 365.0), rel=0.01)


def test_beyond_validity_is_a_warning_not_a_number(capsys):
    b = gap.breakdown(N2, 0.1, 21e5)
    assert not b.within_validity
    code, out, _ = run(capsys, "gap", "--gas", "nitrogen", "--spacing", "10 cm", "--pressure", "20 bar")
    assert code == 0 and "WARNING" in out and " kV" not in out.split("breakdown")[1].split("\n")[0]
    code, out, _ = run(capsys, "gap", "--gas", "nitrogen", "--spacing", "10 cm", "--pressure", "20 bar", "--json")
    assert json.loads(out)["breakdown_kv"] is None
