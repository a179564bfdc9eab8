"""Error classes shared by every layer.

Each subclass also derives from a builtin so callers can catch either the project's
class or the builtin one. Messages are one line, name the offending value and say what
is allowed.
"""


class BenchwardenError(Exception):
    """Base class of every error benchwarden raises on purpose."""


class InputError(BenchwardenError, ValueError):
    """A value typed by a person (or read from a file) is missing, malformed or out of range."""


class PropertyError(BenchwardenError, ValueError):
    """The equation of state cannot give a property at the requested state."""


class ProfileError(InputError):
    """A bench profile does not load or does not validate (names file, line and key)."""


class JournalError(BenchwardenError, OSError):
    """The session journal cannot be opened or written."""


class RangeError(InputError):
    """A value outside the range allowed (physical, of the method, or of sense), with its data so
    a renderer can word it in the display unit: ``what``, ``value`` (SI, or a date), the bounds
    ``lo``/``hi`` (None: open), the SI ``unit`` and ``why`` the range holds."""

    def __init__(self, msg: str, *, what: str, value: object, lo: object = None, hi: object = None,
                 unit: str = "", why: str = "") -> None:
        super().__init__(msg)
        self.what = what
        self.value = value
        self.lo = lo
        self.hi = hi
        self.unit = unit
        self.why = why


class ConflictError(InputError):
    """Two options (or keys) given together that exclude each other; ``names`` are both."""

    def __init__(self, msg: str, *, names: tuple[str, ...]) -> None:
        super().__init__(msg)
        self.names = names


class LabUnreachable(BenchwardenError, ConnectionError):
    """The lab database cannot be reached (the command line exits with status 4)."""


class LabError(BenchwardenError, RuntimeError):
    """The lab database refused an operation (permissions, schema)."""
