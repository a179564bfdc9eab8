"""Numbers at the edges of the range: phases, dry ice, nozzles at cylinder pressure, gap
voltage across the change of method, hold-test budgets, threads, typed numbers.

Each check names its outside source. "thermo" is Caleb Bell's `thermo` library with the
Peng–Robinson (1976) equation of state and its own phase-equilibrium flash: an independent
implementation of a different equation of state, so agreement is expected within a few
percent, not exactly.
"""

from __future__ import annotations

import json
import math
import os
import subprocess
import sys
import threading
from pathlib import Path

import numpy as np
import pytest

from benchwarden.cli import main
from benchwarden.core import flow, gap, hold, regulator, supply
from benchwarden.core import gas as g
from benchwarden.errors import InputError
from benchwarden.render.display import Display
from benchwarden.render.equipment import throttle_notes
from benchwarden.render.supply import contents_notes, contents_refusal
from benchwarden.storage.holdlog import parse_log
from benchwarden.units import parse_volume, pressure_abs

CO2 = g.parse_gas("co2")
N2 = g.parse_gas("nitrogen")
ROOT = Path(__file__).resolve().parents[1]


def run(capsys, *argv):
    try:
        code = main(list(argv))
    except SystemExit as exc:
        code = exc.code
    out, err = capsys.readouterr()
    return code, out, err


# ----------------------------------------------------------------------------- 1. CoolProp 8


@pytest.mark.slow
def test_coolprop_8_import_prints_nothing_on_stdout():
    # CoolProp 8 announces the disabled superancillaries on standard output (fd 1); --json
    # output must stay pure JSON. Run in a fresh process so the import really happens.
    env = {k: v for k, v in os.environ.items() if k != g.SUPERANCILLARY_SWITCH}
    out = subprocess.run(
        [sys.executable, "-m", "benchwarden", "contents", "--gas", "co2", "--gross", "75 kg", "--tare",
         "68.5 kg", "--volume", "13.4 L", "--json"], capture_output=True, text=True, env=env, cwd=ROOT, timeout=120)
    assert out.returncode == 0, out.stderr
    assert json.loads(out.stdout)["mass_kg"] == pytest.approx(6.5)
    assert "superancillar" not in out.stdout


def test_co2_vapour_pressure_without_superancillaries():
    # Span & Wagner (1996) Table 34 (from memory): p_sat(20 °C) = 5.7291 MPa; the issue's
    # measurement with superancillaries on gave 5 729 052.58 Pa.
    assert g.saturation_pressure(CO2, 293.15) == pytest.approx(5729052.58, rel=1e-9)


# ----------------------------------------------------------------------------- 2. mixtures


@pytest.fixture(scope="module")
def pr_flash():
    thermo = pytest.importorskip("thermo")
    from thermo.interaction_parameters import IPDB

    def make(ids):
        constants, props = thermo.ChemicalConstantsPackage.from_IDs(ids)
        kw = dict(Tcs=constants.Tcs, Pcs=constants.Pcs, omegas=constants.omegas)
        if len(ids) > 1:
            kw["kijs"] = IPDB.get_ip_asymmetric_matrix("ChemSep PR", constants.CASs, "kij")
        gas = thermo.CEOSGas(thermo.PRMIX, kw, HeatCapacityGases=props.HeatCapacityGases)
        liq = thermo.CEOSLiquid(thermo.PRMIX, kw, HeatCapacityGases=props.HeatCapacityGases)
        if len(ids) > 1:
            return thermo.FlashVL(constants, props, liquid=liq, gas=gas)
        return thermo.FlashPureVLS(constants, props, gas=gas, liquids=[liq], solids=[])

    return make


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


def test_premix_at_200_bar_flashes_without_a_forced_phase():
    # the bundled He/N2/CO2 premix: a single supercritical/gas phase at 200 bar, 20 °C
    mix = g.parse_gas("he:0.8,n2:0.135,co2:0.065")
    assert g.phase(mix, 293.15, 201e5).kind in ("gas", "supercritical")
    # ideal-gas density p·M/(R·T) within 10 % (helium-rich: Z ≈ 1.08, from the same flash)
    ideal = 201e5 * mix.molar_mass / (g.R * 293.15)
    assert g.density(mix, 293.15, 201e5) == pytest.approx(ideal, rel=0.10)


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


# ----------------------------------------------------------------------------- 3. CO2 regulator


def test_co2_sublimation_line_against_published_points():
    # Normal sublimation point of CO2: 194.69 K at 101.325 kPa (NIST Chemistry WebBook,
    # from memory); triple point 216.592 K, 0.51795 MPa (Span & Wagner 1996).
    assert g.sublimation_temperature(CO2, 101325.0) == pytest.approx(194.69, abs=0.05)
    assert g.sublimation_pressure(CO2, 216.592) == pytest.approx(0.51795e6, rel=1e-9)
    Tt, pt = g.triple_point(CO2)
    assert Tt == pytest.approx(216.592, abs=1e-3) and pt == pytest.approx(0.51795e6, rel=1e-3)


def test_co2_sublimation_enthalpy_against_handbook():
    # ΔH_sub of CO2 at the normal sublimation point ≈ 25.2 kJ/mol = 571 kJ/kg (CRC Handbook,
    # from memory): Clausius–Clapeyron on the Span & Wagner line within 1 %.
    assert regulator.sublimation_enthalpy(CO2, 194.69) == pytest.approx(571e3, rel=0.01)


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


# ----------------------------------------------------------------------------- 4. not gas


def test_solid_helium_is_refused():
    # Helium melts at about 6.9 K under 300 bar (melting line of Ortiz Vega et al., in CoolProp);
    # at 4.15 K it is solid. Regression: accepted with Z = 13.7.
    with pytest.raises(InputError, match="solid"):
        g.density(g.parse_gas("helium"), 4.15, 301e5)


def test_liquid_nitrogen_is_said_to_be_liquid():
    c = supply.contents(N2, 0.05, 2e5, 73.15)
    assert c.phase == "liquid" and "liquid" in c.flags
    assert any("a liquid" in n for n in contents_notes(c, Display()))


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


def test_empty_cylinder_by_weight_is_a_clear_error():
    with pytest.raises(InputError, match="empty"):
        supply.contents_by_weight(CO2, 13.0, 13.0, volume_m3=0.01)


# ----------------------------------------------------------------------------- 5. nozzles


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


# ----------------------------------------------------------------------------- 6. gap


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


# ----------------------------------------------------------------------------- 7. hold tests


def test_hold_log_json_does_not_crash(capsys, tmp_path):
    # Regression: a numpy bool in the result broke --json.
    log = tmp_path / "log.csv"
    log.write_text("time (h),pressure (bar),temperature (degC)\n" +
                   "".join(f"{i},{150 - 0.05 * i:.3f},20\n" for i in range(12)))
    code, out, _ = run(capsys, "hold", "--gas", "nitrogen", "--volume", "50 L", "--log", str(log), "--json",
                       "--gauge-range", "250 bar", "--gauge-class", "0.25", "--journal", str(tmp_path / "j.db"))
    assert code == 0 and isinstance(json.loads(out)["curvature_significant"], bool)


@pytest.mark.slow
def test_json_into_a_closed_pipe_is_quiet():
    # Regression: `benchwarden … --json | head -1` ended in a BrokenPipeError traceback.
    proc = subprocess.run(
        f"{sys.executable} -m benchwarden contents --gas nitrogen --volume '50 L' --pressure '200 bar' "
        "--temperature '15 degC' --json | head -1", shell=True, capture_output=True, text=True, cwd=ROOT,
        timeout=120)
    assert proc.stdout.strip() == "{" and "Traceback" not in proc.stderr


def test_perfectly_linear_log_is_not_called_curved():
    # A pressure falling exactly linearly: real-gas mass is very slightly curved (Z changes),
    # far less than a class 0.25 gauge resolves. Regression: flagged as "curved".
    t = np.arange(0, 25) * 3600.0
    p = 151.01325e5 - 0.1e5 * np.arange(25)
    log = hold.HoldLog(tuple(t), tuple(p), None)
    fit = hold.hold_from_log(N2, 0.05, log, hold.GaugeSpec(250e5, 0.25))
    assert not fit.curvature_significant and not any("curved" in n for n in fit.result.notes)


def test_a_real_step_in_the_log_is_called_curved():
    t = np.arange(0, 25) * 3600.0
    # a temperature swing: most of a 2 bar drop in the first hours, then flat
    p = 151.01325e5 - 2.0e5 * (1.0 - np.exp(-np.arange(25) / 4.0))
    fit = hold.hold_from_log(N2, 0.05, hold.HoldLog(tuple(t), tuple(p), None), hold.GaugeSpec(250e5, 0.25))
    assert fit.curvature_significant


def test_two_readings_and_a_two_row_log_share_one_budget():
    # GUM (JCGM 100:2008): the same two readings give the same uncertainty either way; a log
    # of three collinear readings adds no scatter.
    gauge = hold.GaugeSpec(250e5, 1.0)
    two = hold.hold_two_readings(N2, 0.05, 151e5, 149e5, 86400.0, 293.15, 293.15, gauge)
    log = hold.HoldLog((0.0, 43200.0, 86400.0), (151e5, 150e5, 149e5), (293.15, 293.15, 293.15))
    fit = hold.hold_from_log(N2, 0.05, log, gauge)
    assert fit.result.leak_rate_uncertainty_sccm == pytest.approx(two.leak_rate_uncertainty_sccm, rel=2e-3)


def test_semicolon_log_with_decimal_commas_is_refused():
    # Regression: '0;150,5;20' was misread with exit 0 and a wrong leak rate.
    with pytest.raises(InputError, match="decimal"):
        parse_log("time (h);pressure (bar);temperature (degC)\n0;150,5;20\n1;150,4;20\n")
    with pytest.raises(InputError, match="fields"):
        parse_log("time (h),pressure (bar)\n0,150,5\n1,150,4\n")
    ok = parse_log("time (h);pressure (bar)\n0;150.5\n1;150.4\n")
    assert len(ok.t_s) == 2


def test_mixed_time_zones_in_a_log_are_refused():
    with pytest.raises(InputError, match="offset"):
        parse_log("timestamp,pressure (bar)\n2026-11-27T18:00,150\n2026-11-28T06:00+00:00,149.9\n"
                       "2026-11-28T18:00,149.8\n")


def test_shipped_example_log_runs(capsys, tmp_path):
    example = ROOT / "examples" / "hold-log.csv"
    code, out, _ = run(capsys, "hold", "--gas", "nitrogen", "--volume", "50 L", "--log", str(example),
                       "--gauge-range", "250 bar", "--gauge-class", "0.25", "--journal", str(tmp_path / "j.db"))
    assert code == 0 and "leak rate" in out


# ----------------------------------------------------------------------------- 8. threads


def test_properties_are_right_from_many_threads_at_once():
    # Regression: one shared AbstractState per gas returned 482 wrong values in 400 000.
    cases = [(N2, 250.0 + 10 * i, (20 + 15 * i) * 1e5) for i in range(8)]
    cases += [(CO2, 320.0 + 5 * i, (10 + 3 * i) * 1e5) for i in range(8)]
    expected = [g.density(gs, T, p) for gs, T, p in cases]
    wrong: list[tuple[float, float]] = []

    def hammer(offset: int) -> None:
        for k in range(3000):
            j = (k + offset) % len(cases)
            gs, T, p = cases[j]
            v = g.density(gs, T, p)
            if v != expected[j]:
                wrong.append((v, expected[j]))

    threads = [threading.Thread(target=hammer, args=(i,)) for i in range(4)]
    for t in threads:
        t.start()
    for t in threads:
        t.join(timeout=120)
    assert not wrong


# ----------------------------------------------------------------------------- 9. numbers


@pytest.mark.parametrize("text", ["1,000 L", "2,5 L", "1 000 L", "1_000 L"])
def test_thousands_separators_and_decimal_commas_are_refused(text):
    # Regression: "1,000 L" was read as 1 L — a silent factor of 1000.
    with pytest.raises(InputError, match="decimal point"):
        parse_volume(text)


def test_thousands_separator_in_a_pressure_is_refused_on_the_command_line(capsys):
    code, out, err = run(capsys, "contents", "--gas", "nitrogen", "--volume", "50 L", "--pressure", "1,000 psi",
                         "--temperature", "20 degC")
    assert code == 2 and out == "" and "decimal point" in err and err.count("\n") == 1


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
