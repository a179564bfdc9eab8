"""Live gauges end to end: real pymodbus servers on 127.0.0.1 (the simulator, and one serving
every register format), Modbus RTU through a pseudo-terminal, a growing log file, the watcher,
the leak watch against ``hold --log``, alarms, ``watch`` and ``status``. Bounded in time."""

from __future__ import annotations

import asyncio
import csv
import datetime as dt
import io
import json
import os
import signal
import socket
import sqlite3
import struct
import subprocess
import sys
import threading
import time
from pathlib import Path

import pymodbus  # noqa: F401  (the package once, before threads import its parts)
import pytest

from benchwarden.cli import main
from benchwarden.core import gas as g
from benchwarden.core import supply
from benchwarden.live.simulator import Cylinder, serve
from benchwarden.storage.journal import Journal
from benchwarden.storage.profile import parse_profile
from benchwarden.storage.samples import SampleStore
from benchwarden.units import parse_flow
from benchwarden.workflows.findings import alarm_findings
from benchwarden.workflows.watch import (
    SILENT_INTERVALS,
    AlarmBook,
    Watcher,
    leak_watch,
    record_leak_watch,
)

ROOT = Path(__file__).resolve().parents[1]
DEMO = (ROOT / "profiles" / "demo-teaching-bench.toml").read_text()
ANCHOR = 'gauge = { range = "315 bar", accuracy_class = 1.6 }\n'
BENCH = parse_profile(DEMO, "demo.toml").bench.name
AMB = 101325.0


def _free_port() -> int:
    with socket.socket() as s:
        s.bind(("127.0.0.1", 0))
        return s.getsockname()[1]


def _profile(tmp_path: Path, source: str, extra: str = "") -> Path:
    p = tmp_path / "live.toml"
    p.write_text(DEMO.replace(ANCHOR, ANCHOR + "\n[supplies.source]\n" + source + extra, 1))
    return p


def _file_source(log: Path, interval: str = "0.2 s") -> str:
    """A log of ``time,value`` lines (ISO 8601 time stamps), declared as such."""
    return (f'kind = "file"\npath = "{log}"\nvalue_unit = "bar"\ninterval = "{interval}"\n'
            'delimiter = ","\ntime_column = 1\nvalue_column = 2\n'
            'range = "250 bar"\naccuracy_class = 0.1\nresolution = "0.01 bar"\n')


def _serve_in_thread(cyl: Cylinder, port: int, seconds: float) -> threading.Thread:
    t = threading.Thread(target=lambda: asyncio.run(serve(cyl, port, duration_s=seconds)), daemon=True)
    t.start()
    return t


# ----------------------------------------------------------------------------- the leak watch


def test_leak_watch_agrees_with_hold_log_on_the_same_drop(tmp_path, capsys):
    # 8 h of a 50 L nitrogen cylinder losing 150 sccm, sampled every 30 s and read to 0.01 bar; the
    # pressures come from the simulator's own mass balance (CoolProp density inverted), not from
    # the hold test's Z table
    n2 = g.parse_gas("nitrogen")
    loss = supply.mass_flow(n2, parse_flow("150 sccm"))
    cyl = Cylinder(n2, 0.050, 64e5 + AMB, 294.15, loss)
    prof = parse_profile(_profile(tmp_path, _file_source(tmp_path / "unused.log")).read_text(), "live.toml")
    end = dt.datetime(2026, 12, 1, 7, 0, tzinfo=dt.UTC)
    t0 = end.timestamp() - 8 * 3600
    times = [t0 + 30.0 * i for i in range(8 * 120 + 1)]
    ps = [round((cyl.pressure_at(t - t0) - AMB) / 1000.0) * 1000.0 + AMB for t in times]
    temps = [294.15 + 0.3 * ((i % 240) / 240.0) for i in range(len(times))]  # a slow swing, measured
    with Journal(tmp_path / "j.sqlite3") as j:
        store = SampleStore(j)
        sp = store.stream(BENCH, "n2-A", "pressure", 1000.0)
        st = store.stream(BENCH, "n2-A", "temperature", 0.0)
        store.add(sp, list(zip(times, ps, strict=True)))
        store.add(st, list(zip(times, temps, strict=True)))
        lw = leak_watch(j, prof, "n2-A", end)
        assert lw is not None and lw.temperature_measured and lw.n == len(times)
        rec = record_leak_watch(j, prof, lw)
        assert rec is not None and rec.kind == "leak-watch"
        assert record_leak_watch(j, prof, lw) is None  # stored once
        (row,) = j.hold_tests(BENCH)
        assert row.leak_rate_sccm == lw.leak_rate_sccm
    log = tmp_path / "drop.csv"
    log.write_text("time (s),pressure (bara),temperature (K)\n" + "".join(
        f"{t - t0!r},{p / 1e5!r},{T!r}\n" for t, p, T in zip(times, ps, temps, strict=True)))
    assert main(["hold", "--gas", "nitrogen", "--volume", "50 L", "--log", str(log), "--gauge-range", "250 bar",
                 "--gauge-class", "0.1", "--resolution", "0.01 bar", "--json"]) == 0
    held = json.loads(capsys.readouterr().out)
    assert lw.leak_rate_sccm == pytest.approx(held["leak_rate_sccm"], rel=1e-9)
    assert lw.leak_rate_uncertainty_sccm == pytest.approx(held["leak_rate_uncertainty_sccm"], rel=1e-9)
    assert lw.verdict == held["verdict"]
    # and the simulated truth, 150 sccm, lies within the expanded uncertainty
    assert abs(lw.leak_rate_sccm - 150.0) <= 2 * lw.leak_rate_uncertainty_sccm


def test_no_leak_watch_while_a_session_runs_or_with_too_few_samples(tmp_path):
    prof = parse_profile(_profile(tmp_path, _file_source(tmp_path / "x.log")).read_text(), "live.toml")
    now = dt.datetime(2026, 12, 1, 9, 0, tzinfo=dt.UTC)
    with Journal(tmp_path / "j.sqlite3") as j:
        store = SampleStore(j)
        sid = store.stream(BENCH, "n2-A", "pressure", 1000.0)
        store.add(sid, [(now.timestamp() - 3600 + 10 * i, 65e5 - i) for i in range(5)])
        assert leak_watch(j, prof, "n2-A", now) is None  # five samples say nothing yet
        store.add(sid, [(now.timestamp() - 3000 + 10 * i, 65e5 - i) for i in range(300)])
        assert leak_watch(j, prof, "n2-A", now) is not None
        j.start_session(BENCH, None, (now - dt.timedelta(minutes=30)).isoformat())
        assert leak_watch(j, prof, "n2-A", now) is None  # drawing gas: the session's fit, not a leak test


# ----------------------------------------------------------------------------- real servers


def test_every_register_format_from_a_real_modbus_server():
    from pymodbus.server import ModbusTcpServer
    from pymodbus.simulator import DataType, SimData, SimDevice

    from benchwarden.live.sources import modbus_tcp

    base = {"int16": -1234, "uint16": 54321, "int32": -123456789, "uint32": 3_000_000_000,
            "float32": 149.875, "float64": 63.87123456789}
    code = {"int16": ">h", "uint16": ">H", "int32": ">i", "uint32": ">I", "float32": ">f", "float64": ">d"}
    # byte positions on the wire in ABCD notation, written out by hand (A the most significant byte)
    wire = {"abcd": lambda n: list(range(n)), "dcba": lambda n: list(range(n))[::-1],
            "badc": lambda n: [i ^ 1 for i in range(n)],
            "cdab": lambda n: [2 * (n // 2 - 1 - i // 2) + i % 2 for i in range(n)]}
    values = {f"{t}-{o}": v for t, v in base.items() for o in wire} | {"float32-swapped": 149.875}
    regs: list[int] = []
    where: dict[str, int] = {}
    for fmt, v in values.items():  # encoded independently with struct (IEEE 754, two's complement)
        t, o = fmt.replace("-swapped", "-cdab").split("-")
        raw = struct.pack(code[t], v)
        raw = bytes(raw[i] for i in wire[o](len(raw)))
        where[fmt] = len(regs)
        regs += [int.from_bytes(raw[i:i + 2], "big") for i in range(0, len(raw), 2)]
    port = _free_port()

    async def run() -> None:
        dev = SimDevice(1, simdata=[SimData(0, values=regs, datatype=DataType.REGISTERS)])
        server = ModbusTcpServer(dev, address=("127.0.0.1", port))
        task = asyncio.create_task(server.serve_forever())
        await asyncio.sleep(3.0)
        await server.shutdown()
        task.cancel()

    th = threading.Thread(target=lambda: asyncio.run(run()), daemon=True)
    th.start()
    try:
        for fmt, v in values.items():
            src = modbus_tcp("127.0.0.1", port, 1, where[fmt], fmt, lambda x: x, timeout_s=1.0)
            got = None
            for _ in range(40):
                got = src.read(dt.datetime.now(dt.UTC))
                if got.good:
                    break
                time.sleep(0.05)
            src.close()
            assert got is not None and got.good, (fmt, got)
            assert got.value == pytest.approx(v), fmt
        wrong = modbus_tcp("127.0.0.1", port, 1, 900, "float32", lambda x: x, timeout_s=1.0)
        bad = wrong.read(dt.datetime.now(dt.UTC))
        wrong.close()
        assert not bad.good and "register 900" in bad.why and "refused" in bad.why
    finally:
        th.join(timeout=10)


def _crc16_modbus(data: bytes) -> int:
    # CRC-16/MODBUS written out here (reflected poly 0xA001, init 0xFFFF); its catalogue check
    # value is 0x4B37 for "123456789" (from memory; asserted below, and this implementation agrees)
    crc = 0xFFFF
    for b in data:
        crc ^= b
        for _ in range(8):
            crc = (crc >> 1) ^ 0xA001 if crc & 1 else crc >> 1
    return crc


def test_modbus_rtu_through_a_pseudo_terminal():
    from benchwarden.live.sources import modbus_rtu

    assert _crc16_modbus(b"123456789") == 0x4B37
    master, slave = os.openpty()
    served: list[bytes] = []
    stop = threading.Event()

    def device() -> None:  # a transducer at unit 7 answering "read holding registers"
        buf = b""
        while not stop.is_set():
            import select

            r, _, _ = select.select([master], [], [], 0.1)
            if not r:
                continue
            buf += os.read(master, 256)
            if len(buf) < 8:
                continue
            req, buf = buf[:8], buf[8:]
            assert _crc16_modbus(req[:6]) == int.from_bytes(req[6:8], "little")
            served.append(req)
            unit, fc, addr, count = req[0], req[1], int.from_bytes(req[2:4], "big"), int.from_bytes(req[4:6], "big")
            data = struct.pack(">f", 148.25)  # bar(g), float32
            body = bytes([unit, fc, 2 * count]) + data
            os.write(master, body + _crc16_modbus(body).to_bytes(2, "little"))
            assert (fc, addr, count) == (3, 10, 2)

    th = threading.Thread(target=device, daemon=True)
    th.start()
    src = modbus_rtu(os.ttyname(slave), 19200, "N", 7, 10, "float32",
                     lambda x: x * 1e5 + AMB, timeout_s=1.0)
    try:
        s = src.read(dt.datetime.now(dt.UTC))
        assert s.good, s
        assert s.value == pytest.approx(148.25e5 + AMB)
        assert served and served[0][0] == 7
    finally:
        stop.set()
        src.close()
        th.join(timeout=5)
        os.close(master)
        os.close(slave)


def test_a_source_that_dies_gives_gauge_silent_and_loses_no_stored_sample(tmp_path):
    n2 = g.parse_gas("nitrogen")
    port = _free_port()
    cyl = Cylinder(n2, 0.05, 64e5 + AMB, 293.15, loss_kg_s=1e-4, speed=60.0)
    th = _serve_in_thread(cyl, port, 2.5)
    src = (f'kind = "modbus-tcp"\nhost = "127.0.0.1"\nport = {port}\nregister = 0\nvalue_unit = "bar"\n'
           'interval = "0.2 s"\n')
    temp = (f'\n[supplies.temperature_source]\nkind = "modbus-tcp"\nhost = "127.0.0.1"\nport = {port}\n'
            'register = 2\nvalue_unit = "degC"\ninterval = "0.5 s"\n')
    prof = parse_profile(_profile(tmp_path, src, temp).read_text(), "live.toml")
    with Journal(tmp_path / "j.sqlite3") as j:
        w = Watcher(prof, j)
        silent_at = None
        t_end = time.monotonic() + 6.0
        while time.monotonic() < t_end:
            w.poll(dt.datetime.now(dt.UTC))
            if w.silent(dt.datetime.now(dt.UTC)):
                silent_at = time.monotonic()
                break
            time.sleep(max(0.01, min(w.next_due(), 0.2)))
        feeds = {f.quantity: f for f in w.feeds}
        w.close()
        assert silent_at is not None, "the gauge never went silent"
        assert "cannot reach" in w.silent(dt.datetime.now(dt.UTC))["n2-A"]
        store = SampleStore(j)
        sid = store.stream(BENCH, "n2-A", "pressure")
        raw, packed, _ = store.counts(sid)
        assert raw == feeds["pressure"].stored  # every sample the watcher took is in the journal
        good = len(store.points(sid, 0, 4e9)[0])
        assert good >= 5  # ~2.5 s at 0.2 s
        tid = store.stream(BENCH, "n2-A", "temperature")
        assert store.latest(tid)[1] == pytest.approx(293.15, abs=1e-4)  # 20 °C from register 2
    th.join(timeout=10)


def test_reconnects_back_off():
    from benchwarden.workflows.watch import BACKOFF_MAX_S

    prof = parse_profile(DEMO.replace(ANCHOR, ANCHOR + f'\n[supplies.source]\nkind = "modbus-tcp"\nhost = '
                                      f'"127.0.0.1"\nport = {_free_port()}\ninterval = "1 s"\n', 1), "x.toml")
    clock = [0.0]

    class FakeJournal:  # the watcher's scheduling only; no sample reaches the store
        pass

    import tempfile

    with tempfile.TemporaryDirectory() as d, Journal(Path(d) / "j.sqlite3") as j:
        w = Watcher(prof, j, monotonic=lambda: clock[0])
        waits = []
        for _ in range(9):
            clock[0] += w.next_due()
            w.poll(dt.datetime.now(dt.UTC))
            waits.append(w.feeds[0].due - clock[0])
        w.close()
    assert waits[:6] == pytest.approx([1.0, 2.0, 4.0, 8.0, 16.0, 32.0]) and max(waits) == pytest.approx(BACKOFF_MAX_S)



def test_a_1_s_gauge_is_read_every_tick_when_the_timer_fires_a_little_early():
    # the app's timer ticks at the source's interval and can fire a few ms before the due time;
    # a 1 s gauge must still be read on every tick (it was read every other one: every 2 s)
    from benchwarden.live.sample import Sample

    prof = parse_profile(DEMO.replace(ANCHOR, ANCHOR + f'\n[supplies.source]\nkind = "modbus-tcp"\nhost = '
                                      f'"127.0.0.1"\nport = {_free_port()}\ninterval = "1 s"\n', 1), "x.toml")
    reads = []

    class Gauge:
        def poll(self, now):
            reads.append(clock[0])
            return [Sample(now, 65e5, True)]

        def close(self):
            pass

    clock = [100.0]
    import tempfile

    with tempfile.TemporaryDirectory() as d, Journal(Path(d) / "j.sqlite3") as j:
        w = Watcher(prof, j, open_source=lambda cfg, amb: Gauge(), monotonic=lambda: clock[0])
        t0 = dt.datetime(2026, 11, 20, 9, 0, tzinfo=dt.UTC)
        for k in range(10):
            clock[0] = 100.0 + k * 1.0 - (0.004 if k % 2 else 0.0)  # every other tick 4 ms early
            w.poll(t0 + dt.timedelta(seconds=k))
        w.close()
    assert len(reads) == 10


# ----------------------------------------------------------------------------- the command line


def _count(journal: Path) -> int:
    try:
        db = sqlite3.connect(f"file:{journal}?mode=ro", uri=True)
    except sqlite3.Error:
        return 0  # not created yet
    try:
        return db.execute("SELECT COUNT(*) FROM samples").fetchone()[0]
    except sqlite3.Error:
        return 0
    finally:
        db.close()


def test_watch_runs_for_its_duration_stores_samples_and_status_shows_them(tmp_path, capsys):
    log = tmp_path / "gauge.log"
    now = dt.datetime.now().astimezone().replace(microsecond=0)
    log.write_text("".join(f"{(now - dt.timedelta(seconds=600 - 5 * i)).isoformat()},{64 - 0.002 * i:.3f}\n"
                           for i in range(120)))
    prof = _profile(tmp_path, _file_source(log))
    journal = tmp_path / "j.sqlite3"
    assert main(["--journal", str(journal), "watch", str(prof), "--for", "1.5 s", "--every", "0.5 s"]) == 0
    out = capsys.readouterr().out
    assert "n2-A" in out and "live 63.8 bar(g)" in out and "stopped: 120 sample(s) stored" in out
    assert _count(journal) == 120
    assert main(["--journal", str(journal), "status", str(prof), "--json"]) == 0
    status = json.loads(capsys.readouterr().out)
    s = status["supplies"][0]
    assert isinstance(status["alarms"], list)
    for key in ("pressure_gauge_pa", "leak_rate_sccm", "leak_verdict"):
        assert key in s and key in s["live"]
    assert s["reading_source"] == "live gauge"
    assert s["pressure_gauge_pa"] == pytest.approx(63.762e5, abs=1.0)
    assert s["live"]["leak_verdict"] in ("leak", "inconclusive", "no-leak-resolved")
    assert s["leak_source"] == "leak watch" and s["live"]["leak_samples"] == 120


@pytest.mark.parametrize("argv, words", [
    (["--for", "1 s"], "no [supplies.source]"),
    (["--every", "0 s"], "--every"),
    (["--for", "-3 s"], "--for"),
])
def test_watch_bad_input_is_one_line_and_exit_2(tmp_path, capsys, argv, words):
    prof = tmp_path / "p.toml"
    prof.write_text(DEMO if "no [" in words else _profile(tmp_path, _file_source(tmp_path / "g.log")).read_text())
    assert main(["watch", str(prof), *argv]) == 2
    err = capsys.readouterr().err
    assert words in err and err.count("\n") == 1


def test_a_killed_watcher_loses_at_most_the_last_interval(tmp_path):
    log = tmp_path / "gauge.log"
    log.write_text("")
    prof = _profile(tmp_path, _file_source(log, "0.2 s"))
    journal = tmp_path / "j.sqlite3"
    env = dict(os.environ, PYTHONUNBUFFERED="1")
    proc = subprocess.Popen([sys.executable, "-m", "benchwarden", "--journal", str(journal), "watch", str(prof),
                             "--for", "60 s", "--every", "1 s"], stdout=subprocess.DEVNULL,
                            stderr=subprocess.DEVNULL, env=env)
    written: list[float] = []
    stop = threading.Event()

    def writer() -> None:
        p = 64.0
        while not stop.is_set():
            at = dt.datetime.now(dt.UTC)
            with open(log, "a") as fh:
                fh.write(f"{at.isoformat()},{p:.3f}\n")
            written.append(at.timestamp())
            p -= 0.001
            time.sleep(0.05)

    th = threading.Thread(target=writer, daemon=True)
    th.start()
    try:
        deadline = time.monotonic() + 30
        while _count(journal) < 20 and time.monotonic() < deadline:
            time.sleep(0.1)
        time.sleep(1.0)
        killed_at = time.time()
        proc.send_signal(signal.SIGKILL)
        proc.wait(timeout=10)
    finally:
        stop.set()
        th.join(timeout=5)
        if proc.poll() is None:
            proc.kill()
    db = sqlite3.connect(journal)
    stored = {round(t, 3) for (t,) in db.execute("SELECT t FROM samples")}
    db.close()
    lost = [t for t in written if t <= killed_at and round(t, 3) not in stored]
    assert len(stored) >= 20
    # only lines written within the last polling interval (0.2 s, plus scheduling) can be missing
    assert all(t > killed_at - 0.2 - 0.3 for t in lost), (len(lost), killed_at - min(lost))


# ----------------------------------------------------------------------------- alarms


def test_alarm_rules():
    a = alarm_findings({"n2-A": 0.3, "ar": 0.2, "co2": 5.0}, {"n2-A": True, "ar": False, "co2": True}, 0.5, 0.25,
                       {"faster-than-planned", "hold-test-leak"}, {"co2": "cannot reach 10.0.0.5:502"})
    got = {(f.code, f.subject) for f in a}
    assert got == {("alarm-reserve", "n2-A"), ("alarm-over-time", "session"), ("alarm-leak", "leaks"),
                   ("alarm-fast-draw", "draws"), ("alarm-gauge-silent", "co2")}
    assert next(f for f in a if f.code == "alarm-leak").severity == "stop"
    live = alarm_findings({}, {}, 0.5, None, {"leak-watch-leak"}, {}, {"n2-A": (120.0, 10.0)})
    assert [(f.code, f.subject) for f in live] == [("alarm-leak", "n2-A")]
    assert alarm_findings({"n2-A": 3.0}, {"n2-A": True}, 0.5, -0.1, set(), {}) == []


def test_an_alarm_gets_one_journal_line_when_it_appears(tmp_path, capsys):
    with Journal(tmp_path / "j.sqlite3") as j:
        book = AlarmBook(j, BENCH, lambda f: f"words for {f.code}")
        now = dt.datetime.now(dt.UTC).replace(microsecond=0) - dt.timedelta(minutes=5)
        silent = alarm_findings({}, {}, 0.5, None, set(), {"n2-A": "no line within the timeout"})
        assert len(book.update(silent, now)) == 1
        assert book.update(silent, now + dt.timedelta(seconds=1)) == []   # still the same alarm
        assert book.update([], now + dt.timedelta(seconds=2)) == []      # it cleared
        assert len(book.update(silent, now + dt.timedelta(seconds=3))) == 1  # and came back: it rings,
        assert len(j.alarms(BENCH)) == 1  # but a flapping alarm is one line within two minutes
        other = AlarmBook(j, BENCH, lambda f: "another watcher")  # `watch` beside the app
        assert len(other.update(silent, now + dt.timedelta(seconds=4))) == 1  # rings there too ...
        assert len(j.alarms(BENCH)) == 1  # ... and the journal still has the line once
        book.update([], now + dt.timedelta(seconds=200))
        assert len(book.update(silent, now + dt.timedelta(seconds=300))) == 1  # later: a new line
        assert len(j.alarms(BENCH)) == 2
        rows = j.alarms(BENCH)
        assert [r.code for r in rows] == ["alarm-gauge-silent"] * 2 and rows[0].text.startswith("words for")
    # `status` lists the journal's alarms of the last day
    prof = _profile(tmp_path, _file_source(tmp_path / "x.log"))
    assert main(["--journal", str(tmp_path / "j.sqlite3"), "status", str(prof), "--json"]) == 0
    alarms = json.loads(capsys.readouterr().out)["alarms"]
    assert [a["code"] for a in alarms] == ["alarm-gauge-silent"] * 2
    assert SILENT_INTERVALS >= 3


# ----------------------------------------------------------------------------- the app


async def test_the_app_reads_a_live_gauge_and_rings_when_it_falls_silent(tmp_path):
    from apptools import settle

    from benchwarden.tui.app import make_app

    log = tmp_path / "gauge.log"
    now = dt.datetime.now(dt.UTC).replace(microsecond=0)
    log.write_text("".join(f"{(now - dt.timedelta(seconds=30 - i)).isoformat()},{61.5 - 0.001 * i:.3f}\n"
                           for i in range(30)))
    prof = _profile(tmp_path, _file_source(log, "0.2 s"))
    jpath = tmp_path / "j.sqlite3"
    app = make_app(str(prof), jpath)
    async with app.run_test(size=(100, 32)) as pilot:
        await settle(app, pilot)
        st = app.screen.state
        deadline = time.monotonic() + 20
        while "n2-A" not in st.live and time.monotonic() < deadline:  # the first live refresh
            await pilot.pause(0.2)
        await settle(app, pilot)
        assert st.watcher is not None and st.live["n2-A"].sample is not None
        assert "live 61.5 bar(g)" in str(app.screen.query_one("#observed").render())
        assert str(app.screen.query_one("#supplies").get_cell("n2-A", "reading")) == "61.5 bar(g)"
        log.unlink()  # the logger stops: after a few intervals the gauge is silent
        deadline = time.monotonic() + 20
        while "silent" not in str(app.screen.query_one("#banner").render()) and time.monotonic() < deadline:
            await pilot.pause(0.3)
        assert "gauge of n2-A is silent" in str(app.screen.query_one("#banner").render())
        await pilot.press("g")  # the graph plots the live trace, min and max per column
        await pilot.pause()
        trace = st.live_trace("n2-A", now - dt.timedelta(minutes=5), now + dt.timedelta(seconds=5), 40)
        assert trace is not None and float(trace.vmax[trace.vmax == trace.vmax].max()) == pytest.approx(61.5e5 + st.plan.ambient_pa)
        await pilot.press("escape")
        prof.write_text(DEMO)  # the transducer taken off the profile, then `l` reloads it
        await pilot.press("l")
        await settle(app, pilot)
        assert st.watcher is None and st.live == {}
    with Journal(jpath) as j:
        assert [a.code for a in j.alarms(BENCH)] == ["alarm-gauge-silent"]
        assert SampleStore(j).counts(SampleStore(j).stream(BENCH, "n2-A", "pressure"))[0] >= 30


def test_in_a_session_the_samples_give_the_observed_draw(tmp_path):
    # a draw of 2 slpm for an hour, sampled every 10 s (the simulator's mass balance), in a session
    from benchwarden.workflows.session import SessionState

    n2 = g.parse_gas("nitrogen")
    draw = supply.mass_flow(n2, parse_flow("2 slpm"))
    cyl = Cylinder(n2, 0.050, 64e5 + AMB, 294.15, draw)
    prof_path = _profile(tmp_path, _file_source(tmp_path / "unused.log"))
    start = dt.datetime(2026, 12, 1, 9, 0, tzinfo=dt.UTC)
    now = start + dt.timedelta(hours=1)
    with Journal(tmp_path / "j.sqlite3") as j:
        st = SessionState(prof_path, j, clock=lambda: start)
        st.load()
        st.start()
        store = SampleStore(j)
        sid = store.stream(BENCH, "n2-A", "pressure", 100.0)
        store.add(sid, [(start.timestamp() + t, cyl.pressure_at(t)) for t in range(0, 3601, 10)])
        st.clock = lambda: now
        st.recompute()
        ob = st.observed["n2-A"]
        assert ob.draw_kg_s == pytest.approx(draw, rel=2e-3)
        assert ob.n == 200  # 361 samples thinned to 200 spread over the session
        # no leak watch while drawing: the fit is the session's
        st.refresh_live()
        assert st.live["n2-A"].leak is None and st.live["n2-A"].sample is not None


def test_the_room_temperature_sensor_compensates_the_leak_watch(tmp_path):
    prof = parse_profile(_profile(tmp_path, _file_source(tmp_path / "x.log")).read_text()
                         .replace('oxygen_monitor = true\n', 'oxygen_monitor = true\n[room.temperature_source]\n'
                                  'kind = "file"\npath = "t.log"\nvalue_unit = "degC"\n', 1), "live.toml")
    assert prof.room is not None and prof.room.temperature_source is not None
    now = dt.datetime(2026, 12, 1, 9, 0, tzinfo=dt.UTC)
    with Journal(tmp_path / "j.sqlite3") as j:
        store = SampleStore(j)
        sid = store.stream(BENCH, "n2-A", "pressure", 100.0)
        tid = store.stream(BENCH, "room", "temperature", 0.05)
        # a sealed cylinder warming by 2 K: its pressure rises, its mass does not change
        n2 = g.parse_gas("nitrogen")
        rho = g.density(n2, 293.15, 64e5 + AMB)
        ts = [now.timestamp() - 7200 + 60 * i for i in range(121)]
        temps = [293.15 + 2.0 * i / 120 for i in range(121)]
        store.add(sid, [(t, g.pressure_from_density(n2, rho, T)) for t, T in zip(ts, temps, strict=True)])
        store.add(tid, list(zip(ts, temps, strict=True)))
        lw = leak_watch(j, prof, "n2-A", now)
        assert lw is not None and lw.temperature_measured
        assert abs(lw.leak_rate_sccm) < 0.01 * abs(lw.result.leak_rate_uncertainty_sccm) + 1e-6


@pytest.mark.parametrize("section, words", [
    ('[supplies.temperature_source]\nkind = "file"\npath = "t.log"\nvalue_unit = "bar"\n', "temperature"),
    ('[supplies.source]\nkind = "file"\npath = "p.log"\naccuracy_class = 0.1\n', "needs its range"),
    ('[supplies.source]\nkind = "modbus-rtu"\nbaud = 19200\n', "needs port"),
    ('[supplies.source]\nkind = "modbus-rtu"\nport = "/dev/ttyUSB0"\nparity = "X"\n', "parity"),
    ('leak_target = "2 L/min"\n', r"b\.toml:\d+: supplies\[0\]\.leak_target: .*actual volume flow"),
])
def test_bad_source_sections_are_refused_with_the_key(section, words):
    from benchwarden.errors import ProfileError

    with pytest.raises(ProfileError, match=words):
        parse_profile(DEMO.replace(ANCHOR, ANCHOR + section, 1), "b.toml")


def test_a_modbus_rtu_section_builds_a_serial_modbus_source():
    from benchwarden.live.sources import ModbusSource, make_source

    prof = parse_profile(DEMO.replace(ANCHOR, ANCHOR + '[supplies.source]\nkind = "modbus-rtu"\nport = '
                                      '"/dev/ttyUSB9"\nbaud = 19200\nparity = "E"\ndevice = 12\nregister = 4\n', 1),
                         "b.toml")
    src = make_source(prof.supplies[0].source, prof.ambient_pa)
    assert isinstance(src, ModbusSource) and "/dev/ttyUSB9 device 12 register 4" in src.where
    bad = src.read(dt.datetime.now(dt.UTC))  # no such port here: a bad sample, not a crash
    assert not bad.good and "ttyUSB9" in bad.why
    src.close()


def test_an_unrecorded_new_cylinder_restarts_the_leak_watch(tmp_path):
    # an hour idle at 40 bar, then the pressure jumps to 180 bar (a swap nobody recorded), then
    # an hour sealed: the leak watch fits the second hour only and finds no leak
    prof = parse_profile(_profile(tmp_path, _file_source(tmp_path / "x.log")).read_text(), "live.toml")
    now = dt.datetime(2026, 12, 1, 9, 0, tzinfo=dt.UTC)
    t0 = now.timestamp() - 7200
    rows = [(t0 + 30 * i, 40e5 + AMB) for i in range(120)] + [(t0 + 3600 + 30 * i, 180e5 + AMB) for i in range(121)]
    with Journal(tmp_path / "j.sqlite3") as j:
        store = SampleStore(j)
        store.add(store.stream(BENCH, "n2-A", "pressure", 1000.0), rows)
        lw = leak_watch(j, prof, "n2-A", now)
        assert lw is not None and lw.n == 121 and lw.since.timestamp() == t0 + 3600
        assert lw.leak_rate_sccm == pytest.approx(0.0, abs=1e-9)


def test_a_serial_transducer_that_prints_fast_never_falls_behind():
    from benchwarden.live.sources import SerialSource

    master, slave = os.openpty()
    src = SerialSource(os.ttyname(slave), lambda x: x, timeout_s=1.0)
    try:
        os.write(master, b"".join(f"{100 + i}\n".encode() for i in range(25)))
        time.sleep(0.2)
        got = src.poll(dt.datetime.now(dt.UTC))
        assert [s.value for s in got] == [100.0 + i for i in range(25)]
    finally:
        src.close()
        os.close(master)
        os.close(slave)


def test_a_supply_leak_target_is_what_the_leak_watch_resolves_against(tmp_path):
    # a sealed cylinder for 2 h, read to 0.01 bar by a class 0.1 transducer: against the default
    # target (1 % of the contents a day) that says nothing yet; against "500 sccm" it resolves
    now = dt.datetime(2026, 12, 1, 9, 0, tzinfo=dt.UTC)
    rows = [(now.timestamp() - 7200 + 60 * i, 62e5 + AMB) for i in range(121)]
    verdicts = {}
    for target in ("", 'leak_target = "500 sccm"\n'):
        text = _profile(tmp_path, _file_source(tmp_path / "x.log")).read_text().replace(
            'reserve = "15 bar"\n', 'reserve = "15 bar"\n' + target, 1)
        prof = parse_profile(text, "live.toml")
        with Journal(tmp_path / f"j{len(target)}.sqlite3") as j:
            store = SampleStore(j)
            store.add(store.stream(BENCH, "n2-A", "pressure", 1000.0), rows)
            lw = leak_watch(j, prof, "n2-A", now)
            assert lw is not None
            verdicts[target] = (lw.verdict, lw.target_sccm)
    assert verdicts[""][0] == "inconclusive"
    assert verdicts['leak_target = "500 sccm"\n'] == ("no-leak-resolved", pytest.approx(500.0))


def test_two_samples_in_one_second_are_two_samples(tmp_path):
    from benchwarden.live.sources import Sample

    class Steady:  # a transducer read twice within a second
        def poll(self, now):
            return [Sample(now, 65e5, True)]

        def close(self):
            pass

    prof = parse_profile(DEMO.replace(ANCHOR, ANCHOR + '[supplies.source]\nkind = "modbus-tcp"\nhost = "127.0.0.1"\n'
                                      'interval = "0.1 s"\n', 1), "x.toml")
    clock = [0.0]
    with Journal(tmp_path / "j.sqlite3") as j:
        w = Watcher(prof, j, open_source=lambda cfg, amb: Steady(), monotonic=lambda: clock[0])
        for _ in range(5):
            w.poll(dt.datetime.now(dt.UTC))
            clock[0] += 0.1
        assert w.feeds[0].stored == 5
        assert SampleStore(j).counts(w.feeds[0].stream)[0] == 5


def test_sessions_count_the_alarms_raised_during_them(tmp_path, capsys):
    journal = tmp_path / "j.sqlite3"
    with Journal(journal) as j:
        sid = j.start_session(BENCH, None, "2026-12-01T09:00:00+00:00")
        j.add_alarm(BENCH, "n2-A", "alarm-reserve", "2026-12-01T10:00:00+00:00", "n2-A reaches its reserve")
        j.add_alarm(BENCH, "n2-A", "alarm-leak", "2026-12-01T13:00:00+00:00", "after the session")
        j.stop_session(sid, "2026-12-01T12:00:00+00:00")
    assert main(["--journal", str(journal), "sessions", "--json"]) == 0
    (row,) = json.loads(capsys.readouterr().out)["sessions"]
    assert row["alarms"] == 1 and row["readings"] == 0


# --------------------------------------------------------------------------- RS-485: one port, several devices


def _rtu_bus(master: int, devices: dict[int, float], stop: threading.Event, served: list[int],
             garbled: frozenset[int] = frozenset()) -> None:
    """Modbus RTU devices on one line (the test's own slave code, CRC-16/MODBUS above): each unit
    id in ``devices`` answers "read holding/input registers" with its float32 value; a unit in
    ``garbled`` answers with a wrong CRC; any other unit stays silent, as on a real bus."""
    import select

    buf = b""
    while not stop.is_set():
        r, _, _ = select.select([master], [], [], 0.05)
        if not r:
            continue
        buf += os.read(master, 256)
        while len(buf) >= 8:
            req, buf = buf[:8], buf[8:]
            if _crc16_modbus(req[:6]) != int.from_bytes(req[6:8], "little"):
                buf = b""
                break
            unit, fc, count = req[0], req[1], int.from_bytes(req[4:6], "big")
            served.append(unit)
            if unit not in devices and unit not in garbled:
                continue
            body = bytes([unit, fc, 2 * count]) + struct.pack(">f", devices.get(unit, 1.0))
            crc = _crc16_modbus(body) ^ (0x5555 if unit in garbled else 0)
            os.write(master, body + crc.to_bytes(2, "little"))


def test_two_devices_on_one_rs485_port_share_one_connection_and_both_are_read(tmp_path):
    master, slave = os.openpty()
    port = os.ttyname(slave)
    stop, served = threading.Event(), []
    th = threading.Thread(target=_rtu_bus, args=(master, {7: 63.5, 9: 21.5}, stop, served), daemon=True)
    th.start()
    src = (f'kind = "modbus-rtu"\nport = "{port}"\nbaud = 19200\ndevice = 7\nregister = 10\n'
           'interval = "0.2 s"\n')
    temp = (f'\n[supplies.temperature_source]\nkind = "modbus-rtu"\nport = "{port}"\nbaud = 19200\n'
            'device = 9\nregister = 2\ninput_registers = true\nvalue_unit = "degC"\ninterval = "0.2 s"\n')
    prof = parse_profile(_profile(tmp_path, src, temp).read_text(), "live.toml")
    try:
        with Journal(tmp_path / "j.sqlite3") as j:
            w = Watcher(prof, j)
            store = SampleStore(j)
            try:
                end = time.monotonic() + 8.0
                while time.monotonic() < end and not all(f.stored >= 3 for f in w.feeds):
                    w.poll(dt.datetime.now(dt.UTC))
                    time.sleep(max(0.01, min(w.next_due(), 0.1)))
                assert len({id(f.source.client) for f in w.feeds}) == 1      # one client for the port
                assert {7, 9} <= set(served), w.feeds
            finally:
                w.close()
            p = store.latest(store.stream(BENCH, "n2-A", "pressure"))
            t = store.latest(store.stream(BENCH, "n2-A", "temperature"))
            assert p is not None and p[1] == pytest.approx(63.5e5 + prof.ambient_pa)
            assert t is not None and t[1] == pytest.approx(21.5 + 273.15)
    finally:
        stop.set()
        th.join(timeout=5)
        os.close(master)
        os.close(slave)


def test_no_response_and_crc_errors_are_named():
    from benchwarden.live.sources import modbus_rtu

    master, slave = os.openpty()
    stop, served = threading.Event(), []
    th = threading.Thread(target=_rtu_bus, args=(master, {7: 63.5}, stop, served, frozenset({11})), daemon=True)
    th.start()
    port = os.ttyname(slave)
    now = dt.datetime.now(dt.UTC)
    srcs = [modbus_rtu(port, 19200, "N", unit, 0, "float32", lambda x: x, timeout_s=0.3) for unit in (7, 8, 11)]
    try:
        ok, silent, garbled = (s.read(now) for s in srcs)
        assert ok.good and ok.value == pytest.approx(63.5)
        assert not silent.good and "no response" in silent.why and "unit id" in silent.why
        assert not garbled.good and "CRC" in garbled.why
    finally:
        for s in srcs:
            s.close()
        stop.set()
        th.join(timeout=5)
        os.close(master)
        os.close(slave)


def test_a_serial_setting_the_os_refuses_is_named():
    from benchwarden.live.sources import modbus_rtu

    master, slave = os.openpty()  # a pseudo-terminal has no parity: the operating system refuses "E"
    src = modbus_rtu(os.ttyname(slave), 19200, "E", 5, 0, "float32", lambda x: x, timeout_s=0.3)
    try:
        s = src.read(dt.datetime.now(dt.UTC))
        assert not s.good and "refused a setting" in s.why and "parity" in s.why
    finally:
        src.close()
        os.close(master)
        os.close(slave)


@pytest.mark.parametrize("second, words", [
    ('baud = 9600\n', "baud 19200 vs 9600"),
    ('baud = 19200\nparity = "O"\n', "parity E vs O"),
    ('baud = 19200\nparity = "E"\nstopbits = 2\n', "stopbits 1 vs 2"),
])
def test_disagreeing_settings_on_one_port_are_refused_at_load_naming_both_sections(second, words):
    from benchwarden.errors import ProfileError

    first = 'kind = "modbus-rtu"\nport = "/dev/ttyUSB0"\nbaud = 19200\nparity = "E"\ndevice = 7\n'
    temp = ('\n[supplies.temperature_source]\nkind = "modbus-rtu"\nport = "/dev/ttyUSB0"\ndevice = 9\n'
            'value_unit = "degC"\n' + second)
    with pytest.raises(ProfileError) as err:
        parse_profile(DEMO.replace(ANCHOR, ANCHOR + "\n[supplies.source]\n" + first + temp, 1), "b.toml")
    msg = str(err.value)
    assert "[supplies.source] of supply n2-A" in msg and "[supplies.temperature_source] of supply n2-A" in msg
    assert words in msg and "/dev/ttyUSB0" in msg


def test_serial_settings_the_os_refuses_or_a_missing_port_are_named():
    from benchwarden.live.modbus import serial_open_error

    # errors as pyserial raises them (errno values from the C library: ENOENT 2, EACCES 13, EBUSY 16)
    assert "does not exist" in serial_open_error("/dev/ttyX", OSError(2, "No such file or directory"))
    assert "permission denied" in serial_open_error("/dev/ttyX", OSError(13, "Permission denied"))
    assert "busy" in serial_open_error("/dev/ttyX", OSError(16, "Device or resource busy"))
    assert "refused a setting" in serial_open_error("/dev/ttyX", ValueError("Not a valid parity: 'Q'"))


# --------------------------------------------------------------------------- bounded


def test_watch_for_ends_within_d_plus_5_s_with_a_catastrophic_pattern_and_a_device(tmp_path, capsys):
    import resource

    log = tmp_path / "aaa.log"
    log.write_text(("a" * 40 + "!\n") * 2000)   # unbounded: 2000 lines × the pattern's time limit, or minutes
    src = f'kind = "file"\npath = "{log}"\npattern = \'(?P<value>(a|aa)+$)\'\ninterval = "0.2 s"\n'
    zero = '\n[supplies.temperature_source]\nkind = "file"\npath = "/dev/zero"\nvalue_unit = "degC"\ninterval = "0.2 s"\n'
    prof = _profile(tmp_path, src, zero)
    journal = tmp_path / "j.sqlite3"
    rss0 = resource.getrusage(resource.RUSAGE_SELF).ru_maxrss
    t0 = time.monotonic()
    assert main(["--journal", str(journal), "watch", str(prof), "--for", "2 s", "--every", "1 s"]) == 0
    assert time.monotonic() - t0 < 2 + 5
    assert resource.getrusage(resource.RUSAGE_SELF).ru_maxrss - rss0 < 200_000   # [kB]: /dev/zero was never read
    capsys.readouterr()
    assert main(["--journal", str(journal), "samples", str(prof), "n2-A", "--format", "jsonl"]) == 0
    rows = [json.loads(x) for x in capsys.readouterr().out.splitlines()]
    temps = [r for r in rows if r["stream"] == "temperature"]
    assert temps and all(r["status"] == "bad" and "character device" in r["reason"] for r in temps)
    pressures = [r for r in rows if r["stream"] == "pressure"]
    assert pressures and all(r["status"] == "bad" and "the pattern took longer than" in r["reason"] for r in pressures)


def test_a_line_over_4096_bytes_through_watch_is_one_bad_sample(tmp_path, capsys):
    log = tmp_path / "long.log"
    log.write_bytes(b"64.0\n" + b"9" * 100_000 + b"\n63.9\n63.8\n")
    prof = _profile(tmp_path, f'kind = "file"\npath = "{log}"\ninterval = "0.2 s"\n')
    journal = tmp_path / "j.sqlite3"
    assert main(["--journal", str(journal), "watch", str(prof), "--for", "0.6 s", "--every", "1 s"]) == 0
    capsys.readouterr()
    assert main(["--journal", str(journal), "samples", str(prof), "n2-A"]) == 0
    rows = list(csv.DictReader(io.StringIO(capsys.readouterr().out)))
    assert [r["status"] for r in rows] == ["good", "bad", "good", "good"]
    assert rows[1]["reason"] == "line longer than 4096 bytes"


# --------------------------------------------------------------------------- the simulator


def test_the_simulator_answers_any_unit_id_or_only_its_own_and_prints_no_traceback(tmp_path):
    # the real command in a subprocess, a pymodbus client and a raw socket sending garbage
    from pymodbus.client import ModbusTcpClient

    for unit, answered, silent in ((None, (0, 1, 7, 255), ()), (9, (9,), (1, 7))):
        port = _free_port()
        cmd = [sys.executable, "-m", "benchwarden", "simulate", "--gas", "nitrogen", "--volume", "50 L", "--pressure",
               "64 bar", "--port", str(port), "--for", "3 s"] + ([] if unit is None else ["--unit", str(unit)])
        proc = subprocess.Popen(cmd, stdout=subprocess.PIPE, stderr=subprocess.PIPE, text=True)
        try:
            client = ModbusTcpClient("127.0.0.1", port=port, timeout=0.5, retries=0)
            for _ in range(100):  # the server needs a moment to listen
                if client.connect():
                    break
                time.sleep(0.05)
            for dev in answered:
                for call in (client.read_holding_registers, client.read_input_registers):
                    r = call(0, count=2, device_id=dev)
                    assert not r.isError() and struct.unpack(">f", struct.pack(">HH", *r.registers))[0] == \
                        pytest.approx(64.0), (dev, call)
            for dev in silent:
                with pytest.raises(Exception):  # noqa: B017 - no answer: pymodbus says so its own way
                    r = client.read_holding_registers(0, count=2, device_id=dev)
                    assert not r.isError()
            client.close()
            with socket.create_connection(("127.0.0.1", port), timeout=1) as raw:
                raw.sendall(b"\x00\x01\x00\x00\x00\x06\x01\x99garbage")
                time.sleep(0.2)
        finally:
            out, err = proc.communicate(timeout=15)
        assert proc.returncode == 0, err
        assert "Traceback" not in err + out and "send:" not in err + out and ">>>>>" not in err + out, err
        assert ("every unit id" if unit is None else f"unit {unit}") in out


def test_simulate_help_documents_holding_and_input_registers(capsys):
    with pytest.raises(SystemExit):
        main(["simulate", "--help"])
    out = capsys.readouterr().out
    assert "holding registers" in out and "input registers" in out and "--unit" in out and "40001" in out


# --------------------------------------------------------------------------- a lying gauge


def test_a_lying_gauge_gives_no_good_zero_no_live_zero_and_no_reserve_alarm(tmp_path, capsys):
    # a Modbus/TCP gauge (a real pymodbus server) answering 64 / 0 / −50 / 1e30 bar in a seeded
    # random order, read by `watch` during a session (the supply draws: a live 0 bar would ring
    # the reserve alarm)
    import random

    from pymodbus.server import ModbusTcpServer
    from pymodbus.simulator import DataType, SimData, SimDevice

    rng = random.Random(1)
    lies = [rng.choice([64.0, 0.0, -50.0, 1e30]) for _ in range(400)]
    runs = "".join("z" if x == 0.0 else "." for x in lies)
    assert "zzz" not in runs[:60]   # three zeros in a row would be a vented cylinder, confirmed: not this test
    served: list[float] = []

    async def action(function_code, start_address, address, count, current, set_values):
        v = lies[len(served) % len(lies)]
        served.append(v)
        raw = struct.pack(">f", v)
        current[0], current[1] = int.from_bytes(raw[:2], "big"), int.from_bytes(raw[2:], "big")

    port = _free_port()

    async def run() -> None:
        dev = SimDevice(1, simdata=[SimData(0, count=2, values=0, datatype=DataType.REGISTERS)], action=action)
        server = ModbusTcpServer(dev, address=("127.0.0.1", port))
        task = asyncio.create_task(server.serve_forever())
        await asyncio.sleep(5.0)
        await server.shutdown()
        task.cancel()

    th = threading.Thread(target=lambda: asyncio.run(run()), daemon=True)
    th.start()
    prof = _profile(tmp_path, f'kind = "modbus-tcp"\nhost = "127.0.0.1"\nport = {port}\nvalue_unit = "bar"\n'
                              'interval = "0.2 s"\nrange = "250 bar"\n')
    journal = tmp_path / "j.sqlite3"
    with Journal(journal) as j:
        j.start_session(BENCH, str(prof), dt.datetime.now().astimezone().isoformat(timespec="seconds"))
    time.sleep(0.3)
    assert main(["--journal", str(journal), "watch", str(prof), "--for", "3 s", "--every", "1 s"]) == 0
    out, err = capsys.readouterr()
    th.join(timeout=10)
    assert len(served) >= 5
    assert main(["--journal", str(journal), "samples", str(prof), "n2-A", "--format", "jsonl"]) == 0
    rows = [json.loads(x) for x in capsys.readouterr().out.splitlines()]
    amb = parse_profile(prof.read_text(), "p").ambient_pa
    good = [round((r["value_si"] - amb) / 1e5, 3) for r in rows if r["status"] == "good"]
    assert good and set(good) == {64.0}, "\n".join(f"{r['status']} {r['value_si']} {r['reason'][:50]}" for r in rows)
    assert any(r["status"] == "implausible" for r in rows) or 0.0 not in served[:len(rows)]
    assert all("range" in r["reason"] for r in rows if r["status"] == "bad" and r["value_si"] is not None)
    assert "ALARM" not in err and "live 64.0 bar(g)" in out
    with Journal(journal) as j:
        assert not [a for a in j.alarms(BENCH) if a.code == "alarm-reserve"]


def test_the_live_line_shows_the_date_of_an_old_value_and_the_latest_reason_set_aside():
    from benchwarden.render.display import Display, live_text
    from benchwarden.workflows.cylinder import LatestSample
    from benchwarden.workflows.session_live import LiveSupply

    old = dt.datetime(2025, 3, 1, 9, 30, tzinfo=dt.UTC)   # not today, whenever the test runs
    d = Display()
    text = live_text(LiveSupply("n2-A", LatestSample(old, 64e5 + AMB, None, "64 bar"), None, None,
                                "dated 2027-03-01T09:30:00+00:00, more than 60 s after the computer's clock"), d)
    assert "at 2025-03-01 09:30:00" in text and "set aside: dated 2027" in text
    same_day = live_text(LiveSupply("n2-A", LatestSample(old, 64e5 + AMB, None, "64 bar"), None, None), d,
                         today=old.date())
    assert "at 09:30:00" in same_day and "2025" not in same_day


def test_a_restarted_watch_continues_the_recent_trend_and_an_old_one_is_confirmed_afresh(tmp_path):
    from benchwarden.live.sources import Sample

    values = iter([64e5 + AMB, 64e5 + AMB, 0.0 + AMB, 64e5 + AMB])

    class Gauge:
        def poll(self, now):
            return [Sample(now, next(values), True)]

        def close(self):
            pass

    prof = parse_profile(DEMO.replace(ANCHOR, ANCHOR + '[supplies.source]\nkind = "modbus-tcp"\nhost = "127.0.0.1"\n'
                                      'interval = "1 s"\n', 1), "x.toml")
    t0 = dt.datetime(2026, 12, 1, 9, 0, tzinfo=dt.UTC)
    with Journal(tmp_path / "j.sqlite3") as j:
        store = SampleStore(j)
        sid = store.stream(BENCH, "n2-A", "pressure", 1000.0)
        store.add(sid, [(t0.timestamp() - 2.0, 64e5 + AMB)])
        clock = [0.0, t0]
        w = Watcher(prof, j, open_source=lambda cfg, amb: Gauge(), monotonic=lambda: clock[0],
                    wallclock=lambda: clock[1])
        got = []
        for _ in range(4):
            w.poll(clock[1])
            got.append(w.feeds[0].stored)
            clock[0] += 1.0
            clock[1] += dt.timedelta(seconds=1)
        # a sample two seconds old is the trend: the first new one is good at once, the 0 bar held
        assert got == [1, 2, 2, 4]
        statuses = [r.status for r in store.rows(sid, t0.timestamp(), t0.timestamp() + 10)]
        assert statuses == ["good", "good", "implausible", "good"]
    # an hour-old sample is no trend: the first new ones wait for the next to agree
    values = iter([64e5 + AMB] * 3)
    with Journal(tmp_path / "k.sqlite3") as j:
        store = SampleStore(j)
        sid = store.stream(BENCH, "n2-A", "pressure", 1000.0)
        store.add(sid, [(t0.timestamp() - 3600.0, 64e5 + AMB)])
        clock = [0.0, t0]
        w = Watcher(prof, j, open_source=lambda cfg, amb: Gauge(), monotonic=lambda: clock[0],
                    wallclock=lambda: clock[1])
        got = []
        for _ in range(3):
            w.poll(clock[1])
            got.append(w.feeds[0].stored)
            clock[0] += 1.0
            clock[1] += dt.timedelta(seconds=1)
        assert got == [0, 0, 3]


def test_a_port_another_program_holds_is_named_busy():
    import serial

    from benchwarden.live.sources import SerialSource, modbus_rtu

    master, slave = os.openpty()
    name = os.ttyname(slave)
    holder = serial.Serial(name, exclusive=True)  # another program has the port
    try:
        src = modbus_rtu(name, 9600, "N", 1, 0, "float32", lambda x: x, timeout_s=0.3)
        s = src.read(dt.datetime.now(dt.UTC))
        src.close()
        assert not s.good and "busy" in s.why
        with pytest.raises(Exception, match="busy"):
            SerialSource(name, lambda x: x)
    finally:
        holder.close()
        os.close(master)
        os.close(slave)
