"""Live pressure sources: where a supply's pressure comes from when a transducer reads it.

A **source** yields **samples** (a time, an absolute pressure, and whether the sample is good).
This module holds the parts that do not need a network: decoding Modbus register words in the
usual formats, turning a raw value into a pressure (``value × scale + offset`` in ``value_unit``,
gauge unless the unit says absolute), a serial line of text (pyserial; tested through a
pseudo-terminal), and a log file that grows. Values outside the transducer's range and spikes
are flagged, never passed on as readings.
"""

from __future__ import annotations

import datetime as dt
import math
import re
import struct
from collections.abc import Iterator, Sequence
from dataclasses import dataclass
from pathlib import Path
from typing import Literal

from gasbench.errors import InputError
from gasbench.profile import Source
from gasbench.units import parse_pressure

__all__ = ["FORMATS", "decode", "Sample", "to_pressure", "SampleFilter", "parse_line", "FileSource", "SerialSource",
           "ModbusTcpSource", "make_source"]

RegisterFormat = Literal["int16", "uint16", "int32", "uint32", "float32", "float32-swapped"]
#: Register formats and how many 16-bit registers each takes.
FORMATS: dict[str, int] = {"int16": 1, "uint16": 1, "int32": 2, "uint32": 2, "float32": 2, "float32-swapped": 2}


def decode(registers: Sequence[int], fmt: str) -> float:
    """The value in Modbus registers (16-bit words, big-endian as the Modbus specification
    sends them; ``float32-swapped`` has its two words in the other order, as many devices do).

    >>> decode([0x4316, 0x0000], "float32")        # IEEE 754: 150.0
    150.0
    >>> decode([0x0000, 0x4316], "float32-swapped")
    150.0
    >>> decode([0xFFFF], "int16"), decode([0xFFFF], "uint16"), decode([0x0001, 0x0000], "uint32")
    (-1.0, 65535.0, 65536.0)
    """
    if fmt not in FORMATS:
        raise InputError(f"register format {fmt!r} is not one of {', '.join(FORMATS)}")
    n = FORMATS[fmt]
    if len(registers) != n or any(not 0 <= int(r) <= 0xFFFF for r in registers):
        raise InputError(f"{fmt} needs {n} register(s) of 16 bits, got {list(registers)!r}")
    words = [int(r) for r in registers]
    if fmt == "float32-swapped":
        words = words[::-1]
    raw = b"".join(struct.pack(">H", w) for w in words)
    code = {"int16": ">h", "uint16": ">H", "int32": ">i", "uint32": ">I", "float32": ">f", "float32-swapped": ">f"}
    return float(struct.unpack(code[fmt], raw)[0])


@dataclass(frozen=True)
class Sample:
    """One value read from a source: time, absolute pressure [Pa] (None when bad), and why a
    bad sample was set aside."""

    at: dt.datetime
    pressure_abs_pa: float | None
    good: bool
    why: str = ""


def to_pressure(value: float, scale: float, offset: float, value_unit: str, ambient_pa: float) -> float:
    """``value × scale + offset`` in ``value_unit`` as an absolute pressure [Pa] (gauge unless the
    unit says absolute, as everywhere).

    >>> round(to_pressure(1500.0, 0.1, 0.0, "bar", 101325.0))   # 150 bar(g)
    15101325
    """
    if not all(math.isfinite(x) for x in (value, scale, offset)):
        raise InputError(f"transducer value {value!r} × {scale!r} + {offset!r} is not a finite number")
    return parse_pressure(f"{value * scale + offset!r} {value_unit}", ambient_pa, "transducer value").abs_at(ambient_pa)


class SampleFilter:
    """Flags what must not be plotted or fitted: a value outside the transducer's range, or a
    spike (a jump larger than ``max_step_pa`` from the last good sample that the next sample
    does not confirm)."""

    def __init__(self, lo_pa: float, hi_pa: float, max_step_pa: float) -> None:
        self.lo, self.hi, self.step = lo_pa, hi_pa, max_step_pa
        self.last: float | None = None
        self.pending: Sample | None = None

    def __call__(self, s: Sample) -> list[Sample]:
        if s.pressure_abs_pa is None or not s.good:
            return [s]
        p = s.pressure_abs_pa
        if not self.lo <= p <= self.hi:
            return [Sample(s.at, None, False, f"outside the transducer's range ({p:.6g} Pa)")]
        if self.last is not None and abs(p - self.last) > self.step:
            if self.pending is not None and abs(p - (self.pending.pressure_abs_pa or 0.0)) <= self.step:
                # the jump held: a real step (a cylinder change, a valve opened)
                first, self.pending, self.last = self.pending, None, p
                return [first, s]
            self.pending = s
            return []
        out: list[Sample] = []
        if self.pending is not None:
            out.append(Sample(self.pending.at, None, False, "spike: a single sample off the trend"))
            self.pending = None
        self.last = p
        out.append(s)
        return out


def parse_line(line: str, pattern: str | None, value_unit: str, ambient_pa: float, scale: float = 1.0,
               offset: float = 0.0) -> float:
    """The pressure in one line of text from a serial transducer or a log: the first number, or
    the regular expression ``pattern``'s first group."""
    text = line.strip()
    if pattern:
        m = re.search(pattern, text)
        if not m:
            raise InputError(f"line {text[:40]!r} does not match the pattern")
        number = m.group(1) if m.groups() else m.group(0)
    else:
        m = re.search(r"[-+]?(?:\d+(?:\.\d*)?|\.\d+)(?:[eE][-+]?\d+)?", text)
        if not m:
            raise InputError(f"no number in the line {text[:40]!r}")
        number = m.group(0)
    try:
        value = float(number)
    except ValueError:
        raise InputError(f"{number[:40]!r} in the line is not a number") from None
    return to_pressure(value, scale, offset, value_unit, ambient_pa)


class FileSource:
    """A CSV or text log that grows: each new complete line is a sample; a first column that is
    an ISO timestamp is used as the sample's time (the log's own timestamps), else the time read."""

    def __init__(self, path: str | Path, value_unit: str, ambient_pa: float, pattern: str | None = None,
                 scale: float = 1.0, offset: float = 0.0) -> None:
        self.path = Path(path).expanduser()
        self.unit, self.ambient, self.pattern, self.scale, self.offset = value_unit, ambient_pa, pattern, scale, offset
        self.pos = 0
        self.partial = ""

    def poll(self, now: dt.datetime) -> Iterator[Sample]:
        try:
            with open(self.path, encoding="utf-8", errors="replace") as fh:
                fh.seek(self.pos)
                chunk = fh.read(1_000_000)
                self.pos = fh.tell()
        except OSError as exc:
            yield Sample(now, None, False, f"cannot read {self.path}: {exc.strerror or exc}")
            return
        text = self.partial + chunk
        lines = text.split("\n")
        self.partial = lines.pop()  # an incomplete last line waits for the rest
        for line in lines:
            if not line.strip() or line.lstrip().startswith("#"):
                continue
            at = now
            first = re.split(r"[,;\t ]", line.strip(), maxsplit=1)[0]
            rest = line
            try:
                at = dt.datetime.fromisoformat(first)
                if at.tzinfo is None:
                    at = at.replace(tzinfo=now.tzinfo)
                rest = line.strip()[len(first):]
            except ValueError:
                pass
            try:
                yield Sample(at, parse_line(rest, self.pattern, self.unit, self.ambient, self.scale, self.offset), True)
            except InputError as exc:
                yield Sample(at, None, False, str(exc))


class SerialSource:
    """A transducer that prints a line of text per reading on a serial port (pyserial)."""

    def __init__(self, port: str, value_unit: str, ambient_pa: float, baud: int = 9600, pattern: str | None = None,
                 scale: float = 1.0, offset: float = 0.0, timeout_s: float = 1.0) -> None:
        import serial  # pyserial

        self.unit, self.ambient, self.pattern, self.scale, self.offset = value_unit, ambient_pa, pattern, scale, offset
        try:
            self.port = serial.Serial(port, baudrate=baud, timeout=timeout_s)
        except (serial.SerialException, OSError) as exc:
            raise InputError(f"cannot open the serial port {port}: {exc}") from None

    def read(self, now: dt.datetime) -> Sample:
        raw = self.port.readline()
        if not raw:
            return Sample(now, None, False, "no line within the timeout")
        try:
            return Sample(now, parse_line(raw.decode("ascii", errors="replace"), self.pattern, self.unit,
                                          self.ambient, self.scale, self.offset), True)
        except InputError as exc:
            return Sample(now, None, False, str(exc))

    def close(self) -> None:
        self.port.close()


class ModbusTcpSource:
    """A pressure transducer (or a gateway) on Modbus/TCP, read with pymodbus: ``value`` in
    holding (or input) registers from ``register``, in ``fmt``, as ``value × scale + offset``
    in ``value_unit``. A failure is a bad sample with the reason, never an exception."""

    def __init__(self, host: str, port: int, device: int, register: int, fmt: str, value_unit: str,
                 ambient_pa: float, scale: float = 1.0, offset: float = 0.0, input_registers: bool = False,
                 timeout_s: float = 2.0) -> None:
        import pymodbus  # noqa: F401  (the package first, see gasbench.simulator)
        from pymodbus.client import ModbusTcpClient

        if fmt not in FORMATS:
            raise InputError(f"register format {fmt!r} is not one of {', '.join(FORMATS)}")
        self.client = ModbusTcpClient(host, port=port, timeout=timeout_s, retries=0)
        self.where = f"{host}:{port} device {device} register {register}"
        self.device, self.register, self.fmt, self.input = device, register, fmt, input_registers
        self.unit, self.ambient, self.scale, self.offset = value_unit, ambient_pa, scale, offset

    def read(self, now: dt.datetime) -> Sample:
        from pymodbus.exceptions import ModbusException

        try:
            if not self.client.connected and not self.client.connect():
                return Sample(now, None, False, f"cannot reach {self.where}")
            call = self.client.read_input_registers if self.input else self.client.read_holding_registers
            r = call(self.register, count=FORMATS[self.fmt], device_id=self.device)
        except (ModbusException, OSError) as exc:
            self.client.close()
            return Sample(now, None, False, f"{self.where}: {exc}")
        if r.isError():
            return Sample(now, None, False, f"{self.where}: the device refused the read ({r})")
        try:
            value = decode(r.registers, self.fmt)
            return Sample(now, to_pressure(value, self.scale, self.offset, self.unit, self.ambient), True)
        except InputError as exc:
            return Sample(now, None, False, str(exc))

    def close(self) -> None:
        self.client.close()


def make_source(src: Source, ambient_pa: float) -> ModbusTcpSource | SerialSource | FileSource:
    """The live source a profile's ``[supplies.source]`` describes (Modbus RTU is not built yet:
    a clear refusal)."""
    if src.kind == "modbus-tcp":
        assert src.host is not None
        return ModbusTcpSource(src.host, int(src.port or 502), src.device, src.register, src.format, src.value_unit,
                               ambient_pa, src.scale, src.offset, src.input_registers)
    if src.kind == "serial":
        return SerialSource(str(src.port), src.value_unit, ambient_pa, src.baud, src.pattern, src.scale, src.offset)
    if src.kind == "file":
        assert src.path is not None
        return FileSource(src.path, src.value_unit, ambient_pa, src.pattern, src.scale, src.offset)
    raise InputError("Modbus RTU sources are not supported yet: use a Modbus/TCP gateway, a serial text line or "
                     "a log file")
