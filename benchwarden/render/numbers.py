"""Numbers with honest precision: one rounding rule for every renderer.

GUM practice (JCGM 100:2008, 7.2.6): an uncertainty is given to two significant figures and
the value to the same decimal place. A figure without an uncertainty gets a fixed number of
significant figures. Magnitudes a bench sees (1e-3 to 1e6 in the chosen unit) are never in
scientific notation.
"""

from __future__ import annotations

import math

__all__ = ["fmt_value", "fmt_uncertain", "fmt_count", "THIN_SPACE"]

#: Digits are grouped by threes with a thin space, as SI writes them (never a comma or a point,
#: which read as a decimal sign somewhere).
THIN_SPACE = "\u2009"


def _decimals_for(x: float, sig: int) -> int:
    """Decimal places that give ``sig`` significant figures to ``x``."""
    if x == 0 or not math.isfinite(x):
        return 0
    return max(0, sig - 1 - math.floor(math.log10(abs(x))))


def _plain(x: float, decimals: int) -> str:
    if not math.isfinite(x):
        return "—"
    if x != 0 and not 1e-3 <= abs(x) < 1e6:
        return f"{x:.{max(1, min(decimals, 3))}e}" if abs(x) < 1e-3 else f"{x:.3e}"
    return f"{x:.{decimals}f}"


def fmt_value(x: float, sig: int = 3) -> str:
    """A figure without an uncertainty, to ``sig`` significant figures, in plain notation
    between 1e-3 and 1e6.

    >>> fmt_value(8591.2), fmt_value(0.004196), fmt_value(12.0), fmt_value(0.0)
    ('8590', '0.00420', '12.0', '0')
    """
    if x == 0:
        return "0"
    d = _decimals_for(x, sig)
    if d == 0 and abs(x) >= 10 ** sig:
        step = 10 ** (math.floor(math.log10(abs(x))) - sig + 1)
        x = round(x / step) * step
    return _plain(x, d)


def fmt_uncertain(x: float, u: float, unit: str = "") -> str:
    """``value ± uncertainty unit``: the uncertainty to two significant figures, the value to the
    same decimal place (GUM 7.2.6).

    >>> fmt_uncertain(-98.3, 229.4, "sccm")
    '-100 ± 230 sccm'
    >>> fmt_uncertain(8591.0, 5512.0, "g/min")
    '8600 ± 5500 g/min'
    >>> fmt_uncertain(-4.195, 191.457, "g")
    '0 ± 190 g'
    >>> fmt_uncertain(0.3214, 0.0123)
    '0.321 ± 0.012'
    """
    tail = f" {unit}" if unit else ""
    if not math.isfinite(u) or u <= 0:
        return f"{fmt_value(x)}{tail}"
    exp = math.floor(math.log10(u)) - 1  # the place of the uncertainty's second significant figure
    step = 10.0**exp
    ur = round(u / step) * step
    xr = round(x / step) * step
    d = max(0, -exp)
    xs, us = _plain(xr, d), _plain(ur, d)
    if xs in ("-0", "-0.0") or (xr == 0 and xs.startswith("-")):
        xs = xs[1:]
    return f"{xs} ± {us}{tail}"


def fmt_count(n: float) -> str:
    """A whole count, grouped by threes with a thin space from five digits on (SI).

    >>> fmt_count(339440).replace(THIN_SPACE, "_"), fmt_count(1000), fmt_count(-12345.4).replace(THIN_SPACE, "_")
    ('339_440', '1000', '-12_345')
    """
    if not math.isfinite(n):
        return "—"
    text = f"{round(n):d}"
    if len(text.lstrip("-")) < 5:
        return text
    return f"{round(n):,d}".replace(",", THIN_SPACE)
