"""The pre-session checklist: items from a data file, computed items filled from the bench's
assessment.

A computed item shows a plan figure (``value``, and where it sits in ``benchwarden plan --json``:
``source``) and takes its status from the findings about it (``code``: the worst finding's
code), so the checklist never judges anything itself: its statuses are the findings'
severities (``stop``, ``warning``, ``attention``, ``info``) or ``ok`` where nothing was found.
Renderers live in :mod:`benchwarden.render.checklist.render`.
"""

from __future__ import annotations

import dataclasses
import datetime as dt
import tomllib
from collections.abc import Callable
from dataclasses import dataclass, field
from importlib import resources
from pathlib import Path
from typing import Any

from benchwarden.core.cautions import DEFER, ESTIMATES, GENERAL, Caution, gas_cautions
from benchwarden.errors import ProfileError
from benchwarden.render.checklist.items import Item, Status
from benchwarden.render.checklist.safety import SAFETY_ITEMS
from benchwarden.render.display import Display
from benchwarden.render.findings import describe
from benchwarden.render.supply import mass_words, supply_state_words
from benchwarden.storage.profile import MAX_PROFILE_BYTES, Profile, read_text_file
from benchwarden.units.limits import text_problem
from benchwarden.workflows.bench import Assessment
from benchwarden.workflows.findings import SEVERITY_RANK, Finding, counts


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
    warnings: int = 0
    attentions: int = 0
    notes: tuple[str, ...] = field(default=())
    #: when it was made, ISO 8601 with the UTC offset (for machines; ``generated_at`` is for people)
    generated_iso: str = ""


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
        _check_text(text, source, f"sections[{i}]", {k: v for k, v in s.items() if k != "items"})
        for j, it in enumerate(s.get("items", [])):
            if not isinstance(it, dict) or "id" not in it or not ({"text", "computed"} & set(it)):
                raise ProfileError(f"{source}: sections[{i}].items[{j}] needs an id and a text (or computed)")
            bad = [k for k in ("id", "text", "computed") if k in it and not isinstance(it[k], str)]
            if bad:
                raise ProfileError(f"{source}: sections[{i}].items[{j}].{bad[0]} must be text in quotes")
            _check_text(text, source, f"sections[{i}].items[{j}]", it)
            keys = {"id", "text", "computed", "basis"}
            if set(it) - keys:
                raise ProfileError(f"{source}: sections[{i}].items[{j}]: unknown key(s) "
                                   f"{', '.join(sorted(set(it) - keys))}; allowed: {', '.join(sorted(keys))}")
            if "basis" in it and not isinstance(it["basis"], str):
                raise ProfileError(f"{source}: sections[{i}].items[{j}].basis must be text in quotes")
            if "computed" in it and it["computed"] not in _COMPUTED:
                raise ProfileError(f"{source}: sections[{i}].items[{j}]: unknown computed key {it['computed']!r}; "
                                   f"allowed: {', '.join(_COMPUTED)}")
    for i, r in enumerate(data.get("reword", [])):
        if isinstance(r, dict):
            _check_text(text, source, f"reword[{i}]", r)
    return data


def _check_text(text: str, source: str, where: str, entry: dict[str, Any]) -> None:
    """An item's text is shown on terminals and in files: no control or invisible characters
    (refused with the line, like a profile's)."""
    for key, value in entry.items():
        problem = text_problem(value) if isinstance(value, str) else None
        if problem:
            line = next((n for n, row in enumerate(text.splitlines(), 1) if value in row), None)
            raise ProfileError(f"{source}{f':{line}' if line else ''}: {where}.{key}: {problem} is not allowed "
                               "in text")


def item_spec(lab_file: str | Path | None = None) -> list[dict[str, Any]]:
    """The shipped items merged with a lab's own file (add, remove, reword)."""
    base = _load_items(resources.files("benchwarden.data").joinpath("checklist.toml").read_text("utf-8"),
                       "benchwarden/data/checklist.toml")
    sections = [dict(s, items=list(s.get("items", []))) for s in base["sections"]]
    if lab_file is None:
        return sections
    text = read_text_file(lab_file, "checklist items file (.toml)", MAX_PROFILE_BYTES)
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


@dataclass(frozen=True)
class _Ctx:
    a: Assessment
    display: Display
    now: dt.datetime
    prof: Profile

    def describe(self, f: Finding) -> str:
        return describe(f, self.display)[0]

    def about(self, subject: str, codes: tuple[str, ...]) -> Finding | None:
        """The worst finding with one of ``codes`` about ``subject``."""
        hits = [f for f in self.a.findings if f.code in codes and f.subject == subject]
        return min(hits, key=lambda f: SEVERITY_RANK[f.severity]) if hits else None


def _item(ctx: _Ctx, id: str, text: str, figure: str, f: Finding | None, ok_reason: str,
          value: float | None = None, source: str | None = None) -> Item:
    """A computed item: its status and reason from the finding about it, or ``ok``."""
    if f is None:
        return Item(id, text, "ok", figure, ok_reason, value, source)
    sentence, _ = describe(f, ctx.display)
    return Item(id, text, f.severity, figure, sentence, value, source, f.code)


#: Findings about a supply's contents: its state and how far its mass can be trusted.
_CONTENTS_CODES = ("liquid-full", "liquid-full-when-warm", "contents-temperature-sensitive")


def _supply_contents(ctx: _Ctx) -> list[Item]:
    d = ctx.display
    return [_item(ctx, f"supply-contents:{s.id}", f"{s.id} ({s.gas_name}) contents",
                  f"{mass_words(s.mass_kg, s.mass_uncertainty_kg)} = {s.free_volume_m3:.3f} m³ at "
                  f"{s.reference_label}" + ("" if s.liquefied else f"; now {d.gauge(s.pressure_abs_pa, ctx.a.steps.get(s.id))}")
                  + f"; {supply_state_words(s, d)}",
                  ctx.about(s.id, _CONTENTS_CODES),
                  "by weight (liquefied)" if s.liquefied else "real gas at the last reading",
                  s.mass_kg, f"supplies[{i}].mass_kg")
            for i, s in enumerate(ctx.a.plan.supplies)]


def _supply_runtime(ctx: _Ctx) -> list[Item]:
    plan, d = ctx.a.plan, ctx.display
    out = []
    for i, s in enumerate(plan.supplies):
        if s.draw_kg_s <= 0:
            out.append(Item(f"supply-runtime:{s.id}", f"{s.id}: time to reserve", "ok", "no draw",
                            "nothing draws on it", None, f"supplies[{i}].hours_to_reserve"))
            continue
        f = ctx.about(s.id, ("reserve-before-end", "reserve-within-gauge-error", "reserve-before-end-live"))
        out.append(_item(ctx, f"supply-runtime:{s.id}", f"{s.id}: time to reserve at the planned draws",
                         f"{d.hours(s.hours_to_reserve)}"
                         + (f", reserve at {d.clock(s.reserve_at, ctx.now)}" if s.reserve_at else ""),
                         f, f"lasts past the {d.hours(plan.session_hours)} session", s.hours_to_reserve,
                         f"supplies[{i}].hours_to_reserve"))
    return out


def _regulator_ratings(ctx: _Ctx) -> list[Item]:
    d = ctx.display
    return [_item(ctx, f"regulator-ratings:{r.id}", f"{r.id}: inlet rating against {r.supply_id}",
                  f"hot day {d.gauge(r.supply_hot_day_abs_pa)} vs rating {d.gauge(r.inlet_rating_abs_pa)}",
                  ctx.about(r.id, ("inlet-rating", "inlet-rating-hot")),
                  "supply within the inlet rating, also on a hot day", r.supply_hot_day_abs_pa,
                  f"regulators[{i}].supply_hot_day_abs_pa")
            for i, r in enumerate(ctx.a.plan.regulators)]


def _regulator_outlet(ctx: _Ctx) -> list[Item]:
    d = ctx.display
    return [_item(ctx, f"regulator-outlet:{r.id}", f"{r.id}: gas temperature at the outlet",
                  d.temperature(r.outlet_temperature_k),
                  ctx.about(r.id, ("regulator-solid", "regulator-liquid", "regulator-icing")), "no icing expected",
                  r.outlet_temperature_k, f"regulators[{i}].outlet_temperature_k")
            for i, r in enumerate(ctx.a.plan.regulators)]


def _leak_status(ctx: _Ctx) -> list[Item]:
    f = next(f for f in ctx.a.findings if f.subject == "leaks")
    sentence, figure = describe(f, ctx.display)
    status: Status = "ok" if f.severity == "info" else f.severity
    last = ctx.a.last_hold
    return [Item("leak-status", "Hold test of the supply and lines", status, figure, sentence,
                 last.age_days if last else None, "last_hold_test.age_days" if last else None, f.code)]


def _purge_after_change(ctx: _Ctx) -> list[Item]:
    """Each supply whose cylinder was changed: the purge on record since, or a box to tick."""
    d = ctx.display
    out = []
    for sid, ps in ctx.a.purges.items():
        when = d.clock(ps.change.at, ctx.now)
        p = ps.purge
        if p is None:
            out.append(Item(f"purge-after-change:{sid}", f"{sid}: purge the line of air after the cylinder change "
                            f"of {when} (no purge recorded)"))
            continue
        how = f"{p.cycles} pressure cycles" if p.cycles is not None else "a flush"
        out.append(Item(f"purge-after-change:{sid}", f"{sid}: line purged after the cylinder change of {when}", "ok",
                        f"{how}, {p.gas_standard_litres:.3g} standard L of gas, {d.clock(p.at, ctx.now)}"
                        + (f" by {p.operator}" if p.operator else ""), "purge recorded in the journal",
                        p.gas_standard_litres, None))
    return out


def _room_release(ctx: _Ctx) -> list[Item]:
    """One item per hazard of a sudden release, each on the cylinder that is worst for it."""
    room = ctx.a.plan.room
    if room is None:
        return [_item(ctx, "room-release", "Room oxygen if a cylinder empties into the room", "no room in profile",
                      ctx.about("room", ("no-room",)), "")]
    if not room.cases:
        return [Item("room-release", "Room oxygen if a cylinder empties into the room", "ok",
                     "no cylinder stands in the room", "cylinders outside take no part in a release")]
    idx = {c.supply: i for i, c in enumerate(room.cases)}
    worst = min(room.cases, key=lambda c: c.release.o2_percent_after_release)
    rich = max(room.cases, key=lambda c: c.release.o2_percent_after_release)
    c = rich if rich.release.o2_percent_after_release > room.c0_percent else worst
    r = c.release
    out = [_item(ctx, "room-release", f"Room oxygen if all of {c.supply}, full, escapes at once",
                 f"{r.o2_percent_after_release:.1f} % O2 ({r.model} model; today {c.o2_percent_today:.1f} %)",
                 ctx.about("room", ("room-release", "room-enrichment", "room-pooling")),
                 "stays between 19.5 % and 23.5 %", r.o2_percent_after_release,
                 f"room.cases[{idx[c.supply]}].release.o2_percent_after_release")]
    # a release is judged on short-term limits: gases with only an 8-hour limit (SF6) have no item
    toxic = [x for x in room.cases if x.toxic is not None
             and (x.toxic.stel_percent or x.toxic.idlh_percent or x.toxic.incapacitating_percent)]
    if toxic:
        t = max(toxic, key=lambda x: (x.toxic.rank, x.toxic.percent) if x.toxic else (0, 0.0))
        assert t.toxic is not None
        out.append(_item(ctx, "room-toxic", f"Toxic gas if all of {t.supply}, full, escapes at once",
                         f"{t.toxic.component} {t.toxic.percent:.2f} % ({t.toxic.band})",
                         ctx.about("room", ("room-toxic",)), "below the short-term exposure limit",
                         t.toxic.percent, f"room.cases[{idx[t.supply]}].toxic.percent"))
    burn = [x for x in room.cases if x.flammable is not None]
    if burn:
        b = max(burn, key=lambda x: x.flammable.percent_of_lfl if x.flammable else 0.0)
        assert b.flammable is not None
        out.append(_item(ctx, "room-flammable", f"Flammable gas if all of {b.supply}, full, escapes at once",
                         f"{b.flammable.percent_of_lfl:.0f} % of its LFL {b.flammable.lfl_percent:.3g} % "
                         f"({b.flammable.method})",
                         ctx.about("room", ("room-flammable", "segregation")), "below 25 % of the LFL (common practice)",
                         b.flammable.percent_of_lfl, f"room.cases[{idx[b.supply]}].flammable.percent_of_lfl"))
    return out


def _room_vented(ctx: _Ctx) -> list[Item]:
    room = ctx.a.plan.room
    if room is None or room.leak is None:
        return []
    lk = room.leak
    gases = "".join(
        (f"; {v.supply}: {v.toxic.component} {v.toxic.percent:.3g} % ({v.toxic.band})" if v.toxic else "")
        + (f"; {v.supply}: {v.flammable.percent_of_lfl:.0f} % of its LFL" if v.flammable else "")
        for v in room.vented)
    return [_item(ctx, "room-vented", "Room air with the draws venting into the room",
                  f"{lk.o2_percent_steady:.2f} % O2 steady, {room.vented_m3_s * 6e4:.2f} L/min vented from "
                  f"{', '.join(room.vented_by_supply) or 'an extra leak'}{gases}",
                  ctx.about("room", ("room-vented", "room-vented-toxic", "room-vented-flammable")),
                  "stays above 19.5 %, below exposure limits and 25 % of any LFL", lk.o2_percent_steady,
                  "room.leak.o2_percent_steady")]


def _gap_margins(ctx: _Ctx) -> list[Item]:
    out = []
    for i, d in enumerate(ctx.a.plan.draws):
        if d.gap is None:
            continue
        f = ctx.about(d.id, ("flashover", "gap-beyond-method"))
        if not d.gap.within_validity:
            out.append(_item(ctx, f"gap-margins:{d.id}", f"{d.id}: firing voltage", "no estimate", f, ""))
            continue
        margins = list(d.gap.margins_start) + list(d.gap.margins_reserve)
        worst = min(margins, key=lambda m: m.margin_kv) if margins else None
        figure = f"≈ {d.gap.breakdown_start_kv:.1f} kV" + (
            f"; worst margin {worst.margin_kv:+.1f} kV ({worst.part})" if worst else "")
        out.append(_item(ctx, f"gap-margins:{d.id}", f"{d.id}: firing voltage against exposed parts", figure, f,
                         "estimate; real gaps differ" if worst else "no exposed parts listed",
                         d.gap.breakdown_start_kv, f"draws[{i}].gap.breakdown_start_kv"))
    return out


def _open_findings(ctx: _Ctx) -> list[Item]:
    n = counts(ctx.a.findings)
    worst = ctx.a.findings[0] if ctx.a.findings else None
    status: Status = "ok" if worst is None or worst.severity == "info" else worst.severity
    return [Item("open-findings", "All findings resolved or accepted", status,
                 f"{n['stop']} stop, {n['warning']} warning, {n['attention']} attention",
                 "see benchwarden plan", float(n["stop"]), "finding_counts.stop",
                 worst.code if worst is not None and status != "ok" else None)]


_COMPUTED: dict[str, Callable[[_Ctx], list[Item]]] = {
    "supply-contents": _supply_contents,
    "supply-runtime": _supply_runtime,
    "regulator-ratings": _regulator_ratings,
    "regulator-outlet": _regulator_outlet,
    "leak-status": _leak_status,
    "purge-after-change": _purge_after_change,
    "room-release": _room_release,
    "room-vented": _room_vented,
    "gap-margins": _gap_margins,
    "open-findings": _open_findings,
    **SAFETY_ITEMS,
}


def build_checklist(prof: Profile, assessment: Assessment, profile_dir: Path | None = None,
                    now: dt.datetime | None = None, operator: str | None = None,
                    display: Display | None = None) -> Checklist:
    """Build the checklist of a bench from its assessment (plan, last hold test, findings)."""
    now = now or dt.datetime.now().astimezone()
    plan = assessment.plan
    display = display or Display(ambient_pa=plan.ambient_pa)
    lab = prof.checklist.items
    lab_path = None
    if lab:
        lab_path = Path(lab) if Path(lab).is_absolute() or profile_dir is None else profile_dir / lab
    ctx = _Ctx(assessment, display, now, prof)
    sections = []
    for s in item_spec(lab_path):
        items: list[Item] = []
        for it in s["items"]:
            basis = it.get("basis")
            if "computed" in it:
                items.extend(dataclasses.replace(x, basis=x.basis or basis) for x in _COMPUTED[it["computed"]](ctx))
            else:
                items.append(Item(it["id"], it["text"], basis=basis))
        if items:
            sections.append(Section(s["id"], s.get("title", s["id"]), tuple(items)))
    cautions = tuple(GENERAL) + tuple(gas_cautions([s.gas for s in prof.supplies]))
    n = counts(assessment.findings)
    return Checklist(prof.bench.name, f"{now:%a} {now.day} {now:%b %Y, %H:%M}",
                     f"{display.hours(plan.session_hours)} from {display.clock(plan.start, now)}", tuple(sections),
                     cautions,
                     operator=operator or prof.checklist.operator, second_person=prof.checklist.second_person,
                     stops=n["stop"], warnings=n["warning"], attentions=n["attention"],
                     generated_iso=(now if now.tzinfo is not None else now.astimezone()).isoformat(timespec="seconds"))


def checklist_json(cl: Checklist) -> dict[str, Any]:
    """The checklist for scripts: every item with its status, finding code and figure."""
    return {
        "bench": cl.bench, "generated_at": cl.generated_iso or cl.generated_at, "session": cl.session,
        "finding_counts": {"stop": cl.stops, "warning": cl.warnings, "attention": cl.attentions},
        "sections": [{"id": s.id, "title": s.title, "items": [
            {"id": it.id, "text": it.text, "kind": "tick" if it.status is None else "computed",
             "status": it.status, "severity": None if it.status in (None, "ok") else it.status,
             "code": it.code, "figure": it.figure, "reason": it.reason, "value": it.value, "source": it.source,
             "basis": it.basis}
            for it in s.items]} for s in cl.sections],
        "cautions": [{"topic": c.topic, "text": c.text} for c in cl.cautions],
        "estimates": cl.estimates, "defer": cl.defer, "operator": cl.operator,
    }
