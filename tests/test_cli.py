"""Command-line contract: JSON keys, one-line errors with exit status 2, fast --help."""

import json
import subprocess
import sys
from pathlib import Path

import pytest
from clitools import limit_s, run

from benchwarden.cli import main

ROOT = Path(__file__).resolve().parents[1]
DEMO = str(ROOT / "profiles" / "demo-teaching-bench.toml")




def test_contents_json_keys(capsys):
    code, out, _ = run(capsys, "contents", "--gas", "nitrogen", "--volume", "50 L", "--pressure", "200 bar",
                       "--temperature", "15 degC", "--json")
    assert code == 0
    d = json.loads(out)
    for key in ("mass_kg", "free_volume_m3", "density_kg_m3", "z", "pressure_abs_pa", "temperature_k",
                "reference_temperature_k", "reference_pressure_pa", "ideal_free_volume_m3", "liquefied"):
        assert key in d
    assert d["pressure_abs_pa"] == pytest.approx(200e5 + 101325)
    assert d["reference_temperature_k"] == pytest.approx(288.15)
    assert d["liquefied"] is False


def test_contents_liquefied_json_and_human(capsys):
    args = ["contents", "--gas", "co2", "--volume", "50 L", "--pressure", "57 bar", "--temperature", "20 degC"]
    # regression: text and --json modes gave different exit statuses for the same input
    code, out, err = run(capsys, *args, "--json")
    assert code == 2 and out == "" and "weigh" in err
    code, out, err = run(capsys, *args)
    assert code == 2 and out == "" and "weigh" in err
    code, out, _ = run(capsys, "contents", "--gas", "co2", "--gross", "75 kg", "--tare", "68.5 kg", "--volume", "13.4 L",
                       "--json")
    assert json.loads(out)["mass_kg"] == pytest.approx(6.5)


def test_human_output_marks_gauge_and_absolute(capsys):
    code, out, _ = run(capsys, "contents", "--gas", "n2", "--volume", "50 L", "--pressure", "200 bar",
                       "--temperature", "15 degC")
    assert code == 0 and "bar(g)" in out and "bar(a)" in out and "15 °C, 101.325 kPa" in out


def test_heat_json(capsys):
    code, out, _ = run(capsys, "heat", "--gas", "n2", "--pressure", "200 bar", "--temperature", "15 degC",
                       "--to", "50 degC", "--service", "200 bar", "--test", "300 bar", "--json")
    d = json.loads(out)
    assert code == 0 and d["pressure_gauge_pa"] == pytest.approx(d["pressure_abs_pa"] - 101325)
    assert d["above_storage_limit"] is False and d["above_service_pressure"] is True
    code, out, _ = run(capsys, "heat", "--gas", "n2", "--pressure", "200 bar", "--temperature", "15 degC",
                       "--to", "50 degC", "--service", "200 bar", "--test", "300 bar")
    assert "exceeds the service pressure" in out
    code, out, _ = run(capsys, "heat", "--gas", "n2", "--pressure", "200 bar", "--temperature", "15 degC",
                       "--to", "70 degC", "--test", "250 bar", "--pressure-unit", "kPa")
    # the STOP comes from the heat-above-test finding, worded by the renderer in kPa
    assert code == 0 and "✖ STOP: heated, the cylinder reaches" in out and "above its test pressure 25000 kPa(g)" in out


def test_runtime_json(capsys):
    code, out, _ = run(capsys, "runtime", "--gas", "n2", "--volume", "50 L", "--pressure", "180 bar",
                       "--temperature", "20 degC", "--reserve", "10 bar", "--flow", "2 slpm", "--flow", "500 sccm",
                       "--json")
    d = json.loads(out)
    assert code == 0
    assert d["draw_kg_s"] == pytest.approx(sum(d["draws_kg_s"]))
    assert d["hours_to_reserve"] == pytest.approx(d["usable_mass_kg"] / d["draw_kg_s"] / 3600)


@pytest.mark.parametrize(
    "argv, fragment",
    [
        (["contents", "--gas", "n2", "--volume", "50 L", "--pressure", "200", "--temperature", "15 degC"], "no unit"),
        (["contents", "--gas", "kryptonite", "--volume", "50 L", "--pressure", "2 bar", "--temperature", "15 degC"],
         "unknown gas"),
        (["contents", "--gas", "n2", "--volume", "-50 L", "--pressure", "2 bar", "--temperature", "15 degC"],
         "from 10 mL to 5 m³"),
        (["contents", "--gas", "n2", "--volume", "50 L", "--pressure", "nan bar", "--temperature", "15 degC"],
         "finite"),
        (["contents", "--gas", "n2", "--volume", "50 L", "--pressure", "2 bar", "--temperature", "-250 degC"],
         "out of range: at least -210.0 °C"),  # the equation of state of nitrogen, from 63.15 K
        (["contents", "--gas", "n2", "--volume", "50 L", "--pressure", "2 bar", "--temperature", "15 degC",
          "--reference", "25C"], "unknown reference"),
        (["runtime", "--gas", "n2", "--volume", "50 L", "--pressure", "5 bar", "--temperature", "15 degC",
          "--reserve", "10 bar", "--flow", "1 slpm"], "reserve"),
        (["runtime", "--gas", "n2"], "required"),
        (["heat", "--gas", "n2", "--pressure", "2 bar", "--temperature", "15 degC", "--to", "hot"], "not a number"),
        (["nosuchcommand"], "invalid choice"),
    ],
)
def test_bad_input_one_line_exit_2(capsys, argv, fragment):
    code, out, err = run(capsys, *argv)
    assert code == 2
    assert fragment in err
    assert err.count("\n") == 1 and "Traceback" not in err and out == ""


def test_help_does_not_import_coolprop():
    code = (
        "import sys, runpy; sys.argv=['benchwarden','--help']\n"
        "try:\n    runpy.run_module('benchwarden', run_name='__main__')\nexcept SystemExit: pass\n"
        "assert 'CoolProp' not in sys.modules, 'CoolProp imported by --help'\n"
        "assert 'textual' not in sys.modules\n"
    )
    r = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True)
    assert r.returncode == 0, r.stderr
    assert "contents" in r.stdout


def test_flow_reference_option_changes_the_mass_flow(capsys):
    # 2 slpm at 20 °C is 273.15/293.15 of the mass of 2 slpm at 0 °C (ideal-gas ratio, Z ≈ 1)
    base = ["runtime", "--gas", "n2", "--volume", "50 L", "--pressure", "180 bar", "--temperature", "20 degC",
            "--reserve", "10 bar", "--flow", "2 slpm", "--json"]
    main(base)
    d0 = json.loads(capsys.readouterr().out)
    main(base + ["--flow-reference", "20C"])
    d20 = json.loads(capsys.readouterr().out)
    assert d20["draw_kg_s"] / d0["draw_kg_s"] == pytest.approx(273.15 / 293.15, rel=1e-3)
    assert main(base + ["--flow-reference", "25C"]) == 2
    assert "unknown reference" in capsys.readouterr().err


@pytest.mark.slow
def test_json_into_a_closed_pipe_is_quiet():
    # Regression: `benchwarden … --json | head -1` ended in a BrokenPipeError traceback.
    proc = subprocess.run(
        f"{sys.executable} -m benchwarden contents --gas nitrogen --volume '50 L' --pressure '200 bar' "
        "--temperature '15 degC' --json | head -1", shell=True, capture_output=True, text=True, cwd=ROOT,
        timeout=limit_s(120))
    assert proc.stdout.strip() == "{" and "Traceback" not in proc.stderr


def test_words_a_first_user_tripped_on(capsys, tmp_path):
    # a newcomer's trial: a stray "; x" closing the gauge-budget note, a STOP line whose figure ran
    # into its sentence, and a refusal whose way out (--confirm) was cut off at the line's limit
    from types import SimpleNamespace

    from benchwarden.render.budget import budget_assumption

    for budget in ("uncorrelated", "repeatability"):
        note = budget_assumption(SimpleNamespace(pressure_budget=budget))
        assert note is not None and note.endswith(")") and "; x" not in note
    code, out, _ = run(capsys, "throttle", "--gas", "co2", "--inlet", "57 bar", "--outlet", "0.5 bar",
                       "--temperature", "20 degC")
    stop = next(ln for ln in out.splitlines() if "STOP" in ln)
    assert code == 0 and stop.rstrip().endswith("]") and "pressure [outlet at" in stop
    j = str(tmp_path / "j.sqlite")
    assert run(capsys, "--journal", j, "reading", DEMO, "n2-A", "--pressure", "100 bar", "--at",
               "2026-12-01T08:00")[0] == 0
    code, _, err = run(capsys, "--journal", j, "reading", DEMO, "n2-A", "--pressure", "120 bar", "--at",
                       "2026-12-01T09:00")
    assert code == 2 and "repeat with --confirm" in err and len(err.strip().splitlines()) == 1
