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


class LabUnreachable(BenchwardenError, ConnectionError):
    """The lab database cannot be reached (the command line exits with status 4)."""


class LabError(BenchwardenError, RuntimeError):
    """The lab database refused an operation (permissions, schema)."""
