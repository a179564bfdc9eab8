"""Hold tests against hand calculations, exact unit factors and synthetic logs.

Method: the pressure-change (pressure-decay) method of EN 13184 and ASTM E2930; uncertainty per
the GUM (JCGM 100:2008) with EN 837-1 accuracy classes.
"""

import json
import math
from pathlib import Path

import numpy as np
import pytest
from clitools import run

from benchwarden.cli import main
from benchwarden.core import gas as g
from benchwarden.core import hold
from benchwarden.core import hold as h
from benchwarden.core.tables import DensityTable
from benchwarden.errors import InputError
from benchwarden.storage.holdlog import parse_log

N2 = g.parse_gas("nitrogen")
AMB = 101325.0

ROOT = Path(__file__).resolve().parents[1]


def test_worked_example_ideal_gas_temperature_compensated():
    # EN 13184 pressure-change method, ideal gas at low pressure, by hand:
    # m = p·V·M/(R·T). 20 L at 3.000 bar(a), 22 °C → 2.950 bar(a), 19 °C over 20 h.
    V, p1, T1, p2, T2, t = 0.020, 3.000e5, 295.15, 2.950e5, 292.15, 20 * 3600
    M, R = N2.molar_mass, 8.314462618
    dm = V * M / R * (p1 / T1 - p2 / T2)
    r = h.hold_two_readings(N2, V, p1, p2, t, T1, T2)
    # real gas at 3 bar differs from ideal by Z − 1 ≈ −6e-4 on each mass: well within 2 %
    assert r.mass_loss_kg == pytest.approx(dm, rel=0.02)


def test_exact_leak_unit_factors():
    # 1 mbar·L/s = 0.1 Pa·m³/s (exact: 100 Pa × 1e-3 m³); 1 sccm at 0 °C, 101.325 kPa is
    # 101325 Pa × 1e-6 m³ / 60 s = 1.68875e-3 Pa·m³/s (so 1 Pa·m³/s = 592.2 sccm).
    r = h.hold_two_readings(N2, 0.01, 5e5, 4.9e5, 3600, 293.15, 293.15)
    assert r.leak_rate_mbar_l_s == pytest.approx(10 * r.leak_rate_pa_m3_s)
    assert r.leak_rate_pa_m3_s / r.leak_rate_sccm == pytest.approx(101325e-6 / 60)
    assert 1 / h.pa_m3_s_from_sccm(1.0) == pytest.approx(592.15, abs=0.01)


def test_pure_temperature_change_gives_zero_leak_within_uncertainty():
    # Cooling a closed 50 L cylinder from 21 °C to 17 °C at constant density drops its gauge
    # by about 2.6 bar at 150 bar; the test must see no leak.
    rho = g.density(N2, 294.15, 151e5)
    p_end = g.pressure_from_density(N2, rho, 290.15)
    r = h.hold_two_readings(N2, 0.05, 151e5, p_end, 12 * 3600, 294.15, 290.15, h.GaugeSpec(250e5, 0.25))
    assert abs(r.leak_rate_sccm) < 1e-6
    assert r.verdict != "leak"
    assert (151e5 - p_end) / 1e5 > 2.0


def test_one_kelvin_moves_a_nitrogen_cylinder_by_about_0_7_bar():
    # Common practice figure: 1 K at 150 bar moves a N2 cylinder ≈ 0.7 bar.
    rho = g.density(N2, 293.15, 150e5)
    assert (g.pressure_from_density(N2, rho, 294.15) - 150e5) / 1e5 == pytest.approx(0.7, abs=0.15)


def test_class_1_6_gauge_on_250_bar_cannot_resolve_a_small_leak():
    # EN 837-1 class 1.6 on a 250 bar span: MPE ±4 bar.
    gauge = h.GaugeSpec(250e5, 1.6)
    assert gauge.mpe_pa == pytest.approx(4e5)
    # GUM: rectangular MPE over √3; no resolution term unless a resolution is given
    assert gauge.u_reading_pa == pytest.approx(4e5 / math.sqrt(3))
    r = h.hold_two_readings(N2, 0.05, 151e5, 150.5e5, 12 * 3600, 293.15, 293.15, gauge)
    assert r.verdict == "inconclusive"
    assert r.astm_accuracy_ok is False
    assert r.hold_needed_h > 12


def test_clear_leak_is_a_leak():
    gauge = h.GaugeSpec(6e5, 0.25, 0.005e5)
    r = h.hold_two_readings(N2, 0.002, 4e5, 3.5e5, 3600, 293.15, 293.15, gauge, u_T=0.1)
    assert r.verdict == "leak"
    assert r.leak_rate_sccm > 2 * r.leak_rate_uncertainty_sccm


def test_tight_volume_fine_gauge_no_leak_resolved():
    gauge = h.GaugeSpec(10e5, 0.1, 0.001e5)
    r = h.hold_two_readings(N2, 0.010, 6e5, 6e5, 48 * 3600, 293.15, 293.15, gauge, u_T=0.05, target_sccm=5.0)
    assert r.verdict == "no-leak-resolved"
    assert r.smallest_resolvable_sccm < 5.0


def _synthetic_log(rate_kg_s, noise_pa, n=200, seed=1, temps=False):
    rng = np.random.default_rng(seed)
    t = np.linspace(0, 36 * 3600, n)
    T = 293.15 + (1.5 * np.sin(t / 3600 / 4) if temps else 0.0) * np.ones(n)
    m = g.density(N2, 293.15, 120e5) * 0.05 - rate_kg_s * t
    p = np.array([g.pressure_from_density(N2, mi / 0.05, Ti) for mi, Ti in zip(m, T, strict=True)])
    p += rng.normal(0, noise_pa, n)
    return h.HoldLog(tuple(t), tuple(p), tuple(T) if temps else None)


def test_synthetic_log_rate_recovered_within_standard_error():
    true = 3e-7
    fit = h.hold_from_log(N2, 0.05, _synthetic_log(true, 2000.0), T_default=293.15)
    assert abs(fit.slope_kg_s - true) < 3 * fit.slope_se_kg_s
    assert fit.slope_se_kg_s > 0
    assert not fit.curvature_significant


def test_log_with_temperatures_is_compensated():
    true = 2e-7
    fit = h.hold_from_log(N2, 0.05, _synthetic_log(true, 500.0, temps=True), u_T=0.1)
    assert fit.slope_kg_s == pytest.approx(true, rel=0.05)


def test_curved_decay_is_flagged():
    t = np.linspace(0, 24 * 3600, 100)
    m = g.density(N2, 293.15, 100e5) * 0.05 - 1e-12 * t**2
    p = [g.pressure_from_density(N2, mi / 0.05, 293.15) for mi in m]
    fit = h.hold_from_log(N2, 0.05, h.HoldLog(tuple(t), tuple(p), None))
    assert fit.curvature_significant


def test_table_mass_matches_coolprop_per_row():
    # bounded error of the tabulated path: < 1e-4 relative against one CoolProp call per row
    log = _synthetic_log(3e-7, 0.0, n=50, temps=True)
    tab = DensityTable(N2, min(log.p_abs_pa) * 0.999, max(log.p_abs_pa) * 1.001, min(log.T_k), max(log.T_k))
    direct = np.array([g.density(N2, T, p) for p, T in zip(log.p_abs_pa, log.T_k, strict=True)])
    assert np.max(np.abs(tab.density(np.array(log.p_abs_pa), np.array(log.T_k)) / direct - 1)) < 1e-4


def test_parse_log_formats():
    text = "elapsed (h),pressure (bar),temperature (degC)\n0,150.0,21.0\n1,149.9,20.8\n2,149.8,20.7\n"
    lg = parse_log(text)
    assert list(lg.t_s) == [0.0, 3600.0, 7200.0]
    assert lg.p_abs_pa[0] == pytest.approx(150e5 + AMB)
    assert lg.T_k[1] == pytest.approx(293.95)
    text2 = "timestamp,pressure_psia\n2026-11-30T18:00,2000\n2026-11-30T22:00,1995\n2026-12-01T07:30,1990\n"
    lg2 = parse_log(text2)
    assert lg2.t_s[-1] == pytest.approx(13.5 * 3600)
    assert lg2.p_abs_pa[0] == pytest.approx(2000 * 6894.757293168361)


@pytest.mark.parametrize(
    "text, fragment",
    [
        ("elapsed (h),pressure (bar)\n0,150\n2,149\n1,148\n", "row 4"),
        ("elapsed (h),pressure (bar)\n0,150\n1,abc\n2,148\n", "row 3"),
        ("elapsed (h),pressure\n0,150\n1,149\n2,148\n", "pressure unit"),
        ("when,how much\n0,150\n1,149\n", "header"),
    ],
)
def test_bad_logs_name_the_row(text, fragment):
    with pytest.raises(InputError, match=fragment):
        parse_log(text)


def test_hold_cli_json_and_errors(capsys, tmp_path):
    code = main(["hold", "--gas", "n2", "--volume", "50 L", "--start", "152 bar", "--end", "150 bar",
                 "--duration", "14 h", "--t-start", "21 degC", "--t-end", "18 degC", "--gauge-range", "250 bar",
                 "--gauge-class", "1.6", "--json"])
    import json

    d = json.loads(capsys.readouterr().out)
    assert code == 0
    for k in ("leak_rate_sccm", "leak_rate_uncertainty_sccm", "leak_rate_pa_m3_s", "mass_loss_kg", "verdict"):
        assert k in d
    for argv, frag in [
        (["--duration", "-2 h"], "from 1 min to a year"),
        (["--duration", "0 h"], "from 1 min to a year"),
        (["--start", "300 bar"], "at most the gauge range"),
        (["--volume", "0 L"], "from 1 mL to 5 m³"),
    ]:
        base = {"--gas": "n2", "--volume": "50 L", "--start": "152 bar", "--end": "150 bar", "--duration": "14 h",
                "--gauge-range": "250 bar", "--gauge-class": "1.6"}
        base.update(dict([argv]))
        args = ["hold"] + [x for kv in base.items() for x in kv]
        assert main(args) == 2
        err = capsys.readouterr().err
        assert frag in err and err.count("\n") == 1
    log = tmp_path / "log.csv"
    log.write_text("elapsed (h),pressure (bar)\n0,150\n2,149\n1,148\n")
    assert main(["hold", "--gas", "n2", "--volume", "50 L", "--log", str(log)]) == 2
    assert "row 4" in capsys.readouterr().err


def test_target_leak_rate_in_any_flow_unit():
    from benchwarden.units import parse_flow

    assert h.target_sccm(N2, parse_flow("2 sccm")) == pytest.approx(2.0)
    assert h.target_sccm(N2, parse_flow("0.1 slpm")) == pytest.approx(100.0)
    # a mass flow: 1 g/h of N2 is 1e-3/3600 kg/s ÷ 1.2504 kg/m³ (0 °C, 1 atm) = 13.33 sccm
    assert h.target_sccm(N2, parse_flow("1 g/h")) == pytest.approx(1e-3 / 3600 / 1.2504 * 6e7, rel=2e-4)


def test_log_fast_path_reads_exactly_what_the_row_reader_reads():
    # issue 28: a long log of plain numbers is read by numpy in one pass; it must give the same
    # series as the row-by-row reader (an ISO time column forces that one)
    import random

    rnd = random.Random(3)
    rows = [f"{i * 0.5:.2f},{150 - 0.01 * i + rnd.gauss(0, 0.01):.4f},{20 + rnd.random():.3f}" for i in range(200)]
    text = "time (h),pressure (bar),temperature (degC)\n" + "\n".join(rows) + "\n"
    fast = parse_log(text, ambient_pa=AMB)
    import datetime as dt

    t0_iso = dt.datetime(2026, 12, 1, tzinfo=dt.UTC)
    iso = "timestamp,pressure (bar),temperature (degC)\n" + "\n".join(
        (t0_iso + dt.timedelta(hours=float(r.split(",")[0]))).isoformat() + "," + r.split(",", 1)[1] for r in rows)
    slow = parse_log(iso, ambient_pa=AMB)
    assert list(slow.p_abs_pa) == pytest.approx(list(fast.p_abs_pa), rel=1e-15)
    assert list(slow.t_s) == pytest.approx(list(fast.t_s))
    assert slow.T_k == pytest.approx(fast.T_k, rel=1e-15)
    # the same numbers by hand: 1 bar = 1e5 Pa (exact), 0 °C = 273.15 K (exact)
    t0, p0, T0 = (float(x) for x in rows[7].split(","))
    assert fast.t_s[7] == pytest.approx(t0 * 3600) and fast.p_abs_pa[7] == pytest.approx(p0 * 1e5 + AMB)
    assert fast.T_k is not None and fast.T_k[7] == pytest.approx(T0 + 273.15)


@pytest.mark.parametrize("cell", ["inf", "nan", "1_000", "١٥٠", "１５０", "150,5", "0x10", ""])
def test_log_cells_that_are_not_plain_numbers_are_refused_with_their_row(cell):
    text = f"time (h),pressure (bar)\n0,150\n1,{cell}\n2,149.8\n"
    with pytest.raises(InputError, match="row 3"):
        parse_log(text)


def test_the_command_line_and_the_app_share_one_computation_and_one_wording(capsys, tmp_path):
    """One application function computes a hold test (``hold_runs.compute``) and one renderer
    words it (``render.hold``): the command line prints exactly the renderer's lines, and the
    app's computation on a profile supply gives the same result for the same readings."""
    from benchwarden.render.display import Display
    from benchwarden.render.hold import hold_lines
    from benchwarden.units.constants import ATM_PA
    from benchwarden.workflows import hold_runs, holds
    from benchwarden.workflows.computations import load_profile

    n2 = g.parse_gas("nitrogen")
    gauge = holds.gauge_spec(315e5, 1.6)
    run = hold_runs.compute(n2, 0.05, start_abs_pa=152e5 + ATM_PA, end_abs_pa=150e5 + ATM_PA, duration_s=14 * 3600.0,
                            t_start_k=294.15, t_end_k=291.15, gauge=gauge, reserve_abs=15e5 + ATM_PA)
    capsys.readouterr()
    assert main(["hold", "--gas", "nitrogen", "--volume", "50 L", "--start", "152 bar", "--end", "150 bar",
                 "--duration", "14 h", "--t-start", "21 degC", "--t-end", "18 degC", "--gauge-range", "315 bar",
                 "--gauge-class", "1.6", "--reserve", "15 bar", "--pressure-unit", "psi",
                 "--journal", str(tmp_path / "none.sqlite3")]) == 0
    printed = [line.strip() for line in capsys.readouterr().out.splitlines()]
    for line in hold_lines(run, Display("psi")):
        assert line.lstrip("! ").strip() in " ".join(printed), line
    # the app's path: the demo supply n2-A is this cylinder (50 L, gauge 315 bar class 1.6, reserve 15 bar)
    prof = load_profile(ROOT / "profiles" / "demo-teaching-bench.toml")
    app_run = hold_runs.two_readings(prof, "n2-A", 152e5 + prof.ambient_pa, 150e5 + prof.ambient_pa, 14 * 3600.0,
                                     294.15, 291.15)
    assert app_run.gauge == gauge and app_run.kind == run.kind == "two-readings"
    same = hold_runs.compute(n2, 0.05, start_abs_pa=152e5 + prof.ambient_pa, end_abs_pa=150e5 + prof.ambient_pa,
                             duration_s=14 * 3600.0, t_start_k=294.15, t_end_k=291.15, gauge=gauge,
                             reserve_abs=15e5 + prof.ambient_pa, ambient_pa=prof.ambient_pa,
                             target_sccm=holds.supply_target_sccm(prof.supply("n2-A")))
    assert app_run.result == same.result


def test_hold_log_json_does_not_crash(capsys, tmp_path):
    # Regression: a numpy bool in the result broke --json.
    log = tmp_path / "log.csv"
    log.write_text("time (h),pressure (bar),temperature (degC)\n" +
                   "".join(f"{i},{150 - 0.05 * i:.3f},20\n" for i in range(12)))
    code, out, _ = run(capsys, "hold", "--gas", "nitrogen", "--volume", "50 L", "--log", str(log), "--json",
                       "--gauge-range", "250 bar", "--gauge-class", "0.25", "--journal", str(tmp_path / "j.db"))
    assert code == 0 and isinstance(json.loads(out)["curvature_significant"], bool)


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


@pytest.mark.parametrize(("deg", "n", "offset", "scale"), [(1, 3, 0.0, 1.0), (2, 4, 0.0, 1.0)] + [
    (deg, n, offset, scale) for deg in (1, 2) for n, offset, scale in ((7, 8.7, 1e-4), (100_000, 8.7, 1e-6),
                                                                        (50, -3.0, 1e3))])
def test_moment_least_squares_matches_numpy_polyfit(deg, n, offset, scale):
    # reference: numpy.polyfit (Vandermonde + SVD least squares), an independent general-purpose
    # implementation; times centred as the hold fit passes them, masses with a large offset
    from benchwarden.core.uncertainty import poly_lsq

    rnd = np.random.default_rng(11)
    t = np.sort(rnd.uniform(0, 86400.0, n))
    t = t - t.mean()
    m = offset - 2e-9 * t + 3e-15 * t**2 + rnd.normal(0, scale * 1e-3, n)
    coef, inv, rss = poly_lsq(t, m, deg)
    ref, cov = np.polyfit(t, m, deg, cov=True)
    assert coef == pytest.approx(ref, rel=1e-8, abs=1e-12 * abs(offset))
    assert inv * rss / (n - deg - 1) == pytest.approx(cov, rel=1e-6)
    assert rss == pytest.approx(float(np.sum((m - np.polyval(ref, t)) ** 2)), rel=1e-8)
