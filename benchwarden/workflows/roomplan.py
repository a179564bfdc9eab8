"""The room part of a bench's plan: the draws that vent into it, and every cylinder kept in it
released at once, each judged for every hazard it carries (oxygen, its own toxicity,
flammability). Projections only; the findings judge them.
"""

from __future__ import annotations

from benchwarden.core import gas as g
from benchwarden.core import hazards as hz
from benchwarden.core import room as rm
from benchwarden.errors import BenchwardenError
from benchwarden.storage.profile import Profile, Supply
from benchwarden.units.constants import T_FULL_K
from benchwarden.workflows.model import (
    DrawPlan,
    Memo,
    RoomCase,
    RoomPlan,
    SupplyPlan,
    VentedGas,
    memo_get,
)

__all__ = ["room_plan", "full_mass", "largest_supply", "in_room"]


def full_mass(prof: Profile, s: Supply, memo: Memo | None = None) -> float:
    """Mass [kg] of a supply when full: its fill weight (gross − tare) for a gas weighed in, else
    the real-gas mass at its service pressure and 15 °C (the rating temperature)."""
    if s.gross is not None and s.tare is not None:
        return s.gross - s.tare
    p = s.service_pressure.abs_at(prof.ambient_pa)
    try:
        return float(memo_get(memo, ("rho", s.gas.key, T_FULL_K, p), g.density, s.gas, T_FULL_K, p)) * s.water_volume
    except BenchwardenError:
        return 0.0


def largest_supply(prof: Profile) -> Supply:
    """The supply that holds the most gas when full."""
    return max(prof.supplies, key=lambda s: full_mass(prof, s))


def in_room(s: Supply) -> bool:
    """Whether a cylinder stands in the room (a cylinder outside takes no part in a release)."""
    return s.location == "room"


def _case(prof: Profile, s: Supply, sp: SupplyPlan, memo: Memo | None = None) -> RoomCase | None:
    assert prof.room is not None
    room = prof.room
    T, amb = prof.ambient.temperature, prof.ambient_pa
    rho = memo_get(memo, ("rho", s.gas.key, T, amb), g.density, s.gas, T, amb)
    full = full_mass(prof, s, memo)
    if full <= 0:
        return None
    o2g = hz.gas_o2_percent(s.gas)
    rel = rm.release(room.volume, full / rho, "displacement", room.oxygen_percent, o2g)
    today = (rm.release(room.volume, sp.mass_kg / rho, "displacement", room.oxygen_percent, o2g)
             if sp.mass_kg > 0 else None)
    return RoomCase(s.id, s.gas.name, full, rel,
                    today.o2_percent_after_release if today else room.oxygen_percent,
                    today.gas_percent_after_release if today else 0.0,
                    s.gas.relative_density_to_air, hz.is_oxidiser(s.gas),
                    hz.toxic(s.gas, rel.gas_percent_after_release),
                    hz.flammable(s.gas, rel.gas_percent_after_release))


def _vented_gases(prof: Profile, leak: rm.Leak | None, per: dict[str, float]) -> tuple[VentedGas, ...]:
    """Each vented gas's share of the room's air by the end of the planned session (well mixed:
    the total from the leak's closed form, shared by volume flow), its toxicity and flammability."""
    if leak is None or leak.leak_m3_s <= 0:
        return ()
    c = rm.o2_at(leak, prof.session.duration)
    total = max(0.0, 100.0 * (1.0 - c / leak.c0_percent))
    out = []
    for sid, q in per.items():
        gas = prof.supply(sid).gas
        pct = total * q / leak.leak_m3_s
        out.append(VentedGas(sid, q, pct, hz.toxic(gas, pct), hz.flammable(gas, pct)))
    return tuple(out)


def room_plan(prof: Profile, draws: list[DrawPlan], supplies: list[SupplyPlan],
              extra_leak_m3_s: float, memo: Memo | None = None) -> RoomPlan | None:
    """The room's figures: the vented draws' leak, and every cylinder in the room released."""
    if prof.room is None:
        return None
    room = prof.room
    T, amb = prof.ambient.temperature, prof.ambient_pa
    Q = room.ventilation.m3_s(room.volume) if room.ventilation else 0.0
    by_id = {s.id: s for s in prof.supplies}
    per: dict[str, float] = {}
    for dp in draws:
        if dp.vents_to_room:
            per[dp.supply_id] = per.get(dp.supply_id, 0.0) + dp.mass_flow_kg_s / g.density(by_id[dp.supply_id].gas, T, amb)
    vented = extra_leak_m3_s + sum(per.values())
    leak = rm.leak_o2(room.volume, vented, Q, room.ventilation_kind, room.oxygen_percent) if vented > 0 else None
    gases = _vented_gases(prof, leak, per)
    plans = {sp.id: sp for sp in supplies}
    cases = tuple(c for s in prof.supplies if in_room(s) if (c := _case(prof, s, plans[s.id], memo)) is not None)
    outside = tuple(s.id for s in prof.supplies if not in_room(s))
    notes = [rm.stratification_note(by_id[c.supply].gas) for c in cases]
    if not cases:
        return RoomPlan(room.volume, Q, room.ventilation_kind, vented, leak, "", None, None, tuple(notes),
                        vented_by_supply=per, vented=gases, c0_percent=room.oxygen_percent, outside=outside)
    # the oxygen safety case: the cylinder whose full release lowers the oxygen most
    worst = min(cases, key=lambda c: c.release.o2_percent_after_release)
    s = by_id[worst.supply]
    rho = g.density(s.gas, T, amb)
    vg_today = plans[s.id].mass_kg / rho
    o2g = hz.gas_o2_percent(s.gas)
    rel = rel_mixed = None
    if vg_today > 0:
        rel = rm.release(room.volume, vg_today, "displacement", room.oxygen_percent, o2g)
        rel_mixed = rm.release(room.volume, vg_today, "mixed", room.oxygen_percent, o2g)
    every = rm.release(room.volume, sum(c.release.release_volume_m3 for c in cases), "displacement",
                       room.oxygen_percent)
    return RoomPlan(room.volume, Q, room.ventilation_kind, vented, leak, worst.supply, rel, rel_mixed, tuple(notes),
                    worst.release, worst.supply, every, cases, per, gases, room.oxygen_percent, outside)
