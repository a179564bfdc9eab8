"""A bench profile's file, and what the app's first frame needs of it, kept in the journal.

Validating a profile takes pydantic and its models (about a third of the app's start); the
first frame only needs the bench's name, the ambient pressure, the display unit and each
supply's id, own reading and gauge step. :class:`ProfileView` holds exactly that; it is kept in
the journal's ``derived`` table once the profile has been validated, under a key of the file's
exact text (SHA-256), the package version and the view's format, so a start with an unchanged
profile draws its first figures before the profile is parsed. Any change to the file, to
benchwarden or to the view's format makes the key differ: the profile is then validated first,
as always. A malformed kept view is ignored (never an error). The full validation follows the
first frame in every case.

This module imports no pydantic: it is what the first frame may use.
"""

from __future__ import annotations

import hashlib
import json
import math
import os
import stat
from dataclasses import asdict, dataclass
from importlib import resources
from pathlib import Path
from typing import TYPE_CHECKING, Any

from benchwarden import __version__
from benchwarden.errors import BenchwardenError, ProfileError

if TYPE_CHECKING:
    from benchwarden.storage.journal import Journal

__all__ = ["MAX_PROFILE_BYTES", "DEMO_NAME", "demo_profile_path", "demo_profile_text", "read_text_file", "read_profile_text",
           "SupplyView", "ProfileView", "VIEW_FORMAT", "kept_view", "keep_view"]

#: The largest bench profile or file a profile names (a checklist's items) read [bytes].
MAX_PROFILE_BYTES = 2_000_000
DEMO_NAME = "demo-teaching-bench.toml"
#: The format of a kept view; raising it makes every kept view stale.
VIEW_FORMAT = 1
_WHAT = "profile-view"


def demo_profile_text() -> str:
    """The bundled demo bench profile (shipped inside the package)."""
    return resources.files("benchwarden.data").joinpath(DEMO_NAME).read_text(encoding="utf-8")


def demo_profile_path() -> Path:
    return Path(str(resources.files("benchwarden.data").joinpath(DEMO_NAME)))


def read_text_file(path: str | Path, what: str, limit: int) -> str:
    """The text of a file a person or a profile names, read with a size limit: it must be a
    regular file (not ``/dev/zero``, a pipe or a folder) of at most ``limit`` bytes of UTF-8 (a
    byte-order mark is accepted). Failures are one line naming the file."""
    p = Path(path).expanduser()
    try:
        # opened without blocking (a pipe does not hang), checked on the open file (no swap between
        # a check and the read), read with a limit (a file may grow)
        fd = os.open(p, os.O_RDONLY | getattr(os, "O_NONBLOCK", 0))
        with os.fdopen(fd, "rb") as fh:
            if not stat.S_ISREG(os.fstat(fd).st_mode):
                raise ProfileError(f"{path}: not a regular file; give a {what}")
            raw = fh.read(limit + 1)
    except OSError as exc:
        raise ProfileError(f"{path}: cannot read the {what}: {exc.strerror or exc}") from None
    if len(raw) > limit:
        raise ProfileError(f"{path}: file is larger than {limit / 1e6:g} MB; not a {what}")
    try:
        return raw.decode("utf-8-sig")
    except UnicodeDecodeError:
        raise ProfileError(f"{path}: not UTF-8 text; give a {what}") from None


def read_profile_text(path: str | Path) -> str:
    """The text of a bench profile file (:func:`read_text_file` with the profile's limit): what
    is validated, and what a kept view's key is taken from."""
    return read_text_file(path, "bench profile (.toml)", MAX_PROFILE_BYTES)


@dataclass(frozen=True)
class SupplyView:
    """What the first frame shows of a supply."""

    id: str
    #: the profile's own reading, absolute [Pa] (None: the profile gives none)
    reading_abs_pa: float | None
    #: the profile gives a gross weight (a weighed supply: its pressure needs the equation of state)
    weighed: bool
    #: the gas is sold liquefied (likewise)
    liquefied: bool
    #: the pressure step the supply's gauge resolves [Pa] (None: no gauge)
    step_pa: float | None


@dataclass(frozen=True)
class ProfileView:
    """What the first frame needs of a validated bench profile."""

    bench: str
    ambient_pa: float
    pressure_unit: str
    supplies: tuple[SupplyView, ...]

    def to_json(self) -> str:
        return json.dumps(asdict(self), allow_nan=False, separators=(",", ":"))

    @classmethod
    def from_json(cls, text: str) -> ProfileView | None:
        """The view a kept text describes, or None when it is not exactly a view."""
        try:
            d = json.loads(text)
            view = cls(_text(d["bench"]), _finite(d["ambient_pa"]), _text(d["pressure_unit"]),
                       tuple(SupplyView(_text(s["id"]), _finite(s["reading_abs_pa"], True), _flag(s["weighed"]),
                                        _flag(s["liquefied"]), _finite(s["step_pa"], True))
                             for s in d["supplies"]))
        except (ValueError, TypeError, KeyError, AttributeError):
            return None
        return view if view.ambient_pa > 0 else None


def _text(v: Any) -> str:
    if not isinstance(v, str) or not v:
        raise ValueError("not a name")
    return v


def _flag(v: Any) -> bool:
    if not isinstance(v, bool):
        raise TypeError("not a flag")
    return v


def _finite(v: Any, optional: bool = False) -> Any:
    if v is None and optional:
        return None
    if isinstance(v, bool) or not isinstance(v, (int, float)) or not math.isfinite(v) or v < 0:
        raise ValueError("not a finite number")
    return float(v)


def _key(text: str) -> str:
    return f"{hashlib.sha256(text.encode('utf-8')).hexdigest()} {__version__} {VIEW_FORMAT}"


def _what(path: str | Path) -> str:
    return f"{_WHAT} {Path(path).expanduser().resolve()}"


def kept_view(journal: Journal | None, path: str | Path) -> ProfileView | None:
    """The view kept for the profile file at ``path`` if its text is exactly the text validated
    when the view was kept (by this version of benchwarden), else None."""
    if journal is None:
        return None
    try:
        kept = journal.derived("", "", _what(path))
        if kept is None:
            return None
        text = read_profile_text(path)
    except (BenchwardenError, OSError):
        return None
    return ProfileView.from_json(kept[1]) if kept[0] == _key(text) else None


def keep_view(journal: Journal | None, path: str | Path, text: str, view: ProfileView) -> None:
    """Keep the view of a profile whose ``text`` (read from ``path``) has just been validated."""
    if journal is None:
        return
    try:
        journal.keep_derived("", "", _what(path), _key(text), view.to_json())
    except (BenchwardenError, OSError):
        pass  # a kept view only saves time at the next start
