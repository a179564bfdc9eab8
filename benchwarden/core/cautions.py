"""Cautions shown by the app and printed on the checklist, in the usual words of safety
practice. Each defers to local codes, the gas supplier's safety data sheet (SDS) and the lab's
own procedures; every figure benchwarden computes is an estimate, not a guarantee of safety.
"""

from __future__ import annotations

from dataclasses import dataclass

from benchwarden.core import hazards as hz
from benchwarden.core.gases import Gas, PureGas, has_sublimation_line

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
            "Inert gases (nitrogen, argon, helium, SF6 and their mixtures) displace oxygen without warning: "
            "low oxygen is not felt as breathlessness, and judgement fails before a person notices. Carbon "
            "dioxide is different: it makes a person breathless and is toxic well before it displaces much "
            "oxygen, and an oxygen monitor does not detect it. Ventilate, duct exhausts outside, keep spare "
            "cylinders outdoors or in a ventilated store, and use a fixed oxygen monitor with alarm (a CO2 "
            "detector where CO2 is used) where gas can accumulate. When an alarm sounds, leave and do not "
            "re-enter; close valves only from a safe place. Never enter a space where someone has collapsed "
            "without breathing apparatus: raise the alarm."),
    Caution("High voltage",
            "Pulsed-discharge benches store lethal energy in capacitors. Use interlocked enclosures, a "
            "grounding stick and a visible dump before touching anything; keep one hand away; never work alone. "
            "A gap's firing voltage changes with its gas pressure: a higher pressure can make exposed parts "
            "flash over."),
    Caution("Laser radiation",
            "Wear eye protection rated for the laser's wavelength and power; control the beam path and the "
            "room's access while the laser can fire. Ultraviolet and infrared beams are invisible."),
)


def _toxic_part(comp: PureGas, x: float) -> str:
    h = comp.handling
    limits = [f"{name} {v / 1e4:g} %" for name, v in (("TWA", h.exposure_twa_ppm), ("STEL", h.exposure_stel_ppm),
                                                      ("IDLH", h.exposure_idlh_ppm)) if v]
    share = "" if x == 1.0 else f" ({100 * x:.3g} % of the gas)"
    if not (h.exposure_stel_ppm or h.exposure_idlh_ppm or h.incapacitating_percent):
        # only a shift average is published: a limit for continuous exposure, not a poison in a release
        return (f"{comp.name}{share}: 8-hour exposure limit {', '.join(limits)} for continuous exposure to leaks and "
                "vented gas")
    words = f"{comp.name}{share} is toxic: exposure limits {', '.join(limits)}"
    if h.incapacitating_percent:
        words += f"; above about {h.incapacitating_percent:g} % unconsciousness within minutes"
    if comp.key == "carbon dioxide":
        words += "; it causes breathlessness and headache, and an oxygen monitor does not detect it: use a CO2 detector"
    return words


def gas_caution(gas: Gas) -> Caution:
    """The caution for one gas as it is: the mixture's density, liquefaction, flammability (its
    LFL by Le Chatelier's rule), oxidising power and the toxicity of each component, with sources.

    Parameters
    ----------
    gas : the gas (pure or a mixture by mole fraction)

    Returns
    -------
    Caution
        The topic and one paragraph of caution for this gas.

    References
    ----------
    The catalogue's handling facts with their sources (:mod:`benchwarden.core.gases`: supplier
    SDSs, EIGA, CGA, OSHA).
    Le Chatelier (1891), as given in Crowl & Louvar, *Chemical Process Safety* (from memory):
    the LFL of a mixture.
    """
    parts: list[str] = []
    sources: list[str] = []
    o2 = hz.gas_o2_percent(gas)
    if hz.is_oxidiser(gas):
        parts.append(f"oxidiser: it enriches the air, and above about {hz.ENRICHED_O2:g} % oxygen (an oxygen-enriched "
                     "atmosphere, 29 CFR 1910.146, from memory) clothing, hair and oil catch fire easily and burn "
                     "fiercely; keep oil, grease and combustibles away, use oxygen-clean parts, never use it to blow "
                     "dust off or to freshen the air; keep it apart from fuel gases")
    elif o2 < 19.5 and all(c.handling.asphyxiant or c.handling.exposure_twa_ppm for c, _ in gas.components):
        parts.append("asphyxiant: displaces oxygen")
    lfl = hz.mixture_lfl(gas)
    if lfl is not None:
        how = "" if not gas.is_mixture else " (mixture, by Le Chatelier's rule)"
        parts.append(f"flammable from {lfl:.3g} % in air{how}: no ignition sources, ventilate, detect; purge the air "
                     "out of lines with an inert gas before admitting it")
    for comp, x in gas.components:
        if comp.handling.exposure_twa_ppm or comp.handling.exposure_stel_ppm:
            parts.append(_toxic_part(comp, x))
    if gas.sold_liquefied:
        dry_ice = " and forms dry ice" if has_sublimation_line(gas) else ""
        parts.append(f"liquefied in the cylinder: weigh it to know the contents; expanding it cools strongly{dry_ice}; "
                     "cold-burn gloves when liquid can escape")
    rd = gas.relative_density_to_air
    if rd > 1.2:
        parts.append(f"{rd:.1f}× as dense as air: collects at floor level and in pits")
    elif rd < 0.8:
        parts.append(f"{rd:.2f}× as dense as air: rises and collects under the ceiling")
    for comp, _ in gas.components:
        if comp.handling.notes and comp.key != "carbon dioxide":  # CO2's note is its toxicity, said above
            parts.append(comp.handling.notes)
        liquid_facts = ("filling ratio", "liquefied below")
        sources += [src for src in comp.handling.sources if src not in sources
                    and (gas.sold_liquefied or not any(k in src for k in liquid_facts))]
    if not parts:
        parts.append("breathable: it neither displaces nor enriches the room's oxygen")
    return Caution(gas.name, "; ".join(parts) + f". Sources: {'; '.join(sources)}.")


def gas_cautions(gases: list[Gas]) -> list[Caution]:
    """One caution per distinct gas on a bench, built for the gas as it is (see :func:`gas_caution`).

    Parameters
    ----------
    gases : the gases of the bench's supplies

    Returns
    -------
    list of Caution
        One caution per distinct gas, in the order first met.

    References
    ----------
    As :func:`gas_caution`.
    """
    out: list[Caution] = []
    seen: set[str] = set()
    for gas in gases:
        if gas.key in seen:
            continue
        seen.add(gas.key)
        out.append(gas_caution(gas))
    return out
