"""The building blocks of a bench profile: the base model (unknown keys and control characters
refused), the quantity field types (text with a unit, parsed by :mod:`benchwarden.units` and bounded),
and the sections that describe a live transducer (``[supplies.source]``, a temperature source).
"""

from __future__ import annotations

import math
import re
from typing import Annotated, Any, Literal

from pydantic import BaseModel, BeforeValidator, ConfigDict, Field, field_validator, model_validator

from benchwarden import units as u
from benchwarden.core.gas import Gas, parse_gas
from benchwarden.errors import KELVIN, PA_ABS, InputError, RangeError
from benchwarden.units import quantities as q
from benchwarden.units.constants import BAR_PA
from benchwarden.units.limits import text_problem

# ----------------------------------------------------------------------------- field types


def _str_only(fn: Any) -> Any:
    def check(v: Any) -> Any:
        if isinstance(v, bool) or not isinstance(v, str):
            raise InputError(f"expected a quantity with a unit as a string, e.g. \"50 L\"; got {v!r}")
        return fn(v)

    return check


def _within(fn: Any, hi: float, unit: str, shown: tuple[str, float] | None = None) -> Any:
    """Parse, then refuse values beyond ``hi`` [SI ``unit``]: a huge number is a unit slip, not a
    bench (``shown``: the unit of the plain message)."""
    def check(v: str) -> Any:
        out = fn(v)
        x = out.abs_at(u.ATM_PA) if isinstance(out, u.Pressure) else out
        if x > hi:
            raise RangeError(what="value", value=x, typed=v, hi=hi, unit=unit, shown=shown,
                             why="more than any bench uses; check the unit")
        return out

    return _str_only(check)


PressureQ = Annotated[u.Pressure, BeforeValidator(_within(lambda s: u.parse_pressure(s), 2e8, PA_ABS,
                                                          ("bar(a)", BAR_PA)))]
TemperatureQ = Annotated[float, BeforeValidator(_within(u.parse_temperature, 773.15, KELVIN, ("K", 1.0)))]
VolumeQ = Annotated[float, BeforeValidator(_within(u.parse_volume, 1e6, "m³"))]
LengthQ = Annotated[float, BeforeValidator(_within(u.parse_length, 1e4, "m"))]
DurationQ = Annotated[float, BeforeValidator(_within(u.parse_duration, 365 * 86400.0, "s"))]
MassQ = Annotated[float, BeforeValidator(_within(u.parse_mass, 1e4, "kg"))]
FrequencyQ = Annotated[float, BeforeValidator(_within(u.parse_frequency, 1e6, "Hz"))]
VoltageQ = Annotated[float, BeforeValidator(_within(u.parse_voltage, 1e7, "V"))]
FlowQ = Annotated[u.Flow, BeforeValidator(_str_only(u.parse_flow))]
GasQ = Annotated[Gas, BeforeValidator(_str_only(parse_gas))]
VentilationQ = Annotated[q.Ventilation, BeforeValidator(_str_only(q.parse_ventilation))]
Id = Annotated[str, Field(min_length=1, max_length=40, pattern=r"^[A-Za-z0-9][A-Za-z0-9_.\-]*$")]


def positive(value: float, what: str) -> float:
    if not math.isfinite(value) or value <= 0:
        raise InputError(f"{what} must be greater than zero")
    return value


class ProfileModel(BaseModel):
    model_config = ConfigDict(extra="forbid", frozen=True, arbitrary_types_allowed=True)

    @field_validator("*", mode="before")
    @classmethod
    def _no_control_characters(cls, v: Any) -> Any:
        """Names and notes are shown on terminals and in files: no escape sequences, control
        characters or invisible format characters (bidi overrides and isolates, zero-width
        characters; a line break or a tab in a note is fine)."""
        if isinstance(v, str):
            problem = text_problem(v)
            if problem:
                raise InputError(f"{problem} is not allowed in text")
        return v



# ----------------------------------------------------------------------------- live sources


#: Register formats: the type, then the byte order in ABCD notation (A the most significant byte
#: of the value as the Modbus specification sends it; ``-abcd``, the default, may be left out).
TYPES: dict[str, int] = {"int16": 1, "uint16": 1, "int32": 2, "uint32": 2, "float32": 2, "float64": 4}
BYTE_ORDERS = ("abcd", "cdab", "badc", "dcba")
#: Older names kept as aliases.
FORMAT_ALIASES = {"float32-swapped": "float32-cdab"}
FORMAT_NAMES = tuple(list(TYPES) + [f"{t}-{o}" for t in TYPES for o in BYTE_ORDERS] + list(FORMAT_ALIASES))
#: Named groups a ``pattern`` may have (``value`` is required).
PATTERN_GROUPS = ("value", "unit", "time")
#: Serial settings that every source on one port must share.
PORT_SETTINGS = ("baud", "parity", "bytesize", "stopbits")


class SourceBase(ProfileModel):
    """A transducer read live: where it is and how its number becomes a value."""

    kind: Literal["modbus-tcp", "modbus-rtu", "serial", "file"]
    host: str | None = Field(default=None, max_length=255)
    """Modbus/TCP: the device or gateway's address."""
    port: int | str | None = Field(default=None, union_mode="left_to_right")
    """Modbus/TCP: the TCP port, 1 to 65535 (502 by default); serial and Modbus RTU: the serial port, e.g.
    "/dev/ttyUSB0" or "COM3"."""
    device: int = Field(default=1, ge=0, le=255)
    """Modbus unit id (Modbus/TCP 0–255; Modbus RTU 1–247)."""
    address: int = Field(default=0, ge=0, le=65535, alias="register")
    """The first register, 0-based as sent on the wire (profile key ``register``; "40001" is 0)."""
    input_registers: bool = False
    """Read input registers instead of holding registers."""
    format: str = "float32"
    """``int16``, ``uint16``, ``int32``, ``uint32``, ``float32`` or ``float64``, with the byte order
    as a suffix: ``-abcd`` (default), ``-cdab``, ``-badc``, ``-dcba``."""
    scale: float = Field(default=1.0, allow_inf_nan=False)
    """value × scale + offset: never zero (every sample would be the offset)."""
    offset: float = Field(default=0.0, allow_inf_nan=False)
    value_unit: str = Field(default="bar", max_length=16)
    """value × scale + offset is a pressure in this unit (gauge unless marked absolute)."""
    interval: DurationQ = 1.0
    """How often to read."""
    baud: int = Field(default=9600, ge=300, le=4_000_000)
    parity: Literal["N", "E", "O"] = "N"
    bytesize: Literal[7, 8] = 8
    stopbits: Literal[1, 2] = 1
    pattern: str | None = Field(default=None, max_length=200)
    """Serial or file: a regular expression with the named group ``value`` (and optionally
    ``unit`` and ``time``)."""
    delimiter: Literal[",", ";", "\t", "whitespace"] | None = None
    """Serial or file: the column separator (none: the line is the value)."""
    decimal: Literal[".", ","] = "."
    """Serial or file: the decimal mark of the values."""
    time_column: int | str | None = None
    """Serial or file: the column of the time stamp (1-based, or a header name)."""
    value_column: int | str | None = None
    """Serial or file: the column of the value (1-based, or a header name)."""
    time_format: str = Field(default="iso8601", max_length=64)
    """``iso8601``, ``epoch``, ``epoch-ms`` or a strftime pattern such as ``%d.%m.%Y %H:%M:%S``."""
    timezone: str | None = Field(default=None, max_length=64)
    """IANA zone of time stamps without an offset (default: the computer's)."""
    header_lines: int = Field(default=0, ge=0, le=100)
    """File: lines skipped at its start (the last one names the columns)."""
    path: str | None = Field(default=None, max_length=4096)
    """File: the growing log."""

    @model_validator(mode="after")
    def _check(self) -> SourceBase:
        need = {"modbus-tcp": ("host",), "modbus-rtu": ("port",), "serial": ("port",), "file": ("path",)}[self.kind]
        for key in need:
            if getattr(self, key) in (None, ""):
                raise InputError(f"a {self.kind} source needs {key}")
        self._check_port()
        if self.scale == 0 or not 1e-12 <= abs(self.scale) <= 1e12:
            raise InputError(f"scale {self.scale:g} is out of range: not zero, and between 1e-12 and 1e12 in size "
                             "(value × scale + offset)")
        self._check_unit()
        if self.format not in FORMAT_NAMES:
            raise InputError(f"format {self.format!r} is not one of {', '.join(TYPES)} with an optional byte order "
                             f"suffix {', '.join('-' + o for o in BYTE_ORDERS)}")
        if self.kind == "modbus-rtu" and not 1 <= self.device <= 247:
            raise InputError(f"device {self.device}: a Modbus RTU unit id is 1 to 247")
        self._check_dialect()
        positive(self.interval, "source interval")
        return self

    def _check_port(self) -> None:
        """A TCP port is a whole number from 1 to 65535; a serial port is a device's name."""
        port = self.port
        if port is None:
            return
        if self.kind == "modbus-tcp":
            if isinstance(port, bool) or not isinstance(port, int) or not 1 <= port <= 65535:
                raise InputError(f"port {port!r} is out of range: a TCP port is a whole number from 1 to 65535")
        elif self.kind in ("modbus-rtu", "serial"):
            if not isinstance(port, str) or not re.fullmatch(r"(/\S+|COM[0-9]{1,3}|[a-z0-9]+://\S+)", port):
                raise InputError(f"port {port!r} is not a serial port: give its device, e.g. \"/dev/ttyUSB0\" or "
                                 "\"COM3\"")
        else:
            raise InputError(f"a {self.kind} source has no port")

    def _check_dialect(self) -> None:
        if self.pattern is not None:
            try:
                names = set(re.compile(self.pattern).groupindex)
            except re.error as exc:
                raise InputError(f"pattern is not a valid regular expression: {exc}") from None
            if "value" not in names or names - set(PATTERN_GROUPS):
                raise InputError(f"pattern {self.pattern!r} needs the named group (?P<value>...) and may have only "
                                 f"{', '.join(PATTERN_GROUPS)}")
            if self.delimiter is not None:
                raise InputError("give either pattern or delimiter, not both")
        for key in ("time_column", "value_column"):
            v = getattr(self, key)
            if isinstance(v, bool) or (isinstance(v, int) and not 1 <= v <= 1000) or v == "":
                raise InputError(f"{key} {v!r}: a column number from 1, or a header name")
            if v is not None and self.delimiter is None:
                raise InputError(f"{key} needs a delimiter (\",\", \";\", \"\\t\" or \"whitespace\")")
        if self.time_column is not None and self.time_column == self.value_column:
            raise InputError("time_column and value_column are the same column")
        if self.time_format not in ("iso8601", "epoch", "epoch-ms") and "%" not in self.time_format:
            raise InputError(f"time_format {self.time_format!r}: iso8601, epoch, epoch-ms or a strftime pattern "
                             "such as \"%d.%m.%Y %H:%M:%S\"")
        if self.timezone is not None:
            from zoneinfo import ZoneInfo, ZoneInfoNotFoundError

            try:
                ZoneInfo(self.timezone)
            except (ZoneInfoNotFoundError, ValueError):
                raise InputError(f"timezone {self.timezone!r} is not an IANA zone name such as "
                                 "\"Europe/Berlin\" or \"UTC\"") from None
        if self.kind not in ("serial", "file"):
            for key in ("pattern", "delimiter", "time_column", "value_column", "header_lines"):
                if getattr(self, key) not in (None, 0):
                    raise InputError(f"{key} belongs to serial and file sources, not {self.kind}")

    def port_settings(self) -> dict[str, object]:
        """The serial settings every source on this source's port must share."""
        return {k: getattr(self, k) for k in PORT_SETTINGS}

    def _check_unit(self) -> None:
        raise NotImplementedError


class Source(SourceBase):
    """Where a supply's live pressure comes from (a pressure transducer)."""

    range: PressureQ | None = None
    """The transducer's full scale: values beyond it are flagged, never used."""
    accuracy_class: float | None = Field(default=None, gt=0, le=5)
    """The transducer's accuracy in % of its range (with ``range``: the leak watch uses it
    instead of the supply's dial gauge)."""
    resolution: PressureQ | None = None
    """The smallest step the transducer reports (samples are stored within it)."""

    def _check_unit(self) -> None:
        u.parse_pressure(f"1 {self.value_unit}")  # a pressure unit, gauge or absolute
        if self.accuracy_class is not None and self.range is None:
            raise InputError("a source's accuracy_class needs its range (the span it is a percentage of)")


class TemperatureSource(SourceBase):
    """A temperature sensor read live (a supply's cylinder, or the room), same shape as a
    pressure source; ``value × scale + offset`` is a temperature in ``value_unit``."""

    value_unit: str = Field(default="degC", max_length=16)

    def _check_unit(self) -> None:
        u.parse_temperature(f"20 {self.value_unit}", "temperature source value_unit")


def shared_port_conflict(sections: list[tuple[str, SourceBase]]) -> str | None:
    """Two sources on one serial port whose settings disagree (one port, one connection), as a
    sentence naming both sections; None when every port's sources agree. ``sections`` pairs a
    section's name (e.g. ``supplies[0].source``) with its source."""
    seen: dict[str, tuple[str, SourceBase]] = {}
    for name, src in sections:
        if src.kind not in ("modbus-rtu", "serial"):
            continue
        port = str(src.port)
        if port not in seen:
            seen[port] = (name, src)
            continue
        first_name, first = seen[port]
        if src.kind != first.kind or src.kind == "serial":
            return (f"{first_name} and {name} both use the serial port {port}; one port is one connection: "
                    "only modbus-rtu sources can share it")
        differ = [k for k in PORT_SETTINGS if getattr(src, k) != getattr(first, k)]
        if differ:
            detail = ", ".join(f"{k} {getattr(first, k)} vs {getattr(src, k)}" for k in differ)
            return f"{first_name} and {name} share the serial port {port} but disagree: {detail}"
    return None
