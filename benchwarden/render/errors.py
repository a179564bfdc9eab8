"""Refusals worded for people: the one place an error's figures are written in the display unit.

An error that carries data (:class:`~benchwarden.errors.RangeError`) is worded here from its what,
SI value, bounds and unit, with pressures in the bench's display unit (gauge or absolute as the
error says) and temperatures in °C; any other error is its own one line. The command line's error
printer (exit status 2) and the app's messages both call :func:`error_line`.
"""

from __future__ import annotations

from benchwarden.errors import (
    KELVIN,
    PA_ABS,
    PA_DIFF,
    PA_GAUGE,
    BenchwardenError,
    ProfileError,
    RangeError,
    fill,
    range_sentence,
)
from benchwarden.render.display import Display

__all__ = ["error_line", "quantity"]


def quantity(value: object, unit: str, d: Display) -> str | None:
    """A figure of an error in the display ``d``; None where the unit is not one the display
    shows (the plain SI figure is used).

    >>> d = Display("psi")
    >>> quantity(10e5, "Pa(g)", d), quantity(293.15, "K(abs)", d), quantity(5400.0, "s", d)
    ('145.0 psig', '20.0 °C', '1 h 30 min')
    """
    if not isinstance(value, (int, float)):
        return None
    v = float(value)
    if unit in (PA_ABS, PA_GAUGE, PA_DIFF):
        text = d.absolute(v) if unit == PA_ABS else d.gauge(v + d.ambient_pa) if unit == PA_GAUGE else d.difference(v)
        return f"0 {text.split(' ', 1)[1]}" if v == 0 else text
    if unit == KELVIN:
        return d.temperature(v)
    if unit == "s":
        if abs(v) < 60:
            return f"{v:.3g} s"
        if abs(v) < 3600:
            return f"{v / 60:.3g} min"
        return d.hours(v / 3600)
    return None


def error_line(exc: BaseException, d: Display | None = None) -> str:
    """One line for a person: a :class:`RangeError` worded from its data in the display ``d``
    (default bar), any other error as its message.

    >>> from benchwarden.errors import RangeError
    >>> e = RangeError(what="outlet pressure", value=2e6, hi=1e6, hi_open=True, unit="Pa(g)",
    ...                hi_name="the inlet pressure", why="a regulator only reduces pressure")
    >>> error_line(e, Display("bar"))
    'outlet pressure 20.0 bar(g) is out of range: below the inlet pressure 10.0 bar(g) (a regulator only reduces pressure)'
    >>> error_line(e, Display("psi"))
    'outlet pressure 290.1 psig is out of range: below the inlet pressure 145.0 psig (a regulator only reduces pressure)'
    >>> from benchwarden.errors import PropertyError
    >>> error_line(PropertyError("no gas state of CO2 at {0}", quantities=((5e6, "Pa(a)"),)), Display("MPa"))
    'no gas state of CO2 at 5.00 MPa(a)'
    """
    shown = d or Display()

    def fmt(v: object, u: str) -> str | None:
        return quantity(v, u, shown)

    if isinstance(exc, ProfileError) and exc.inner is not None:
        return exc.prefix + error_line(exc.inner, shown) + exc.suffix
    if isinstance(exc, RangeError) and exc.unit != "date":
        return range_sentence(exc, fmt)
    if isinstance(exc, BenchwardenError) and exc.quantities:
        return fill(exc.template, exc.quantities, fmt)
    return str(exc)
