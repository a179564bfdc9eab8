"""Units: one pint registry and the parsing conventions of DESIGN.md.

People type pressures as gauge unless they mark them absolute, flows as standard flows that
carry a reference condition, and temperatures in °C or °F. This module turns such strings into
SI floats (Pa absolute, K, m³, s) and small immutable records, and back into labelled text.
Everything below this layer works in SI floats only.

Conventions
-----------
* ``bar``, ``barg``, ``bar(g)``, ``psi``, ``psig``, ``kPa``, ``MPa``, ``mbar`` ... are **gauge**.
* ``bara``, ``bar(a)``, ``psia``, ``kPa(a)``, ``mbar(a)``, ``Pa(a)`` ... are **absolute**.
* ``atm``, ``Torr`` and ``mmHg`` are absolute scales by definition and are always absolute.
* Standard flows: ``sccm``, ``slpm``/``slm``, ``sL/min`` at 0 °C / 101.325 kPa unless another
  reference is chosen; ``scfh``/``scfm`` at 70 °F / 14.696 psia; ``Nm3/h``, ``NL/min`` at
  0 °C / 101.325 kPa (DIN 1343 normal conditions).
"""

from __future__ import annotations

import math
import re
from dataclasses import dataclass
from functools import lru_cache
from typing import TYPE_CHECKING, Literal

from benchwarden.errors import PA_ABS, PA_DIFF, InputError, RangeError
from benchwarden.units.constants import ATM_PA, BAR_PA, PSI_PA, T0_K, T_FULL_K
from benchwarden.units.limits import check_quantity_text

if TYPE_CHECKING:  # pragma: no cover
    import pint



@lru_cache(maxsize=1)
def _registry() -> pint.UnitRegistry:
    import pint

    registry: pint.UnitRegistry = pint.UnitRegistry(autoconvert_offset_to_baseunit=True)
    return registry


def ureg() -> pint.UnitRegistry:
    """The package's one pint registry (created on first use)."""
    return _registry()


def Q_(value: object, unit: str | None = None) -> pint.Quantity:  # noqa: N802 - pint's name
    """Build a quantity in the package registry, e.g. ``Q_(20, "degC")``."""
    return _registry().Quantity(value, unit)


# --------------------------------------------------------------------------------------
# reference conditions


@dataclass(frozen=True)
class Reference:
    """A reference condition for standard volumes: temperature [K], pressure [Pa absolute]."""

    key: str
    temperature_k: float
    pressure_pa: float
    label: str
    standard: str


#: Named reference conditions. ``key`` is what users type.
REFERENCES: dict[str, Reference] = {
    "0C": Reference("0C", T0_K, ATM_PA, "0 °C, 101.325 kPa", "DIN 1343 normal conditions"),
    "15C": Reference("15C", T_FULL_K, ATM_PA, "15 °C, 101.325 kPa", "ISO 13443 standard reference conditions"),
    "20C": Reference("20C", 293.15, ATM_PA, "20 °C, 101.325 kPa", "20 °C / 1 atm (NTP, common practice)"),
    "70F": Reference(
        "70F", (70.0 - 32.0) * 5.0 / 9.0 + T0_K, 14.696 * PSI_PA, "70 °F, 14.696 psia",
        "US compressed-gas trade standard conditions (CGA P-11, from memory)",
    ),
}


def get_reference(key: str) -> Reference:
    """Look up a reference condition by key (``0C``, ``15C``, ``20C``, ``70F``)."""
    k = key.strip().upper().replace("°", "").replace(" ", "")
    for ref in REFERENCES.values():
        if ref.key.upper() == k:
            return ref
    raise InputError(f"unknown reference condition {key!r}; allowed: {', '.join(REFERENCES)}")


# --------------------------------------------------------------------------------------
# numbers

# digits are ASCII only: Python's float() and ``\d`` also take Arabic-Indic or full-width digits
_NUM = r"[-+]?(?:[0-9]+(?:\.[0-9]*)?|\.[0-9]+)(?:[eE][-+]?[0-9]+)?|[-+]?(?:nan|inf|infinity)"
_SPLIT = re.compile(rf"^\s*({_NUM})\s*(.*?)\s*$", re.IGNORECASE)
_SEPARATOR = re.compile(r"^\s*[-+]?(?:[0-9]+(?:\.[0-9]*)?|\.[0-9]+)(?:[,_'\u2009\u202f]|\s+)[0-9]")


def split_number(text: str, what: str) -> tuple[float, str]:
    """Split typed text into a number and its unit. A number is written with a decimal point
    and no thousands separators: ``"1,000 L"`` or ``"2,5 bar"`` is refused, never read as
    1 L or 2 bar."""
    if not isinstance(text, str):
        text = str(text)
    check_quantity_text(text, what)  # long, non-ASCII digits, invisible characters: refused at once
    if _SEPARATOR.match(text):
        raise InputError(
            f"{what} {shorten(text)!r}: write the number without thousands separators and with a "
            "decimal point, e.g. '1000 L' or '2.5 bar'"
        )
    m = _SPLIT.match(text)
    if not m:
        raise InputError(f"{what} {shorten(text)!r} is not a number with a unit")
    try:
        value = float(m.group(1))
    except ValueError:  # pragma: no cover - the pattern only admits floats
        raise InputError(f"{what} {shorten(text)!r}: {m.group(1)!r} is not a number") from None
    if not math.isfinite(value):
        raise InputError(f"{what} {shorten(text)!r} is not a finite number")
    return value, m.group(2)


def shorten(text: str, limit: int = 40) -> str:
    """Text cut to ``limit`` characters for an error message (never echo a long input)."""
    return text if len(text) <= limit else text[: limit - 1] + "…"


def _need_unit(unit: str, text: str, what: str, examples: str) -> None:
    if not unit:
        raise InputError(f"{what} {text!r} has no unit; write it with one, e.g. {examples}")


def check_finite(value: float, what: str) -> float:
    """Return ``value`` if it is a finite float, else raise :class:`InputError`."""
    if not isinstance(value, (int, float)) or not math.isfinite(value):
        raise InputError(f"{what} {value!r} is not a finite number")
    return float(value)


def check_range(value: float, what: str, lo: float, hi: float, unit: str, why: str = "") -> float:
    """Return ``value`` if it is finite and within (lo, hi], else raise :class:`InputError`
    naming the value and the range allowed.

    >>> check_range(0.05, "cylinder volume", 0.0, 5.0, "m³")
    0.05
    """
    check_finite(value, what)
    if not lo < value <= hi:
        raise RangeError(what=what, value=value, lo=lo, hi=hi, unit=unit, why=why, lo_open=True)
    return float(value)


def check_positive(value: float, what: str, unit: str = "") -> float:
    """Return ``value`` if it is finite and > 0, else raise :class:`InputError`."""
    check_finite(value, what)
    if value <= 0:
        raise RangeError(what=what, value=value, lo=0.0, unit=unit, lo_open=True)
    return float(value)


# --------------------------------------------------------------------------------------
# pressure

_PRESSURE_UNITS = {
    "pa": 1.0, "hpa": 100.0, "kpa": 1e3, "mpa": 1e6, "gpa": 1e9,
    "bar": BAR_PA, "mbar": 100.0, "kbar": 1e8,
    "psi": PSI_PA, "ksi": 1000 * PSI_PA,
    "atm": ATM_PA, "torr": ATM_PA / 760.0, "mmhg": 133.322387415, "inhg": 3386.389,
}
_ALWAYS_ABSOLUTE = {"atm", "torr", "mmhg"}

PressureKind = Literal["gauge", "absolute"]


def pressure_factor(unit: str) -> float:
    """Pascals per one ``unit`` (bar, psi, kPa, MPa, mbar, ...).

    >>> pressure_factor("psi") == PSI_PA
    True
    """
    try:
        return _PRESSURE_UNITS[unit.lower()]
    except KeyError:
        raise InputError(f"unknown pressure unit {unit!r}") from None


@dataclass(frozen=True)
class Pressure:
    """A typed pressure: its value as typed [Pa] and whether it was gauge or absolute.

    It holds no absolute value of its own: a gauge reading means something only against an
    ambient pressure, which the caller gives (:meth:`abs_at`), so a profile read at sea level
    and used at altitude cannot carry a stale absolute figure."""

    typed_as: PressureKind
    typed_pa: float
    text: str

    def gauge_pa(self, ambient_pa: float = ATM_PA) -> float:
        return self.abs_at(ambient_pa) - ambient_pa

    def abs_at(self, ambient_pa: float) -> float:
        """Absolute pressure [Pa] at the given ambient pressure."""
        if self.typed_as == "absolute":
            return self.typed_pa
        return self.typed_pa + ambient_pa


def _pressure_unit(unit: str) -> tuple[float, PressureKind | None, str]:
    """Factor to Pa, the marked kind (None where unmarked) and the base unit of a pressure unit."""
    u = unit.strip().lower().replace(" ", "")
    marker: PressureKind | None = None
    m = re.fullmatch(r"(.*?)\(([ag])\)", u)
    if m:
        u, marker = m.group(1), ("absolute" if m.group(2) == "a" else "gauge")
    if u in _PRESSURE_UNITS:
        return _PRESSURE_UNITS[u], marker, u
    if marker is None and len(u) > 1 and u[-1] in "ag" and u[:-1] in _PRESSURE_UNITS:
        return _PRESSURE_UNITS[u[:-1]], ("absolute" if u[-1] == "a" else "gauge"), u[:-1]
    raise InputError(
        f"unknown pressure unit {unit!r}; use bar, barg, bar(a), psi, psig, psia, kPa, kPa(a), "
        "MPa, mbar(a), atm or Torr"
    )


def parse_pressure(text: str, ambient_pa: float = ATM_PA, what: str = "pressure") -> Pressure:
    """Parse a typed pressure into absolute Pa.

    Unmarked units are gauge (added to ``ambient_pa``); ``a``/``(a)`` marks absolute;
    ``atm``, ``Torr`` and ``mmHg`` are always absolute.

    >>> parse_pressure("200 bar").abs_at(101325.0)
    20101325.0
    >>> parse_pressure("150 bar(a)").abs_at(101325.0)
    15000000.0
    >>> round(parse_pressure("14.7 psia").abs_at(101325.0), 1)
    101352.9
    """
    value, unit = split_number(text, what)
    _need_unit(unit, text, what, '"200 bar" (gauge) or "150 bar(a)"')
    factor, marker, base = _pressure_unit(unit)
    if base in _ALWAYS_ABSOLUTE:
        if marker == "gauge":
            raise InputError(f"{what} {text!r}: {unit} is an absolute scale; it cannot be gauge")
        marker = "absolute"
    kind: PressureKind = marker or "gauge"
    pa = _sane(value * factor, "pressure", text, what)
    abs_pa = pa + ambient_pa if kind == "gauge" else pa
    if abs_pa < 0:
        raise InputError(
            f"{what} {text!r} is below vacuum (absolute {{0}}); "
            "a gauge reading cannot be lower than minus the ambient pressure", quantities=((abs_pa, PA_ABS),)
        )
    return Pressure(kind, pa, text.strip())


def pressure_abs(text: str | float, ambient_pa: float = ATM_PA, what: str = "pressure") -> float:
    """Absolute pressure [Pa] from a typed string at the given ambient pressure (float input is
    taken as absolute Pa)."""
    if isinstance(text, (int, float)):
        return check_finite(float(text), what)
    return parse_pressure(text, ambient_pa, what).abs_at(ambient_pa)


def ambient_from_altitude(altitude_m: float) -> float:
    """Atmospheric pressure [Pa] at a geopotential altitude by the ISO 2533 standard atmosphere.

    Troposphere formula: p = 101325·(1 − 2.25577e-5·h)^5.25588, valid from −2 km to 11 km.

    >>> round(ambient_from_altitude(0.0))
    101325
    >>> round(ambient_from_altitude(1000.0))  # ISO 2533 table: 89 875 Pa at 1000 m
    89875
    """
    check_finite(altitude_m, "altitude")
    if not -2000.0 <= altitude_m <= 11000.0:
        raise RangeError(what="altitude", value=altitude_m, lo=-2000.0, hi=11000.0, unit="m", why="ISO 2533 troposphere")
    return ATM_PA * (1.0 - 2.25577e-5 * altitude_m) ** 5.25588


# --------------------------------------------------------------------------------------
# other quantities via pint

_TEMP_ALIASES = {
    "c": "degC", "°c": "degC", "degc": "degC", "celsius": "degC", "ºc": "degC",
    "f": "degF", "°f": "degF", "degf": "degF", "fahrenheit": "degF", "ºf": "degF",
    "k": "K", "kelvin": "K", "r": "degR", "°r": "degR", "degr": "degR",
}


def parse_temperature(text: str, what: str = "temperature") -> float:
    """Parse a temperature (``15 degC``, ``70 degF``, ``293 K``, ``20 C``) into kelvin.

    >>> parse_temperature("15 degC")
    288.15
    >>> round(parse_temperature("70 degF"), 3)
    294.261
    """
    value, unit = split_number(text, what)
    _need_unit(unit, text, what, '"20 degC", "70 degF" or "293 K"')
    u = _TEMP_ALIASES.get(unit.strip().lower())
    if u is None:
        raise InputError(f"unknown temperature unit {unit!r} in {what} {text!r}; use degC, degF or K")
    # exact definitions (ITS-90 / SI): checked against pint in tests/test_units.py
    kelvin = {"degC": value + T0_K, "degF": (value - 32.0) * 5.0 / 9.0 + T0_K, "K": value,
              "degR": value * 5.0 / 9.0}[u]
    if kelvin <= 0:
        raise InputError(f"{what} {shorten(text)!r} is at or below absolute zero")
    return _sane(kelvin, "temperature", text, what)


def parse_temperature_difference(text: str, what: str = "temperature uncertainty") -> float:
    """Parse a temperature difference (``0.5 K``, ``0.5 degC``, ``1 degF``) into kelvin.

    >>> parse_temperature_difference("0.5 degC"), round(parse_temperature_difference("0.9 degF"), 6)
    (0.5, 0.5)
    """
    value, unit = split_number(text, what)
    _need_unit(unit, text, what, '"0.5 K"')
    u = _TEMP_ALIASES.get(unit.strip().lower())
    if u is None:
        raise InputError(f"unknown temperature unit {unit!r} in {what} {text!r}; use K, degC or degF")
    if value < 0:
        raise InputError(f"{what} {text!r} must be zero or more")
    return value * (5.0 / 9.0 if u in ("degF", "degR") else 1.0)


def _pint_quantity(value: float, unit: str, text: str, what: str) -> pint.Quantity:
    import pint

    u = re.sub(r"(?<=[a-zA-Z])([23])\b", r"**\1", unit.strip())
    u = u.replace("³", "**3").replace("²", "**2").replace("µ", "u")
    if u.startswith("/"):
        u = "1" + u
    try:
        return Q_(value, u)
    except (pint.errors.UndefinedUnitError, pint.errors.DefinitionSyntaxError, AttributeError,
            TypeError, ValueError, AssertionError):
        raise InputError(f"unknown unit {unit!r} in {what} {text!r}") from None


#: Exact factors of the commonest units to SI, so everyday input does not wait for pint's
#: registry (about 0.8 s to import and build). tests/test_units.py checks each against pint.
_FAST: dict[str, tuple[str, float]] = {
    "l": ("m**3", 1e-3), "ml": ("m**3", 1e-6), "cm3": ("m**3", 1e-6), "cc": ("m**3", 1e-6), "m3": ("m**3", 1.0),
    "ft3": ("m**3", 0.3048**3),
    "mm": ("m", 1e-3), "cm": ("m", 1e-2), "m": ("m", 1.0), "um": ("m", 1e-6), "in": ("m", 0.0254),
    "ft": ("m", 0.3048),
    "s": ("s", 1.0), "min": ("s", 60.0), "h": ("s", 3600.0), "hr": ("s", 3600.0), "d": ("s", 86400.0),
    "day": ("s", 86400.0), "days": ("s", 86400.0),
    "kg": ("kg", 1.0), "g": ("kg", 1e-3), "lb": ("kg", 0.45359237),
    "hz": ("Hz", 1.0), "khz": ("Hz", 1e3), "/s": ("Hz", 1.0), "/min": ("Hz", 1.0 / 60.0),
    "v": ("V", 1.0), "kv": ("V", 1e3),
}


#: Beyond these no bench goes: a larger figure is a slip of the unit or the exponent, refused
#: at the edge for every quantity (commands and profiles narrow them further).
SANITY_LIMITS: dict[str, tuple[float, str]] = {
    "m**3": (1e6, "1e6 m³"), "s": (10 * 366 * 86400.0, "ten years"), "m": (1e4, "10 km"),
    "kg": (1e5, "100 t"), "Hz": (1e9, "1 GHz"), "V": (1e8, "100 MV"), "flow": (100.0, "100 m³/s"),
    "pressure": (1e10, "10 GPa"), "temperature": (1e4, "10 000 K"),
}


def _sane(value: float, kind: str, text: str, what: str) -> float:
    hi, words = SANITY_LIMITS[kind]
    if abs(value) > hi:  # a pressure's limit is worded in the display unit, the others as written here
        raise RangeError(what=what, value=value, typed=shorten(text), lo=-hi if value < 0 else None,
                         hi=hi if value > 0 else None, unit=PA_DIFF if kind == "pressure" else kind,
                         words=None if kind == "pressure" else f"at most {words}",
                         why="more than any bench uses; check the unit")
    return value


def _parse_dim(text: str, what: str, target: str, examples: str) -> float:
    value, unit = split_number(text, what)
    _need_unit(unit, text, what, examples)
    fast = _FAST.get(unit.strip().lower().replace("³", "3").replace("µ", "u"))
    if fast is not None and fast[0] == target:
        return _sane(value * fast[1], target, text, what)
    import pint

    q = _pint_quantity(value, unit, text, what)
    try:
        return _sane(float(q.to(target).magnitude), target, text, what)
    except pint.errors.DimensionalityError:
        raise InputError(f"{what} {shorten(text)!r} is not a {target_names.get(target, target)}; e.g. {examples}") from None


target_names = {"m**3": "volume", "s": "duration", "m": "length", "kg": "mass", "m**3/s": "volume flow",
                "Hz": "frequency", "V": "voltage"}


def parse_volume(text: str, what: str = "volume") -> float:
    """Parse a volume (``50 L``, ``1.5 ft3``, ``0.05 m3``) into m³.

    >>> parse_volume("50 L")
    0.05
    >>> round(parse_volume("1.5 ft3"), 6)
    0.042475
    """
    return _parse_dim(text, what, "m**3", '"50 L" or "1.5 ft3"')


def parse_duration(text: str, what: str = "duration") -> float:
    """Parse a duration (``12 h``, ``30 min``, ``2 day``) into seconds.

    >>> parse_duration("12 h")
    43200.0
    """
    return _parse_dim(text, what, "s", '"12 h" or "30 min"')


def parse_length(text: str, what: str = "length") -> float:
    """Parse a length (``3 mm``, ``0.5 in``) into metres.

    >>> parse_length("3 mm")
    0.003
    """
    return _parse_dim(text, what, "m", '"3 mm" or "0.5 in"')


def parse_mass(text: str, what: str = "mass") -> float:
    """Parse a mass (``45.2 kg``, ``12 lb``) into kg.

    >>> round(parse_mass("1 lb"), 8)
    0.45359237
    """
    return _parse_dim(text, what, "kg", '"45.2 kg"')


def parse_frequency(text: str, what: str = "repetition rate") -> float:
    """Parse a repetition rate (``10 Hz``, ``600 /min``) into Hz.

    >>> parse_frequency("600 /min")
    10.0
    """
    return _parse_dim(text, what, "Hz", '"10 Hz"')


def parse_voltage(text: str, what: str = "voltage") -> float:
    """Parse a voltage (``25 kV``) into volts.

    >>> parse_voltage("25 kV")
    25000.0
    """
    return _parse_dim(text, what, "V", '"25 kV"')
