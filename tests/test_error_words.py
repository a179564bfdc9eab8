"""Errors carry data and are worded once, by the renderer, in the display unit (issue 22, item 9).

Unit conversions checked here: 1 psi = 6 894.757 Pa and 1 bar = 100 kPa (NIST SP 811, appendix B).
"""

from __future__ import annotations

import shutil
from pathlib import Path

import pytest
from clitools import run

from benchwarden.core import gas as g
from benchwarden.errors import KELVIN, PA_ABS, PA_GAUGE, InputError, PropertyError, RangeError
from benchwarden.render.display import Display
from benchwarden.render.errors import error_line
from benchwarden.workflows import computations as comp

ROOT = Path(__file__).resolve().parents[1]
PSI = 6894.757  # Pa per psi (NIST SP 811)




def test_a_range_error_is_worded_from_its_data_in_the_display_unit():
    e = RangeError(what="start pressure", value=300 * PSI, hi=250 * PSI, unit=PA_GAUGE, hi_name="the gauge range")
    assert error_line(e, Display("psi")) == ("start pressure 300.0 psig is out of range: at most the gauge range "
                                              "250.0 psig")
    # 300 psi = 20.68 bar = 2068 kPa (NIST SP 811)
    assert "20.7 bar(g)" in error_line(e, Display("bar")) and "2068 kPa(g)" in error_line(e, Display("kPa"))
    # str() stays plain SI for logs: no display unit at all
    assert str(e) == "start pressure 2.068e+06 Pa(g) is out of range: at most the gauge range 1.724e+06 Pa(g)"


def test_an_error_quoting_quantities_is_filled_in_the_display_unit():
    e = PropertyError("no gas state of X at {0} and {1}", quantities=((50e5, PA_ABS), (253.15, KELVIN)))
    assert error_line(e, Display("MPa")) == "no gas state of X at 5.00 MPa(a) and -20.0 °C"
    assert str(e) == "no gas state of X at 5e+06 Pa(a) and 253.2 K(abs)"
    assert error_line(InputError("unknown gas 'xenonx'"), Display("psi")) == "unknown gas 'xenonx'"


def test_the_core_refuses_with_data_not_words():
    n2 = comp.parse_gas("nitrogen")
    with pytest.raises(RangeError) as exc:
        comp.throttle(n2, 10e5, 20e5, 293.15)
    e = exc.value
    assert (e.what, e.value, e.hi, e.hi_open, e.unit) == ("outlet pressure", 20e5, 10e5, True, PA_ABS)
    with pytest.raises(RangeError) as exc:
        g.density(n2, 20.0, 1e5)  # below nitrogen's triple point 63.15 K (from memory): outside the EOS
    assert exc.value.unit == KELVIN and exc.value.lo == pytest.approx(63.15, abs=0.01)


def test_the_command_line_words_a_refusal_in_its_pressure_unit(capsys):
    base = ["throttle", "--gas", "n2", "--inlet", "10 bar", "--outlet", "20 bar", "--temperature", "20 degC"]
    code, _, err = run(capsys, *base, "--pressure-unit", "psi")
    # 20 bar(g) + 1.01325 bar = 21.01325 bar(a) = 304.8 psia (NIST SP 811)
    assert code == 2 and err.count("\n") == 1
    assert "outlet pressure 304.8 psia is out of range: below the inlet pressure 159.7 psia" in err
    code, _, err = run(capsys, *base)
    assert code == 2 and "outlet pressure 21.0 bar(a)" in err and "psia" not in err  # a display does not linger


def test_the_command_line_words_a_quoted_refusal_in_its_pressure_unit(capsys):
    code, _, err = run(capsys, "throttle", "--gas", "co2", "--inlet", "150 bar", "--outlet", "2 bar", "--temperature",
                       "20 degC", "--pressure-unit", "kPa")
    # 150 bar(g) = 15 101 kPa(a); CO2's vapour pressure at 20 °C is 57.29 bar(a) (NIST Webbook, from memory)
    assert code == 2 and "inlet 15101 kPa(a)" in err and "(5729 kPa(a))" in err


def test_the_app_words_an_error_in_the_profile_display_unit(tmp_path):
    from benchwarden.tui.screens.base import said
    from benchwarden.workflows.session import SessionState

    prof = tmp_path / "bench.toml"
    shutil.copy(ROOT / "profiles" / "demo-teaching-bench.toml", prof)
    prof.write_text(prof.read_text() + '\n[display]\npressure_unit = "psi"\n')
    state = SessionState(prof, None)
    state.profile = comp.load_profile(prof)
    e = RangeError(what="reading", value=320e5, hi=315e5, unit=PA_GAUGE, hi_name="the gauge range")
    # 315 bar = 4569 psi (NIST SP 811)
    assert said(e, state) == "reading 4641 psig is out of range: at most the gauge range 4569 psig"


def test_a_profile_error_keeps_the_value_data_and_its_place(tmp_path, capsys):
    prof = tmp_path / "bench.toml"
    text = (ROOT / "profiles" / "demo-teaching-bench.toml").read_text()
    prof.write_text(text.replace('reserve = "15 bar"', 'reserve = "3000 bar"'))
    code, _, err = run(capsys, "plan", str(prof), "--pressure-unit", "MPa")
    # the file, the line and the key stay; 2000 bar(a) = 200 MPa(a) (NIST SP 811)
    assert code == 2 and f"{prof}:" in err and "reserve: value '3000 bar' is out of range: at most 200.0 MPa(a)" in err
    code, _, err = run(capsys, "plan", str(prof))
    assert code == 2 and "at most 2000 bar(a)" in err


def test_formatting_for_people_lives_in_render_only():
    """The units layer has no formatting module any more, and no refusal in the core writes a
    figure itself (a format spec, or a pressure or temperature unit, inside its message)."""
    import ast
    import importlib.util
    import re

    assert importlib.util.find_spec("benchwarden.units.format") is None
    written = []
    for path in sorted((ROOT / "benchwarden" / "core").glob("*.py")):
        src = path.read_text()
        for node in ast.walk(ast.parse(src)):
            name = getattr(node, "func", None)
            name = getattr(name, "id", None) or getattr(name, "attr", None)
            if isinstance(node, ast.Call) and name in ("InputError", "PropertyError", "RangeError") and node.args:
                message = node.args[0]
                figures = [v for v in ast.walk(message) if isinstance(v, ast.FormattedValue) and v.format_spec
                           and "gas" not in ast.unparse(v.value)]
                text = ast.unparse(message)
                if re.search(r"bar\(|°C|\bPa\b|fmt_", text) or any("1e5" in ast.unparse(v) for v in figures):
                    written.append(f"{path.name}:{node.lineno}")
    assert not written, written


def test_an_error_before_the_command_chose_its_display_uses_the_profile_s(tmp_path):
    import argparse

    from benchwarden.cli.common import error_text, forget_display

    prof = tmp_path / "bench.toml"
    prof.write_text((ROOT / "profiles" / "demo-teaching-bench.toml").read_text()
                    + '\n[display]\npressure_unit = "kPa"\n')
    forget_display()
    e = RangeError(what="reading", value=320e5, hi=300e5, unit=PA_GAUGE, hi_name="the cylinder's test pressure")
    # 300 bar = 30 000 kPa (NIST SP 811); --pressure-unit wins over the profile's unit
    assert "30000 kPa(g)" in error_text(e, argparse.Namespace(profile=str(prof), pressure_unit=None))
    assert "4351 psig" in error_text(e, argparse.Namespace(profile=str(prof), pressure_unit="psi"))
    assert "300.0 bar(g)" in error_text(e, argparse.Namespace(profile=str(tmp_path / "missing.toml")))
