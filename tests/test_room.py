"""Room oxygen: release models and ventilated leaks.

Closed forms as printed in BCGA Guidance Note GN11 ("Reduced oxygen atmospheres") and in the
well-mixed oxygen-deficiency-hazard procedures of large laboratories (e.g. CERN, Fermilab ODH
notes); the time-dependent cases are also checked against a direct numerical integration of
the mixing equation with scipy's solve_ivp (an independent general-purpose integrator).
"""

import math

import pytest
from scipy.integrate import solve_ivp

from benchwarden.core import gas as g
from benchwarden.core import room
from benchwarden.errors import InputError
from benchwarden.units import parse_flow
from benchwarden.units.quantities import parse_amount, parse_ventilation


def test_release_models_closed_forms():
    Vr, Vg, C0 = 40.0, 6.0, 20.95
    assert room.release(Vr, Vg, "displacement").o2_percent_after_release == pytest.approx(C0 * (Vr - Vg) / Vr)
    assert room.release(Vr, Vg, "mixed").o2_percent_after_release == pytest.approx(C0 * math.exp(-Vg / Vr))
    assert room.release(Vr, Vg, "sealed").o2_percent_after_release == pytest.approx(C0 * Vr / (Vr + Vg))


def test_displacement_is_the_most_conservative():
    for vg in (1.0, 5.0, 20.0):
        d = room.release(40.0, vg, "displacement").o2_percent_after_release
        m = room.release(40.0, vg, "mixed").o2_percent_after_release
        s = room.release(40.0, vg, "sealed").o2_percent_after_release
        assert d <= m <= s


def test_mixed_release_equals_integrated_mixing_equation():
    # dC/dVg = −C/Vr (each added volume pushes out well-mixed room air)
    sol = solve_ivp(lambda v, c: -c / 40.0, (0, 9.0), [20.95], rtol=1e-10, atol=1e-12)
    assert room.release(40.0, 9.0, "mixed").o2_percent_after_release == pytest.approx(sol.y[0, -1], rel=1e-6)


def test_release_larger_than_room_reports_zero_and_why():
    r = room.release(10.0, 15.0)
    assert r.o2_percent_after_release == 0.0
    assert "larger than the room" in r.notes[0]


@pytest.mark.parametrize("kind", ["exhaust", "supply"])
def test_ventilated_leak_matches_numerical_integration(kind):
    V, R, Q, C0 = 30.0, 0.004, 0.02, 20.95

    def rhs(t, c):
        if kind == "exhaust":
            return [((Q - R) * C0 - Q * c[0]) / V]
        return [(Q * C0 - (Q + R) * c[0]) / V]

    lk = room.leak_o2(V, R, Q, kind)
    for t in (60.0, 600.0, 3600.0):
        sol = solve_ivp(rhs, (0, t), [C0], rtol=1e-10, atol=1e-12)
        assert room.o2_at(lk, t) == pytest.approx(sol.y[0, -1], rel=1e-6)
    exp_ss = C0 * (1 - R / Q) if kind == "exhaust" else C0 * Q / (Q + R)
    assert lk.o2_percent_steady == pytest.approx(exp_ss)


def test_unventilated_leak_and_threshold_times():
    V, R = 30.0, 0.002
    lk = room.leak_o2(V, R, 0.0)
    sol = solve_ivp(lambda t, c: [-R * c[0] / V], (0, 1800), [20.95], rtol=1e-10, atol=1e-12)
    assert room.o2_at(lk, 1800) == pytest.approx(sol.y[0, -1], rel=1e-6)
    # time to 19.5 %: t = V/R·ln(C0/19.5)
    assert lk.minutes_to_19_5 == pytest.approx(V / R * math.log(20.95 / 19.5) / 60)
    assert room.o2_at(lk, lk.minutes_to_19_5 * 60) == pytest.approx(19.5)
    assert math.isinf(lk.minutes_to_recover)


def test_recovery_after_leak_stops():
    lk = room.leak_o2(30.0, 0.004, 0.02, "exhaust")  # steady 16.76 %
    # after the leak stops: C(t) = C0 − (C0 − Css)·e^(−Q·t/V); back at 19.5 % when
    assert lk.minutes_to_recover == pytest.approx(30.0 / 0.02 * math.log((20.95 - lk.o2_percent_steady) / (20.95 - 19.5)) / 60)


def test_exhaust_is_more_conservative_than_supply():
    e = room.leak_o2(30.0, 0.004, 0.02, "exhaust").o2_percent_steady
    s = room.leak_o2(30.0, 0.004, 0.02, "supply").o2_percent_steady
    assert e < s


def test_ventilation_units_ach_vs_flow():
    assert parse_ventilation("2/h").m3_s(60.0) == pytest.approx(120.0 / 3600)
    assert parse_ventilation("2 ACH").m3_s(60.0) == pytest.approx(120.0 / 3600)
    assert parse_ventilation("120 m3/h").m3_s(60.0) == pytest.approx(120.0 / 3600)
    assert parse_ventilation("2 L/s").m3_s(60.0) == pytest.approx(0.002)
    with pytest.raises(InputError):
        parse_ventilation("2 slpm")


def test_standard_leak_converts_to_room_volume():
    # 10 slpm of N2 (0 °C, 1 atm) at 25 °C, 1 atm is 10·(298.15/273.15) L/min within Z effects.
    n2 = g.parse_gas("nitrogen")
    q = room.leak_volume_flow(n2, parse_flow("10 slpm"), 298.15, 101325.0)
    assert q * 60e3 == pytest.approx(10 * 298.15 / 273.15, rel=1e-3)
    assert room.leak_volume_flow(n2, parse_flow("10 L/min"), 298.15, 101325.0) == pytest.approx(10 / 60e3)


def test_co2_toxic_and_hydrogen_flammable_hazards():
    # OSHA TWA 5000 ppm for CO2: 4.5 % CO2 in the room is above its STEL (3 %, NIOSH, from memory)
    # and above its IDLH 4 % (NIOSH, from memory); hydrogen at 4.5 % is above its LFL 4 %.
    from benchwarden.core import hazards

    t = hazards.toxic(g.parse_gas("co2"), 4.5)
    assert t is not None and t.band == "above-idlh"
    f = hazards.flammable(g.parse_gas("hydrogen"), 4.5)
    assert f is not None and f.percent_of_lfl == pytest.approx(112.5)


def test_effects_and_stratification():
    assert room.effect_of(20.5) == ""
    assert "19.5" in room.effect_of(19.0)
    assert "consciousness" in room.effect_of(9.0)
    assert "floor" in room.stratification_note(g.parse_gas("argon"))
    assert "ceiling" in room.stratification_note(g.parse_gas("helium"))


@pytest.mark.parametrize(
    "call",
    [
        lambda: room.release(0.0, 1.0),
        lambda: room.release(-5.0, 1.0),
        lambda: room.release(10.0, 1.0, "bucket"),
        lambda: room.leak_o2(10.0, 0.001, 0.01, "sideways"),
    ],
)
def test_bad_room_input(call):
    with pytest.raises(InputError):
        call()


def test_room_cli_json_keys_and_errors(capsys):
    import json

    from benchwarden.cli import main

    assert main(["room", "--gas", "n2", "--room-volume", "30 m3", "--release", "9 m3", "--json"]) == 0
    d = json.loads(capsys.readouterr().out)
    assert d["model"] == "displacement" and "o2_percent_after_release" in d
    assert main(["room", "--gas", "argon", "--room-volume", "30 m3", "--leak", "20 slpm", "--ventilation", "2/h",
                 "--json"]) == 0
    d = json.loads(capsys.readouterr().out)
    assert {"o2_percent_steady", "minutes_to_19_5", "model"} <= set(d)
    for argv, frag in [
        (["--room-volume", "0 m3", "--release", "1 m3"], "greater than zero"),
        (["--room-volume", "-3 m3", "--release", "1 m3"], "greater than zero"),
        (["--room-volume", "30 m3", "--leak", "1 slpm", "--ventilation", "0/h"], "zero"),
    ]:
        assert main(["room", "--gas", "n2", *argv]) == 2
        err = capsys.readouterr().err
        assert frag in err and err.count("\n") == 1
    # a release larger than the room with the displacement model: 0 % and why, not a crash
    assert main(["room", "--gas", "n2", "--room-volume", "5 m3", "--release", "9 m3", "--json"]) == 0
    d = json.loads(capsys.readouterr().out)
    assert d["o2_percent_after_release"] == 0.0 and d["notes"]


def test_release_given_as_mass_or_volume():
    # 11 kg of N2 at 20 °C, 1 atm: V = m/ρ with ρ = 1.1649 kg/m³ (real gas, CoolProp HEOS)
    n2 = g.parse_gas("nitrogen")
    assert room.release_volume(n2, parse_amount("11 kg"), 293.15, 101325.0) == pytest.approx(
        11.0 / g.density(n2, 293.15, 101325.0))
    assert room.release_volume(n2, parse_amount("9 m3"), 293.15, 101325.0) == pytest.approx(9.0)
    with pytest.raises(InputError):
        parse_amount("9 bar")
