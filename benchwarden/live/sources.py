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
from collections.abc import Callable, Sequence
from dataclasses import dataclass
from pathlib import Path
from typing import Any, Literal

from benchwarden.errors import InputError
from benchwarden.storage.profile_fields import SourceBase, TemperatureSource
from benchwarden.units import parse_pressure, parse_temperature

__all__ = ["FORMATS", "decode", "Sample", "to_pressure", "to_temperature", "converter", "SampleFilter", "parse_line",
           "FileSource", "SerialSource", "ModbusSource", "modbus_tcp", "modbus_rtu", "LiveSource", "make_source"]

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
    """One value read from a source: time, the value in SI (an absolute pressure [Pa] or a
    temperature [K]; None when bad), and why a bad sample was set aside."""

    at: dt.datetime
    value: float | None
    good: bool
    why: str = ""


#: Turns a transducer's raw number into SI (raises InputError on nonsense).
Convert = Callable[[float], float]


def to_pressure(value: float, scale: float, offset: float, value_unit: str, ambient_pa: float) -> float:
    """``value × scale + offset`` in ``value_unit`` as an absolute pressure [Pa] (gauge unless the
    unit says absolute, as everywhere).

    >>> round(to_pressure(1500.0, 0.1, 0.0, "bar", 101325.0))   # 150 bar(g)
    15101325
    """
    _finite(value, scale, offset)
    return parse_pressure(f"{value * scale + offset!r} {value_unit}", ambient_pa, "transducer value").abs_at(ambient_pa)


def to_temperature(value: float, scale: float, offset: float, value_unit: str) -> float:
    """``value × scale + offset`` in ``value_unit`` (degC, degF, K) as a temperature [K].

    >>> to_temperature(20.0, 1.0, 0.0, "degC")
    293.15
    """
    _finite(value, scale, offset)
    return parse_temperature(f"{value * scale + offset!r} {value_unit}")


def _finite(value: float, scale: float, offset: float) -> None:
    if not all(math.isfinite(x) for x in (value, scale, offset)):
        raise InputError(f"transducer value {value!r} × {scale!r} + {offset!r} is not a finite number")


def converter(src: SourceBase, ambient_pa: float) -> Convert:
    """The conversion a profile's source describes: a pressure source to absolute Pa, a
    temperature source to K."""
    if isinstance(src, TemperatureSource):
        return lambda x: to_temperature(x, src.scale, src.offset, src.value_unit)
    return lambda x: to_pressure(x, src.scale, src.offset, src.value_unit, ambient_pa)


class SampleFilter:
    """Flags what must not be plotted or fitted: a value outside the transducer's range, or a
    spike (a jump larger than ``max_step_pa`` from the last good sample that the next sample
    does not confirm)."""

    def __init__(self, lo_pa: float, hi_pa: float, max_step_pa: float) -> None:
        self.lo, self.hi, self.step = lo_pa, hi_pa, max_step_pa
        self.last: float | None = None
        self.pending: Sample | None = None

    def __call__(self, s: Sample) -> list[Sample]:
        if s.value is None or not s.good:
            return [s]
        p = s.value
        if not self.lo <= p <= self.hi:
            return [Sample(s.at, None, False, f"outside the transducer's range ({p:.6g} Pa)")]
        if self.last is not None and abs(p - self.last) > self.step:
            if self.pending is not None and abs(p - (self.pending.value or 0.0)) <= self.step:
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


def parse_line(line: str, pattern: str | None = None) -> float:
    """The number in one line of text from a serial transducer or a log: the first number, or
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
        return float(number)
    except ValueError:
        raise InputError(f"{number[:40]!r} in the line is not a number") from None


class FileSource:
    """A CSV or text log that grows: each new complete line is a sample; a first column that is
    an ISO timestamp is used as the sample's time (the log's own timestamps), else the time read."""

    def __init__(self, path: str | Path, convert: Convert, pattern: str | None = None) -> None:
        self.path = Path(path).expanduser()
        self.convert, self.pattern = convert, pattern
        self.where = str(self.path)
        self.pos = 0
        self.partial = ""

    def poll(self, now: dt.datetime) -> list[Sample]:
        try:
            with open(self.path, encoding="utf-8", errors="replace") as fh:
                fh.seek(self.pos)
                chunk = fh.read(1_000_000)
                self.pos = fh.tell()
        except OSError as exc:
            return [Sample(now, None, False, f"cannot read {self.path}: {exc.strerror or exc}")]
        text = self.partial + chunk
        lines = text.split("\n")
        self.partial = lines.pop()  # an incomplete last line waits for the rest
        out = []
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
                out.append(Sample(at, self.convert(parse_line(rest, self.pattern)), True))
            except InputError as exc:
                out.append(Sample(at, None, False, str(exc)))
        return out

    def close(self) -> None:
        pass


#: A serial source reads at most this many waiting lines per poll.
MAX_LINES_PER_POLL = 1000


class SerialSource:
    """A transducer that prints a line of text per reading on a serial port (pyserial)."""

    def __init__(self, port: str, convert: Convert, baud: int = 9600, pattern: str | None = None,
                 timeout_s: float = 1.0, parity: str = "N") -> None:
        import serial  # pyserial

        self.convert, self.pattern, self.where = convert, pattern, port
        try:
            self.port = serial.Serial(port, baudrate=baud, timeout=timeout_s, parity=parity)
        except (serial.SerialException, OSError, ValueError) as exc:
            raise InputError(f"cannot open the serial port {port}: {exc}") from None

    def read(self, now: dt.datetime) -> Sample:
        import serial

        try:
            raw = self.port.readline()
        except (serial.SerialException, OSError) as exc:
            return Sample(now, None, False, f"{self.where}: {exc}")
        if not raw:
            return Sample(now, None, False, "no line within the timeout")
        try:
            return Sample(now, self.convert(parse_line(raw.decode("ascii", errors="replace"), self.pattern)), True)
        except InputError as exc:
            return Sample(now, None, False, str(exc))

    def poll(self, now: dt.datetime) -> list[Sample]:
        """The next line (waiting up to the timeout), and every further line already waiting —
        a transducer that prints faster than it is polled never falls behind."""
        out = [self.read(now)]
        try:
            while len(out) < MAX_LINES_PER_POLL and self.port.in_waiting:
                out.append(self.read(now))
        except OSError:
            pass
        return out

    def close(self) -> None:
        self.port.close()


def _quiet_pymodbus() -> None:
    """pymodbus logs every failed connection on its own; a failed read is a bad sample here."""
    import logging

    logging.getLogger("pymodbus").setLevel(logging.CRITICAL)


class ModbusSource:
    """A transducer (or a gateway) on Modbus, read with pymodbus — over TCP, or over a serial
    line in RTU framing (RS-485): ``value`` in holding (or input) registers from ``register``,
    in ``fmt``. A failure is a bad sample with the reason, never an exception."""

    def __init__(self, client: Any, where: str, device: int, register: int, fmt: str, convert: Convert,
                 input_registers: bool = False) -> None:
        if fmt not in FORMATS:
            raise InputError(f"register format {fmt!r} is not one of {', '.join(FORMATS)}")
        _quiet_pymodbus()
        self.client, self.where, self.convert = client, f"{where} device {device} register {register}", convert
        self.device, self.register, self.fmt, self.input = device, register, fmt, input_registers

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
            return Sample(now, self.convert(decode(r.registers, self.fmt)), True)
        except InputError as exc:
            return Sample(now, None, False, str(exc))

    def poll(self, now: dt.datetime) -> list[Sample]:
        return [self.read(now)]

    def close(self) -> None:
        self.client.close()


def modbus_tcp(host: str, port: int, device: int, register: int, fmt: str, convert: Convert,
               input_registers: bool = False, timeout_s: float = 2.0) -> ModbusSource:
    """A Modbus/TCP source (pymodbus ``ModbusTcpClient``)."""
    import pymodbus  # noqa: F401  (the package first, see benchwarden.live.simulator)
    from pymodbus.client import ModbusTcpClient

    client = ModbusTcpClient(host, port=port, timeout=timeout_s, retries=0)
    return ModbusSource(client, f"{host}:{port}", device, register, fmt, convert, input_registers)


def modbus_rtu(port: str, baud: int, parity: str, device: int, register: int, fmt: str, convert: Convert,
               input_registers: bool = False, timeout_s: float = 1.0) -> ModbusSource:
    """A Modbus RTU source on a serial line (pymodbus ``ModbusSerialClient``, RTU framing)."""
    import pymodbus  # noqa: F401
    from pymodbus import FramerType
    from pymodbus.client import ModbusSerialClient

    client = ModbusSerialClient(port, framer=FramerType.RTU, baudrate=baud, parity=parity, bytesize=8, stopbits=1,
                                timeout=timeout_s, retries=0)
    return ModbusSource(client, port, device, register, fmt, convert, input_registers)


#: Anything :func:`make_source` builds: ``poll(now)`` gives the new samples, ``close()`` lets go.
LiveSource = ModbusSource | SerialSource | FileSource


def make_source(src: SourceBase, ambient_pa: float) -> LiveSource:
    """The live source a profile's ``[supplies.source]`` (or a temperature source) describes."""
    convert = converter(src, ambient_pa)
    if src.kind == "modbus-tcp":
        assert src.host is not None
        return modbus_tcp(src.host, int(src.port or 502), src.device, src.address, src.format, convert,
                          src.input_registers)
    if src.kind == "modbus-rtu":
        return modbus_rtu(str(src.port), src.baud, src.parity, src.device, src.address, src.format, convert,
                          src.input_registers)
    if src.kind == "serial":
        return SerialSource(str(src.port), convert, src.baud, src.pattern, parity=src.parity)
    assert src.path is not None
    return FileSource(src.path, convert, src.pattern)
