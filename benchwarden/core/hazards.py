"""A released or vented gas judged for each hazard it carries: its own toxicity (banded against
the published limits), its flammability (against its lower flammability limit, mixtures by Le
Chatelier's rule) and what it does to the room's oxygen (deficiency, or enrichment for an
oxidiser). Codes and numbers only; the words live in :mod:`benchwarden.render`.

Thresholds and their sources
----------------------------
* Toxicity bands of a gas's own concentration C: ``below-twa`` < TWA ≤ ``above-twa`` < STEL ≤
  ``above-stel`` < IDLH ≤ ``above-idlh`` < incapacitating ≤ ``incapacitating``. The limits and
  their sources are the catalogue's (:mod:`benchwarden.core.gases`): for CO2 TWA 0.5 % (OSHA 29
  CFR 1910.1000 Table Z-1), STEL 3 % (NIOSH Pocket Guide, from memory), IDLH 4 % (NIOSH, from
  memory), unconsciousness within minutes above about 10 % (from memory).
* A sudden release is a peak, not a shift average: it is judged against the short-term criteria
  (STEL and above); the 8-hour TWA applies to continuous leaks and vented draws only.
* Oxygen: below 16 % judgement and breathing are impaired (CGA SB-2 "Oxygen-deficient
  atmospheres", effects table, from memory); above 23.5 % the atmosphere is oxygen-enriched and
  a fire hazard (OSHA 29 CFR 1910.146(b), definition of an oxygen-enriched atmosphere, from
  memory).
* Flammability: a concentration above 25 % of the LFL is a stop — the usual first alarm level of
  flammable-gas detectors (common practice).
"""

from __future__ import annotations

from dataclasses import dataclass
from typing import Literal

from benchwarden.core.gases import Gas

__all__ = [
    "BANDS", "ENRICHED_O2", "IMPAIRED_O2", "LFL_ALARM_FRACTION", "Flammable", "Toxic", "flammable",
    "gas_o2_percent", "is_oxidiser", "le_chatelier", "lead_hazard", "mixture_lfl", "oxygen_rank", "toxic",
    "uses_co2",
]

Band = Literal["below-twa", "above-twa", "above-stel", "above-idlh", "incapacitating"]
BANDS: tuple[Band, ...] = ("below-twa", "above-twa", "above-stel", "above-idlh", "incapacitating")

#: Oxygen-enriched atmosphere above this, vol % (OSHA 29 CFR 1910.146(b), from memory).
ENRICHED_O2 = 23.5
#: Impaired judgement and breathing below this, vol % (CGA SB-2 effects table, from memory).
IMPAIRED_O2 = 16.0
#: Fraction of the LFL at which a flammable concentration is a stop (common practice: the
#: usual first alarm level of flammable-gas detectors).
LFL_ALARM_FRACTION = 0.25
#: Oxygen in air, vol % (as :data:`benchwarden.core.room.C0_AIR`).
_AIR_O2 = 20.95


@dataclass(frozen=True)
class Toxic:
    """The toxicity of one component of a gas at its room concentration."""

    component: str
    percent: float
    band: Band
    twa_percent: float | None
    stel_percent: float | None
    idlh_percent: float | None
    incapacitating_percent: float | None
    sources: tuple[str, ...]

    @property
    def rank(self) -> int:
        return BANDS.index(self.band)

    @property
    def limit_percent(self) -> float | None:
        """The highest limit the concentration exceeds (None below the TWA)."""
        limits = (None, self.twa_percent, self.stel_percent, self.idlh_percent, self.incapacitating_percent)
        return limits[self.rank]


@dataclass(frozen=True)
class Flammable:
    """A flammable gas at its room concentration, against its lower flammability limit."""

    fuels: str
    lfl_percent: float
    percent: float
    percent_of_lfl: float
    method: str
    #: where each fuel's LFL comes from (the catalogue's sources)
    sources: tuple[str, ...] = ()


def _band(pct: float, limits: tuple[float | None, ...]) -> Band:
    band: Band = "below-twa"
    for b, lim in zip(BANDS[1:], limits, strict=True):
        if lim is not None and pct > lim:
            band = b
    return band


def toxic(gas: Gas, gas_percent: float) -> Toxic | None:
    """The worst-banded toxic component of ``gas`` when the gas makes up ``gas_percent`` of the
    room's air (each component at ``gas_percent`` × its mole fraction); None if no component has
    an exposure limit.

    Parameters
    ----------
    gas : the gas (pure or a mixture by mole fraction)
    gas_percent : the gas's share of the room's air, [vol %]

    Returns
    -------
    Toxic or None
        The worst component, its concentration [vol %] and its band, or None.

    References
    ----------
    Exposure limits of the catalogue (:mod:`benchwarden.core.gases`): OSHA 29 CFR 1910.1000
    Table Z-1 (TWA), NIOSH Pocket Guide (STEL, IDLH; from memory).

    Examples
    --------
    >>> from benchwarden.core.gases import parse_gas
    >>> toxic(parse_gas("co2"), 12.7).band           # 7 kg of CO2 in 30 m³
    'incapacitating'
    >>> t = toxic(parse_gas("helium:0.78,nitrogen:0.14,co2:0.08"), 28.7)   # 2.3 % CO2
    >>> t.band, round(t.percent, 2)
    ('above-twa', 2.3)
    """
    worst: Toxic | None = None
    for comp, x in gas.components:
        h = comp.handling
        if h.exposure_twa_ppm is None and h.exposure_stel_ppm is None:
            continue
        pct = gas_percent * x

        def pc(ppm: float | None) -> float | None:
            return None if ppm is None else ppm / 1e4

        lims = (pc(h.exposure_twa_ppm), pc(h.exposure_stel_ppm), pc(h.exposure_idlh_ppm), h.incapacitating_percent)
        t = Toxic(comp.name, pct, _band(pct, lims), *lims, h.sources)
        if worst is None or (t.rank, t.percent) > (worst.rank, worst.percent):
            worst = t
    return worst


def le_chatelier(fractions: list[float], lfls: list[float]) -> float:
    """Lower flammability limit of a fuel mixture by Le Chatelier's rule,
    LFL = 1 / Σ (y_i / LFL_i), with y_i the fuels' fractions normalised to 1 (Le Chatelier 1891;
    as in Crowl & Louvar, Chemical Process Safety, from memory).

    Parameters
    ----------
    fractions : the fuels' fractions, [-] (normalised to 1 here)
    lfls : the fuels' lower flammability limits, [vol %]

    Returns
    -------
    float
        LFL of the fuel mixture [vol %].

    References
    ----------
    Le Chatelier (1891), as given in Crowl & Louvar, *Chemical Process Safety* (from memory).

    Examples
    --------
    >>> round(le_chatelier([0.5, 0.5], [4.0, 5.0]), 3)
    4.444
    """
    total = sum(fractions)
    return 1.0 / sum(y / total / lfl for y, lfl in zip(fractions, lfls, strict=True))


def mixture_lfl(gas: Gas) -> float | None:
    """LFL [vol % of the gas as a whole, in air] of a gas whose components may be flammable:
    the fuels' LFL by Le Chatelier's rule divided by their share of the gas (inert components
    counted as diluent only, which ignores their slight narrowing of the range). None when no
    component burns or when the gas cannot reach its LFL even undiluted (LFL ≥ 100 %).

    Parameters
    ----------
    gas : the gas (pure or a mixture by mole fraction)

    Returns
    -------
    float or None
        LFL of the gas as a whole in air [vol %], or None.

    References
    ----------
    Le Chatelier (1891), as given in Crowl & Louvar, *Chemical Process Safety* (from memory).
    LFL values of the catalogue with their sources.

    Examples
    --------
    >>> from benchwarden.core.gases import parse_gas
    >>> mixture_lfl(parse_gas("hydrogen")), mixture_lfl(parse_gas("hydrogen:0.05,argon:0.95"))
    (4.0, 80.0)
    >>> mixture_lfl(parse_gas("hydrogen:0.02,argon:0.98")) is None
    True
    """
    xs: list[float] = []
    lfls: list[float] = []
    for comp, x in gas.components:
        if comp.handling.lfl_percent:
            xs.append(x)
            lfls.append(comp.handling.lfl_percent)
    if not xs:
        return None
    lfl = le_chatelier(xs, lfls) / sum(xs)
    return lfl if lfl < 100.0 else None


def flammable(gas: Gas, gas_percent: float) -> Flammable | None:
    """A flammable gas at ``gas_percent`` of the room's air against its (mixture) LFL; None if
    the gas cannot burn in air.

    Parameters
    ----------
    gas : the gas (pure or a mixture by mole fraction)
    gas_percent : the gas's share of the room's air, [vol %]

    Returns
    -------
    Flammable or None
        The concentration against the LFL [vol %] and its share of it [%], or None.

    References
    ----------
    Le Chatelier (1891), as given in Crowl & Louvar, *Chemical Process Safety* (from memory).
    LFL values of the catalogue with their sources; 25 % of the LFL as the first alarm level
    (common practice).
    """
    lfl = mixture_lfl(gas)
    if lfl is None:
        return None
    fuels = [c for c, _ in gas.components if c.handling.lfl_percent]
    method = ("LFL of the gas" if not gas.is_mixture else
              "LFL of the mixture by Le Chatelier's rule, inert components as diluent (Le Chatelier 1891)")
    srcs = tuple(s for c in fuels for s in c.handling.sources if "LFL" in s)
    return Flammable(", ".join(c.name for c in fuels), lfl, gas_percent, 100.0 * gas_percent / lfl, method, srcs)


def gas_o2_percent(gas: Gas) -> float:
    """Oxygen in the gas itself, vol % (pure oxygen 100, air 20.95).

    Parameters
    ----------
    gas : the gas (pure or a mixture by mole fraction)

    Returns
    -------
    float
        Oxygen in the gas [vol %].

    References
    ----------
    Air's oxygen 20.95 vol % (Lemmon et al., J. Phys. Chem. Ref. Data 29 (2000) 331, composition).
    """
    return 100.0 * gas.fraction("oxygen") + _AIR_O2 * gas.fraction("air")


def is_oxidiser(gas: Gas) -> bool:
    """An oxidising gas: more oxygen than an enriched atmosphere (> 23.5 %).

    Parameters
    ----------
    gas : the gas (pure or a mixture by mole fraction)

    Returns
    -------
    bool
        True above 23.5 vol % oxygen.

    References
    ----------
    OSHA 29 CFR 1910.146(b), oxygen-enriched atmosphere (from memory); EIGA Doc 04.
    """
    return gas_o2_percent(gas) > ENRICHED_O2


def uses_co2(gas: Gas) -> bool:
    """Whether the gas contains carbon dioxide (a detector for CO2 is then asked for).

    Parameters
    ----------
    gas : the gas (pure or a mixture by mole fraction)

    Returns
    -------
    bool
        True where any carbon dioxide is in the gas.

    References
    ----------
    OSHA 29 CFR 1910.1000 Table Z-1 (CO2 is toxic in its own right: a CO2 detector, not only an
    oxygen monitor; common practice).
    """
    return gas.fraction("carbon dioxide") > 0


def oxygen_rank(o2_percent: float) -> int:
    """How bad an oxygen level is on the scale of the toxicity bands (0 fine … 4 collapse):
    ≥ 19.5 % 0, below 19.5 % 1, below 18 % 2, below 16 % 3, below 10 % 4 (29 CFR 1910.134,
    EIGA Doc 44, CGA SB-2; from memory).

    Parameters
    ----------
    o2_percent : oxygen in the room, [vol %]

    Returns
    -------
    int
        Rank from 0 (fine) to 4 (collapse).

    References
    ----------
    OSHA 29 CFR 1910.134 (19.5 %), 29 CFR 1910.146(b) (23.5 %, oxygen-enriched), CGA SB-2 and
    EIGA Doc 44 (effects of oxygen deficiency); from memory.
    """
    for rank, bound in ((4, 10.0), (3, IMPAIRED_O2), (2, 18.0), (1, 19.5)):
        if o2_percent < bound:
            return rank
    return 0


def lead_hazard(o2_percent: float, tox: Toxic | None) -> Literal["toxic", "oxygen"]:
    """The worse of the two hazards of an asphyxiant that is also toxic: the gas's own toxicity
    band or the oxygen it leaves (a tie goes to toxicity, the one a person does not expect).

    Parameters
    ----------
    o2_percent : oxygen left in the room, [vol %]
    tox : the toxicity band of the gas, or None

    Returns
    -------
    str
        ``"toxic"`` or ``"oxygen"``.

    References
    ----------
    Exposure limits of the catalogue (:mod:`benchwarden.core.gases`): OSHA 29 CFR 1910.1000
    Table Z-1 (TWA), NIOSH Pocket Guide (STEL, IDLH; from memory).
    OSHA 29 CFR 1910.134 (19.5 %), 29 CFR 1910.146(b) (23.5 %, oxygen-enriched), CGA SB-2 and
    EIGA Doc 44 (effects of oxygen deficiency); from memory.

    Examples
    --------
    >>> from benchwarden.core.gases import parse_gas
    >>> lead_hazard(18.3, toxic(parse_gas("co2"), 12.7))
    'toxic'
    """
    if tox is not None and tox.rank > 0 and tox.rank >= oxygen_rank(o2_percent):
        return "toxic"
    return "oxygen"
