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
from benchwarden.errors import InputError
from benchwarden.units import quantities as q
from benchwarden.units.limits import text_problem

# ----------------------------------------------------------------------------- field types


def _str_only(fn: Any) -> Any:
    def check(v: Any) -> Any:
        if isinstance(v, bool) or not isinstance(v, str):
            raise InputError(f"expected a quantity with a unit as a string, e.g. \"50 L\"; got {v!r}")
        return fn(v)

    return check


def _within(fn: Any, hi: float, unit: str) -> Any:
    """Parse, then refuse values beyond ``hi`` (SI): a huge number is a unit slip, not a bench."""
    def check(v: str) -> Any:
        out = fn(v)
        x = out.abs_at(u.ATM_PA) if isinstance(out, u.Pressure) else out
        if x > hi:
            raise InputError(f"{v!r} is beyond {hi:g} {unit}, more than any bench uses; check the unit")
        return out

    return _str_only(check)


PressureQ = Annotated[u.Pressure, BeforeValidator(_within(lambda s: u.parse_pressure(s), 2e8, "Pa (2000 bar)"))]
TemperatureQ = Annotated[float, BeforeValidator(_within(u.parse_temperature, 773.15, "K (500 °C)"))]
VolumeQ = Annotated[float, BeforeValidator(_within(u.parse_volume, 1e6, "m³"))]
LengthQ = Annotated[float, BeforeValidator(_within(u.parse_length, 1e4, "m"))]
DurationQ = Annotated[float, BeforeValidator(_within(u.parse_duration, 365 * 86400.0, "s (a year)"))]
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


class SourceBase(ProfileModel):
    """A transducer read live: where it is and how its number becomes a value."""

    kind: Literal["modbus-tcp", "modbus-rtu", "serial", "file"]
    host: str | None = Field(default=None, max_length=255)
    """Modbus/TCP: the device or gateway's address."""
    port: int | str | None = Field(default=None, union_mode="left_to_right")
    """Modbus/TCP: the TCP port, 1 to 65535 (502 by default); serial and Modbus RTU: the serial port, e.g.
    "/dev/ttyUSB0" or "COM3"."""
    device: int = Field(default=1, ge=0, le=247)
    """Modbus unit id."""
    address: int = Field(default=0, ge=0, le=65535, alias="register")
    """The first register (profile key ``register``)."""
    input_registers: bool = False
    """Read input registers instead of holding registers."""
    format: Literal["int16", "uint16", "int32", "uint32", "float32", "float32-swapped"] = "float32"
    scale: float = Field(default=1.0, allow_inf_nan=False)
    """value × scale + offset: never zero (every sample would be the offset)."""
    offset: float = Field(default=0.0, allow_inf_nan=False)
    value_unit: str = Field(default="bar", max_length=16)
    """value × scale + offset is a pressure in this unit (gauge unless marked absolute)."""
    interval: DurationQ = 1.0
    """How often to read."""
    baud: int = Field(default=9600, ge=300, le=4_000_000)
    parity: Literal["N", "E", "O"] = "N"
    pattern: str | None = Field(default=None, max_length=200)
    """Serial or file: a regular expression whose first group is the number."""
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
        if self.pattern is not None:
            try:
                re.compile(self.pattern)
            except re.error as exc:
                raise InputError(f"pattern is not a valid regular expression: {exc}") from None
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
