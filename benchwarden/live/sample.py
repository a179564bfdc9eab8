"""A sample and what turns a transducer's number into SI, and the plausibility of a sample.

A **sample** is good (read exactly as declared and confirmed by the trend), bad (it did not read
as declared, or its time stamp cannot be right: the reason says which) or implausible (it read
fine but departs from the trend by more than the supply could physically change and the next
samples did not confirm it). Only good samples are the live state, plotted, fitted or alarmed on.
"""

from __future__ import annotations

import datetime as dt
import math
from collections.abc import Callable
from dataclasses import dataclass, replace

from benchwarden.errors import InputError
from benchwarden.units import parse_pressure, parse_temperature

__all__ = ["Sample", "Convert", "Converter", "to_pressure", "to_temperature", "Plausibility", "CONFIRM_SAMPLES"]


@dataclass(frozen=True)
class Sample:
    """One value read from a source: time, the value in SI (an absolute pressure [Pa] or a
    temperature [K]; None when it did not read), whether it is good, and why not."""

    at: dt.datetime
    value: float | None
    good: bool
    why: str = ""
    implausible: bool = False
    #: False when the source could not be reached or gave no answer (the watcher backs off)
    reached: bool = True

    @property
    def status(self) -> str:
        return "good" if self.good else "implausible" if self.implausible else "bad"


#: Turns a transducer's raw number into SI (raises InputError on nonsense).
Convert = Callable[[float], float]


def to_pressure(value: float, scale: float, offset: float, value_unit: str, ambient_pa: float) -> float:
    """``value × scale + offset`` in ``value_unit`` as an absolute pressure [Pa] (gauge unless the
    unit says absolute, as everywhere).

    >>> round(to_pressure(1500.0, 0.1, 0.0, "bar", 101325.0))   # 150 bar(g)
    15101325
    """
    _finite(value, scale, offset)
    return parse_pressure(f"{value * scale + offset!r} {value_unit}", ambient_pa, "transducer value").abs_at(ambient_pa)


def to_temperature(value: float, scale: float, offset: float, value_unit: str) -> float:
    """``value × scale + offset`` in ``value_unit`` (degC, degF, K) as a temperature [K].

    >>> to_temperature(20.0, 1.0, 0.0, "degC")
    293.15
    """
    _finite(value, scale, offset)
    return parse_temperature(f"{value * scale + offset!r} {value_unit}")


def _finite(value: float, scale: float, offset: float) -> None:
    if not all(math.isfinite(x) for x in (value, scale, offset)):
        raise InputError(f"transducer value {value!r} × {scale!r} + {offset!r} is not a finite number")


@dataclass(frozen=True)
class Converter:
    """A profile source's conversion: ``value × scale + offset`` in ``value_unit`` to SI, or in
    the unit written on the line (:meth:`in_unit`), which must be a pressure for a pressure
    source and a temperature for a temperature source."""

    quantity: str  # "pressure" | "temperature"
    scale: float
    offset: float
    value_unit: str
    ambient_pa: float

    def __call__(self, x: float) -> float:
        return self.in_unit(x, self.value_unit)

    def in_unit(self, x: float, unit: str) -> float:
        if self.quantity == "temperature":
            try:
                return to_temperature(x, self.scale, self.offset, unit)
            except InputError:
                raise InputError(f"unit {unit!r} on the line is not a temperature unit (degC, degF, K)") from None
        try:
            parse_pressure(f"1 {unit}")
        except InputError:
            raise InputError(f"unit {unit!r} on the line is not a pressure unit (bar, psi, kPa, ...)") from None
        return to_pressure(x, self.scale, self.offset, unit, self.ambient_pa)


#: A departing sample is confirmed by this many following samples that agree with it.
CONFIRM_SAMPLES = 2
#: At most this many samples are held for confirmation at the start of a run.
MAX_HELD = 50


class Plausibility:
    """Range and trend: a value outside ``lo``..``hi`` is bad; one that departs from the last
    good sample by more than ``band + rate × Δt + |p|·(1 − exp(−Δt/τ))`` (the noise allowed, a
    steady rate, and an exponential blow-down with time constant τ = 1/``relative_rate``: what
    the supply could physically change in Δt) is held until :data:`CONFIRM_SAMPLES` following
    samples agree with it (a real step: a new cylinder, a valve opened wide) — all good — or the
    trend resumes or a bad sample comes between — the held ones implausible. Returns the samples
    that are decided, in time order."""

    def __init__(self, lo: float, hi: float, band: float, rate_per_s: float, last: Sample | None = None,
                 relative_rate_per_s: float = 0.0) -> None:
        self.lo, self.hi, self.band, self.rate, self.rel = lo, hi, band, rate_per_s, relative_rate_per_s
        self.last = last
        self.pending: list[Sample] = []
        #: whether a sample of this run was confirmed yet: the first ones have no trend to be
        #: judged against (or only an old one), so they wait for the next to agree
        self.started = False
        self.chains: list[list[Sample]] = []

    def allowed(self, value: float, dt_s: float) -> float:
        """The largest change from ``value`` the source could make in ``dt_s``."""
        return self.band + self.rate * dt_s + abs(value) * -math.expm1(-self.rel * dt_s)

    def _near(self, a: Sample, b: Sample) -> bool:
        assert a.value is not None and b.value is not None
        return abs(b.value - a.value) <= self.allowed(a.value, abs((b.at - a.at).total_seconds()))

    def __call__(self, s: Sample) -> list[Sample]:
        if s.good and s.value is not None and not self.lo <= s.value <= self.hi:
            s = replace(s, good=False, why=f"outside the transducer's range ({s.value:.6g} in SI units; "
                                           f"{self.lo:.6g} to {self.hi:.6g} allowed)")
        if s.value is None or not s.good:
            # a sample that did not read confirms nothing: what was held stays unconfirmed
            return self._implausible() + [s] if self.pending and self.started else [s]
        if self.last is None or not self.started:
            return self._start(s)
        if not self.pending:
            if self._near(self.last, s):
                self.last = s
                return [s]
            self.pending = [s]
            return []
        if self._near(self.last, s):  # the trend resumed: what departed was not real
            out = self._implausible() + [s]
            self.last = s
            return out
        if self._near(self.pending[-1], s):
            self.pending.append(s)
            if len(self.pending) > CONFIRM_SAMPLES:
                out, self.pending = self.pending, []
                self.last = out[-1]
                return out
            return []
        out = self._implausible()
        self.pending = [s]
        return out

    def _start(self, s: Sample) -> list[Sample]:
        """The first samples of a run have no trend to be judged against (or only an old one):
        they gather in chains of samples that agree with each other; the first chain that
        :data:`CONFIRM_SAMPLES` samples join is confirmed, the samples of the others are
        implausible."""
        chain = next((c for c in self.chains if self._near(c[-1], s)), None)
        if chain is None:
            self.chains.append([s])
            if sum(len(c) for c in self.chains) <= MAX_HELD:
                return []
            self.pending = self.chains.pop(0)  # a source that never agrees with itself: the oldest go
            return self._implausible()
        chain.append(s)
        if len(chain) <= CONFIRM_SAMPLES:
            return []
        self.pending = [x for c in self.chains if c is not chain for x in c]
        out = self._implausible() + chain
        self.chains = []
        self.last, self.started = chain[-1], True
        return sorted(out, key=lambda x: x.at)

    def _implausible(self, why: str = "") -> list[Sample]:
        last = self.last
        if why:
            pass
        elif last is not None and last.value is not None and self.started:
            why = (f"departs from the trend ({last.value:.6g} at {last.at:%H:%M:%S}) by more than the supply could "
                   "change, not confirmed by the next samples")
        else:
            why = "not confirmed by the next samples (they disagree by more than the supply could change)"
        out = [replace(x, good=False, implausible=True, why=why) for x in self.pending]
        self.pending = []
        return out

    def flush(self) -> list[Sample]:
        """The samples still held (the watch stops): implausible, never confirmed."""
        self.pending += [x for c in self.chains for x in c]
        self.chains = []
        why = "not confirmed: the watch stopped before the next samples came"
        return sorted(self._implausible(why), key=lambda x: x.at) if self.pending else []
