"""The room's rules (part of :mod:`benchwarden.workflows.findings`, which re-exports them):
every cylinder kept in the room judged for every hazard, the worst per hazard leading, each
finding naming its own ``supply``; the draws that vent into the room judged for oxygen, for
the gas's own toxicity (8-hour limit: a continuous exposure) and for flammability.

Severities:

* ``room-release`` (oxygen deficiency after the worst cylinder's full release): below 16 % O2
  a stop whatever is fitted (a monitor detects, it does not prevent); below 18 % a stop without
  an oxygen monitor, a warning with one; below 19.5 % a warning, an attention with a monitor.
* ``room-enrichment`` (an oxidiser's release above 23.5 % O2): a stop.
* ``room-toxic`` (a release, against short-term criteria): above the IDLH or incapacitating a
  stop, above the STEL a warning; never judged against the 8-hour TWA.
* ``room-flammable``, ``room-vented-flammable``: above 25 % of the LFL a stop (common practice).
* ``room-vented-toxic``: above the STEL a stop, above the TWA a warning.
* ``room-pooling``: a gas 1.3× or more as dense as air, its full release held in the lowest
  metre of a room taken as 2.5 m high (a screening assumption of benchwarden): floor-level oxygen
  below 16 % a stop, below 19.5 % a warning, else an attention.
* ``gap-fuel``: a flammable gas fed to a spark gap, a warning.
* ``segregation``: an oxidiser and a flammable gas kept in one room, a warning (29 CFR
  1910.253(b)(4)(iii): 20 ft (6 m) apart or a barrier 5 ft (1.5 m) high of ½-hour fire rating,
  from memory).
"""

from __future__ import annotations

from collections.abc import Mapping
from typing import TYPE_CHECKING, Literal

from benchwarden.core import hazards as hz
from benchwarden.core import room as rm
from benchwarden.storage.profile import Profile
from benchwarden.workflows.model import DrawPlan, RoomPlan

if TYPE_CHECKING:  # pragma: no cover
    from benchwarden.workflows.findings import Finding

Severity = Literal["stop", "warning", "attention", "info"]
Value = float | int | str | bool | None

#: A gas at least this many times as dense as air pools at floor level (benchwarden rule).
POOLING_RELATIVE_DENSITY = 1.3
#: The floor layer a pooling release is held in, and the room height assumed (screening
#: assumptions of benchwarden, stated with every figure).
FLOOR_LAYER_M = 1.0
ASSUMED_HEIGHT_M = 2.5


def _finding(code: str, severity: Severity, values: Mapping[str, Value], subject: str = "room") -> Finding:
    from benchwarden.workflows.findings import Finding

    return Finding(code, severity, subject, dict(values))


def release_severity(o2_percent: float, monitor: bool) -> Severity:
    """Severity of an oxygen level after a release (see the module docstring)."""
    if o2_percent < hz.IMPAIRED_O2:
        return "stop"
    if o2_percent < rm.EIGA_HAZARD:
        return "warning" if monitor else "stop"
    return "attention" if monitor else "warning"


def room_findings(prof: Profile, room: RoomPlan | None, draws: tuple[DrawPlan, ...] = ()) -> list[Finding]:
    """Every room finding of a planned bench."""
    if prof.room is None or room is None:
        return [_finding("no-room", "attention", {})]
    co2 = any(hz.uses_co2(s.gas) for s in prof.supplies)
    out = _vented(prof, room, co2)
    out += _releases(prof, room, co2)
    out += _gap_fuel(prof, room, draws)
    return out


def _vented(prof: Profile, room: RoomPlan, co2: bool) -> list[Finding]:
    assert prof.room is not None
    out: list[Finding] = []
    lk = room.leak
    if lk is None:
        return out
    per = room.vented_by_supply
    main = max(per, key=lambda k: per[k]) if per else ""
    if lk.o2_percent_steady < rm.OSHA_DEFICIENT:
        sev: Severity = "stop" if lk.minutes_to_19_5 < prof.session.duration / 60.0 else "warning"
        out.append(_finding("room-vented", sev, {
            "supply": main, "supplies": ", ".join(per), "o2_percent": lk.o2_percent_steady,
            "minutes_to_19_5": lk.minutes_to_19_5, "vented_m3_s": room.vented_m3_s}))
    for v in room.vented:
        tox, fl = v.toxic, v.flammable
        if tox is not None and tox.rank >= 1:
            out.append(_finding("room-vented-toxic", "stop" if tox.rank >= 2 else "warning", {
                "supply": v.supply, "component": tox.component, "band": tox.band, "percent": tox.percent,
                "limit_percent": tox.limit_percent, "co2_detector": co2 and hz.uses_co2(prof.supply(v.supply).gas)}))
        if fl is not None and fl.percent_of_lfl > 100 * hz.LFL_ALARM_FRACTION:
            out.append(_finding("room-vented-flammable", "stop", {
                "supply": v.supply, "fuels": fl.fuels, "percent": fl.percent, "lfl_percent": fl.lfl_percent,
                "percent_of_lfl": fl.percent_of_lfl}))
    return out


def _releases(prof: Profile, room: RoomPlan, co2: bool) -> list[Finding]:
    assert prof.room is not None
    out: list[Finding] = []
    monitor = prof.room.oxygen_monitor
    cases = room.cases
    low = [c for c in cases if not c.oxidiser and c.release.o2_percent_after_release < rm.OSHA_DEFICIENT]
    if low:
        c = min(low, key=lambda x: x.release.o2_percent_after_release)
        o2 = c.release.o2_percent_after_release
        out.append(_finding("room-release", release_severity(o2, monitor), {
            "supply": c.supply, "o2_percent": o2, "effect": c.release.effect, "monitor": monitor,
            "model": c.release.model, "o2_percent_today": c.o2_percent_today,
            "gas_percent": c.release.gas_percent_after_release,
            "lead": hz.lead_hazard(o2, _short_term(c.toxic)), "co2_detector": co2}))
    rich = [c for c in cases if c.release.o2_percent_after_release > hz.ENRICHED_O2]
    if rich:
        c = max(rich, key=lambda x: x.release.o2_percent_after_release)
        out.append(_finding("room-enrichment", "stop", {
            "supply": c.supply, "o2_percent": c.release.o2_percent_after_release, "limit_percent": hz.ENRICHED_O2,
            "o2_percent_today": c.o2_percent_today}))
    toxic = [c for c in cases if c.toxic is not None and c.toxic.rank >= 2]  # short-term criteria only
    if toxic:
        c = max(toxic, key=lambda x: (x.toxic.rank, x.toxic.percent) if x.toxic else (0, 0.0))
        t = c.toxic
        assert t is not None
        lead = hz.lead_hazard(c.release.o2_percent_after_release, t)
        tox_f = _finding("room-toxic", "stop" if t.rank >= 3 else "warning", {
            "supply": c.supply, "component": t.component, "band": t.band, "percent": t.percent,
            "limit_percent": t.limit_percent, "o2_percent": c.release.o2_percent_after_release,
            "lead": lead, "co2_detector": co2})
        # the worse of the two hazards leads the words
        if lead == "toxic":
            out.insert(0, tox_f)
        else:
            out.append(tox_f)
    burn = [c for c in cases if c.flammable is not None]
    if burn:
        c = max(burn, key=lambda x: x.flammable.percent_of_lfl if x.flammable else 0.0)
        f = c.flammable
        assert f is not None
        if f.percent_of_lfl > 100 * hz.LFL_ALARM_FRACTION:
            out.append(_finding("room-flammable", "stop", {
                "supply": c.supply, "fuels": f.fuels, "percent": f.percent, "lfl_percent": f.lfl_percent,
                "percent_of_lfl": f.percent_of_lfl}))
        ox = [x for x in cases if x.oxidiser]
        if ox:
            out.append(_finding("segregation", "warning", {
                "supply": ox[0].supply, "oxidisers": ", ".join(x.supply for x in ox),
                "fuels": ", ".join(x.supply for x in burn)}))
    out += _pooling(prof, room)
    return out


def _short_term(t: hz.Toxic | None) -> hz.Toxic | None:
    """A release is judged on short-term limits: below the STEL its toxicity does not lead."""
    return t if t is not None and t.rank >= 2 else None


def _pooling(prof: Profile, room: RoomPlan) -> list[Finding]:
    assert prof.room is not None
    heavy = [c for c in room.cases if c.relative_density >= POOLING_RELATIVE_DENSITY]
    if not heavy:
        return []
    layer = room.volume_m3 * FLOOR_LAYER_M / ASSUMED_HEIGHT_M
    c = max(heavy, key=lambda x: x.release.release_volume_m3)
    floor = rm.release(layer, c.release.release_volume_m3, "displacement", prof.room.oxygen_percent)
    o2 = floor.o2_percent_after_release
    sev: Severity = "stop" if o2 < hz.IMPAIRED_O2 else "warning" if o2 < rm.OSHA_DEFICIENT else "attention"
    return [_finding("room-pooling", sev, {
        "supply": c.supply, "relative_density": c.relative_density, "o2_percent_floor": o2,
        "gas_percent_floor": floor.gas_percent_after_release, "o2_percent_mixed": c.release.o2_percent_after_release,
        "layer_m": FLOOR_LAYER_M, "assumed_height_m": ASSUMED_HEIGHT_M})]


def _gap_fuel(prof: Profile, room: RoomPlan, draws: tuple[DrawPlan, ...]) -> list[Finding]:
    out: list[Finding] = []
    vented = {v.supply: v.gas_percent for v in room.vented}
    for d in draws:
        if d.kind != "gap":
            continue
        gas = prof.supply(d.supply_id).gas
        fl = hz.flammable(gas, vented.get(d.supply_id, 0.0) if d.vents_to_room else 0.0)
        if fl is not None:
            out.append(_finding("gap-fuel", "warning", {
                "supply": d.supply_id, "fuels": fl.fuels, "lfl_percent": fl.lfl_percent,
                "percent_of_lfl": fl.percent_of_lfl, "vents_to_room": d.vents_to_room}, d.id))
    return out
