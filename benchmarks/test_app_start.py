"""The app as a person sees it (issue 28): start to the first figures on screen in a real terminal,
against a minimal Textual app measured the same way in the same run (target ≤ 2×); and the CPU the
app spends idle with one live gauge polled every second (target ≤ 0.5 %), beside the same app
without a gauge and the minimal Textual app.

The terminal is tmux with a fixed size: the app starts in a new session and the pane is captured
every 10 ms until the first figure (a pressure with its unit) shows. CPU is the child's user +
system time from /proc over a stretch of wall time, after it has settled.

The start is also counted in machine instructions under valgrind (callgrind), which the load
of a shared machine does not move (skipped with one line without valgrind).

Run: uv run pytest benchmarks/test_app_start.py -s   (skipped with one line without tmux)
"""

from __future__ import annotations

import datetime as dt
import itertools
import os
import re
import shutil
import subprocess
import sys
import threading
import time
from pathlib import Path

import pytest

ROOT = Path(__file__).resolve().parents[1]
DEMO = (ROOT / "profiles" / "demo-teaching-bench.toml").read_text()
ANCHOR = 'gauge = { range = "315 bar", accuracy_class = 1.6 }'  # the last key of the first supply
SIZE = ("120", "40")
MINIMAL = """
from textual.app import App
from textual.widgets import Static


class Minimal(App):
    def compose(self):
        yield Static("n2-A   64 bar(g)")


Minimal().run()
"""
HEADLESS = """
import sys
from benchwarden.tui.app import make_app
make_app(sys.argv[1] if sys.argv[1] != "-" else None, sys.argv[2]).run(headless=True, size=(120, 40))
"""
MINIMAL_HEADLESS = MINIMAL.replace("Minimal().run()", "Minimal().run(headless=True, size=(120, 40))")
FIGURE = re.compile(r"\d+(\.\d+)? bar")
RESULTS: list[str] = []
_RUNS = itertools.count()


def _env() -> dict[str, str]:
    # bytecode cached, as on a user's machine; a terminal that Textual draws in full
    env = {k: v for k, v in os.environ.items() if k != "PYTHONDONTWRITEBYTECODE"}
    env["TERM"] = "xterm-256color"
    return env


def _first_figure(cmd: list[str], sock: str) -> float:
    """Seconds from starting ``cmd`` in a new tmux session to a pressure figure in its pane."""
    sock = f"{sock}-{next(_RUNS)}"  # a server of its own each time: none is left over from the last
    shell = " ".join(f"'{c}'" for c in cmd)
    t0 = time.perf_counter()
    subprocess.run(["tmux", "-L", sock, "new-session", "-d", "-x", SIZE[0], "-y", SIZE[1], "-s", "b", f"exec {shell}"],
                   check=True, env=_env())
    try:
        while time.perf_counter() - t0 < 60:
            pane = subprocess.run(["tmux", "-L", sock, "capture-pane", "-p", "-t", "b"], capture_output=True,
                                  text=True).stdout
            if FIGURE.search(pane):
                return time.perf_counter() - t0
            time.sleep(0.01)
        raise AssertionError(f"no figure on screen after 60 s:\n{pane}")
    finally:
        subprocess.run(["tmux", "-L", sock, "kill-server"], capture_output=True)


def test_start_to_first_figures_in_a_real_terminal(tmp_path):
    if shutil.which("tmux") is None:
        pytest.skip("tmux is not installed: the app's start in a real terminal is not measured")
    minimal = tmp_path / "minimal.py"
    minimal.write_text(MINIMAL)
    sock = f"benchwarden-bench-{os.getpid()}"
    app = [sys.executable, "-m", "benchwarden", "--journal", str(tmp_path / "j.sqlite3")]
    _first_figure(app, sock)  # creates the journal, fills the caches of a first start
    ours, plain = [], []
    for _ in range(5):  # interleaved: both see the same load on the machine
        ours.append(_first_figure(app, sock))
        plain.append(_first_figure([sys.executable, str(minimal)], sock))
    RESULTS.append(f"start to the first figure ({'x'.join(SIZE)} tmux, best of 5): app {min(ours):.3f} s, "
                   f"minimal Textual app {min(plain):.3f} s, ratio {min(ours) / min(plain):.2f}× (target ≤ 2×)")
    assert min(ours) > 0


FIRST_FRAME_EXIT = """
import os, runpy, sys
import textual.app as ta

_display = ta.App._display


def _first(self, screen, renderable):
    if renderable is not None:
        os._exit(0)  # the first frame is being written: the measure ends here
    return _display(self, screen, renderable)


ta.App._display = _first
sys.argv = sys.argv[1:]
if sys.argv[0] == "-m":
    sys.argv = sys.argv[1:]
    runpy.run_module(sys.argv[0], run_name="__main__", alter_sys=True)
else:
    runpy.run_path(sys.argv[0], run_name="__main__")
"""


def _instructions(argv: list[str], tmp: Path, name: str) -> int:
    """Machine instructions from the interpreter's start to the first frame written, counted by
    valgrind (callgrind) with the program in a tmux pane: a measure that the machine's load does
    not move, beside the wall-clock one."""
    wrapper, log = tmp / "first_frame_exit.py", tmp / f"{name}.callgrind.log"
    wrapper.write_text(FIRST_FRAME_EXIT)
    sock = f"benchwarden-ir-{os.getpid()}-{name}"
    cmd = ["valgrind", "--tool=callgrind", f"--log-file={log}", f"--callgrind-out-file={tmp / name}.out",
           sys.executable, str(wrapper), *argv]
    subprocess.run(["tmux", "-L", sock, "new-session", "-d", "-x", SIZE[0], "-y", SIZE[1], "-s", "b",
                    "exec " + " ".join(f"'{c}'" for c in cmd)], check=True, env=_env())
    try:
        t0 = time.perf_counter()
        while time.perf_counter() - t0 < 300:
            found = re.search(r"Collected : (\d+)", log.read_text()) if log.exists() else None
            if found:
                return int(found.group(1))
            time.sleep(0.5)
        raise AssertionError("callgrind did not finish within 300 s")
    finally:
        subprocess.run(["tmux", "-L", sock, "kill-server"], capture_output=True)


def test_start_to_first_frame_in_instructions(tmp_path):
    if shutil.which("tmux") is None or shutil.which("valgrind") is None:
        pytest.skip("tmux or valgrind is not installed: the start is not counted in instructions")
    minimal = tmp_path / "minimal.py"
    minimal.write_text(MINIMAL)
    app = ["-m", "benchwarden", "--journal", str(tmp_path / "j.sqlite3")]
    _first_figure([sys.executable, *app], f"benchwarden-ir-warm-{os.getpid()}")  # the caches of a first start
    ours = _instructions(app, tmp_path, "app")
    plain = _instructions([str(minimal)], tmp_path, "minimal")
    RESULTS.append(f"start to the first frame in instructions (callgrind, {'x'.join(SIZE)} tmux): app "
                   f"{ours / 1e6:.0f} M, minimal Textual app {plain / 1e6:.0f} M, ratio {ours / plain:.2f}×")
    assert ours > 0 and plain > 0


def _cpu_s(pid: int) -> float:
    """User + system CPU time of a process [s], from /proc/PID/stat (fields 14 and 15)."""
    fields = Path(f"/proc/{pid}/stat").read_text().rsplit(")", 1)[1].split()
    return (int(fields[11]) + int(fields[12])) / os.sysconf("SC_CLK_TCK")


def _idle_cpu(argv: list[str], settle_s: float, span_s: float) -> float:
    """Percent of one core a headless child spends over ``span_s`` after ``settle_s``."""
    proc = subprocess.Popen(argv, stdin=subprocess.DEVNULL, stdout=subprocess.DEVNULL, stderr=subprocess.PIPE,
                            env=_env())
    try:
        time.sleep(settle_s)
        if proc.poll() is not None:
            raise AssertionError(proc.stderr.read().decode() if proc.stderr else "the app stopped")
        c0, t0 = _cpu_s(proc.pid), time.perf_counter()
        time.sleep(span_s)
        return 100 * (_cpu_s(proc.pid) - c0) / (time.perf_counter() - t0)
    finally:
        proc.kill()
        proc.wait()


def _feed(log: Path, stop: threading.Event) -> None:
    """A gauge's log growing by one line a second (a cylinder losing a little pressure)."""
    p = 64.0
    while not stop.is_set():
        with open(log, "a") as fh:
            fh.write(f"{dt.datetime.now().astimezone().isoformat(timespec='seconds')},{p:.2f}\n")
        p -= 0.001
        stop.wait(1.0)


def test_idle_cpu_with_one_live_gauge(tmp_path):
    if not Path("/proc/self/stat").exists():
        pytest.skip("no /proc: the child's CPU time is not measured here")
    span = float(os.environ.get("BENCHWARDEN_IDLE_SPAN_S", "30"))
    log = tmp_path / "gauge.log"
    log.write_text("")
    source = (f'\n[supplies.source]\nkind = "file"\npath = "{log}"\nvalue_unit = "bar"\ninterval = "1 s"\n'
              'delimiter = ","\ntime_column = 1\nvalue_column = 2\n'
              'range = "250 bar"\naccuracy_class = 0.1\nresolution = "0.01 bar"\n')
    live = tmp_path / "live.toml"
    live.write_text(DEMO.replace(ANCHOR, ANCHOR + source, 1))
    script, minimal = tmp_path / "headless.py", tmp_path / "minimal.py"
    script.write_text(HEADLESS)
    minimal.write_text(MINIMAL_HEADLESS)
    stop = threading.Event()
    feeder = threading.Thread(target=_feed, args=(log, stop), daemon=True)
    feeder.start()
    try:
        gauge = _idle_cpu([sys.executable, str(script), str(live), str(tmp_path / "j1.sqlite3")], 8.0, span)
    finally:
        stop.set()
        feeder.join()
    none = _idle_cpu([sys.executable, str(script), "-", str(tmp_path / "j2.sqlite3")], 8.0, span)
    plain = _idle_cpu([sys.executable, str(minimal)], 3.0, span)
    RESULTS.append(f"idle CPU over {span:.0f} s (headless): one live gauge at 1 s {gauge:.2f} %, no gauge "
                   f"{none:.2f} %, minimal Textual app {plain:.2f} % (target ≤ 0.5 %)")
    assert gauge >= 0


def teardown_module(module):
    if RESULTS:
        print("\n\n" + "\n".join(RESULTS))
