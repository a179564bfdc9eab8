"""Bad-input corpus: every sub-command with wrong units, negative, zero, NaN and infinite values,
out-of-range temperatures and pressures, unknown gases, bad mixtures, malformed and hostile
profiles. Each must exit with status 2 and one line on stderr, no traceback. Plus a bounded
fuzz of the profile loader: it loads or raises the project's own error."""

import string
from pathlib import Path

import pytest
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

from benchwarden.cli import main
from benchwarden.errors import BenchwardenError
from benchwarden.storage.profile import demo_profile_text, parse_profile

ROOT = Path(__file__).resolve().parents[1]
C = ["contents", "--gas", "n2", "--volume", "50 L", "--pressure", "200 bar", "--temperature", "15 degC"]
H = ["heat", "--gas", "n2", "--pressure", "200 bar", "--temperature", "15 degC", "--to", "40 degC"]
R = ["runtime", "--gas", "n2", "--volume", "50 L", "--pressure", "200 bar", "--temperature", "15 degC",
     "--reserve", "10 bar", "--flow", "2 slpm"]
T = ["throttle", "--gas", "n2", "--inlet", "150 bar", "--outlet", "3 bar", "--temperature", "20 degC"]
G = ["gap", "--gas", "n2", "--spacing", "2 mm", "--pressure", "3 bar"]
ORI = ["orifice", "--gas", "n2", "--diameter", "0.2 mm", "--upstream", "2 bar", "--downstream", "0 bar",
     "--temperature", "20 degC"]
HD = ["hold", "--gas", "n2", "--volume", "50 L", "--start", "152 bar", "--end", "150 bar", "--duration", "14 h"]
RM = ["room", "--gas", "n2", "--room-volume", "40 m3", "--release", "9 m3"]


def sub(argv, opt, value):
    out = list(argv)
    out[out.index(opt) + 1] = value
    return out


CASES = []
for base, opt in [(C, "--pressure"), (H, "--pressure"), (R, "--pressure"), (T, "--inlet"), (G, "--pressure"),
                  (ORI, "--upstream"), (HD, "--start")]:
    for bad in ["200", "200 furlongs", "nan bar", "inf bar", "-5 bar(a)", "1e400 bar", "abc", "", "2 atm(g)"]:
        CASES.append(sub(base, opt, bad))
for base in (C, H, R, T, ORI):
    for bad in ["15", "15 parsec", "-300 degC", "nan degC", "inf K", "5000 degC", "-250 degC"]:
        CASES.append(sub(base, "--temperature", bad))
for base in (C, H, R, T, G, ORI, HD, RM):
    for bad in ["unobtainium", "helium:0.8,nitrogen:0.1", "helium:0.5,helium:0.5", "helium:abc", "co2:1.5",
                "helium:-1,nitrogen:2", ":", ""]:
        CASES.append(sub(base, "--gas", bad))
CASES += [
    sub(C, "--volume", "0 L"), sub(C, "--volume", "-50 L"), sub(C, "--volume", "nan L"), sub(C, "--volume", "50 bar"),
    sub(C, "--pressure", "20000 bar"),
    sub(R, "--flow", "-2 slpm"), sub(R, "--flow", "2 bar"), sub(R, "--flow", "2 L/min"), sub(R, "--flow", "nan slpm"),
    sub(R, "--reserve", "300 bar"),
    sub(G, "--spacing", "0 mm"), sub(G, "--spacing", "-1 mm"), sub(G, "--spacing", "2 bar"),
    sub(ORI, "--diameter", "0 mm"), sub(ORI, "--downstream", "5 bar"), ORI + ["--cd", "0"], ORI + ["--cd", "1.5"],
    sub(T, "--outlet", "200 bar"),
    sub(HD, "--duration", "0 h"), sub(HD, "--duration", "-1 h"), sub(HD, "--duration", "5 bar"),
    sub(HD, "--volume", "0 L"), HD + ["--gauge-range", "100 bar", "--gauge-class", "1.6"],
    HD + ["--gauge-range", "250 bar", "--gauge-class", "0"], HD + ["--gauge-range", "250 bar"],
    sub(RM, "--room-volume", "0 m3"), sub(RM, "--room-volume", "-1 m3"), sub(RM, "--release", "-1 m3"),
    RM + ["--model", "bucket"], RM + ["--ventilation", "-2/h"], RM + ["--ventilation", "2 bar"],
    ["plan", "/nonexistent/bench.toml"], ["checklist", "/nonexistent/bench.toml"], ["export", "abc"],
    ["contents"], ["nosuch"], ["--bogus"],
]


@pytest.mark.parametrize("argv", CASES, ids=lambda a: " ".join(a)[:70])
def test_bad_input_exits_2_with_one_line(argv, capsys):
    try:
        code = main(argv)
    except SystemExit as exc:
        code = exc.code
    out, err = capsys.readouterr()
    assert code == 2, (argv, out, err)
    assert err.count("\n") == 1 and err.startswith("benchwarden: error:"), err
    assert "Traceback" not in err and out == ""


def _profile_file(tmp_path, text):
    p = tmp_path / "bench.toml"
    p.write_text(text)
    return p


DEMO = demo_profile_text()
HOSTILE_PROFILES = [
    "",
    "[bench]\nname = 'x'\n",
    "x = " + "[" * 5000 + "]" * 5000,
    "a = " + "{b = " * 300 + "1" + "}" * 300,
    DEMO.replace('water_volume = "50 L"', 'water_volume = "1e308 L"'),
    DEMO.replace('water_volume = "50 L"', 'water_volume = 50'),
    DEMO.replace('water_volume = "50 L"', 'water_volume = ["50 L"]'),
    DEMO.replace('water_volume = "50 L"', 'water_volume = "99999999999999999999999 m3"'),
    DEMO.replace('reading = "64 bar"', 'reading = "1e30 bar"'),
    DEMO.replace('stages = 2', 'stages = 3'),
    DEMO.replace('stages = 2', 'stages = "two"'),
    DEMO.replace('[bench]', '[bench]\nsecret = true'),
    DEMO.replace('gas = "nitrogen"', 'gas = "nitrogen:0.5,argon:0.4"'),
    DEMO.replace('temperature = "21 degC"', 'temperature = "-300 degC"', 1),
    DEMO.replace('duration = "4 h"', 'duration = "-4 h"'),
    DEMO.replace('spacing = "1.4 mm"', 'spacing = "0 mm"'),
    DEMO.replace('volume = "48 m3"', 'volume = "0 m3"'),
    DEMO.replace('ventilation = "1.5/h"', 'ventilation = "fast"'),
    "\x00\x01\x02",
]


@pytest.mark.parametrize("text", HOSTILE_PROFILES, ids=range(len(HOSTILE_PROFILES)))
def test_hostile_profiles_exit_2(text, tmp_path, capsys):
    p = _profile_file(tmp_path, text)
    assert main(["plan", str(p)]) == 2
    err = capsys.readouterr().err
    assert err.count("\n") == 1 and "Traceback" not in err and str(p) in err


@settings(max_examples=150, deadline=None, suppress_health_check=[HealthCheck.too_slow])
@given(st.text(alphabet=string.printable, max_size=400))
def test_fuzz_profile_loader_random_text(text):
    try:
        parse_profile(text, "fuzz.toml")
    except BenchwardenError:
        pass


LINES = DEMO.splitlines()


@settings(max_examples=150, deadline=None, suppress_health_check=[HealthCheck.too_slow])
@given(st.lists(st.tuples(st.integers(0, len(LINES) - 1), st.sampled_from(
    ['"x"', "1", "-1", "nan", "inf", "true", "[]", "{}", '"1e999 bar"', '"0 L"', '"-5 bar"', '"nan degC"',
     '"<script>"', '"helium:2"', '"10 furlong"'])), max_size=4))
def test_fuzz_profile_loader_mutated_demo(mutations):
    lines = list(LINES)
    for i, value in mutations:
        if "=" in lines[i] and not lines[i].lstrip().startswith("#") and not lines[i].lstrip().startswith("{"):
            key = lines[i].split("=", 1)[0]
            lines[i] = f"{key}= {value}"
    try:
        parse_profile("\n".join(lines), "fuzz.toml")
    except BenchwardenError:
        pass
