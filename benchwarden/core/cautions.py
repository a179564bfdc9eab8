"""Cautions shown by the app and printed on the checklist, in the usual words of safety
practice. Each defers to local codes, the gas supplier's safety data sheet (SDS) and the lab's
own procedures; every figure benchwarden computes is an estimate, not a guarantee of safety.
"""

from __future__ import annotations

from dataclasses import dataclass

from benchwarden.core.gas import Gas

DEFER = ("Follow local codes and regulations, the gas supplier's safety data sheet and your lab's own "
         "procedures and licensed practice; they take precedence over anything shown here.")
ESTIMATES = ("All figures are estimates from models and the data you entered. They are not a guarantee "
             "of safety and do not replace measurement, inspection or a competent person's judgement.")


@dataclass(frozen=True)
class Caution:
    topic: str
    text: str


GENERAL: tuple[Caution, ...] = (
    Caution("Compressed gas",
            "Secure every cylinder upright with a chain or strap; keep the valve guard or cap on when it is "
            "not connected; move cylinders on a trolley. Use a regulator made for the gas and its valve "
            "connection; never force or adapt a connection. Open valves slowly, standing beside the regulator, "
            "not in front of it. Never heat a cylinder. Vent a line before working on it and never tighten a "
            "fitting under pressure."),
    Caution("Oxygen deficiency",
            "Inert gases (nitrogen, argon, helium, SF6, CO2 and premixes) displace oxygen without warning: "
            "low oxygen is not felt as breathlessness, and judgement fails before a person notices. Ventilate, "
            "duct exhausts outside, keep spare cylinders outdoors or in a ventilated store, and use a fixed "
            "oxygen monitor with alarm where gas can accumulate. Never enter a space where someone has "
            "collapsed without breathing apparatus: raise the alarm."),
    Caution("High voltage",
            "Pulsed-discharge benches store lethal energy in capacitors. Use interlocked enclosures, a "
            "grounding stick and a visible dump before touching anything; keep one hand away; never work alone. "
            "A gap's firing voltage changes with its gas pressure: a higher pressure can make exposed parts "
            "flash over."),
    Caution("Laser radiation",
            "Wear eye protection rated for the laser's wavelength and power; control the beam path and the "
            "room's access while the laser can fire. Ultraviolet and infrared beams are invisible."),
)


def gas_cautions(gases: list[Gas]) -> list[Caution]:
    """Cautions from the handling facts of the gases on a bench (one per hazard, named sources)."""
    out: list[Caution] = []
    seen: set[str] = set()
    for gas in gases:
        for comp, x in gas.components:
            h = comp.handling
            key = comp.key
            if key in seen:
                continue
            seen.add(key)
            parts: list[str] = []
            if h.asphyxiant:
                parts.append("asphyxiant")
            if h.oxidiser:
                parts.append("oxidiser: keep oil, grease and combustibles away; use oxygen-clean parts")
            if h.lfl_percent:
                parts.append(f"flammable from {h.lfl_percent:g} % in air: no ignition sources, ventilate, detect")
            if h.exposure_twa_ppm:
                parts.append(f"toxic: 8-hour exposure limit {h.exposure_twa_ppm:.0f} ppm")
            if h.sold_liquefied:
                parts.append("liquefied in the cylinder: weigh it to know the contents; expanding it cools "
                             "strongly (CO2 forms dry ice)")
            rd = comp.molar_mass / 0.0289586
            if rd > 1.1:
                parts.append("heavier than air: collects at floor level and in pits")
            elif rd < 0.9:
                parts.append("lighter than air: collects under the ceiling")
            if h.notes:
                parts.append(h.notes)
            share = "" if x == 1.0 else f" ({100 * x:.3g} % of {gas.name})"
            out.append(Caution(f"{comp.name}{share}", "; ".join(parts) + f". Sources: {'; '.join(h.sources)}."))
    return out
