"""The sections of a bench profile as pydantic models (bench, ambient, supplies with their gauge
and sources, regulators, draws with their orifice or valve, room, session, checklist, display,
lab); :mod:`benchwarden.storage.profile` assembles them into a :class:`Profile` and loads files.
Each field's attribute docstring is its documentation (docs/profile.md).
"""

from __future__ import annotations

import datetime as dt
import re
from typing import Annotated, Literal

from pydantic import (
    AfterValidator,
    Field,
    field_validator,
    model_validator,
)

from benchwarden import units as u
from benchwarden.errors import PA_GAUGE, InputError, RangeError
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
    TemperatureQ,
    TemperatureSource,
    VentilationQ,
    VoltageQ,
    VolumeQ,
)
from benchwarden.storage.profile_fields import ProfileModel as _Model
from benchwarden.storage.profile_fields import positive as _positive
from benchwarden.units.limits import EARLIEST_RECORD, in_range, within_dates

# ----------------------------------------------------------------------------- sections


class Located(InputError):
    """A check across sections, with the key it is about (for the line number)."""

    def __init__(self, loc: tuple[str | int, ...], msg: str | InputError) -> None:
        super().__init__(str(msg))
        self.loc = loc
        #: the value's own error, where it carries data (a renderer words it in the display unit)
        self.inner = msg if isinstance(msg, InputError) else None


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
            raise RangeError(what="water_volume", value=self.water_volume, hi=5.0, unit="m³", where=f"supply {self.id}",
                             why="a cylinder bundle at most; check the unit")
        in_range("cylinder volume", self.water_volume, f"water_volume of supply {self.id}")
        if self.leak_target is not None:
            in_range("flow", self.leak_target.value, f"leak_target of supply {self.id}")
        if (self.gross is None) != (self.tare is None):
            raise InputError(f"supply {self.id}: gross and tare go together")
        if self.gross is not None and self.tare is not None and self.gross < self.tare:
            raise InputError(f"supply {self.id}: gross weight is below the tare weight")
        if self.reserve.typed_as == "gauge" and self.reserve.typed_pa < 0:
            raise Located(("reserve",), RangeError(what="reserve", value=self.reserve.typed_pa, typed=self.reserve.text,
                                                   lo=0.0, unit=PA_GAUGE, where=f"supply {self.id}",
                                                   why="a cylinder is never drawn below the room's pressure"))
        if self.reading is None and self.gross is None:
            raise InputError(f"supply {self.id}: give a reading (or gross and tare weights)")
        if self.leak_target is not None and self.leak_target.kind == "actual":
            raise Located(("leak_target",), f"supply {self.id}: leak_target {self.leak_target.text!r} is an actual "
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
