"""Bench profiles: TOML files describing one bench, validated by pydantic v2 models.

Quantities are written with their units as strings (``"50 L"``, ``"180 bar"``, ``"2 slpm"``)
and parsed by :mod:`benchwarden.units` while loading, so a wrong unit is an error naming the file,
the line and the key. Every model forbids unknown keys. See ``docs/profile.md``.
"""

from __future__ import annotations

import re
import tomllib
from pathlib import Path
from typing import Any

from pydantic import (
    Field,
    ValidationError,
    model_validator,
)

from benchwarden import units as u
from benchwarden.errors import PA_GAUGE, BenchwardenError, InputError, ProfileError, RangeError
from benchwarden.storage.profile_fields import ProfileModel as _Model
from benchwarden.storage.profile_fields import (
    SourceBase,
    shared_port_conflict,
)

# ----------------------------------------------------------------------------- sections
from benchwarden.storage.profile_sections import (  # noqa: F401 - re-exported: the profile's sections
    Ambient,
    Bench,
    ChecklistConfig,
    DisplaySettings,
    Draw,
    ExposedPart,
    Gauge,
    LabSection,
    Located,
    Orifice,
    Regulator,
    Room,
    Session,
    Supply,
    Valve,
    _record_date,
)
from benchwarden.storage.profile_view import (  # noqa: F401 - re-exported: the profile's file
    DEMO_NAME,
    MAX_PROFILE_BYTES,
    demo_profile_path,
    demo_profile_text,
    read_profile_text,
    read_text_file,
)


class Profile(_Model):
    bench: Bench
    ambient: Ambient = Field(default_factory=Ambient)
    supplies: list[Supply] = Field(min_length=1, max_length=50)
    regulators: list[Regulator] = Field(default_factory=list, max_length=100)
    draws: list[Draw] = Field(default_factory=list, max_length=200)
    room: Room | None = None
    session: Session
    checklist: ChecklistConfig = Field(default_factory=ChecklistConfig)
    display: DisplaySettings = Field(default_factory=DisplaySettings)
    lab: LabSection | None = None
    """Ships this bench's record to a lab database (``lab push``; ``watch`` and the app push too)."""

    @model_validator(mode="after")
    def _cross(self) -> Profile:
        amb = self.ambient.pressure_pa
        ids: set[str] = set()
        every: list[tuple[str, str, list[str]]] = [("supply", "supplies", [x.id for x in self.supplies]),
                                                    ("regulator", "regulators", [x.id for x in self.regulators]),
                                                    ("draw", "draws", [x.id for x in self.draws])]
        for kind, section, names in every:
            for i, name in enumerate(names):
                if name in ids:
                    raise Located((section, i, "id"), f"{kind} id {name!r} is used twice")
                ids.add(name)
        sup = {s.id: s for s in self.supplies}
        regs = {r.id: r for r in self.regulators}
        for i, s in enumerate(self.supplies):
            service = s.service_pressure.abs_at(amb)
            test = s.test_pressure.abs_at(amb) if s.test_pressure else None
            if test is not None and test < service:
                raise Located(("supplies", i, "test_pressure"),
                               f"supply {s.id}: test pressure is below the service pressure")
            if s.reserve.abs_at(amb) >= service:
                raise Located(("supplies", i, "reserve"), f"supply {s.id}: reserve {s.reserve.text} is at or above "
                                                           f"the service pressure {s.service_pressure.text}")
            if s.reading is not None:
                p = s.reading.abs_at(amb)
                if test is not None and p > test:
                    raise Located(("supplies", i, "reading"),
                                   f"supply {s.id}: reading {s.reading.text} is above the cylinder's test pressure "
                                   f"{s.test_pressure.text if s.test_pressure else ''}; check the gauge and the unit")
                if s.gauge is not None and p > s.gauge.range.abs_at(amb):
                    raise Located(("supplies", i, "reading"), f"supply {s.id}: reading {s.reading.text} is above "
                                                               f"the gauge range {s.gauge.range.text}")
        clash = shared_port_conflict(self._source_sections())
        if clash is not None:
            raise Located(("supplies",), clash)
        for i, r in enumerate(self.regulators):
            if r.supply not in sup:
                raise Located(("regulators", i, "supply"), f"regulator {r.id}: supply {r.supply!r} does not exist "
                                                            f"(known: {', '.join(sup)})")
            if len(r.effects) != r.stages:
                raise Located(("regulators", i, "supply_pressure_effect"),
                               f"regulator {r.id}: supply_pressure_effect needs {r.stages} value(s), one per stage")
            sp, lo, hi = (x.abs_at(amb) for x in (r.set_point, r.outlet_min, r.outlet_max))
            if not lo <= sp <= hi:
                raise Located(("regulators", i, "set_point"), RangeError(
                    what="set point", value=sp - amb, typed=r.set_point.text, lo=lo - amb, hi=hi - amb, unit=PA_GAUGE,
                    where=f"regulator {r.id}", why="the regulator's outlet range"))
        for i, d in enumerate(self.draws):
            if d.regulator not in regs:
                raise Located(("draws", i, "regulator"), f"draw {d.id}: regulator {d.regulator!r} does not exist "
                                                          f"(known: {', '.join(regs) or 'none'})")
            if d.per_shot is not None and d.repetition_rate is None and self.session.repetition_rate is None:
                raise Located(("draws", i, "per_shot"),
                               f"draw {d.id}: per_shot needs a repetition_rate (on the draw or the session)")
        return self

    def _source_sections(self) -> list[tuple[str, SourceBase]]:
        """Every live source with the name of its section."""
        out: list[tuple[str, SourceBase]] = []
        for s in self.supplies:
            out += [(f"[supplies.{k}] of supply {s.id}", getattr(s, k)) for k in ("source", "temperature_source")
                    if getattr(s, k) is not None]
        if self.room is not None and self.room.temperature_source is not None:
            out.append(("[room.temperature_source]", self.room.temperature_source))
        return out

    @property
    def ambient_pa(self) -> float:
        return self.ambient.pressure_pa

    def supply(self, sid: str) -> Supply:
        return next(s for s in self.supplies if s.id == sid)

    def regulator(self, rid: str) -> Regulator:
        return next(r for r in self.regulators if r.id == rid)


# ----------------------------------------------------------------------------- loading


def _line_of(text: str, loc: tuple[Any, ...]) -> int | None:
    """Best-effort line number (1-based) of a pydantic error location in TOML source."""
    lines = text.splitlines()
    start, end = 0, len(lines)
    path: list[str] = []
    for part in loc:
        if isinstance(part, int):
            header = re.compile(r"^\s*\[\[\s*" + re.escape(".".join(path)) + r"\s*\]\]")
            hits = [i for i in range(start, end) if header.match(lines[i])]
            if part < len(hits):
                start = hits[part]
                end = hits[part + 1] if part + 1 < len(hits) else end
                # a following [[table]] of another name ends the block
                for j in range(start + 1, end):
                    if re.match(r"^\s*\[", lines[j]) and not re.match(
                            r"^\s*\[+\s*" + re.escape(".".join(path)) + r"\.", lines[j]):
                        end = j
                        break
            continue
        path.append(str(part))
        key = re.compile(r"^\s*" + re.escape(str(part)) + r"\s*=")
        table = re.compile(r"^\s*\[+\s*" + re.escape(".".join(path)) + r"\s*\]+")
        found = None
        for i in range(start, end):
            if key.match(lines[i]) or table.match(lines[i]):
                found = i
                break
        if found is None:
            return start + 1 if start else None
        start = found
    return start + 1


def _fmt_loc(loc: tuple[Any, ...]) -> str:
    out = ""
    for p in loc:
        out += f"[{p}]" if isinstance(p, int) else (("." if out else "") + str(p))
    return out


def parse_profile(text: str, source: str = "<profile>") -> Profile:
    """Parse and validate a bench profile from TOML text; errors name source, line and key."""
    try:
        data = tomllib.loads(text)
    except tomllib.TOMLDecodeError as exc:
        raise ProfileError(f"{source}: not valid TOML: {exc}") from None
    except RecursionError:
        raise ProfileError(f"{source}: nesting too deep") from None
    try:
        return Profile.model_validate(data)
    except ValidationError as exc:
        err = exc.errors()[0]
        loc = tuple(p for p in err["loc"] if not (isinstance(p, str) and p.startswith("function-")))
        cause = (err.get("ctx") or {}).get("error")
        if isinstance(cause, Located):
            loc = loc + cause.loc  # a check across sections names the key it is about
            cause = cause.inner or cause
        msg = str(err.get("msg", "invalid")).removeprefix("Value error, ")
        if err["type"] == "extra_forbidden":
            msg = "unknown key (see docs/profile.md for the keys allowed here)"
        elif err["type"] == "missing":
            msg = "required key is missing"
        line = _line_of(text, loc)
        where = f"{source}:{line}" if line else source
        more = f" (and {exc.error_count() - 1} more problem(s))" if exc.error_count() > 1 else ""
        key = _fmt_loc(loc)
        head = f"{where}: {key + ': ' if key else ''}"
        inner = cause if isinstance(cause, BenchwardenError) and (isinstance(cause, RangeError) or cause.quantities) else None
        raise ProfileError(f"{head}{msg}{more}", inner=inner, prefix=head, suffix=more) from None
    except (InputError, RecursionError) as exc:
        raise ProfileError(f"{source}: {exc}", inner=exc if isinstance(exc, RangeError) else None,
                           prefix=f"{source}: ") from None


def load_profile(path: str | Path) -> Profile:
    """Load a bench profile file."""
    return parse_profile(read_profile_text(path), str(path))


def with_reading(prof: Profile, supply_id: str, pressure: u.Pressure, temperature_k: float) -> Profile:
    """A copy of the profile with a new reading for one supply (no other change)."""
    if supply_id not in {s.id for s in prof.supplies}:
        raise InputError(f"unknown supply {supply_id!r}; known: {', '.join(s.id for s in prof.supplies)}")
    supplies = [s.model_copy(update={"reading": pressure, "reading_temperature": temperature_k})
                if s.id == supply_id else s for s in prof.supplies]
    return prof.model_copy(update={"supplies": supplies})


def with_weight(prof: Profile, supply_id: str, gross_kg: float) -> Profile:
    """A copy of the profile with a new gross weight for one supply (a liquefied gas's reading)."""
    if supply_id not in {s.id for s in prof.supplies}:
        raise InputError(f"unknown supply {supply_id!r}; known: {', '.join(s.id for s in prof.supplies)}")
    supplies = [s.model_copy(update={"gross": gross_kg}) if s.id == supply_id else s for s in prof.supplies]
    return prof.model_copy(update={"supplies": supplies})
