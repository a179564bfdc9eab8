"""A generated bad-input suite: every option of every sub-command that takes a value is given
values from a grammar of wrong ones (no number, no unit, the wrong unit, NaN, infinities,
negative, huge, thousands separators and decimal commas, control characters and escape
sequences, a 100 kB string). Each case must exit with status 2, print exactly one line under
200 characters on stderr that names the option's value or quantity, print nothing on stdout,
raise no traceback and write nothing. A hypothesis part adds random text with a fixed seed.

The counts are printed at the end of the run (cases tried, misbehaved)."""

from __future__ import annotations

import os
from pathlib import Path

import pytest
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

from gasbench.cli import main

ROOT = Path(__file__).resolve().parents[1]
DEMO = str(ROOT / "profiles" / "demo-teaching-bench.toml")

#: valid argv per command; the options in VALUED take quantities
VALID: dict[str, list[str]] = {
    "contents": ["contents", "--gas", "n2", "--volume", "50 L", "--pressure", "200 bar", "--temperature", "15 degC"],
    "heat": ["heat", "--gas", "n2", "--pressure", "200 bar", "--temperature", "15 degC", "--to", "40 degC"],
    "runtime": ["runtime", "--gas", "n2", "--volume", "50 L", "--pressure", "200 bar", "--temperature", "15 degC",
                "--reserve", "10 bar", "--flow", "2 slpm"],
    "throttle": ["throttle", "--gas", "n2", "--inlet", "150 bar", "--outlet", "3 bar", "--temperature", "20 degC"],
    "gap": ["gap", "--gas", "n2", "--spacing", "2 mm", "--pressure", "3 bar", "--temperature", "20 degC"],
    "orifice": ["orifice", "--gas", "n2", "--diameter", "0.2 mm", "--upstream", "2 bar", "--downstream", "0 bar",
                "--temperature", "20 degC"],
    "hold": ["hold", "--gas", "n2", "--volume", "50 L", "--start", "152 bar", "--end", "150 bar", "--duration",
             "14 h", "--t-start", "21 degC", "--t-end", "18 degC", "--gauge-range", "250 bar", "--gauge-class", "1.6",
             "--target", "5 sccm"],
    "room": ["room", "--gas", "n2", "--room-volume", "40 m3", "--leak", "5 slpm", "--ventilation", "2/h",
             "--temperature", "20 degC"],
    "plan": ["plan", DEMO, "--leak", "5 sccm"],
    "reading": ["reading", DEMO, "n2-A", "--pressure", "60 bar", "--temperature", "20 degC", "--at", "now"],
    "swap": ["swap", DEMO, "n2-A", "--pressure", "190 bar", "--temperature", "20 degC", "--retest", "2031-01-01"],
}
VALUED = {
    "contents": ["--gas", "--volume", "--pressure", "--temperature"],
    "heat": ["--gas", "--pressure", "--temperature", "--to"],
    "runtime": ["--volume", "--pressure", "--temperature", "--reserve", "--flow"],
    "throttle": ["--inlet", "--outlet", "--temperature"],
    "gap": ["--spacing", "--pressure", "--temperature"],
    "orifice": ["--diameter", "--upstream", "--downstream", "--temperature"],
    "hold": ["--volume", "--start", "--end", "--duration", "--t-start", "--t-end", "--gauge-range", "--target"],
    "room": ["--room-volume", "--leak", "--ventilation", "--temperature"],
    "plan": ["--leak"],
    "reading": ["--pressure", "--temperature", "--at"],
    "swap": ["--pressure", "--temperature", "--retest"],
}
#: the unit each option is written with, for values like "nan <unit>"
UNIT = {"--volume": "L", "--room-volume": "m3", "--pressure": "bar", "--inlet": "bar", "--outlet": "bar",
        "--upstream": "bar", "--downstream": "bar", "--start": "bar", "--end": "bar", "--reserve": "bar",
        "--gauge-range": "bar", "--temperature": "degC", "--to": "degC", "--t-start": "degC", "--t-end": "degC",
        "--spacing": "mm", "--diameter": "mm", "--duration": "h", "--flow": "slpm", "--leak": "slpm",
        "--target": "sccm", "--ventilation": "m3/h", "--gas": "", "--at": "", "--retest": ""}


def bad_values(opt: str) -> list[str]:
    u = UNIT[opt]
    common = ["", "abc", "\x1b]0;owned\x07", "5\x00 bar", "9" * 100_000, "[/]", "1,000 " + u, "2,5 " + u,
              "1 000 " + u]
    if not u:
        return common
    return common + [f"nan {u}", f"inf {u}", f"-inf {u}", f"1e400 {u}", f"12 furlongs", "12", f"-1e9 {u}",
                     f"1e30 {u}"]


CASES = [(cmd, opt, v) for cmd, opts in VALUED.items() for opt in opts for v in bad_values(opt)]
TRIED: list[int] = [0]
MISBEHAVED: list[str] = []


def _run(argv: list[str], capsys) -> tuple[int, str, str]:
    try:
        code = main(argv)
    except SystemExit as exc:
        code = int(exc.code or 0)
    out, err = capsys.readouterr()
    return code, out, err


@pytest.fixture
def workdir(tmp_path, monkeypatch):
    monkeypatch.chdir(tmp_path)
    return tmp_path


def _check(argv: list[str], capsys, workdir: Path, journal_before: bytes | None) -> None:
    TRIED[0] += 1
    code, out, err = _run(argv, capsys)
    lines = err.splitlines()
    problems = []
    if code != 2:
        problems.append(f"exit {code}")
    if out:
        problems.append("stdout not empty")
    if len(lines) != 1 or len(lines[0]) >= 200:
        problems.append(f"{len(lines)} stderr lines, first {len(lines[0]) if lines else 0} chars")
    if "Traceback" in err or "\x1b" in err or "\x00" in err:
        problems.append("traceback or control characters on stderr")
    written = [p.name for p in workdir.iterdir() if p.name != "journal.sqlite3"]
    if written:
        problems.append(f"wrote {written}")
    journal = Path(os.environ["GASBENCH_JOURNAL"])
    if (journal.read_bytes() if journal.exists() else None) != journal_before:
        problems.append("journal changed")
    if problems:
        MISBEHAVED.append(f"{argv[0]} {problems}")
    assert not problems, (argv[:1], [a[:40] for a in argv], problems, err[:300])


@pytest.mark.parametrize("cmd, opt, value", CASES, ids=[f"{c}{o}-{i}" for i, (c, o, _) in enumerate(CASES)])
def test_generated_bad_value_is_one_line_exit_2_nothing_written(cmd, opt, value, capsys, workdir):
    argv = list(VALID[cmd])
    argv[argv.index(opt) + 1] = value
    journal = Path(os.environ["GASBENCH_JOURNAL"])
    _check(argv, capsys, workdir, journal.read_bytes() if journal.exists() else None)


@settings(max_examples=150, deadline=None, derandomize=True,
          suppress_health_check=[HealthCheck.function_scoped_fixture])
@given(cmd=st.sampled_from(sorted(VALUED)), data=st.data())
def test_random_text_in_any_quantity_is_refused_cleanly(cmd, data, capsys, workdir):
    opt = data.draw(st.sampled_from(VALUED[cmd]))
    # random text that is not a plain number and has no known unit after it
    value = data.draw(st.text(alphabet=st.characters(blacklist_categories=("Cs",)), min_size=1, max_size=30)
                      .filter(lambda t: not any(ch.isdigit() for ch in t) and t.strip() not in ("now",)))
    argv = list(VALID[cmd])
    argv[argv.index(opt) + 1] = value
    if cmd == "contents" and opt == "--gas" and value.strip().lower() in {"n2", "air"}:
        return
    journal = Path(os.environ["GASBENCH_JOURNAL"])
    _check(argv, capsys, workdir, journal.read_bytes() if journal.exists() else None)


def test_zz_report_counts():
    """Prints the counts for the closing note (runs last in this module)."""
    print(f"\ngenerated bad-input suite: {TRIED[0]} cases tried, {len(MISBEHAVED)} misbehaved")
    assert TRIED[0] > 0
