"""Gas catalogue and real-gas properties against outside sources.

Sources: the reference equations of state that CoolProp implements (their published
verification values), Incropera & DeWitt "Fundamentals of Heat and Mass Transfer" Table A.4
(ideal-gas-region air and helium densities), and an independent Peng-Robinson cubic equation
of state from the `thermo`/`chemicals` libraries as a ±5 % sanity band.
"""

import json
import os
import subprocess
import sys
import threading
from pathlib import Path

import pytest
from clitools import limit_s

from benchwarden.core import gas as g
from benchwarden.core import regulator, supply
from benchwarden.errors import InputError
from benchwarden.render.display import Display
from benchwarden.render.supply import contents_notes

CO2 = g.parse_gas("co2")
N2 = g.parse_gas("nitrogen")
ROOT = Path(__file__).resolve().parents[1]


def test_span_2000_nitrogen_verification_value():
    # Span, Lemmon, Jacobsen, Wagner, Yokozeki, J. Phys. Chem. Ref. Data 29 (2000) 1361:
    # the paper's table of values for checking computer code gives ρ = 6.3552 mol/dm³
    # at T = 350 K, p = 20 MPa (value as quoted in issue 2; table number not looked up).
    n2 = g.parse_gas("nitrogen")
    rho_molar = g.density(n2, 350.0, 20e6) / n2.molar_mass / 1000.0
    assert rho_molar == pytest.approx(6.3552, abs=5e-4)


@pytest.mark.parametrize(
    "T, p, rho_kg_m3",
    # Tegeler, Span & Wagner, J. Phys. Chem. Ref. Data 28 (1999) 779, Table 34 (p. 830),
    # single-phase states (values as quoted in the test suite of pychemqt, lib/mEoS/Ar.py).
    [(170.0, 1e6, 29.723), (400.0, 1e7, 119.43), (700.0, 1e5, 0.68619), (150.0, 5e5, 16.605)],
)
def test_tegeler_1999_argon_table_34(T, p, rho_kg_m3):
    assert g.density(g.parse_gas("argon"), T, p) == pytest.approx(rho_kg_m3, rel=2e-4)


@pytest.mark.parametrize(
    "T, p, rho_mol_dm3",
    # Lemmon, Jacobsen, Penoncello & Friend, J. Phys. Chem. Ref. Data 29 (2000) 331, Table A2
    # (p. 366), single-phase air (values as quoted in pychemqt's test suite, lib/mEoS/Air.py).
    [(500.0, 2e5, 0.048077), (130.0, 1e6, 1.0295), (2000.0, 10e6, 0.59094)],
)
def test_lemmon_2000_air_table_a2(T, p, rho_mol_dm3):
    air = g.parse_gas("air")
    molar = g.density(air, T, p) / g.state(air).molar_mass() / 1000.0
    assert molar == pytest.approx(rho_mol_dm3, rel=2e-4)


def test_air_and_helium_near_ideal_handbook_density():
    # Incropera & DeWitt, Table A.4 (from memory): helium at 300 K, 1 atm: ρ = 0.1625 kg/m³.
    # Air at 300 K, 1 atm against the ideal gas with Lemmon et al. (2000)'s molar mass
    # 28.9586 g/mol: Z of air there is 0.9997 (from memory), so within 0.1 %.
    air_ideal = 101325.0 * 0.0289586 / (g.R * 300.0)
    assert g.density(g.parse_gas("air"), 300.0, 101325.0) == pytest.approx(air_ideal, rel=1e-3)
    assert g.density(g.parse_gas("helium"), 300.0, 101325.0) == pytest.approx(0.1625, rel=3e-3)


@pytest.mark.parametrize(
    "name, cas",
    [("nitrogen", "7727-37-9"), ("argon", "7440-37-1"), ("helium", "7440-59-7"), ("oxygen", "7782-44-7"),
     ("hydrogen", "1333-74-0"), ("neon", "7440-01-9")],
)
@pytest.mark.parametrize("p_bar", [150.0, 200.0, 300.0])
def test_peng_robinson_sanity_band(name, cas, p_bar):
    # Independent cubic EOS: Peng & Robinson (1976) as implemented in `thermo`, critical
    # constants and acentric factors from `chemicals`. Agreement within ±5 % at cylinder
    # pressures catches a wrong fluid name or a unit slip.
    from chemicals import Pc, Tc, omega
    from thermo import PR

    T, P = 293.15, p_bar * 1e5
    gas = g.parse_gas(name)
    eos = PR(Tc=Tc(cas), Pc=Pc(cas), omega=omega(cas), T=T, P=P)
    V = getattr(eos, "V_g", None) or eos.V_l
    rho_pr = gas.molar_mass / V
    assert g.density(gas, T, P) == pytest.approx(rho_pr, rel=0.05)


def test_low_pressure_limit_z_to_one():
    for name in ("nitrogen", "helium", "argon", "sf6", "co2"):
        assert g.z_factor(g.parse_gas(name), 300.0, 1000.0) == pytest.approx(1.0, abs=2e-4)


def test_co2_triple_and_critical_point():
    # Span & Wagner, J. Phys. Chem. Ref. Data 25 (1996) 1509: T_t = 216.592 K, p_t = 0.51795 MPa,
    # T_c = 304.1282 K.
    co2 = g.parse_gas("CO2")
    Tt, pt = g.triple_point(co2)
    assert Tt == pytest.approx(216.592, abs=0.01)
    assert pt == pytest.approx(0.51795e6, rel=1e-3)
    assert g.critical_temperature(co2) == pytest.approx(304.1282, abs=0.01)


def test_sf6_critical_temperature():
    # Guder & Wagner, J. Phys. Chem. Ref. Data 38 (2009) 33: T_c = 318.7232 K (45.57 °C).
    assert g.critical_temperature(g.parse_gas("sf6")) == pytest.approx(318.7232, abs=0.01)


@pytest.mark.parametrize("name", list(g.PURE_GASES))
def test_catalogue_molar_mass_matches_coolprop(name):
    # IUPAC/CIAAW standard atomic weights in the catalogue vs CoolProp's fluid files.
    gas = g.parse_gas(name)
    # (CoolProp's air uses 28.96546 g/mol, 2.4e-4 above Lemmon et al. 2000's 28.9586 g/mol.)
    assert g.state(gas).molar_mass() == pytest.approx(gas.molar_mass, rel=3e-4)


@pytest.mark.parametrize(
    "name, ft3_per_lb",
    # Specific volume at 70 °F, 1 atm as tabulated by the compressed-gas trade (CGA P-6 style
    # tables; values from memory).
    [("nitrogen", 13.8), ("argon", 9.7), ("helium", 96.7), ("oxygen", 12.1), ("hydrogen", 192.0)],
)
def test_trade_specific_volume_at_70F(name, ft3_per_lb):
    gas = g.parse_gas(name)
    rho = g.density(gas, 294.261, 101325.0)
    v = 1.0 / rho / 0.3048**3 * 0.45359237
    assert v == pytest.approx(ft3_per_lb, rel=0.01)


def test_aliases_and_mixtures():
    assert g.parse_gas("N2").key == "nitrogen"
    assert g.parse_gas("Sulphur hexafluoride").key == "sulfur hexafluoride"
    mix = g.parse_gas("helium:0.8,nitrogen:0.135,carbon dioxide:0.065")
    assert mix.is_mixture
    assert mix.molar_mass == pytest.approx(0.8 * 0.004002602 + 0.135 * 0.0280134 + 0.065 * 0.0440095)
    # Mixture density is between the ideal-gas and a +15 % band at 150 bar (He-rich, Z > 1).
    rho = g.density(mix, 293.15, 150e5)
    ideal = 150e5 * mix.molar_mass / (g.R * 293.15)
    assert 0.85 * ideal < rho < ideal


def test_mixture_without_published_pair_is_estimated_and_says_so():
    mix = g.parse_gas("neon:0.99,xenon:0.01")
    assert g.density(mix, 293.15, 50e5) > 0
    assert g.estimated_pairs(mix)


@pytest.mark.parametrize(
    "bad, match",
    [
        ("unobtainium", "unknown gas"),
        ("helium:0.8,nitrogen:0.1", "sum to"),
        ("helium:0.8,helium:0.2", "twice"),
        ("helium:x,nitrogen:0.2", "not a number"),
        ("helium:-0.2,nitrogen:1.2", "must be"),
        ("", "empty"),
    ],
)
def test_bad_gas_names(bad, match):
    with pytest.raises(InputError, match=match):
        g.parse_gas(bad)


def test_temperature_outside_eos_is_input_error():
    with pytest.raises(InputError, match="out of range.*the equation of state"):
        g.density(g.parse_gas("nitrogen"), 20.0, 1e5)


def test_handling_facts_have_sources():
    for gas in g.PURE_GASES.values():
        assert gas.handling.sources, gas.key
    assert g.parse_gas("hydrogen").components[0][0].handling.lfl_percent == 4.0
    assert g.parse_gas("sf6").relative_density_to_air > 5
    assert g.parse_gas("helium").relative_density_to_air < 0.2


@pytest.mark.slow
def test_coolprop_8_import_prints_nothing_on_stdout():
    # CoolProp 8 announces the disabled superancillaries on standard output (fd 1); --json
    # output must stay pure JSON. Run in a fresh process so the import really happens.
    env = {k: v for k, v in os.environ.items() if k != g.SUPERANCILLARY_SWITCH}
    out = subprocess.run(
        [sys.executable, "-m", "benchwarden", "contents", "--gas", "co2", "--gross", "75 kg", "--tare",
         "68.5 kg", "--volume", "13.4 L", "--json"], capture_output=True, text=True, env=env, cwd=ROOT, timeout=limit_s(120))
    assert out.returncode == 0, out.stderr
    assert json.loads(out.stdout)["mass_kg"] == pytest.approx(6.5)
    assert "superancillar" not in out.stdout


def test_co2_vapour_pressure_without_superancillaries():
    # Span & Wagner (1996) Table 34 (from memory): p_sat(20 °C) = 5.7291 MPa; the issue's
    # measurement with superancillaries on gave 5 729 052.58 Pa.
    assert g.saturation_pressure(CO2, 293.15) == pytest.approx(5729052.58, rel=1e-9)


def test_premix_at_200_bar_flashes_without_a_forced_phase():
    # the bundled He/N2/CO2 premix: a single supercritical/gas phase at 200 bar, 20 °C
    mix = g.parse_gas("he:0.8,n2:0.135,co2:0.065")
    assert g.phase(mix, 293.15, 201e5).kind in ("gas", "supercritical")
    # ideal-gas density p·M/(R·T) within 10 % (helium-rich: Z ≈ 1.08, from the same flash)
    ideal = 201e5 * mix.molar_mass / (g.R * 293.15)
    assert g.density(mix, 293.15, 201e5) == pytest.approx(ideal, rel=0.10)


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


def test_solid_helium_is_refused():
    # Helium melts at about 6.9 K under 300 bar (melting line of Ortiz Vega et al., in CoolProp);
    # at 4.15 K it is solid. Regression: accepted with Z = 13.7.
    with pytest.raises(InputError, match="solid"):
        g.density(g.parse_gas("helium"), 4.15, 301e5)


def test_liquid_nitrogen_is_said_to_be_liquid():
    c = supply.contents(N2, 0.05, 2e5, 73.15)
    assert c.phase == "liquid" and "liquid" in c.flags
    assert any("a liquid" in n for n in contents_notes(c, Display()))


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
