"""Unit parsing and reference conditions.

Sources beside each check; exact factors come from the unit definitions (NIST SP 811).
"""

import math
import subprocess
import sys
from pathlib import Path

import pytest
from clitools import run

from benchwarden.errors import InputError
from benchwarden.units import (
    ATM_PA,
    REFERENCES,
    ambient_from_altitude,
    get_reference,
    parse_duration,
    parse_flow,
    parse_length,
    parse_pressure,
    parse_temperature,
    parse_volume,
    pressure_abs,
)

ROOT = Path(__file__).resolve().parents[1]

R = 8.314462618  # CODATA 2018, exact


def test_exact_unit_factors():
    # NIST SP 811 Appendix B: 1 psi = 6.894 757 E+03 Pa; 1 atm = 101 325 Pa (exact).
    assert pressure_abs("1 psia") == pytest.approx(6894.757, abs=1e-3)
    assert pressure_abs("1 atm") == 101325.0
    assert pressure_abs("1 bar(a)") == 1e5
    assert pressure_abs("760 Torr") == pytest.approx(101325.0)


@pytest.mark.parametrize(
    "text, abs_pa, kind",
    [
        ("200 bar", 200e5 + ATM_PA, "gauge"),
        ("200 barg", 200e5 + ATM_PA, "gauge"),
        ("200 bar(g)", 200e5 + ATM_PA, "gauge"),
        ("3000 psi", 3000 * 6894.757293168361 + ATM_PA, "gauge"),
        ("3000 psig", 3000 * 6894.757293168361 + ATM_PA, "gauge"),
        ("2.5 MPa", 2.5e6 + ATM_PA, "gauge"),
        ("150 kPa", 150e3 + ATM_PA, "gauge"),
        ("150 bar(a)", 150e5, "absolute"),
        ("150 bara", 150e5, "absolute"),
        ("14.7 psia", 14.7 * 6894.757293168361, "absolute"),
        ("95 kPa(a)", 95e3, "absolute"),
        ("500 mbar(a)", 500e2, "absolute"),
        ("-0.5 bar", ATM_PA - 0.5e5, "gauge"),
    ],
)
def test_gauge_unless_marked_absolute(text, abs_pa, kind):
    p = parse_pressure(text)
    assert p.abs_at(ATM_PA) == pytest.approx(abs_pa)
    assert p.typed_as == kind


def test_ambient_is_settable():
    assert pressure_abs("1 bar", ambient_pa=90e3) == pytest.approx(190e3)


def test_iso_2533_standard_atmosphere():
    # ISO 2533:1975 table (from memory): 0 m 101 325 Pa, 1000 m 89 875 Pa, 2000 m 79 495 Pa.
    assert ambient_from_altitude(0) == pytest.approx(101325, abs=1)
    assert ambient_from_altitude(1000) == pytest.approx(89875, abs=5)
    assert ambient_from_altitude(2000) == pytest.approx(79495, abs=10)


@pytest.mark.parametrize(
    "text, kelvin",
    [("15 degC", 288.15), ("70 degF", 294.2611111), ("293.15 K", 293.15), ("-40 degF", 233.15), ("20 C", 293.15)],
)
def test_temperatures(text, kelvin):
    assert parse_temperature(text) == pytest.approx(kelvin)


def test_volumes_durations_lengths():
    assert parse_volume("50 L") == pytest.approx(0.05)
    # 1 ft = 0.3048 m exactly (international foot).
    assert parse_volume("1.5 ft3") == pytest.approx(1.5 * 0.3048**3)
    assert parse_duration("12 h") == 43200
    assert parse_duration("30 min") == 1800
    assert parse_length("0.5 in") == pytest.approx(0.0127)


@pytest.mark.parametrize(
    "text, std_m3_s, ref",
    [
        ("2 slpm", 2e-3 / 60, "0C"),
        ("500 sccm", 500e-6 / 60, "0C"),
        ("40 scfh", 40 * 0.3048**3 / 3600, "70F"),
        ("3 Nm3/h", 3 / 3600, "0C"),
        ("3 Nm³/h", 3 / 3600, "0C"),
    ],
)
def test_standard_flows_carry_their_reference(text, std_m3_s, ref):
    f = parse_flow(text)
    assert f.kind == "standard"
    assert f.value == pytest.approx(std_m3_s)
    assert f.reference.key == ref


def test_flow_reference_override_applies_to_sccm_not_nm3():
    assert parse_flow("100 sccm", reference="20C").reference.key == "20C"
    assert parse_flow("1 Nm3/h", reference="20C").reference.key == "0C"


def test_mass_and_actual_flows():
    assert parse_flow("6 g/min").kind == "mass"
    assert parse_flow("6 g/min").value == pytest.approx(1e-4)
    f = parse_flow("60 m3/h")
    assert f.kind == "actual" and f.value == pytest.approx(60 / 3600)


@pytest.mark.parametrize(
    "key, molar_volume_l",
    [
        # DIN 1343 / CODATA 2018: molar volume of the ideal gas at 273.15 K, 101.325 kPa.
        ("0C", 22.413969),
        # ISO 13443: 15 °C, 101.325 kPa; V_m = R·T/p = 23.6446 L/mol.
        ("15C", 23.6446),
        ("20C", 24.0549),
        # 70 °F, 14.696 psia: 386.8 ft³/lb-mol (US gas industry molar volume, from memory;
        # 379.5 ft³/lb-mol at 60 °F scaled by 529.67/519.67) = 24.147 L/mol.
        ("70F", 386.8 * 0.3048**3 / 0.45359237),
    ],
)
def test_reference_conditions_molar_volume(key, molar_volume_l):
    ref = REFERENCES[key]
    assert R * ref.temperature_k / ref.pressure_pa * 1000 == pytest.approx(molar_volume_l, rel=2e-4)


@pytest.mark.parametrize(
    "bad",
    ["200", "", "abc bar", "nan bar", "inf psi", "200 furlong", "1 atm(g)", "-2 bar", "5 kPa(x)"],
)
def test_bad_pressures_are_input_errors(bad):
    with pytest.raises(InputError):
        parse_pressure(bad)


@pytest.mark.parametrize("bad", ["20", "20 parsec", "-300 degC", "nan degC"])
def test_bad_temperatures(bad):
    with pytest.raises(InputError):
        parse_temperature(bad)


@pytest.mark.parametrize("bad", ["2", "-1 slpm", "2 bar", "2 kg", "nan sccm"])
def test_bad_flows(bad):
    with pytest.raises(InputError):
        parse_flow(bad)


def test_unknown_reference():
    with pytest.raises(InputError, match="allowed"):
        get_reference("25C")


def test_errors_are_also_value_errors():
    with pytest.raises(ValueError):
        parse_volume("50")
    assert not math.isnan(parse_volume("0.5 m3"))


def test_fast_unit_factors_agree_with_pint():
    # the fast path's exact factors must be pint's (the one registry stays the reference)
    from benchwarden.units.parse import _FAST, Q_

    for unit, (target, factor) in _FAST.items():
        pint_unit = {"l": "L", "ml": "mL", "cm3": "cm**3", "cc": "cm**3", "m3": "m**3", "ft3": "ft**3",
                     "um": "um", "hr": "hour", "d": "day", "days": "day", "hz": "Hz", "khz": "kHz",
                     "/s": "1/s", "/min": "1/min", "v": "V", "kv": "kV"}.get(unit, unit)
        assert Q_(1.0, pint_unit).to(target).magnitude == pytest.approx(factor, rel=1e-12), unit


def test_fast_flow_units_agree_with_pint():
    # every mass and actual-volume flow unit read without pint's registry gives pint's kind and
    # factor (pint through the same path the other units take: the reference)
    import pint

    from benchwarden.units.flows import _FAST_FLOW_NUMERATORS, _FAST_FLOW_PER, _fast_flow
    from benchwarden.units.parse import _pint_quantity

    for num in _FAST_FLOW_NUMERATORS:
        for per in _FAST_FLOW_PER:
            unit = f"{num}/{per}"
            kind, factor = _fast_flow(unit)
            q = _pint_quantity(1.0, unit, unit, "flow")
            target = "kg/s" if kind == "mass" else "m**3/s"
            other = "m**3/s" if kind == "mass" else "kg/s"
            assert q.to(target).magnitude == pytest.approx(factor, rel=1e-12), unit
            with pytest.raises(pint.errors.DimensionalityError):
                q.to(other)
    assert _fast_flow("ML/h") is None and _fast_flow("m3") is None and _fast_flow("m3/h/h") is None


def test_a_profile_with_a_ventilation_flow_is_read_without_pint():
    # the premix bench's "90 m3/h" no longer builds pint's registry on a cold plan (issue 28)
    code = ("import sys; from benchwarden.storage.profile import load_profile; "
            "p = load_profile(sys.argv[1]); print(p.room.ventilation.m3_s(1.0), 'pint' in sys.modules)")
    out = subprocess.run([sys.executable, "-c", code, str(ROOT / "profiles" / "premix-switch-bench.toml")],
                         capture_output=True, text=True, check=True).stdout.split()
    assert float(out[0]) == pytest.approx(90 / 3600, rel=1e-12) and out[1] == "False"


def test_temperature_arithmetic_agrees_with_pint():
    from benchwarden.units import Q_

    for text, unit in (("21.5 degC", "degC"), ("-40 degF", "degF"), ("300 K", "K"), ("500 degR", "degR")):
        v = float(text.split()[0])
        assert parse_temperature(text) == pytest.approx(Q_(v, unit).to("K").magnitude, rel=1e-12)


@pytest.mark.parametrize("text", ["1,000 L", "2,5 L", "1 000 L", "1_000 L"])
def test_thousands_separators_and_decimal_commas_are_refused(text):
    # Regression: "1,000 L" was read as 1 L — a silent factor of 1000.
    with pytest.raises(InputError, match="decimal point"):
        parse_volume(text)


def test_thousands_separator_in_a_pressure_is_refused_on_the_command_line(capsys):
    code, out, err = run(capsys, "contents", "--gas", "nitrogen", "--volume", "50 L", "--pressure", "1,000 psi",
                         "--temperature", "20 degC")
    assert code == 2 and out == "" and "decimal point" in err and err.count("\n") == 1


def test_an_unknown_flow_unit_says_which_are_allowed():
    # one line naming the value and what is allowed (a newcomer typed "2 lpm")
    from benchwarden.errors import InputError
    from benchwarden.units import parse_flow

    with pytest.raises(InputError) as exc:
        parse_flow("2 lpm")
    msg = str(exc.value)
    assert "'2 lpm'" in msg and "slpm" in msg and "L/min" in msg and "\n" not in msg
