"""Standard flows with their reference condition (sccm, slpm, scfh, Nm³/h ...), read from text.

A standard-flow unit carries its reference condition: sccm and slpm at 0 °C / 101.325 kPa unless
another reference is chosen; scfh and scfm at 70 °F / 14.696 psia; Nm³/h and NL/min at 0 °C /
101.325 kPa (DIN 1343). A mass flow (g/min, kg/h) needs no reference.
"""

from __future__ import annotations

from dataclasses import dataclass
from typing import Literal

from benchwarden.errors import InputError
from benchwarden.units.parse import (
    Reference,
    _need_unit,
    _pint_quantity,
    _sane,
    get_reference,
    split_number,
)

__all__ = ["Flow", "FlowKind", "parse_flow"]


FlowKind = Literal["standard", "mass", "actual"]


@dataclass(frozen=True)
class Flow:
    """A parsed flow.

    ``kind`` is ``standard`` (``value`` in standard m³/s at ``reference``), ``mass``
    (``value`` in kg/s) or ``actual`` (``value`` in m³/s at the conditions where it flows).
    """

    kind: FlowKind
    value: float
    reference: Reference | None
    text: str

    def describe(self) -> str:
        if self.kind == "standard" and self.reference is not None:
            return f"{self.text} (standard, at {self.reference.label})"
        return self.text


# unit -> (standard m³/s per unit, default reference key)
_STANDARD_FLOW_UNITS: dict[str, tuple[float, str]] = {
    "sccm": (1e-6 / 60.0, "0C"),
    "slpm": (1e-3 / 60.0, "0C"),
    "slm": (1e-3 / 60.0, "0C"),
    "sl/min": (1e-3 / 60.0, "0C"),
    "slph": (1e-3 / 3600.0, "0C"),
    "sl/h": (1e-3 / 3600.0, "0C"),
    "nl/min": (1e-3 / 60.0, "0C"),
    "nl/h": (1e-3 / 3600.0, "0C"),
    "nm3/h": (1.0 / 3600.0, "0C"),
    "nm3/min": (1.0 / 60.0, "0C"),
    "nm3/d": (1.0 / 86400.0, "0C"),
    "scfh": (0.3048**3 / 3600.0, "70F"),
    "scfm": (0.3048**3 / 60.0, "70F"),
    "scfd": (0.3048**3 / 86400.0, "70F"),
}


#: Mass and actual volume flows written as a unit of _FAST_FLOW_NUMERATORS over one of
#: _FAST_FLOW_PER, read without pint's registry (about 0.3 s to import and build, most of a cold
#: ``plan``'s parsing); anything else goes to pint. tests/test_units.py checks every
#: combination against pint. Case matters as it does in pint ("mL" but not "ML").
_FAST_FLOW_NUMERATORS: dict[str, tuple[FlowKind, float]] = {
    "L": ("actual", 1e-3), "l": ("actual", 1e-3), "mL": ("actual", 1e-6), "ml": ("actual", 1e-6),
    "cm3": ("actual", 1e-6), "m3": ("actual", 1.0), "ft3": ("actual", 0.3048**3),
    "g": ("mass", 1e-3), "kg": ("mass", 1.0),
}
_FAST_FLOW_PER: dict[str, float] = {"s": 1.0, "min": 60.0, "h": 3600.0, "hr": 3600.0, "hour": 3600.0,
                                    "d": 86400.0, "day": 86400.0}


def _fast_flow(unit: str) -> tuple[FlowKind, float] | None:
    """(kind, SI per unit) of a plain ``volume/time`` or ``mass/time`` unit, else None."""
    num, sep, per = unit.replace(" ", "").replace("³", "3").replace("**3", "3").partition("/")
    if not sep or num not in _FAST_FLOW_NUMERATORS or per not in _FAST_FLOW_PER:
        return None
    kind, factor = _FAST_FLOW_NUMERATORS[num]
    return kind, factor / _FAST_FLOW_PER[per]


#: The flow units a person may write, for messages.
_FLOW_UNITS = "sccm, slpm, scfh, Nm3/h (standard), g/min (mass) or L/min (actual volume)"


def parse_flow(text: str, reference: str | None = None, what: str = "flow") -> Flow:
    """Parse a flow: standard (``2 slpm``, ``500 sccm``, ``40 scfh``, ``3 Nm3/h``), mass
    (``5 g/min``) or actual volumetric (``2 L/min``, ``60 m3/h``).

    ``reference`` overrides the reference condition of sccm/slpm-type units (never of
    ``Nm³``, which DIN 1343 fixes at 0 °C, nor of scfh/scfm, fixed at 70 °F by the trade).

    >>> f = parse_flow("2 slpm"); f.kind, round(f.value * 60e3, 9), f.reference.key
    ('standard', 2.0, '0C')
    >>> parse_flow("40 scfh").reference.key
    '70F'
    """
    value, unit = split_number(text, what)
    _need_unit(unit, text, what, '"2 slpm", "500 sccm", "40 scfh", "3 Nm3/h" or "5 g/min"')
    if value < 0:
        raise InputError(f"{what} {text!r} is negative; a flow must be zero or more")
    key = unit.strip().lower().replace(" ", "").replace("³", "3").replace("**", "")
    if key in _STANDARD_FLOW_UNITS:
        factor, ref_key = _STANDARD_FLOW_UNITS[key]
        if reference is not None and key.startswith("s") and not key.startswith("scf"):
            ref_key = reference
        return Flow("standard", _sane(value * factor, "flow", text, what), get_reference(ref_key), text.strip())
    fast = _fast_flow(unit.strip())
    if fast is not None:
        return Flow(fast[0], _sane(value * fast[1], "flow", text, what), None, text.strip())
    import pint

    try:
        q = _pint_quantity(value, unit, text, what)
    except InputError as exc:  # the unit itself unknown: say which are
        raise InputError(f"{exc}; use {_FLOW_UNITS}") from None
    try:
        return Flow("mass", _sane(float(q.to("kg/s").magnitude), "flow", text, what), None, text.strip())
    except pint.errors.DimensionalityError:
        pass
    try:
        return Flow("actual", _sane(float(q.to("m**3/s").magnitude), "flow", text, what), None, text.strip())
    except pint.errors.DimensionalityError:
        raise InputError(
            f"{what} {text!r} is not a flow; use {_FLOW_UNITS}") from None


