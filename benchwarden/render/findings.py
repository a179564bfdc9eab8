"""Findings in words: one sentence and one figure per finding code, in the display units.

The rules live in :mod:`benchwarden.workflows.findings`; this module only words them. Every code
the rules can produce has a template here (a test checks it).
"""

from __future__ import annotations

import datetime as dt
import math
from collections.abc import Callable
from typing import TYPE_CHECKING, Any

from benchwarden.core.hazards import IMPAIRED_O2
from benchwarden.render.display import Display
from benchwarden.render.hazards import BAND_WORDS, CO2_DETECTOR, ENRICHMENT_TEXT, LFL_RULE
from benchwarden.render.numbers import fmt_uncertain, fmt_value

if TYPE_CHECKING:  # a finding is data: words need no rule loaded (the app draws first)
    from benchwarden.workflows.findings import Finding

__all__ = ["SEVERITY_MARK", "SEVERITY_WORD", "SEVERITY_STYLE", "OK_STYLE", "TEMPLATES", "VERDICT_WORDS", "describe", "where", "worded",
           "finding_dict", "short_words", "verdict_words"]

SEVERITY_MARK: dict[str, str] = {"stop": "✖ STOP", "warning": "▲ WARNING", "attention": "● ATTENTION",
                                 "info": "ℹ INFO"}
SEVERITY_WORD: dict[str, str] = {"stop": "STOP", "warning": "WARNING", "attention": "ATTENTION", "info": "INFO"}
#: The colour (a terminal style) of each severity, and of nothing to report.
SEVERITY_STYLE: dict[str, str] = {"stop": "bold red", "warning": "dark_orange", "attention": "yellow", "info": "dim"}
OK_STYLE = "green"

Template = Callable[["Finding", Any, Display], tuple[str, str]]


def _clock(iso: str) -> str:
    return dt.datetime.fromisoformat(iso).strftime("%H:%M")


def _num(x: Any, fmt: str = ".3g") -> str:
    return "—" if x is None or (isinstance(x, float) and not math.isfinite(x)) else format(x, fmt)


TEMPLATES: dict[str, Template] = {
    "liquefied-reading": lambda f, v, d: (
        f"reading {d.gauge(v['reading_abs_pa'])} differs from the vapour pressure of {v['gas']} at "
        f"{d.temperature(v['temperature_k'])} by more than 15 %: check the gauge or the temperature",
        f"vapour pressure {d.gauge(v['vapour_pressure_abs_pa'])}"),
    "liquefied-no-weight": lambda f, v, d: (
        f"{v['gas']} is liquid in the cylinder at {d.temperature(v['temperature_k'])}: its pressure says nothing "
        "about the contents; add gross and tare weights", "no weights"),
    "liquid-full": lambda f, v, d: (
        f"{f.subject} ({v['gas']}) is liquid-full at {d.temperature(v['temperature_k'])}: no vapour space, the "
        "pressure is the liquid's and rises steeply as it warms; a warm liquid-full cylinder relies on its relief "
        "device — keep it cool and out of the sun, do not heat it, and ask the supplier",
        f"{d.gauge(v['pressure_abs_pa'])}"
        + (f"; liquid-full from {d.temperature(v['liquid_full_temperature_k'])}"
           if v.get("liquid_full_temperature_k") is not None else "")),
    "liquid-full-when-warm": lambda f, v, d: (
        f"{f.subject} ({v['gas']}) becomes liquid-full at {d.temperature(v['liquid_full_temperature_k'])}, below "
        f"the hot-day {d.temperature(v['hot_day_k'])}: from there its pressure rises steeply and it relies on its "
        "relief device — keep it cool", f"liquid-full from {d.temperature(v['liquid_full_temperature_k'])}"),
    "contents-temperature-sensitive": lambda f, v, d: (
        f"the contents of {f.subject} move by {abs(v['mass_sensitivity_kg_per_k'] or 0.0):.3g} kg per kelvin here: "
        f"±{v['temperature_uncertainty_k']:g} K of temperature is more than 5 % of the mass — weigh the cylinder "
        "(gross − tare)",
        f"{v['mass_kg']:.3g} ± {v['mass_uncertainty_kg']:.2g} kg"),
    "overfilled": lambda f, v, d: (
        f"{v['mass_kg']:.2f} kg of {v['gas']} in {v['volume_m3'] * 1000:.3g} L is above the filling ratio permitted "
        "for it: the cylinder is overfilled and becomes liquid-full on warming. Check the weights; if they are "
        "right, keep it cool, do not use it and call the supplier",
        f"{v['filling_ratio_kg_l']:.2f} > {v['max_filling_ratio_kg_l']:.2f} kg/L"),
    "reserve-before-end": lambda f, v, d: (
        f"{f.subject} reaches its reserve after {d.hours(v['hours'])}, before the planned "
        f"{d.hours(v['session_hours'])} session ends: swap the cylinder first or shorten the session",
        f"{v['hours']:.2f} h of {v['session_hours']:.2f} h"),
    "reserve-within-gauge-error": lambda f, v, d: (
        f"{f.subject} lasts {d.hours(v['hours'])}, but within the gauge's error it could be only "
        f"{d.hours(v['hours_low'])}, less than the session", f"{v['hours_low']:.2f}–{v['hours_high']:.2f} h"),
    "at-or-below-reserve": lambda f, v, d: (
        f"{f.subject} is at or below its reserve: close it and change the cylinder before going on",
        f"{d.gauge(v['pressure_abs_pa'])} ≤ reserve {d.gauge(v['reserve_abs_pa'])}"),
    "regulator-not-regulating": lambda f, v, d: (
        f"{v['supply']} is at or below the set point of {f.subject}: the regulator no longer regulates, its "
        "outlet and the gaps' firing voltage fall with the cylinder — stop and change the cylinder",
        f"{d.gauge(v['pressure_abs_pa'])} ≤ set point {d.gauge(v['set_point_abs_pa'])}"),
    "estimated-mixing": lambda f, v, d: (
        f"{v['gas']}: no published mixing parameters for {v['pairs']}; properties use the Lorentz-Berthelot "
        "estimate", "estimate"),
    "no-gauge": lambda f, v, d: (
        f"{f.subject} has no gauge in the profile: run time has no uncertainty band", "no band"),
    "inlet-rating": lambda f, v, d: (
        f"{v['supply']} at {d.gauge(v['pressure_abs_pa'])} is above the inlet rating of {f.subject}",
        f"{d.gauge(v['pressure_abs_pa'])} > {d.gauge(v['rating_abs_pa'])}"),
    "inlet-rating-hot": lambda f, v, d: (
        f"on a {d.temperature(v['temperature_k'])} day {v['supply']} would reach {d.gauge(v['pressure_abs_pa'])}, "
        f"above the inlet rating of {f.subject}", f"{d.gauge(v['pressure_abs_pa'])} > {d.gauge(v['rating_abs_pa'])}"),
    "regulator-solid": lambda f, v, d: (
        f"{v['gas']} expanding to the set point forms solid (dry ice) in {f.subject}: it can block and then "
        "release suddenly — use a regulator made for this service or a higher outlet pressure",
        f"outlet at {d.temperature(v['temperature_k'])}"),
    "regulator-near-dry-ice": lambda f, v, d: (
        f"{v['gas']} leaves {f.subject} only {v['dry_ice_margin_k']:.1f} K above the line where solid (dry ice) "
        "forms: a colder body, a higher flow or a lower outlet pressure puts it over — use a heated regulator or a "
        "higher outlet pressure", f"outlet at {d.temperature(v['temperature_k'])}"),
    "regulator-liquid": lambda f, v, d: (
        f"liquid {v['gas']} forms at the outlet of {f.subject}", f"outlet at {d.temperature(v['temperature_k'])}"),
    "regulator-icing": lambda f, v, d: (
        f"gas leaves {f.subject} at about {d.temperature(v['temperature_k'])} in steady flow: frost on the body, "
        "stiff diaphragm; a heated regulator or lower flow helps", d.temperature(v["temperature_k"])),
    "outlet-drift-range": lambda f, v, d: (
        f"{f.subject}'s outlet drifts above its range as {v['supply']} empties",
        f"{d.gauge(v['pressure_abs_pa'])} at reserve"),
    "outlet-drift-rating": lambda f, v, d: (
        f"{f.subject}'s outlet drifts above the downstream rating as {v['supply']} empties",
        f"{d.gauge(v['pressure_abs_pa'])} > {d.gauge(v['limit_abs_pa'])}"),
    "no-relief": lambda f, v, d: (
        f"{f.subject} has no relief valve: a failed regulator puts the full cylinder pressure on the downstream "
        "parts", f"downstream rated {d.gauge(v['limit_abs_pa'])}"),
    "relief-above-rating": lambda f, v, d: (
        f"the relief of {f.subject} opens above the downstream working pressure",
        f"{d.gauge(v['relief_abs_pa'])} > {d.gauge(v['limit_abs_pa'])}"),
    "relief-below-set-point": lambda f, v, d: (
        f"the relief of {f.subject} is at or below its set point: it will vent",
        f"{d.gauge(v['relief_abs_pa'])} ≤ {d.gauge(v['set_point_abs_pa'])}"),
    "gap-beyond-method": lambda f, v, d: (
        f"gap {f.subject} works at p·d = {v['pd_bar_cm']:.0f} bar·cm, beyond the ~100 bar·cm the breakdown "
        "methods cover: no firing-voltage estimate", "no estimate"),
    "flashover": lambda f, v, d: (
        f"gap {f.subject} fires near {v['breakdown_kv']:.1f} kV; {v['part']} withstand{'' if str(v['part']).endswith('s') else 's'} about "
        f"{v['withstand_kv']:.1f} kV ({'at the reserve (regulator drift)' if v['at_reserve'] else 'at the start'}): "
        + ("it will flash over — lower the gap pressure or increase the clearance" if f.severity == "stop"
           else "little margin — consider a lower gap pressure"),
        f"margin {v['margin_kv']:+.1f} kV ({v['margin_percent']:+.0f} %)"),
    "no-room": lambda f, v, d: ("the profile has no room: oxygen figures are not evaluated", "no room"),
    "room-vented": lambda f, v, d: (
        f"gas vented by the draws lowers the room's oxygen to {v['o2_percent']:.1f} %"
        + (f" and passes 19.5 % after {v['minutes_to_19_5']:.0f} min" if math.isfinite(v["minutes_to_19_5"]) else "")
        + ": duct the exhaust outside or increase ventilation", f"{v['o2_percent']:.1f} % O2 steady"),
    "room-release": lambda f, v, d: (
        f"if all of {v['supply']}, full, escapes at once "
        + ("its gas is toxic before the oxygen matters (see the toxicity finding); the room's oxygen falls to "
           if v.get("lead") == "toxic" else "the room's oxygen falls to ")
        + f"{v['o2_percent']:.1f} % ({v['effect']}; {v['o2_percent_today']:.1f} % with today's contents of "
        f"{v['supply']}); "
        + (("an oxygen monitor detects this, it does not prevent it: " if v["o2_percent"] < IMPAIRED_O2 else "")
           if v["monitor"] else "fit an oxygen monitor with alarm, ")
        + "keep only the cylinders in use indoors and ventilate"
        + (f"; {CO2_DETECTOR}" if v.get("co2_detector") else ""),
        f"{v['o2_percent']:.1f} % O2 ({v['model']} model, {v['supply']})"),
    "room-enrichment": lambda f, v, d: (
        f"if all of {v['supply']}, full, escapes at once the room rises to {v['o2_percent']:.1f} % oxygen "
        f"({v['o2_percent_today']:.1f} % with today's contents): {ENRICHMENT_TEXT}; keep it small, outside or "
        "ventilated, and away from fuel gases, oil and grease",
        f"{v['o2_percent']:.1f} % O2 > {v['limit_percent']:g} % ({v['supply']})"),
    "room-toxic": lambda f, v, d: (
        f"if all of {v['supply']}, full, escapes at once: {v['component']} at {v['percent']:.2f} % is "
        f"{BAND_WORDS[v['band']]}" + (" — worse than the oxygen it leaves" if v.get("lead") == "toxic" else "")
        + f" ({v['o2_percent']:.1f} % O2)" + (f"; {CO2_DETECTOR}" if v.get("co2_detector") else ""),
        f"{v['percent']:.2f} % {v['component']}, {v['band']} ({v['supply']})"),
    "room-flammable": lambda f, v, d: (
        f"if all of {v['supply']}, full, escapes at once: {v['fuels']} reaches {v['percent']:.2f} % in the room, "
        + (f"above its lower flammability limit of {v['lfl_percent']:.3g} %: it can burn"
           if v["percent"] >= v["lfl_percent"] else
           f"{v['percent_of_lfl']:.0f} % of its lower flammability limit ({v['lfl_percent']:.3g} %)")
        + f"; {LFL_RULE}", f"{v['percent_of_lfl']:.0f} % of LFL ({v['supply']})"),
    "room-vented-toxic": lambda f, v, d: (
        f"gas vented from {v['supply']} brings {v['component']} to {v['percent']:.2f} % in the room by the end of "
        f"the session: {BAND_WORDS[v['band']]}; duct the exhaust outside"
        + (f"; {CO2_DETECTOR}" if v.get("co2_detector") else ""),
        f"{v['percent']:.2f} % {v['component']}, {v['band']} ({v['supply']})"),
    "room-vented-flammable": lambda f, v, d: (
        f"gas vented from {v['supply']} brings {v['fuels']} to {v['percent_of_lfl']:.0f} % of its lower "
        f"flammability limit in the room by the end of the session ({v['percent']:.2f} % against "
        f"{v['lfl_percent']:.3g} %): duct it outside, away from any spark; {LFL_RULE}",
        f"{v['percent_of_lfl']:.0f} % of LFL ({v['supply']})"),
    "room-pooling": lambda f, v, d: (
        f"the gas of {v['supply']} is {v['relative_density']:.1f}× as dense as air: released at once it pools at "
        f"floor level, in pits and under benches; held in the lowest {v['layer_m']:g} m of a room taken as "
        f"{v['assumed_height_m']:g} m high (an assumption) it makes up {v['gas_percent_floor']:.0f} % of the air "
        f"there and the oxygen falls to {v['o2_percent_floor']:.1f} % (well mixed {v['o2_percent_mixed']:.1f} %): "
        "place the oxygen sensor low and keep out of pits",
        f"{v['o2_percent_floor']:.1f} % O2 at floor level ({v['supply']})"),
    "gap-fuel": lambda f, v, d: (
        f"gap {f.subject} is fed with flammable {v['fuels']} from {v['supply']} and fires a spark: purge the air out "
        "of the gap and its line with inert gas before it fires, vent its exhaust to a safe place"
        + (f" (vented into the room: {v['percent_of_lfl']:.0f} % of its LFL {v['lfl_percent']:.3g} % by the end of the "
           "session)"
           if v["vents_to_room"] else ""), f"LFL {v['lfl_percent']:.3g} % ({v['supply']})"),
    "segregation": lambda f, v, d: (
        f"oxidiser ({v['oxidisers']}) and fuel gas ({v['fuels']}) in one room: keep them at least 6 m (20 ft) apart "
        "or behind a non-combustible barrier at least 1.5 m (5 ft) high with a half-hour fire rating "
        "(29 CFR 1910.253(b)(4)(iii), from memory)", f"{v['oxidisers']} / {v['fuels']}"),
    "faster-than-planned": lambda f, v, d: (
        f"{f.subject} empties faster than planned: check for leaks or a flow set too high",
        f"observed {fmt_uncertain(v['observed_kg_s'] * 6e4, v['uncertainty_kg_s'] * 6e4, 'g/min')} vs planned "
        f"{fmt_value(v['planned_kg_s'] * 6e4)} g/min"),
    "reserve-before-end-live": lambda f, v, d: (
        f"{f.subject} reaches its reserve at {_clock(v['reserve_at'])}, before the session's planned end "
        f"{_clock(v['session_end'])}: swap the cylinder or stop early", f"reserve at {_clock(v['reserve_at'])}"),
    "no-hold-test": lambda f, v, d: (
        "no hold test has ever been recorded for this bench: run one before relying on the lines", "none"),
    "retest-overdue": lambda f, v, d: (
        f"the cylinder on {f.subject} is past its periodic-inspection (retest) date: do not use or refill it; "
        "return it to the supplier (the interval is the maker's or the local rule)", f"due {v['due']}"),
    "retest-due-soon": lambda f, v, d: (
        f"the cylinder on {f.subject} is due for its periodic inspection (retest) in {v['days']:.0f} days",
        f"due {v['due']}"),
    "service-overdue": lambda f, v, d: (
        f"{f.subject} is past its service date: have it serviced before relying on its outlet and relief",
        f"due {v['due']}"),
    "service-due-soon": lambda f, v, d: (
        f"{f.subject} is due for service in {v['days']:.0f} days", f"due {v['due']}"),
    "order-now": lambda f, v, d: (
        f"order the next {f.subject} cylinder now: at the recorded consumption the gas and spares last "
        f"{v['days_of_gas']:.0f} days, less than the supplier's lead time", f"order by {v['order_by']}"),
    "order-soon": lambda f, v, d: (
        f"order the next {f.subject} cylinder soon (gas and spares for {v['days_of_gas']:.0f} days at the recorded "
        "consumption, less the lead time)", f"order by {v['order_by']}"),
    "hold-test-leak": lambda f, v, d: (
        "the last hold test found a leak: find and fix it first", _hold_figure(v)),
    "idle-drop-leak": lambda f, v, d: (
        f"{v['supply']} lost pressure between sessions beyond what temperature and the gauge explain: a leak — "
        "find and fix it first", _hold_figure(v)),
    "leak-watch-leak": lambda f, v, d: (
        f"the leak watch on {v['supply']} found a leak while the bench stood idle: find and fix it first",
        _hold_figure(v)),
    "heat-above-test": lambda f, v, d: (
        f"heated, {f.subject} reaches {d.gauge(v['pressure_abs_pa'])}, above its test pressure "
        f"{d.gauge(v['test_abs_pa'])}: never heat a cylinder", d.gauge(v["pressure_abs_pa"])),
    "heat-above-service": lambda f, v, d: (
        f"{d.gauge(v['pressure_abs_pa'])} exceeds the service pressure {d.gauge(v['service_abs_pa'])} (rated at "
        "15 °C); check the regulator's inlet rating", d.gauge(v["pressure_abs_pa"])),
    "heat-storage-limit": lambda f, v, d: (
        f"{d.temperature(v['temperature_k'])} is above the {d.temperature(v['limit_k'])} (125 °F) limit for storing "
        "cylinders (CGA P-1, from memory): keep cylinders out of sun and away from heat", d.temperature(v["temperature_k"])),
    "countdown-short": lambda f, v, d: (
        f"{f.subject} reaches its reserve in {d.hours(v['hours'])}, before half of the session's remaining "
        f"{d.hours(v['session_left_hours'])}", f"{v['hours']:.2f} h"),
    "countdown-before-end": lambda f, v, d: (
        f"{f.subject} reaches its reserve in {d.hours(v['hours'])}, before the session's remaining "
        f"{d.hours(v['session_left_hours'])} are over", f"{v['hours']:.2f} h"),
    "alarm-reserve": lambda f, v, d: (
        f"{f.subject} reaches its reserve in {d.hours(v['hours'])}" if v["hours"] > 0
        else f"{f.subject} is at its reserve: close it and change the cylinder", f"{v['hours']:.2f} h"),
    "alarm-over-time": lambda f, v, d: (
        f"the session is over its planned time by {d.hours(v['over_hours'])}", f"+{v['over_hours']:.2f} h"),
    "alarm-leak": lambda f, v, d: (
        (f"the leak watch finds a leak on {f.subject}: close the cylinder and find it — only where the air is "
         "safe; otherwise leave and raise the alarm" if v["supply"]
         else "a leak was found: see the findings"),
        fmt_uncertain(v["leak_rate_sccm"], v["leak_rate_uncertainty_sccm"], "sccm") if v["supply"] else "leak"),
    "alarm-fast-draw": lambda f, v, d: ("a supply empties faster than planned: see the findings", "faster"),
    "alarm-gauge-silent": lambda f, v, d: (
        f"the gauge of {f.subject} is silent: no good sample for several intervals ({v['why']})", "silent"),
    "hold-test-inconclusive": lambda f, v, d: (
        "the last hold test could not tell: hold longer or use a finer gauge", _hold_figure(v)),
    "hold-test-likely-leak": lambda f, v, d: (
        f"{'the last hold test' if not v.get('supply') else 'the last hold test on ' + str(v['supply'])} points to "
        "a likely leak (above the target, not yet resolved): tighten the fittings, leak-detect them and repeat "
        "the hold for longer", _hold_figure(v)),
    "hold-test-pressure-rose": lambda f, v, d: (
        f"{'the last hold test' if not v.get('supply') else 'the last hold test on ' + str(v['supply'])}: "
        + VERDICT_WORDS["pressure-rose"], _hold_figure(v)),
    "lab-bench-silent": lambda f, v, d: (
        (f"bench {v['bench_id']} last sent its record to the lab {Display.ago(float(v['age_s']) / 86400.0)}: check "
         "its computer and its network" if v.get("age_s") is not None
         else f"bench {v['bench_id']} is registered in the lab but has never sent its record"), "silent"),
    "hold-test-old": lambda f, v, d: (
        f"the last hold test is older than {v['max_age_days']:.0f} days: repeat it", _hold_figure(v)),
    "hold-test-ok": lambda f, v, d: ("last hold test resolved no leak", _hold_figure(v)),
}


#: Words for each hold-test verdict (the set of :data:`benchwarden.core.hold.VERDICTS`).
VERDICT_WORDS: dict[str, str] = {
    "leak": "LEAK: the mass loss is larger than its expanded uncertainty — find and fix it before use",
    "likely-leak": ("LIKELY LEAK: the estimate is above the target and above its uncertainty, but not yet "
                    "resolved — tighten, leak-detect the joints and repeat the hold for longer"),
    "pressure-rose": ("the pressure ROSE beyond what the gauge and the temperature explain — a cylinder change "
                      "not recorded, warming not captured, or a wrong reading; check and repeat (this is not a "
                      "result of no leak)"),
    "inconclusive": "INCONCLUSIVE: this gauge cannot tell; hold longer or use a finer gauge",
    "no-leak-resolved": "no leak at or above the target: the test resolves it",
}


def verdict_words(verdict: str, rate_sccm: float, resolvable_sccm: float, target_sccm: float) -> str:
    """The verdict of one hold test in words, with the rate it resolves where it resolves one."""
    if verdict == "no-leak-resolved":
        return (f"no leak above {max(rate_sccm, 0.0) + resolvable_sccm:.3g} sccm (target {target_sccm:.3g} sccm; "
                f"smallest this test resolves: {resolvable_sccm:.3g} sccm)")
    return VERDICT_WORDS.get(verdict, verdict)


def _hold_figure(v: Any) -> str:
    return (f"{v['verdict']}, {fmt_uncertain(v['leak_rate_sccm'], v['leak_rate_uncertainty_sccm'], 'sccm')}, "
            f"{Display.ago(v['age_days'])}")




#: A few words for a finding where a status line or a table row has room for no sentence.
SHORT: dict[str, Callable[[Finding, Any, Display], str]] = {
    "alarm-over-time": lambda f, v, d: f"OVER TIME by {d.hours(v['over_hours'])}",
    "faster-than-planned": lambda f, v, d: "faster than planned",
}


def short_words(f: Finding, display: Display | None = None) -> str:
    """The severity's sign and a few words (:data:`SHORT`; else the finding's figure):
    ``▲ OVER TIME by 0 h 20 min``."""
    d = display or Display()
    words = SHORT[f.code](f, f.values, d) if f.code in SHORT else describe(f, d)[1]
    return f"{SEVERITY_MARK[f.severity].split()[0]} {words}"


def describe(f: Finding, display: Display | None = None) -> tuple[str, str]:
    """(sentence, figure) of a finding in the display units."""
    d = display or Display()
    template = TEMPLATES.get(f.code)
    if template is None:  # pragma: no cover - a test checks every code has a template
        return f.code, ", ".join(f"{k}={v}" for k, v in f.values.items())
    return template(f, f.values, d)


def where(f: Finding) -> str:
    """Whom a finding is about, as a line starts: its subject, led by its bench in a lab view
    (``values["bench_id"]``), ``"bench-2: n2-A"``; the sentence itself keeps the subject alone."""
    bench = f.values.get("bench_id")
    return f.subject if not bench or f.subject == bench else f"{bench}: {f.subject}"


def worded(f: Finding, display: Display | None = None) -> str:
    """A finding's sentence with its figure in brackets, ``"… [−73.5 °C]"`` (no brackets
    without a figure): one line of a command's notes."""
    text, figure = describe(f, display)
    return f"{text} [{figure}]" if figure else text


def finding_dict(f: Finding, display: Display | None = None) -> dict[str, Any]:
    """A finding for JSON: code, severity, subject, its SI numbers, and the words for people."""
    text, figure = describe(f, display)
    return {"code": f.code, "severity": f.severity, "subject": f.subject, "values": dict(f.values),
            "text": text, "figure": figure}


def question_text(q: Any, d: Display) -> str:
    """Words for a question an implausible reading raises (see
    :func:`benchwarden.workflows.cylinder.check_reading`)."""
    v = q.values
    if q.code == "rise-without-change":
        return (f"{d.gauge(float(v['pressure_abs_pa']))} is higher than the last reading "
                f"{d.gauge(float(v['previous_abs_pa']))} with no cylinder change recorded (record a new fill as a "
                "cylinder change)")
    if q.code == "unit-swapped":
        return (f"{d.gauge(float(v['pressure_abs_pa']))} is {float(v['ratio']):.2g}× the last reading "
                f"{d.gauge(float(v['previous_abs_pa']))}: was it typed in psi for bar, or bar for psi?")
    return (f"a drop from {d.gauge(float(v['previous_abs_pa']))} to {d.gauge(float(v['pressure_abs_pa']))} in "
            f"{d.hours(float(v['hours']))} is {float(v['observed_kg_s']) / float(v['planned_kg_s']):.0f}× faster "
            "than planned")
