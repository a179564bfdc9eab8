"""Live sources without hardware: register formats, a growing log file, a serial line through a
pseudo-terminal, the range and spike filter."""

from __future__ import annotations

import datetime as dt
import os
import struct

import pytest

from benchwarden.errors import InputError
from benchwarden.live.sources import (
    FileSource,
    Sample,
    SampleFilter,
    SerialSource,
    decode,
    to_pressure,
)


def BAR(x):
    return to_pressure(x, 1.0, 0.0, "bar", 101325.0)


def RAW(x):
    return x

NOW = dt.datetime(2026, 12, 1, 9, 0, tzinfo=dt.UTC)


def _words(fmt: str, v: float) -> list[int]:
    # independent encoding with struct (IEEE 754 / two's complement, big-endian Modbus words)
    code = {"int16": ">h", "uint16": ">H", "int32": ">i", "uint32": ">I", "float32": ">f"}[fmt.replace("-swapped", "")]
    raw = struct.pack(code, int(v) if "int" in fmt else v)
    words = [int.from_bytes(raw[i:i + 2], "big") for i in range(0, len(raw), 2)]
    return words[::-1] if fmt.endswith("swapped") else words


@pytest.mark.parametrize("fmt, v", [("int16", -1234), ("uint16", 54321), ("int32", -123456789),
                                    ("uint32", 3_000_000_000), ("float32", 149.875), ("float32-swapped", 149.875)])
def test_every_register_format_round_trips(fmt, v):
    assert decode(_words(fmt, v), fmt) == pytest.approx(v)


def test_bad_register_input_is_refused():
    with pytest.raises(InputError):
        decode([1], "float32")
    with pytest.raises(InputError):
        decode([70000], "uint16")
    with pytest.raises(InputError):
        decode([1], "float64")


def test_scale_offset_and_gauge_or_absolute():
    assert to_pressure(4000, 0.05, 0.0, "bar", 101325.0) == pytest.approx(200e5 + 101325.0)
    assert to_pressure(14.7, 1.0, 0.0, "psia", 101325.0) == pytest.approx(14.7 * 6894.757293168361)


def test_growing_file_uses_its_own_timestamps_and_waits_for_whole_lines(tmp_path):
    log = tmp_path / "log.csv"
    log.write_text("# logger\n2026-12-01T08:00:00+00:00,150.2\n2026-12-01T08:01:00+00:00,150.1\n2026-12-01T08:02")
    src = FileSource(log, BAR)
    got = list(src.poll(NOW))
    assert [s.at.minute for s in got] == [0, 1]
    assert got[0].value == pytest.approx(150.2e5 + 101325.0)
    with open(log, "a") as fh:
        fh.write(":00+00:00,150.0\n")
    (s,) = list(src.poll(NOW))
    assert s.at.minute == 2 and s.good


def test_serial_line_through_a_pseudo_terminal():
    master, slave = os.openpty()
    src = SerialSource(os.ttyname(slave), BAR, pattern=r"P=([-\d.]+)", timeout_s=2.0)
    try:
        os.write(master, b"P=148.55 bar T=20.1\n")
        s = src.read(NOW)
        assert s.good and s.value == pytest.approx(148.55e5 + 101325.0)
        os.write(master, b"garbage\n")
        bad = src.read(NOW)
        assert not bad.good and "pattern" in bad.why
    finally:
        src.close()
        os.close(master)
        os.close(slave)


def test_out_of_range_and_spikes_are_flagged_not_passed_on():
    f = SampleFilter(0.0, 300e5, 5e5)

    def s(p):
        return Sample(NOW, p, True)

    assert f(s(150e5)) == [s(150e5)]
    assert f(s(400e5))[0].good is False              # beyond the transducer
    assert f(s(100e5)) == []                          # a jump: held back
    out = f(s(149.9e5))                               # not confirmed: it was a spike
    assert out[0].good is False and "spike" in out[0].why and out[1].value == 149.9e5
    assert f(s(198e5)) == []                          # a new cylinder: jump held back ...
    assert [x.value for x in f(s(197.9e5))] == [198e5, 197.9e5]   # ... and confirmed


def _free_port() -> int:
    import socket

    with socket.socket() as s:
        s.bind(("127.0.0.1", 0))
        return s.getsockname()[1]


def test_simulator_served_on_loopback_is_read_by_the_modbus_source():
    # a real pymodbus server on 127.0.0.1 (the simulator) and a real client; bounded in time
    import asyncio
    import threading
    import time

    import pymodbus  # noqa: F401  (imported once here, not by two threads at once)

    from benchwarden.core import gas as g
    from benchwarden.live.simulator import Cylinder, serve
    from benchwarden.live.sources import modbus_tcp

    n2 = g.parse_gas("nitrogen")
    port = _free_port()
    cyl = Cylinder(n2, 0.05, 151.01325e5, 293.15, loss_kg_s=1e-4, speed=600.0)
    t = threading.Thread(target=lambda: asyncio.run(serve(cyl, port, duration_s=4.0)), daemon=True)
    t.start()
    src = modbus_tcp("127.0.0.1", port, 1, 0, "float32", BAR, timeout_s=2.0)
    try:
        first = None
        for _ in range(40):  # the server needs a moment to listen
            first = src.read(NOW)
            if first.good:
                break
            time.sleep(0.05)
        assert first is not None and first.good, first
        assert first.value == pytest.approx(151.01325e5, abs=0.3e5)
        time.sleep(1.0)
        later = src.read(NOW)
        # 600 s of simulated loss at 0.1 g/s = 60 g of 8.5 kg: about 1 bar lower (real-gas balance)
        assert later.good and later.value < first.value - 0.3e5
        temp = modbus_tcp("127.0.0.1", port, 1, 2, "float32", RAW).read(NOW)
        assert temp.good and temp.value == pytest.approx(20.0, rel=1e-6)  # 20 degC, read raw
    finally:
        src.close()
        t.join(timeout=10)
    assert not t.is_alive()


def test_unreachable_modbus_device_is_a_bad_sample_not_a_crash():
    from benchwarden.live.sources import modbus_tcp

    s = modbus_tcp("127.0.0.1", _free_port(), 1, 0, "float32", BAR, timeout_s=0.5).read(NOW)
    assert not s.good and "cannot reach" in s.why


def test_profile_source_section_builds_the_source(tmp_path):
    # the demo profile with the commented source switched on, as the README's two-terminal demo
    from pathlib import Path

    from benchwarden.errors import ProfileError
    from benchwarden.live.sources import FileSource, ModbusSource, make_source
    from benchwarden.storage.profile import parse_profile

    demo = (Path(__file__).resolve().parents[1] / "profiles" / "demo-teaching-bench.toml").read_text()
    section = ('\n[supplies.source]\nkind = "modbus-tcp"\nhost = "127.0.0.1"\nport = 5020\ndevice = 1\n'
               'register = 0\nformat = "float32"\nscale = 1.0\noffset = 0.0\nvalue_unit = "bar"\ninterval = "1 s"\n')
    anchor = 'gauge = { range = "315 bar", accuracy_class = 1.6 }\n'
    prof = parse_profile(demo.replace(anchor, anchor + section), "b.toml")
    src = prof.supplies[0].source
    assert src is not None and src.kind == "modbus-tcp" and src.interval == 1.0
    built = make_source(src, prof.ambient_pa)
    assert isinstance(built, ModbusSource)
    built.close()
    log = tmp_path / "p.log"
    log.write_text("")
    filed = parse_profile(demo.replace(anchor, anchor + f'\n[supplies.source]\nkind = "file"\npath = "{log}"\n'),
                          "b.toml")
    assert isinstance(make_source(filed.supplies[0].source, 101325.0), FileSource)
    for bad, words in (('kind = "modbus-tcp"\n', "needs host"), ('kind = "file"\npath = "x"\nvalue_unit = "kg"\n',
                                                                  "pressure unit"),
                       ('kind = "serial"\nport = "/dev/x"\npattern = "("\n', "regular expression"),
                       ('kind = "carrier-pigeon"\n', "kind")):
        with pytest.raises(ProfileError, match=words):
            parse_profile(demo.replace(anchor, anchor + "\n[supplies.source]\n" + bad), "b.toml")
