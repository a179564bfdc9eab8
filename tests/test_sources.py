"""Live sources without hardware: register formats, a growing log file, a serial line through a
pseudo-terminal, the range and spike filter."""

from __future__ import annotations

import datetime as dt
import os
import struct

import pytest

from gasbench.errors import InputError
from gasbench.sources import FileSource, Sample, SampleFilter, SerialSource, decode, to_pressure

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
    src = FileSource(log, "bar", 101325.0)
    got = list(src.poll(NOW))
    assert [s.at.minute for s in got] == [0, 1]
    assert got[0].pressure_abs_pa == pytest.approx(150.2e5 + 101325.0)
    with open(log, "a") as fh:
        fh.write(":00+00:00,150.0\n")
    (s,) = list(src.poll(NOW))
    assert s.at.minute == 2 and s.good


def test_serial_line_through_a_pseudo_terminal():
    master, slave = os.openpty()
    src = SerialSource(os.ttyname(slave), "bar", 101325.0, pattern=r"P=([-\d.]+)", timeout_s=2.0)
    try:
        os.write(master, b"P=148.55 bar T=20.1\n")
        s = src.read(NOW)
        assert s.good and s.pressure_abs_pa == pytest.approx(148.55e5 + 101325.0)
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
    assert out[0].good is False and "spike" in out[0].why and out[1].pressure_abs_pa == 149.9e5
    assert f(s(198e5)) == []                          # a new cylinder: jump held back ...
    assert [x.pressure_abs_pa for x in f(s(197.9e5))] == [198e5, 197.9e5]   # ... and confirmed
