"""Error classes shared by every layer.

Each subclass also derives from a builtin so callers can catch either the project's
class or the builtin one. Messages are one line, name the offending value and say what
is allowed.
"""

from collections.abc import Callable

Figure = tuple[float, str]
Format = Callable[[object, str], "str | None"]


def plain_figure(value: object, unit: str, shown: tuple[str, float] | None = None) -> str:
    """A figure in SI (or in the unit ``shown`` = (name, SI per unit)) for the plain message that
    logs and tests read: ``2e+06 Pa(a)``; a date as ISO 8601. People read the renderer's words."""
    if not isinstance(value, (int, float)):
        return value.isoformat() if hasattr(value, "isoformat") else str(value)
    name, factor = shown if shown is not None else (unit, 1.0)
    return f"{value / factor:.4g}" + (f" {name}" if name and not name.startswith("(") else name)


def fill(template: str, quantities: tuple[Figure, ...], fmt: Format | None = None) -> str:
    """``template`` with ``{0}``, ``{1}``… replaced by the ``quantities`` (SI value, unit), each
    written by ``fmt`` (None, or None from it: the plain SI figure).

    >>> fill("no gas state at {0}", ((2e6, "Pa(a)"),))
    'no gas state at 2e+06 Pa(a)'
    """
    for i, (v, u) in enumerate(quantities):
        got = fmt(v, u) if fmt is not None else None
        template = template.replace("{" + str(i) + "}", got if got is not None else plain_figure(v, u))
    return template


class BenchwardenError(Exception):
    """Base class of every error benchwarden raises on purpose.

    An error that quotes physical quantities carries them as data: its message is a template with
    ``{0}``, ``{1}``… and ``quantities`` holds (SI value, unit) for each, so a renderer
    (``render.errors.error_line``) writes them in the display unit; ``str()`` has them in SI.
    """

    template: str = ""
    quantities: tuple[Figure, ...] = ()

    def __init__(self, *args: object, quantities: tuple[Figure, ...] = ()) -> None:
        if quantities and args and isinstance(args[0], str):
            self.template, self.quantities = args[0], quantities
            args = (fill(args[0], quantities),) + args[1:]
        super().__init__(*args)


class InputError(BenchwardenError, ValueError):
    """A value typed by a person (or read from a file) is missing, malformed or out of range."""


class PropertyError(BenchwardenError, ValueError):
    """The equation of state cannot give a property at the requested state."""


class ProfileError(InputError):
    """A bench profile does not load or does not validate (names file, line and key). Where a
    value's own error carries data, it is kept as ``inner`` with the words around it (``prefix``,
    ``suffix``), so a renderer words the value in the display unit."""

    def __init__(self, msg: str, *, inner: BaseException | None = None, prefix: str = "", suffix: str = "") -> None:
        super().__init__(msg)
        self.inner, self.prefix, self.suffix = inner, prefix, suffix


class JournalError(BenchwardenError, OSError):
    """The session journal cannot be opened or written."""


#: SI units an error may carry that a renderer shows in the display unit: an absolute pressure, a
#: gauge pressure (above the ambient), a pressure difference [Pa], a thermodynamic temperature
#: [K] (shown in °C); durations are ``"s"``, masses ``"kg"``, volumes ``"m³"``.
PA_ABS, PA_GAUGE, PA_DIFF, KELVIN = "Pa(a)", "Pa(g)", "Pa", "K(abs)"


class RangeError(InputError):
    """A value outside the range allowed (physical, of the method, or of sense), with its data so
    a renderer can word it in the display unit (``render.errors.error_line``): ``what``, ``value``
    (SI, or a date), the bounds ``lo``/``hi`` (None: open; ``lo_open``/``hi_open``: excluded), the
    SI ``unit`` and ``why`` the range holds; ``typed`` is the value as the person typed it,
    ``where`` what it belongs to (a log row, a supply), ``lo_name``/``hi_name`` name a bound ("the
    tare weight"), ``words`` say the range where the unit is not shown by the display, ``shown``
    is (unit name, SI per unit) for the message. ``why``, ``where`` and the bound names may quote
    further quantities as ``{0}``, ``{1}``…: ``quantities`` holds them as (SI value, unit).

    Without a message, ``str()`` is a plain SI sentence (for logs); people read the renderer's.

    >>> str(RangeError(what="outlet pressure", value=2e6, hi=1e6, hi_open=True, unit=PA_ABS,
    ...                hi_name="the inlet pressure"))
    'outlet pressure 2e+06 Pa(a) is out of range: below the inlet pressure 1e+06 Pa(a)'
    """

    def __init__(self, msg: str = "", *, what: str, value: object, lo: object = None, hi: object = None,
                 unit: str = "", why: str = "", lo_open: bool = False, hi_open: bool = False,
                 typed: str | None = None, where: str = "", lo_name: str = "", hi_name: str = "",
                 words: str | None = None, shown: tuple[str, float] | None = None,
                 quantities: tuple[tuple[float, str], ...] = ()) -> None:
        self.what = what
        self.value = value
        self.lo = lo
        self.hi = hi
        self.unit = unit
        self.why = why
        self.lo_open, self.hi_open = lo_open, hi_open
        self.typed, self.where = typed, where
        self.lo_name, self.hi_name = lo_name, hi_name
        self.words, self.shown = words, shown
        self.quantities = quantities
        super().__init__(msg or range_sentence(self))
        self.quantities = quantities  # the sentence has them already; kept for the renderer

    def located(self, where: str) -> "RangeError":
        """The same error placed (``where``: a log row, a file line) in front of its own place.

        >>> str(RangeError(what="pressure", value=3e7, hi=2e7, unit="Pa(a)").located("log row 4"))
        'log row 4: pressure 3e+07 Pa(a) is out of range: at most 2e+07 Pa(a)'
        """
        e = RangeError.__new__(RangeError)
        e.__dict__.update(self.__dict__)
        e.where = f"{where}: {self.where}" if self.where else where
        e.args = (range_sentence(e),)
        return e


def range_sentence(e: RangeError, fmt: Format | None = None) -> str:
    """The one sentence of a :class:`RangeError`, its figures written by ``fmt(value, unit)``
    (a renderer passes one in the display unit; None from it: the plain SI figure):
    ``[where: ]what value is out of range: at least lo and below hi[ (why)]``, or the range in
    its ``words`` where they are given."""
    def f(value: object, unit: str) -> str:
        got = fmt(value, unit) if fmt is not None else None
        return got if got is not None else plain_figure(value, unit, e.shown if unit == e.unit else None)

    def filled(text: str) -> str:
        return fill(text, e.quantities, fmt)

    parts = []
    for bound, is_open, name, low in ((e.lo, e.lo_open, e.lo_name, True), (e.hi, e.hi_open, e.hi_name, False)):
        if bound is None:
            continue
        if low and is_open and bound == 0 and not name and e.hi is None:
            parts.append("greater than zero")
            continue
        word = ("above" if is_open else "at least") if low else ("below" if is_open else "at most")
        parts.append(" ".join(x for x in (word, filled(name), f(bound, e.unit)) if x))
    finite = isinstance(e.value, (int, float)) and e.value == e.value and abs(e.value) != float("inf")
    value = repr(e.typed.strip()) if e.typed is not None else (
        f(e.value, e.unit) if finite or not isinstance(e.value, (int, float)) else str(e.value))
    allowed = e.words or " and ".join(parts) or "a finite number"
    return ((filled(e.where) + ": ") if e.where else "") + f"{e.what} {value} is out of range: {allowed}" + (
        f" ({filled(e.why)})" if e.why else "")


class ConflictError(InputError):
    """Two options (or keys) given together that exclude each other; ``names`` are both."""

    def __init__(self, msg: str, *, names: tuple[str, ...]) -> None:
        super().__init__(msg)
        self.names = names


class LabUnreachable(BenchwardenError, ConnectionError):
    """The lab database cannot be reached (the command line exits with status 4)."""


class LabError(BenchwardenError, RuntimeError):
    """The lab database refused an operation (permissions, schema)."""
