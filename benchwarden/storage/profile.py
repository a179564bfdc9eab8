"""Bench profiles: TOML files describing one bench, validated by pydantic v2 models.

Quantities are written with their units as strings (``"50 L"``, ``"180 bar"``, ``"2 slpm"``)
and parsed by :mod:`benchwarden.units` while loading, so a wrong unit is an error naming the file,
the line and the key. Every model forbids unknown keys. See ``docs/profile.md``.
"""

from __future__ import annotations

import datetime as dt
import os
import re
import stat
import tomllib
from importlib import resources
from pathlib import Path
from typing import Annotated, Any, Literal

from pydantic import (
    AfterValidator,
    Field,
    ValidationError,
    field_validator,
    model_validator,
)

from benchwarden import units as u
from benchwarden.errors import InputError, ProfileError
from benchwarden.storage.profile_fields import (
    DurationQ,
    FlowQ,
    FrequencyQ,
    GasQ,
    Id,
    LengthQ,
    MassQ,
    PressureQ,
    Source,
    SourceBase,
    TemperatureQ,
    TemperatureSource,
    VentilationQ,
    VoltageQ,
    VolumeQ,
    shared_port_conflict,
)
from benchwarden.storage.profile_fields import ProfileModel as _Model
from benchwarden.storage.profile_fields import positive as _positive
from benchwarden.units.limits import EARLIEST_RECORD, in_range, within_dates

# ----------------------------------------------------------------------------- sections


def _record_date(v: dt.date) -> dt.date:
    """A due date in a profile: from 1990 to 30 years ahead (a slip of the year, beyond)."""
    return within_dates(v, "date", EARLIEST_RECORD, dt.date(dt.date.today().year + 30, 12, 31))


RecordDate = Annotated[dt.date, AfterValidator(_record_date)]


class Bench(_Model):
    name: str = Field(min_length=1, max_length=200)
    """Name shown on every screen and on the checklist."""
    notes: str = Field(default="", max_length=4000)
    """Free text (who owns the bench, where it stands)."""


class Ambient(_Model):
    temperature: TemperatureQ = 293.15
    """Room temperature; also the gas temperature where a reading gives none."""
    pressure: PressureQ | None = None
    """Atmospheric pressure (absolute; any unit). Default 101.325 kPa."""
    altitude: LengthQ | None = None
    """Altitude of the lab; gives the atmospheric pressure by ISO 2533 when no pressure is set."""
    hot_day: TemperatureQ = 313.15
    """Hottest the cylinders may get where they stand (for rating checks). Default 40 °C."""

    @model_validator(mode="after")
    def _one_of(self) -> Ambient:
        if self.pressure is not None and self.altitude is not None:
            raise InputError("give either ambient pressure or altitude, not both")
        return self

    @property
    def pressure_pa(self) -> float:
        if self.pressure is not None:
            return self.pressure.typed_pa
        if self.altitude is not None:
            return u.ambient_from_altitude(self.altitude)
        return u.ATM_PA


class Gauge(_Model):
    range: PressureQ
    """Full-scale value of the gauge (e.g. "315 bar")."""
    accuracy_class: float = Field(gt=0, le=5)
    """Accuracy class (EN 837-1 / ASME B40.100 grade): maximum error in % of span."""
    resolution: PressureQ | None = None
    """Smallest division you can read (default: half the class error)."""
    repeatability: PressureQ | None = None
    """The maker's repeatability (± limit), where given: used for the difference of two readings
    in a hold test (the gauge's systematic error cancels there); without it the two readings are
    taken as uncorrelated, each with the full class error."""


class Supply(_Model):
    id: Id
    gas: GasQ
    water_volume: VolumeQ
    """Internal (water) volume of the cylinder."""
    service_pressure: PressureQ
    """Rated working pressure at 15 °C (stamped on the cylinder)."""
    test_pressure: PressureQ | None = None
    """Hydraulic test pressure (stamped); readings above it are refused."""
    reading: PressureQ | None = None
    """Last gauge reading of the cylinder."""
    reading_temperature: TemperatureQ | None = None
    """Temperature of the cylinder at that reading (default: ambient)."""
    reserve: PressureQ
    """Pressure at which the supply is closed or swapped."""
    gross: MassQ | None = None
    """Gross weight (liquefied gases: CO2, SF6)."""
    tare: MassQ | None = None
    """Tare weight stamped on the cylinder."""
    fill_price: float | None = Field(default=None, ge=0, le=1e7, allow_inf_nan=False)
    """Price of one full cylinder, for gas cost per hour."""
    currency: str = Field(default="EUR", max_length=8)
    gauge: Gauge | None = None
    """The gauge this supply is read with (for uncertainty bands)."""
    lead_time: DurationQ | None = None
    """How long the supplier takes to deliver a new cylinder, e.g. "10 d" (for the order-by date)."""
    spares: int = Field(default=0, ge=0, le=100)
    """Full spare cylinders of this gas on hand."""
    retest_due: RecordDate | None = None
    """Periodic-inspection (retest) due date of the cylinder in use (the interval is the maker's or
    the local rule)."""
    source: Source | None = None
    """A transducer that reads this supply's pressure live."""
    temperature_source: TemperatureSource | None = None
    """A sensor that reads this cylinder's temperature live (else the room's, else ambient)."""
    location: Literal["room", "outside"] = "room"
    """Where the cylinder stands: ``"room"`` (default) or ``"outside"`` (a ventilated cage or store
    outside the room): a cylinder outside takes no part in a sudden-release case; its draws still
    vent where they vent."""
    leak_target: FlowQ | None = None
    """The leak rate that matters on this supply, e.g. "5 sccm": the leak watch and the hold tests
    of idle drops resolve against it (default: 1 % of the contents per day, at least 1 sccm)."""

    @model_validator(mode="after")
    def _check(self) -> Supply:
        _positive(self.water_volume, f"water_volume of supply {self.id}")
        if self.water_volume > 5.0:
            raise InputError(f"supply {self.id}: water_volume {self.water_volume:g} m³ is larger than a cylinder "
                             "bundle (5 m³); check the unit")
        in_range("cylinder volume", self.water_volume, f"water_volume of supply {self.id}")
        if self.leak_target is not None:
            in_range("flow", self.leak_target.value, f"leak_target of supply {self.id}")
        if (self.gross is None) != (self.tare is None):
            raise InputError(f"supply {self.id}: gross and tare go together")
        if self.gross is not None and self.tare is not None and self.gross < self.tare:
            raise InputError(f"supply {self.id}: gross weight is below the tare weight")
        if self.reserve.typed_as == "gauge" and self.reserve.typed_pa < 0:
            raise _Located(("reserve",), f"supply {self.id}: reserve {self.reserve.text} is out of range: at least "
                                         "0 bar(g) (a cylinder is never drawn below the room's pressure)")
        if self.reading is None and self.gross is None:
            raise InputError(f"supply {self.id}: give a reading (or gross and tare weights)")
        if self.leak_target is not None and self.leak_target.kind == "actual":
            raise _Located(("leak_target",), f"supply {self.id}: leak_target {self.leak_target.text!r} is an actual "
                                             "volume flow; give a standard or mass flow (sccm, slpm, g/min)")
        return self


class Regulator(_Model):
    id: Id
    supply: Id
    """Id of the supply this regulator sits on."""
    stages: Literal[1, 2] = 1
    inlet_rating: PressureQ
    """Highest inlet pressure the regulator is rated for."""
    outlet_min: PressureQ = Field(default_factory=lambda: u.parse_pressure("0 bar"))
    outlet_max: PressureQ
    """Top of the outlet range (the outlet gauge/spring range)."""
    set_point: PressureQ
    """Outlet pressure as set at the supply's current reading."""
    service_due: RecordDate | None = None
    """When the regulator is due for service (the maker's interval or the lab's rule)."""
    supply_pressure_effect: list[Annotated[float, Field(ge=0, le=0.5, allow_inf_nan=False)]] | Annotated[
        float, Field(ge=0, le=0.5, allow_inf_nan=False)] = 0.01
    """Outlet rise per unit inlet fall, per stage (e.g. 0.01 = 1 %). Two stages: a list of two."""
    relief_setting: PressureQ | None = None
    """Set pressure of the outlet relief valve, if any."""
    downstream_rating: PressureQ | None = None
    """Working pressure of what the outlet feeds (lines, gap housings)."""

    @property
    def effects(self) -> tuple[float, ...]:
        e = self.supply_pressure_effect
        return tuple(e) if isinstance(e, list) else (e,) * self.stages


class ExposedPart(_Model):
    name: str = Field(min_length=1, max_length=100)
    clearance: LengthQ
    """Shortest air distance to ground or to another potential."""
    rating: VoltageQ | None = None
    """Voltage rating of the part (cable, feedthrough, capacitor)."""

    @model_validator(mode="after")
    def _check(self) -> ExposedPart:
        _positive(self.clearance, f"clearance of {self.name}")
        if self.rating is not None:
            _positive(self.rating, f"rating of {self.name}")
        return self


class Orifice(_Model):
    diameter: LengthQ
    cd: float = Field(default=0.62, gt=0, le=1)
    """Discharge coefficient (0.61–0.62 for a sharp-edged orifice)."""
    downstream: PressureQ = Field(default_factory=lambda: u.parse_pressure("0 bar"))
    """Pressure the orifice discharges into (default atmosphere)."""

    @model_validator(mode="after")
    def _check(self) -> Orifice:
        in_range("orifice diameter", self.diameter)
        return self


class Valve(_Model):
    kv: float | None = Field(default=None, gt=0, le=1e4, allow_inf_nan=False)
    """Flow coefficient Kv [m³/h] at the opening used."""
    cv: float | None = Field(default=None, gt=0, le=1e4, allow_inf_nan=False)
    """Or Cv (US); Kv = Cv / 1.156."""
    xt: float = Field(default=0.7, gt=0, le=1)
    downstream: PressureQ = Field(default_factory=lambda: u.parse_pressure("0 bar"))

    @model_validator(mode="after")
    def _one(self) -> Valve:
        if (self.kv is None) == (self.cv is None):
            raise InputError("give the valve's kv or its cv (one of them)")
        return self

    @property
    def kv_value(self) -> float:
        return self.kv if self.kv is not None else float(self.cv or 0.0) / 1.156


class Draw(_Model):
    id: Id
    kind: Literal["gap", "channel", "purge", "fixed"]
    regulator: Id
    vents_to_room: bool = True
    """Whether the gas ends up in the room (it adds to the room oxygen figures)."""
    flow: FlowQ | None = None
    """A standard or mass flow ("2 slpm", "40 scfh", "5 g/min")."""
    per_shot: VolumeQ | None = None
    """Gas volume replaced per shot, at the draw's pressure (× repetition rate)."""
    repetition_rate: FrequencyQ | None = None
    """Shots per second for this draw (default: the session's)."""
    orifice: Orifice | None = None
    valve: Valve | None = None
    spacing: LengthQ | None = None
    """Gap spacing (kind = "gap")."""
    electrodes: str = Field(default="", max_length=200)
    exposed: list[ExposedPart] = Field(default_factory=list)
    """Exposed high-voltage parts near this gap."""

    @model_validator(mode="after")
    def _check(self) -> Draw:
        given = [k for k in ("flow", "per_shot", "orifice", "valve") if getattr(self, k) is not None]
        if len(given) != 1:
            raise InputError(f"draw {self.id}: give exactly one of flow, per_shot, orifice, valve (got {given or 'none'})")
        if self.flow is not None and self.flow.kind == "actual":
            raise InputError(f"draw {self.id}: flow {self.flow.text!r} is an actual volume flow; "
                             "use a standard flow (slpm, sccm, Nm3/h) or a mass flow")
        if self.kind == "gap":
            if self.spacing is None:
                raise InputError(f"gap {self.id}: spacing is required")
            _positive(self.spacing, f"spacing of gap {self.id}")
            in_range("gap spacing", self.spacing, f"spacing of gap {self.id}")
        elif self.spacing is not None or self.exposed:
            raise InputError(f"draw {self.id}: spacing and exposed parts belong to kind = \"gap\"")
        if self.per_shot is not None:
            _positive(self.per_shot, f"per_shot of draw {self.id}")
            in_range("per-shot volume", self.per_shot, f"per_shot of draw {self.id}")
        if self.repetition_rate is not None:
            in_range("repetition rate", self.repetition_rate, f"repetition_rate of draw {self.id}")
        if self.flow is not None:
            in_range("flow", self.flow.value, f"flow of draw {self.id}")
        return self


class Room(_Model):
    volume: VolumeQ
    ventilation: VentilationQ | None = None
    """Air changes per hour ("2/h") or an extract flow ("120 m3/h")."""
    ventilation_kind: Literal["exhaust", "supply"] = "exhaust"
    oxygen_monitor: bool = False
    """Whether a fixed oxygen monitor with alarm is installed."""
    oxygen_percent: float = Field(default=20.95, gt=0, le=100)
    temperature_source: TemperatureSource | None = None
    """A sensor that reads the room's temperature live (for supplies without their own)."""

    @model_validator(mode="after")
    def _check(self) -> Room:
        _positive(self.volume, "room volume")
        in_range("room volume", self.volume)
        return self


class Session(_Model):
    duration: DurationQ
    """Planned length of a session."""
    alert_before: DurationQ = 1800.0
    """Alert (bell and banner) when a supply is this close to its reserve (default 30 min)."""
    repetition_rate: FrequencyQ | None = None
    """Shots per second (for per-shot draws and shot counts)."""
    start: str | None = Field(default=None, pattern=r"^([01]?\d|2[0-3]):[0-5]\d$")
    """Planned start time of day, HH:MM (default: now)."""

    @model_validator(mode="after")
    def _check(self) -> Session:
        _positive(self.duration, "session duration")
        in_range("session duration", self.duration)
        if self.repetition_rate is not None:
            in_range("repetition rate", self.repetition_rate, "session repetition_rate")
        return self


class ChecklistConfig(_Model):
    items: str | None = None
    """A TOML file of the lab's own checklist items, relative to the profile."""
    operator: str | None = Field(default=None, max_length=100)
    second_person: bool = False
    """Whether the lab requires a second person's signature."""


class DisplaySettings(_Model):
    pressure_unit: Literal["bar", "psi", "kPa", "MPa"] = "bar"
    """Unit pressures are shown in (gauge marked (g) or psig, absolute (a) or psia); JSON stays SI."""


class LabSection(_Model):
    url: str = Field(max_length=500)
    """The lab database, a PostgreSQL connection URL *without* a password
    (``postgresql://bw_bench_bench_2@lab-db.example/benchwarden?sslmode=verify-full``); the password
    or certificate comes from PostgreSQL's usual sources (PGPASSWORD, ~/.pgpass, a service file)."""
    bench_id: str = Field(pattern=r"^[A-Za-z0-9][A-Za-z0-9_-]{0,39}$")
    """This bench's id in the lab (letters, digits, '-' and '_'; at most 40)."""

    @field_validator("url")
    @classmethod
    def _no_password(cls, v: str) -> str:
        if not re.match(r"^postgres(ql)?://", v):
            raise ValueError("the lab url must be a PostgreSQL URL (postgresql://user@host/database)")
        if re.match(r"^postgres(ql)?://[^/@]*:[^/@]*@", v) or re.search(r"[?&]password=", v):
            raise ValueError("the lab url must not hold a password: use PGPASSWORD, ~/.pgpass or a service file")
        return v


class _Located(InputError):
    """A check across sections, with the key it is about (for the line number)."""

    def __init__(self, loc: tuple[str | int, ...], msg: str) -> None:
        super().__init__(msg)
        self.loc = loc


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
                    raise _Located((section, i, "id"), f"{kind} id {name!r} is used twice")
                ids.add(name)
        sup = {s.id: s for s in self.supplies}
        regs = {r.id: r for r in self.regulators}
        for i, s in enumerate(self.supplies):
            service = s.service_pressure.abs_at(amb)
            test = s.test_pressure.abs_at(amb) if s.test_pressure else None
            if test is not None and test < service:
                raise _Located(("supplies", i, "test_pressure"),
                               f"supply {s.id}: test pressure is below the service pressure")
            if s.reserve.abs_at(amb) >= service:
                raise _Located(("supplies", i, "reserve"), f"supply {s.id}: reserve {s.reserve.text} is at or above "
                                                           f"the service pressure {s.service_pressure.text}")
            if s.reading is not None:
                p = s.reading.abs_at(amb)
                if test is not None and p > test:
                    raise _Located(("supplies", i, "reading"),
                                   f"supply {s.id}: reading {s.reading.text} is above the cylinder's test pressure "
                                   f"{s.test_pressure.text if s.test_pressure else ''}; check the gauge and the unit")
                if s.gauge is not None and p > s.gauge.range.abs_at(amb):
                    raise _Located(("supplies", i, "reading"), f"supply {s.id}: reading {s.reading.text} is above "
                                                               f"the gauge range {s.gauge.range.text}")
        clash = shared_port_conflict(self._source_sections())
        if clash is not None:
            raise _Located(("supplies",), clash)
        for i, r in enumerate(self.regulators):
            if r.supply not in sup:
                raise _Located(("regulators", i, "supply"), f"regulator {r.id}: supply {r.supply!r} does not exist "
                                                            f"(known: {', '.join(sup)})")
            if len(r.effects) != r.stages:
                raise _Located(("regulators", i, "supply_pressure_effect"),
                               f"regulator {r.id}: supply_pressure_effect needs {r.stages} value(s), one per stage")
            sp, lo, hi = (x.abs_at(amb) for x in (r.set_point, r.outlet_min, r.outlet_max))
            if not lo <= sp <= hi:
                raise _Located(("regulators", i, "set_point"),
                               f"regulator {r.id}: set point {r.set_point.text} is outside the outlet range "
                               f"{r.outlet_min.text} to {r.outlet_max.text}")
        for i, d in enumerate(self.draws):
            if d.regulator not in regs:
                raise _Located(("draws", i, "regulator"), f"draw {d.id}: regulator {d.regulator!r} does not exist "
                                                          f"(known: {', '.join(regs) or 'none'})")
            if d.per_shot is not None and d.repetition_rate is None and self.session.repetition_rate is None:
                raise _Located(("draws", i, "per_shot"),
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
        if isinstance(cause, _Located):
            loc = loc + cause.loc  # a check across sections names the key it is about
        msg = str(err.get("msg", "invalid")).removeprefix("Value error, ")
        if err["type"] == "extra_forbidden":
            msg = "unknown key (see docs/profile.md for the keys allowed here)"
        elif err["type"] == "missing":
            msg = "required key is missing"
        line = _line_of(text, loc)
        where = f"{source}:{line}" if line else source
        more = f" (and {exc.error_count() - 1} more problem(s))" if exc.error_count() > 1 else ""
        key = _fmt_loc(loc)
        raise ProfileError(f"{where}: {key + ': ' if key else ''}{msg}{more}") from None
    except (InputError, RecursionError) as exc:
        raise ProfileError(f"{source}: {exc}") from None


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


def load_profile(path: str | Path) -> Profile:
    """Load a bench profile file."""
    return parse_profile(read_text_file(path, "bench profile (.toml)", MAX_PROFILE_BYTES), str(path))


#: The largest bench profile or file a profile names (a checklist's items) read [bytes].
MAX_PROFILE_BYTES = 2_000_000
DEMO_NAME = "demo-teaching-bench.toml"


def demo_profile_text() -> str:
    """The bundled demo bench profile (shipped inside the package)."""
    return resources.files("benchwarden.data").joinpath(DEMO_NAME).read_text(encoding="utf-8")


def demo_profile_path() -> Path:
    return Path(str(resources.files("benchwarden.data").joinpath(DEMO_NAME)))


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
