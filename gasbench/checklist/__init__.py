"""The pre-session checklist: items from a data file, computed items filled from the plan.

Each computed item carries the plan figure it shows (``value``) and where that figure sits in
``gasbench plan --json`` (``source``), so the checklist never shows a number of its own.
Renderers live in :mod:`gasbench.checklist.render`.
"""

from __future__ import annotations

import datetime as dt
import math
import tomllib
from dataclasses import dataclass, field
from importlib import resources
from pathlib import Path
from typing import Any, Literal

from gasbench.cautions import DEFER, ESTIMATES, GENERAL, Caution, gas_cautions
from gasbench.errors import ProfileError
from gasbench.plan import Plan, hold_test_findings
from gasbench.profile import Profile
from gasbench.units import fmt_hours, fmt_pressure

Status = Literal["ok", "attention", "stop"]


@dataclass(frozen=True)
class Item:
    id: str
    text: str
    status: Status | None = None  # None: a box to tick
    figure: str | None = None
    reason: str | None = None
    value: float | None = None
    source: str | None = None


@dataclass(frozen=True)
class Section:
    id: str
    title: str
    items: tuple[Item, ...]


@dataclass(frozen=True)
class Checklist:
    bench: str
    generated_at: str
    session: str
    sections: tuple[Section, ...]
    cautions: tuple[Caution, ...]
    defer: str = DEFER
    estimates: str = ESTIMATES
    operator: str | None = None
    second_person: bool = False
    stops: int = 0
    attentions: int = 0
    notes: tuple[str, ...] = field(default=())


@dataclass(frozen=True)
class LastHoldTest:
    at: dt.datetime
    verdict: str
    leak_rate_sccm: float
    uncertainty_sccm: float


# ----------------------------------------------------------------------------- item files


def _load_items(text: str, source: str) -> dict[str, Any]:
    try:
        data = tomllib.loads(text)
    except tomllib.TOMLDecodeError as exc:
        raise ProfileError(f"{source}: not valid TOML: {exc}") from None
    allowed = {"sections", "remove", "reword"}
    extra = set(data) - allowed
    if extra:
        raise ProfileError(f"{source}: unknown key(s) {', '.join(sorted(extra))}; allowed: {', '.join(sorted(allowed))}")
    for i, s in enumerate(data.get("sections", [])):
        if not isinstance(s, dict) or "id" not in s:
            raise ProfileError(f"{source}: sections[{i}] needs an id")
        for j, it in enumerate(s.get("items", [])):
            if not isinstance(it, dict) or "id" not in it or not ({"text", "computed"} & set(it)):
                raise ProfileError(f"{source}: sections[{i}].items[{j}] needs an id and a text (or computed)")
            if set(it) - {"id", "text", "computed"}:
                raise ProfileError(f"{source}: sections[{i}].items[{j}]: unknown key(s) "
                                   f"{', '.join(sorted(set(it) - {'id', 'text', 'computed'}))}")
            if "computed" in it and it["computed"] not in _COMPUTED:
                raise ProfileError(f"{source}: sections[{i}].items[{j}]: unknown computed key {it['computed']!r}; "
                                   f"allowed: {', '.join(_COMPUTED)}")
    return data


def item_spec(lab_file: str | Path | None = None) -> list[dict[str, Any]]:
    """The shipped items merged with a lab's own file (add, remove, reword)."""
    base = _load_items(resources.files("gasbench.data").joinpath("checklist.toml").read_text("utf-8"),
                       "gasbench/data/checklist.toml")
    sections = [dict(s, items=list(s.get("items", []))) for s in base["sections"]]
    if lab_file is None:
        return sections
    try:
        text = Path(lab_file).read_text("utf-8")
    except (OSError, UnicodeDecodeError) as exc:
        raise ProfileError(f"{lab_file}: cannot read the checklist items: {exc}") from None
    lab = _load_items(text, str(lab_file))
    remove = set(lab.get("remove", []))
    reword = {r["id"]: r["text"] for r in lab.get("reword", []) if isinstance(r, dict) and "id" in r and "text" in r}
    for ls in lab.get("sections", []):
        target = next((s for s in sections if s["id"] == ls["id"]), None)
        if target is None:
            sections.append({"id": ls["id"], "title": ls.get("title", ls["id"]), "items": list(ls.get("items", []))})
        else:
            target["items"].extend(ls.get("items", []))
    for s in sections:
        s["items"] = [dict(it, text=reword.get(it["id"], it.get("text", ""))) for it in s["items"]
                      if it["id"] not in remove]
    return [s for s in sections if s["items"]]


# ----------------------------------------------------------------------------- computed items


def _worst(*statuses: Status) -> Status:
    order = {"ok": 0, "attention": 1, "stop": 2}
    return max(statuses, key=lambda s: order[s])


def _supply_contents(plan: Plan, ctx: dict[str, Any]) -> list[Item]:
    amb = plan.ambient_pa
    return [Item(f"supply-contents:{s.id}", f"{s.id} ({s.gas_name}) contents",
                 "ok", f"{s.mass_kg:.3f} kg = {s.free_volume_m3:.3f} m³ at {s.reference_label}"
                 + ("" if s.liquefied else f"; now {fmt_pressure(s.pressure_abs_pa, amb)}"),
                 "by weight (liquefied)" if s.liquefied else "real gas at the last reading",
                 s.mass_kg, f"supplies[{i}].mass_kg")
            for i, s in enumerate(plan.supplies)]


def _supply_runtime(plan: Plan, ctx: dict[str, Any]) -> list[Item]:
    out = []
    for i, s in enumerate(plan.supplies):
        if s.draw_kg_s <= 0:
            out.append(Item(f"supply-runtime:{s.id}", f"{s.id}: time to reserve", "ok", "no draw", "nothing draws on it",
                            None, f"supplies[{i}].hours_to_reserve"))
            continue
        status: Status = "ok"
        reason = f"lasts past the {fmt_hours(plan.session_hours)} session"
        if s.hours_to_reserve < plan.session_hours:
            status, reason = "stop", "reserve before the session ends: swap the cylinder first"
        elif s.hours_band[0] < plan.session_hours:
            status, reason = "attention", f"within the gauge's error only {fmt_hours(s.hours_band[0])}"
        out.append(Item(f"supply-runtime:{s.id}", f"{s.id}: time to reserve at the planned draws", status,
                        f"{s.hours_to_reserve:.2f} h ({fmt_hours(s.hours_to_reserve)})"
                        + (f", reserve at {s.reserve_at[11:16]}" if s.reserve_at else ""),
                        reason, s.hours_to_reserve, f"supplies[{i}].hours_to_reserve"))
    return out


def _regulator_ratings(plan: Plan, ctx: dict[str, Any]) -> list[Item]:
    amb = plan.ambient_pa
    out = []
    for i, r in enumerate(plan.regulators):
        status: Status = "ok"
        reason = "supply within the inlet rating, also on a hot day"
        if r.inlet_abs_pa > r.inlet_rating_abs_pa:
            status, reason = "stop", "supply above the regulator's inlet rating"
        elif r.supply_hot_day_abs_pa > r.inlet_rating_abs_pa:
            status, reason = "attention", "on a hot day the supply exceeds the inlet rating"
        out.append(Item(f"regulator-ratings:{r.id}", f"{r.id}: inlet rating against {r.supply_id}", status,
                        f"hot day {fmt_pressure(r.supply_hot_day_abs_pa, amb)} vs rating "
                        f"{fmt_pressure(r.inlet_rating_abs_pa, amb)}", reason, r.supply_hot_day_abs_pa,
                        f"regulators[{i}].supply_hot_day_abs_pa"))
    return out


def _regulator_outlet(plan: Plan, ctx: dict[str, Any]) -> list[Item]:
    out = []
    for i, r in enumerate(plan.regulators):
        t = r.outlet_temperature_k - 273.15
        status: Status = "ok"
        reason = "no icing expected"
        if r.solid_forms:
            status, reason = "stop", "solid (dry ice) forms in the regulator"
        elif r.liquid_forms:
            status, reason = "attention", "liquid forms at the outlet"
        elif t < 0:
            status, reason = "attention", "outlet below 0 °C: frost and a stiff diaphragm"
        out.append(Item(f"regulator-outlet:{r.id}", f"{r.id}: gas temperature at the outlet", status,
                        f"{t:.1f} °C", reason, r.outlet_temperature_k, f"regulators[{i}].outlet_temperature_k"))
    return out


def _leak_status(plan: Plan, ctx: dict[str, Any]) -> list[Item]:
    last: LastHoldTest | None = ctx.get("last_hold")
    now: dt.datetime = ctx["now"]
    age = (now - last.at).total_seconds() / 86400.0 if last else None
    f = hold_test_findings((last.verdict, last.leak_rate_sccm, last.uncertainty_sccm, age)
                           if last is not None and age is not None else None)[0]
    status: Status = {"stop": "stop", "warning": "attention", "attention": "attention", "info": "ok"}[f.severity]  # type: ignore[assignment]
    return [Item("leak-status", "Hold test of the supply and lines", status, f.figure, f.text, age, None)]


def _room_release(plan: Plan, ctx: dict[str, Any]) -> list[Item]:
    if plan.room is None:
        return [Item("room-release", "Room oxygen if a cylinder empties into the room", "attention", "no room in profile",
                     "add the room to the profile")]
    r = plan.room.release
    c = r.o2_percent_after_release
    status: Status = "ok" if c >= 19.5 else ("attention" if c >= 18.0 or ctx.get("monitor") else "stop")
    return [Item("room-release", f"Room oxygen if all of {plan.room.release_supply_id} escapes at once", status,
                 f"{c:.1f} % O2 ({r.model} model)", r.effect or "stays above 19.5 %", c,
                 "room.release.o2_percent_after_release")]


def _room_vented(plan: Plan, ctx: dict[str, Any]) -> list[Item]:
    if plan.room is None or plan.room.leak is None:
        return []
    lk = plan.room.leak
    c = lk.o2_percent_steady
    status: Status = "ok" if c >= 19.5 else ("attention" if math.isinf(lk.minutes_to_19_5) else "stop")
    return [Item("room-vented", "Room oxygen with the draws venting into the room", status,
                 f"{c:.2f} % O2 steady, {plan.room.vented_m3_s * 6e4:.2f} L/min vented", lk.effect or "stays above 19.5 %",
                 c, "room.leak.o2_percent_steady")]


def _gap_margins(plan: Plan, ctx: dict[str, Any]) -> list[Item]:
    out = []
    for i, d in enumerate(plan.draws):
        if d.gap is None:
            continue
        margins = list(d.gap.margins_start) + list(d.gap.margins_reserve)
        if not margins:
            out.append(Item(f"gap-margins:{d.id}", f"{d.id}: firing voltage", "ok",
                            f"≈ {d.gap.breakdown_start_kv:.1f} kV", "no exposed parts listed", d.gap.breakdown_start_kv,
                            f"draws[{i}].gap.breakdown_start_kv"))
            continue
        worst = min(margins, key=lambda m: m.margin_kv)
        status: Status = worst.status  # type: ignore[assignment]
        out.append(Item(f"gap-margins:{d.id}", f"{d.id}: firing voltage against exposed parts", status,
                        f"≈ {d.gap.breakdown_start_kv:.1f} kV; worst margin {worst.margin_kv:+.1f} kV ({worst.part})",
                        "estimate; real gaps differ", d.gap.breakdown_start_kv, f"draws[{i}].gap.breakdown_start_kv"))
    return out


def _open_findings(plan: Plan, ctx: dict[str, Any]) -> list[Item]:
    stops = sum(f.severity == "stop" for f in plan.findings)
    warns = sum(f.severity == "warning" for f in plan.findings)
    status: Status = "stop" if stops else ("attention" if warns else "ok")
    return [Item("open-findings", "Plan findings resolved or accepted", status,
                 f"{stops} stop, {warns} warning", "see gasbench plan", float(stops), None)]


_COMPUTED = {
    "supply-contents": _supply_contents,
    "supply-runtime": _supply_runtime,
    "regulator-ratings": _regulator_ratings,
    "regulator-outlet": _regulator_outlet,
    "leak-status": _leak_status,
    "room-release": _room_release,
    "room-vented": _room_vented,
    "gap-margins": _gap_margins,
    "open-findings": _open_findings,
}


def build_checklist(prof: Profile, plan: Plan, profile_dir: Path | None = None, last_hold: LastHoldTest | None = None,
                    now: dt.datetime | None = None, operator: str | None = None) -> Checklist:
    """Build the checklist of a bench from its plan (and the last hold test, if any)."""
    now = now or dt.datetime.now().astimezone()
    lab = prof.checklist.items
    lab_path = None
    if lab:
        lab_path = Path(lab) if Path(lab).is_absolute() or profile_dir is None else profile_dir / lab
    ctx = {"now": now, "last_hold": last_hold, "monitor": prof.room.oxygen_monitor if prof.room else False}
    sections = []
    for s in item_spec(lab_path):
        items: list[Item] = []
        for it in s["items"]:
            if "computed" in it:
                items.extend(_COMPUTED[it["computed"]](plan, ctx))
            else:
                items.append(Item(it["id"], it["text"]))
        if items:
            sections.append(Section(s["id"], s.get("title", s["id"]), tuple(items)))
    all_items = [i for s in sections for i in s.items]
    cautions = tuple(GENERAL) + tuple(gas_cautions([s.gas for s in prof.supplies]))
    return Checklist(prof.bench.name, now.isoformat(timespec="minutes"),
                     f"{fmt_hours(plan.session_hours)} from {plan.start[11:16]}", tuple(sections), cautions,
                     operator=operator or prof.checklist.operator, second_person=prof.checklist.second_person,
                     stops=sum(i.status == "stop" for i in all_items),
                     attentions=sum(i.status == "attention" for i in all_items))
