"""Hazards in words: a gas's own toxicity band, its flammability against its LFL, oxygen
enrichment. The numbers come from :mod:`benchwarden.core.hazards`; every limit is shown with
its source (or "common practice" / "from memory" as the catalogue marks it).
"""

from __future__ import annotations

from typing import Any

from benchwarden.core.hazards import ENRICHED_O2, LFL_ALARM_FRACTION, Flammable, Toxic

__all__ = ["BAND_WORDS", "toxic_text", "flammable_text", "flammable_band", "hazard_items", "ENRICHMENT_TEXT",
           "LFL_RULE", "CO2_DETECTOR"]

BAND_WORDS: dict[str, str] = {
    "below-twa": "below its 8-hour exposure limit",
    "above-twa": "above its 8-hour exposure limit (TWA)",
    "above-stel": "above its 15-minute exposure limit (STEL): headache, breathlessness, faster pulse",
    "above-idlh": "above the level immediately dangerous to life or health (IDLH): leave at once",
    "incapacitating": "in the range where a person loses consciousness within minutes",
}

LFL_RULE = (f"above {100 * LFL_ALARM_FRACTION:.0f} % of the LFL is a stop (the usual first alarm level of "
            "flammable-gas detectors: common practice)")
ENRICHMENT_TEXT = (f"above {ENRICHED_O2:g} % oxygen the air is oxygen-enriched: clothing, hair and oil burn "
                   "readily and fiercely — a fire hazard, not a breathing one (29 CFR 1910.146, from memory)")
CO2_DETECTOR = "an oxygen monitor does not detect toxic CO2: fit a CO2 detector where CO2 is used"


def _limits(t: Toxic) -> str:
    parts = [f"{name} {v:g} %" for name, v in (("TWA", t.twa_percent), ("STEL", t.stel_percent),
                                               ("IDLH", t.idlh_percent), ("unconscious above about",
                                                                          t.incapacitating_percent))
             if v is not None]
    srcs = [s for s in t.sources if any(k in s for k in ("TWA", "STEL", "IDLH", "incapacitating"))]
    return "; ".join(parts) + (f" ({'; '.join(srcs)})" if srcs else "")


def toxic_text(t: Toxic, release: bool = False) -> str:
    """``carbon dioxide at 12.70 % is in the range where …; TWA 0.5 %, STEL 3 % … (sources)``.
    A one-off release is judged on short-term limits: below the STEL its 8-hour limit is named as
    what it is, a limit for continuous exposure."""
    if release and t.rank < 2:
        return (f"{t.component} at {t.percent:.2f} %: a one-off release is judged on short-term limits; its 8-hour "
                f"limit applies to continuous leaks and vented gas; {_limits(t)}")
    return f"{t.component} at {t.percent:.2f} % is {BAND_WORDS[t.band]}; {_limits(t)}"


def flammable_band(f: Flammable) -> str:
    if f.percent >= f.lfl_percent:
        return "above-lfl"
    if f.percent_of_lfl > 100 * LFL_ALARM_FRACTION:
        return "above-25-percent-lfl"
    return "below-25-percent-lfl"


def flammable_text(f: Flammable) -> str:
    where = "above its lower flammability limit: it can burn" if f.percent >= f.lfl_percent else \
        f"{f.percent_of_lfl:.0f} % of its lower flammability limit"
    src = f"; {'; '.join(f.sources)}" if f.sources else ""
    return (f"{f.fuels} gives {f.percent:.2f} % of the gas in the room, {where} ({f.lfl_percent:.3g} %, "
            f"{f.method}{src}); {LFL_RULE}")


def hazard_items(tox: Toxic | None, fl: Flammable | None, o2_percent: float,
                 release: bool = False) -> list[dict[str, Any]]:
    """The hazards for JSON: ``kind``, ``band`` and the figures, with the words; ``criterion``
    says which limits judge it (``short-term`` for a release, ``time-weighted`` for a leak)."""
    out: list[dict[str, Any]] = []
    if o2_percent > ENRICHED_O2:
        out.append({"kind": "oxygen-enrichment", "band": "enriched", "o2_percent": o2_percent,
                    "limit_percent": ENRICHED_O2, "text": ENRICHMENT_TEXT})
    if tox is not None:
        out.append({"kind": "toxic", "band": tox.band, "component": tox.component, "percent": tox.percent,
                    "limit_percent": tox.limit_percent, "twa_percent": tox.twa_percent,
                    "stel_percent": tox.stel_percent, "idlh_percent": tox.idlh_percent,
                    "incapacitating_percent": tox.incapacitating_percent,
                    "criterion": "short-term" if release else "time-weighted",
                    "judged": not release or tox.rank >= 2, "text": toxic_text(tox, release)})
    if fl is not None:
        out.append({"kind": "flammable", "band": flammable_band(fl), "fuels": fl.fuels, "percent": fl.percent,
                    "lfl_percent": fl.lfl_percent, "percent_of_lfl": fl.percent_of_lfl,
                    "text": flammable_text(fl)})
    return out
