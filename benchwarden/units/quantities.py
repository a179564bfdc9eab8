"""Quantities a person types that are not a single unit: ventilation (air changes or a flow),
an amount of gas (a mass or a volume), a concentration, and free text (a note, a label).

Parsed once at the edge into small records, like everything in :mod:`benchwarden.units`.
"""

from __future__ import annotations

import re
from dataclasses import dataclass
from typing import Literal

from benchwarden.errors import InputError
from benchwarden.units.flows import parse_flow
from benchwarden.units.limits import check_quantity_text, text_problem, within
from benchwarden.units.parse import parse_mass, parse_volume, shorten, split_number

__all__ = ["check_text", "Ventilation", "parse_ventilation", "Amount", "parse_amount", "parse_fraction"]




def check_text(value: str, what: str, max_len: int = 200) -> str:
    """Free text a person typed (a note, a label, a reason): trimmed, at most ``max_len``
    characters, no control characters or escape sequences.

    >>> check_text("  N2-0417 ", "label")
    'N2-0417'
    """
    v = value.strip()
    problem = text_problem(v)
    if problem:
        raise InputError(f"{what} contains {problem}; type plain text")
    if len(v) > max_len:
        raise InputError(f"{what} is {len(v)} characters long; at most {max_len}")
    return v



# --------------------------------------------------------------------------------------
# ventilation and amounts


@dataclass(frozen=True)
class Ventilation:
    """A room's ventilation as typed: air changes per hour, or an actual volume flow [m³/s]."""

    air_changes_per_h: float | None
    flow_m3_s: float | None
    text: str

    def m3_s(self, room_volume_m3: float) -> float:
        """The ventilation as a volume flow [m³/s] for a room of the given volume."""
        if self.air_changes_per_h is not None:
            return self.air_changes_per_h * room_volume_m3 / 3600.0
        assert self.flow_m3_s is not None
        return self.flow_m3_s


def parse_ventilation(text: str, what: str = "ventilation") -> Ventilation:
    """Parse ventilation: ``"2/h"`` (air changes per hour) or a volume flow (``"120 m3/h"``,
    ``"2 L/s"``).

    >>> parse_ventilation("2/h").m3_s(50.0) * 3600
    100.0
    >>> round(parse_ventilation("120 m3/h").m3_s(50.0) * 3600, 6)
    120.0
    """
    if not isinstance(text, str):
        raise InputError(f"{what} {text!r}: give air changes per hour (\"2/h\") or a volume flow (\"120 m3/h\")")
    check_quantity_text(text, what)
    s = text.strip().lower().replace(" ", "")
    m = re.fullmatch(r"(.+?)(/h|/hr|ach|1/h|perh)", s)
    if m and not m.group(1).endswith(("m3", "l", "ft3")):
        ach, _ = split_number(m.group(1) + " x", what)
        if ach < 0:
            raise InputError(f"{what} {shorten(text)!r} must be zero or more air changes per hour")
        if ach != 0:
            within(ach, what, 0.01, 1000.0, "/h", text=text, words="0, or from 0.01 to 1000 air changes per hour")
        return Ventilation(ach, None, text.strip())
    f = parse_flow(text, what=what)
    if f.kind != "actual":
        raise InputError(f"{what} {shorten(text)!r}: give air changes per hour (\"2/h\") or a volume flow (\"120 m3/h\")")
    if f.value != 0:
        within(f.value, what, 1e-6, 100.0, "m³/s", text=text, words="0, or from 3.6 L/h to 100 m³/s")
    return Ventilation(None, f.value, text.strip())


@dataclass(frozen=True)
class Amount:
    """An amount of gas as typed: a mass [kg] or a volume [m³]."""

    kind: Literal["mass", "volume"]
    value: float
    text: str


def parse_amount(text: str, what: str = "amount") -> Amount:
    """Parse a mass (``"11 kg"``) or a volume (``"9 m3"``).

    >>> parse_amount("11 kg").kind, parse_amount("9 m3").value
    ('mass', 9.0)
    """
    try:
        return Amount("mass", parse_mass(text, what), text.strip())
    except InputError:
        pass
    try:
        return Amount("volume", parse_volume(text, what), text.strip())
    except InputError:
        raise InputError(f"{what} {shorten(str(text))!r} is neither a mass (\"11 kg\") nor a volume (\"9 m3\")") from None


def parse_fraction(text: str, what: str = "fraction") -> float:
    """A concentration as a mole fraction: ``"10 ppm"``, ``"50 ppb"``, ``"0.5 %"``, or a plain
    fraction ``"0.001"``.

    >>> parse_fraction("10 ppm"), parse_fraction("0.5 %"), parse_fraction("0.2095")
    (1e-05, 0.005, 0.2095)
    """
    value, unit = split_number(text, what)
    factor = {"": 1.0, "%": 1e-2, "ppm": 1e-6, "ppb": 1e-9, "ppmv": 1e-6, "ppbv": 1e-9}.get(unit.strip().lower())
    if factor is None:
        raise InputError(f"{what} {shorten(text)!r}: use ppm, ppb, % or a plain fraction, e.g. '10 ppm'")
    x = value * factor
    if not 0 <= x <= 1:
        raise InputError(f"{what} {shorten(text)!r} is not between 0 and 100 %")
    return x
