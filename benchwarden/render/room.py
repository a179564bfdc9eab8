"""Room figures in words: the ``room`` tool's table rows and the oxygen words of a release."""

from __future__ import annotations

import math
from typing import Any

from benchwarden.core.hazards import ENRICHED_O2
from benchwarden.render.display import fmt_hours
from benchwarden.render.hazards import ENRICHMENT_TEXT

__all__ = ["floor_words", "leak_rows", "release_oxygen_words", "minutes", "case_line", "room_lines"]


def minutes(m: float | None, never: str = "—") -> str:
    """Minutes as hours and minutes for people (``never`` for None, NaN or infinity)."""
    if m is None or math.isnan(m) or math.isinf(m):
        return never
    return fmt_hours(m / 60.0)


def release_oxygen_words(o2_percent: float, effect: str) -> str:
    """What an oxygen level after a release means: enrichment above 23.5 %, else the effect of
    the deficiency (or none)."""
    if o2_percent > ENRICHED_O2:
        return ENRICHMENT_TEXT
    return effect or "none expected (≥ 19.5 %)"


def floor_words(floor: Any) -> str:
    """A dense gas held in the floor layer (``floor``: the release into that layer)."""
    return (f"{floor.o2_percent_after_release:.1f} % O2, {floor.gas_percent_after_release:.0f} % of the gas, if it "
            "stays in the lowest 1 m of a room taken as 2.5 m high (an assumption): it pools in pits and under benches")


def leak_rows(ck: Any, V: float, Q: float, kind: str) -> list[tuple[str, str]]:
    """Rows of the leak table (``ck``: :class:`benchwarden.workflows.roomcheck.LeakCheck`). With a
    finite source the lowest oxygen and when it happens lead, the effect follows the lowest
    value, and the steady state is shown only when the cylinder can sustain it."""
    lk, fin = ck.leak, ck.finite
    rows = [("gas", ck.gas.name), ("room", f"{V:g} m³"), ("leak", f"{lk.leak_m3_s * 6e4:.3f} L/min at room conditions"),
            ("ventilation", f"{Q * 3600:.1f} m³/h ({kind})" if Q else "none")]
    if fin is None:
        rows += [("steady oxygen", f"{lk.o2_percent_steady:.2f} %"), ("to 19.5 %", minutes(lk.minutes_to_19_5)),
                 ("to 18 %", minutes(lk.minutes_to_18)),
                 ("recovery to 19.5 %", "never below it" if math.isnan(lk.minutes_to_recover)
                  else minutes(lk.minutes_to_recover)),
                 ("effect", lk.effect or "none expected (≥ 19.5 %)")]
    else:
        empty_first = "not reached: the cylinder is empty first"
        rows += [("lowest oxygen", f"{fin.o2_percent_minimum:.2f} % after {minutes(fin.minutes_to_empty)}, when the "
                                   "cylinder is empty"),
                 ("effect", fin.effect or "none expected (≥ 19.5 %)"),
                 ("to 19.5 %", minutes(fin.minutes_to_19_5, empty_first)),
                 ("to 18 %", minutes(fin.minutes_to_18, empty_first)),
                 ("back above 19.5 % after", "never below it" if fin.minutes_to_recover is None
                  else minutes(fin.minutes_to_recover, "only with fresh air: open doors and windows")),
                 ("steady oxygen", f"{lk.o2_percent_steady:.2f} % (the cylinder lasts long enough to reach it)"
                  if fin.steady_sustained else "never reached: the cylinder is empty long before")]
    rows.append(("model", lk.method))
    return rows


def case_line(c: Any) -> str:
    """One cylinder's full release (``c``: :class:`benchwarden.workflows.model.RoomCase`), every
    hazard labelled with its own cylinder."""
    r = c.release
    parts = [f"{c.supply} ({c.full_mass_kg:.2f} kg, {r.release_volume_m3:.2f} m³): {r.o2_percent_after_release:.1f} % O2"
             + (" (oxygen-enriched)" if r.o2_percent_after_release > ENRICHED_O2 else ""),
             f"today {c.o2_percent_today:.1f} %"]
    if c.toxic is not None and c.toxic.rank > 0:
        # a release is a peak: its band is named only against the short-term limits
        parts.append(f"{c.toxic.component} {c.toxic.percent:.2f} %"
                     + (f" ({c.toxic.band})" if c.toxic.rank >= 2 else ""))
    if c.flammable is not None:
        parts.append(f"{c.flammable.percent_of_lfl:.0f} % of its LFL {c.flammable.lfl_percent:.3g} %")
    return ", ".join(parts)


def room_lines(r: Any) -> list[str]:
    """The room's figures for people (``r``: :class:`benchwarden.workflows.model.RoomPlan`)."""
    lines = [f"{r.volume_m3:g} m³, ventilation {r.ventilation_m3_s * 3600:.0f} m³/h ({r.ventilation_kind})"]
    if r.cases:
        lines.append("each cylinder in the room, full, released at once (displaced air leaves first, BCGA GN11):")
        lines += [f"  {case_line(c)}" for c in r.cases]
        if len(r.cases) > 1 and r.all_supplies is not None:
            lines.append(f"every cylinder in the room together: {r.all_supplies.o2_percent_after_release:.1f} % O2")
    else:
        lines.append("no cylinder stands in the room: no sudden-release case")
    if r.outside:
        lines.append(f"outside the room (no part in a release; their draws vent where they vent): {', '.join(r.outside)}")
    if r.release is not None and r.release_mixed is not None:
        lines.append(f"today's contents of {r.release_supply_id} released: {r.release.o2_percent_after_release:.1f} % O2 "
                     f"({r.release.method}); well mixed {r.release_mixed.o2_percent_after_release:.1f} %")
    if r.leak is not None:
        lines.append(f"vented draws {r.vented_m3_s * 6e4:.2f} L/min: steady {r.leak.o2_percent_steady:.2f} % O2")
        for v in r.vented:
            if v.toxic is not None or v.flammable is not None:
                lines.append(f"  {v.supply} by the end of the session: {v.gas_percent:.3g} % of the air"
                             + (f", {v.toxic.component} {v.toxic.percent:.3g} % ({v.toxic.band})" if v.toxic else "")
                             + (f", {v.flammable.percent_of_lfl:.0f} % of its LFL {v.flammable.lfl_percent:.3g} %"
                                if v.flammable else ""))
    return lines + list(r.notes)
