"""Checklist items a bench's safety sign-off expects, each filled with this bench's figures where
it has one (which gases are liquefied, flammable, oxidising, heavy or light; where the reliefs
and exhausts go; the regulators' service dates). Their texts and bases (the source of each
practice, or "common practice") live in ``benchwarden/data/checklist.toml``; statuses come
only from findings.
"""

from __future__ import annotations

from typing import Any

from benchwarden.core import hazards as hz
from benchwarden.core.gases import Gas
from benchwarden.render.checklist.items import Item

__all__ = ["SAFETY_ITEMS"]


def _gases(ctx: Any) -> list[tuple[str, Gas]]:
    return [(s.id, s.gas) for s in ctx.prof.supplies]


def _relief_vents(ctx: Any) -> list[Item]:
    d = ctx.display
    reliefs = [f"{r.id} relief {d.gauge(r.relief_setting.abs_at(ctx.a.plan.ambient_pa))}"
               for r in ctx.prof.regulators if r.relief_setting is not None]
    none = [r.id for r in ctx.prof.regulators if r.relief_setting is None]
    vent = [dr.id for dr in ctx.a.plan.draws if dr.vents_to_room]
    fig = "; ".join(x for x in ("relief valves: " + ", ".join(reliefs) if reliefs else "",
                                "no relief on " + ", ".join(none) if none else "",
                                "exhausts into the room: " + ", ".join(vent) if vent else "") if x)
    return [Item("relief-vents", "Relief and vent outlets piped to a safe place, not at a person's face or into "
                 "a closed space", None, fig or None)]


def _regulator_service(ctx: Any) -> list[Item]:
    out = []
    for r in ctx.prof.regulators:
        f = ctx.about(r.id, ("service-overdue", "service-due-soon"))
        text = f"{r.id}: service or replacement date"
        if r.service_due is None:
            out.append(Item(f"regulator-service:{r.id}", text, None,
                            "no date in the profile: read it on the regulator and add service_due"))
        elif f is None:
            out.append(Item(f"regulator-service:{r.id}", text, "ok", f"due {r.service_due.isoformat()}",
                            "within its service interval"))
        else:
            out.append(Item(f"regulator-service:{r.id}", text, f.severity, f"due {r.service_due.isoformat()}",
                            ctx.describe(f), code=f.code))
    return out


def _protection(ctx: Any) -> list[Item]:
    liquefied = [sid for sid, gas in _gases(ctx) if gas.sold_liquefied]
    fig = ("cold-burn gloves for " + ", ".join(liquefied)) if liquefied else "no liquefied gas on this bench"
    return [Item("protection", "Safety glasses for work on pressurised lines; cold-burn gloves for liquefied gases; "
                 "safety footwear for moving cylinders", None, fig)]


def _segregation(ctx: Any) -> list[Item]:
    room = [(s.id, s.gas) for s in ctx.prof.supplies if s.location == "room"]
    ox = [sid for sid, gas in room if hz.is_oxidiser(gas)]
    fuel = [sid for sid, gas in room if hz.mixture_lfl(gas) is not None]
    text = "Oxidisers kept apart from fuel gases"
    if not (ox and fuel):
        return [Item("segregation", text, "ok", f"oxidisers: {', '.join(ox) or 'none'}; fuel gases: "
                     f"{', '.join(fuel) or 'none'}", "no oxidiser and fuel gas in one room")]
    f = ctx.about("room", ("segregation",))
    if f is None:
        return [Item("segregation", text, "ok", f"oxidisers: {', '.join(ox)}; fuel gases: {', '.join(fuel)}")]
    return [Item("segregation", text, f.severity, f"oxidisers: {', '.join(ox)}; fuel gases: {', '.join(fuel)}",
                 ctx.describe(f), code=f.code)]


def _kinds(gas: Gas) -> list[str]:
    out = []
    if hz.is_oxidiser(gas):
        out.append("oxidising")
    elif hz.gas_o2_percent(gas) < 19.5:
        out.append("asphyxiant")
    if hz.mixture_lfl(gas) is not None:
        out.append("flammable")
    if any(c.handling.incapacitating_percent or c.handling.exposure_stel_ppm for c, _ in gas.components):
        out.append("toxic")
    return out


def _door_signs(ctx: Any) -> list[Item]:
    fig = "; ".join(f"{sid}: {gas.short_name} ({', '.join(_kinds(gas)) or 'compressed gas'})"
                    for sid, gas in _gases(ctx))
    return [Item("door-signs", "Warning signs at the door: compressed gases and their hazards, laser, high voltage; "
                 "who to call", None, fig)]


def _monitor_placement(ctx: Any) -> list[Item]:
    low = [f"{sid} ({gas.relative_density_to_air:.2g}× air)" for sid, gas in _gases(ctx)
           if gas.relative_density_to_air > 1.2]
    high = [f"{sid} ({gas.relative_density_to_air:.2g}× air)" for sid, gas in _gases(ctx)
            if gas.relative_density_to_air < 0.8]
    co2 = [sid for sid, gas in _gases(ctx) if hz.uses_co2(gas)]
    parts = [("sensor low for " + ", ".join(low)) if low else "", ("sensor high for " + ", ".join(high)) if high else "",
             ("a CO2 detector for " + ", ".join(co2) + " (an oxygen monitor does not detect it)") if co2 else ""]
    fig = "; ".join(p for p in parts if p) or "gases about as dense as air: sensor at breathing height"
    return [Item("oxygen-monitor", "Oxygen monitor switched on and in calibration, its sensor placed low for heavy "
                 "gases and high for light ones; alarm tested", None, fig)]


def _after_change(ctx: Any) -> list[Item]:
    fuel = [sid for sid, gas in _gases(ctx) if hz.mixture_lfl(gas) is not None]
    fig = (f"{', '.join(fuel)}: purge the air out with an inert gas before admitting the fuel gas — a safety step, "
           "not only for purity") if fuel else None
    return [Item("after-change", "After a cylinder change: leak-check the new connection and purge the line", None,
                 fig)]


SAFETY_ITEMS = {
    "relief-vents": _relief_vents,
    "regulator-service": _regulator_service,
    "protection": _protection,
    "segregation": _segregation,
    "door-signs": _door_signs,
    "oxygen-monitor": _monitor_placement,
    "after-change": _after_change,
}
