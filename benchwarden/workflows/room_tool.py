"""The room-oxygen tool of the app: the plan's room figures, today's contents released into a
sealed room, and the room with an extra leak a person types (the rules are
:mod:`benchwarden.core.room`'s, the same as ``benchwarden room``)."""

from __future__ import annotations

from benchwarden.core import room as rm
from benchwarden.storage.profile import Profile
from benchwarden.units import Flow
from benchwarden.workflows.model import Plan

__all__ = ["sealed_release", "with_extra_leak"]


def sealed_release(plan: Plan) -> rm.Release | None:
    """Today's contents of the release supply, released into the room taken as sealed (None
    without a room or a release)."""
    r = plan.room
    if r is None or r.release is None:
        return None
    return rm.release(r.volume_m3, r.release.release_volume_m3, "sealed", r.c0_percent, r.release.gas_o2_percent)


def with_extra_leak(prof: Profile, plan: Plan, flow: Flow) -> rm.Leak | None:
    """The room with the draws' venting plus a further leak of the release supply's gas."""
    r = plan.room
    if r is None:
        return None
    gas = prof.supply(r.release_supply_id or prof.supplies[0].id).gas
    extra = rm.leak_volume_flow(gas, flow, plan.temperature_k, plan.ambient_pa)
    return rm.leak_o2(r.volume_m3, r.vented_m3_s + extra, r.ventilation_m3_s, r.ventilation_kind, r.c0_percent)
