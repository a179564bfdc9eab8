"""The gas catalogue: pure gases with their handling facts (each with its source), mixtures by
mole fraction, and the parser for what a person types (``co2``, ``"he:0.8,n2:0.2"``).

Properties (densities, phases, flashes) live in :mod:`benchwarden.core.gas`, which re-exports these
names.
"""

from __future__ import annotations

import math
import re
from dataclasses import dataclass, field

from benchwarden.errors import KELVIN, PA_ABS, InputError, RangeError
from benchwarden.units.constants import T0_K

#: Molar mass of dry air, [kg/mol] (Lemmon et al. 2000, J. Phys. Chem. Ref. Data 29, 331).
AIR_MOLAR_MASS = 0.0289586
#: Molar gas constant, [J/(mol·K)] (CODATA 2018, exact).
R = 8.314462618
T0 = T0_K  # kept as the catalogue's short name


@dataclass(frozen=True)
class Handling:
    """Handling facts of a pure gas, each with its source.

    ``exposure_*`` are occupational exposure limits in ppm (8-hour time-weighted average and
    15-minute short-term limit) where one exists; ``lfl_percent`` the lower flammability limit
    in air, vol %.
    """

    asphyxiant: bool = True
    oxidiser: bool = False
    lfl_percent: float | None = None
    exposure_twa_ppm: float | None = None
    exposure_stel_ppm: float | None = None
    #: Immediately dangerous to life or health, ppm (where one is published).
    exposure_idlh_ppm: float | None = None
    #: Concentration above which a person loses consciousness within minutes, vol % (a toxic gas).
    incapacitating_percent: float | None = None
    sold_liquefied: bool = False
    #: Highest permitted filling ratio of a liquefied gas, [kg per litre of water capacity].
    max_filling_ratio_kg_l: float | None = None
    sources: tuple[str, ...] = ()
    notes: str = ""


@dataclass(frozen=True)
class PureGas:
    key: str
    name: str
    coolprop: str
    cas: str
    molar_mass: float  # kg/mol, IUPAC 2013 standard atomic weights (CIAAW)
    aliases: tuple[str, ...]
    handling: Handling


_SIMPLE_ASPHYXIANT = "EIGA Doc 44 'Hazards of inert gases and oxygen depletion'"

#: The catalogue of pure gases. Molar masses from IUPAC/CIAAW standard atomic weights.
PURE_GASES: dict[str, PureGas] = {
    g.key: g
    for g in [
        PureGas("nitrogen", "nitrogen", "Nitrogen", "7727-37-9", 0.0280134, ("n2",),
                Handling(sources=(_SIMPLE_ASPHYXIANT,))),
        PureGas("air", "air", "Air", "132259-10-0", AIR_MOLAR_MASS,
                ("dry air", "synthetic air", "zero air"),
                Handling(asphyxiant=False, oxidiser=False,
                         sources=("breathable at 20.9 % O2 (Lemmon et al. 2000 composition)",))),
        PureGas("argon", "argon", "Argon", "7440-37-1", 0.039948, ("ar",),
                Handling(sources=(_SIMPLE_ASPHYXIANT,))),
        PureGas("helium", "helium", "Helium", "7440-59-7", 0.004002602, ("he",),
                Handling(sources=(_SIMPLE_ASPHYXIANT,))),
        PureGas("neon", "neon", "Neon", "7440-01-9", 0.0201797, ("ne",),
                Handling(sources=(_SIMPLE_ASPHYXIANT,))),
        PureGas("krypton", "krypton", "Krypton", "7439-90-9", 0.083798, ("kr",),
                Handling(sources=(_SIMPLE_ASPHYXIANT,))),
        PureGas("xenon", "xenon", "Xenon", "7440-63-3", 0.131293, ("xe",),
                Handling(sources=(_SIMPLE_ASPHYXIANT,),
                         notes="narcotic at high concentration (supplier SDS)")),
        PureGas("oxygen", "oxygen", "Oxygen", "7782-44-7", 0.0319988, ("o2",),
                Handling(asphyxiant=False, oxidiser=True,
                         sources=("oxidiser: EIGA Doc 04 'Fire hazards of oxygen and oxygen-enriched "
                                  "atmospheres'; keep fittings oil- and grease-free",))),
        PureGas("hydrogen", "hydrogen", "Hydrogen", "1333-74-0", 0.00201588, ("h2",),
                Handling(lfl_percent=4.0,
                         sources=(_SIMPLE_ASPHYXIANT,
                                  "LFL 4.0 vol % in air: IEC 60079-20-1 (from memory) / NFPA 497"))),
        PureGas("carbon dioxide", "carbon dioxide", "CarbonDioxide", "124-38-9", 0.0440095,
                ("co2", "carbondioxide", "carbon-dioxide"),
                Handling(exposure_twa_ppm=5000.0, exposure_stel_ppm=30000.0, exposure_idlh_ppm=40000.0,
                         incapacitating_percent=10.0, sold_liquefied=True,
                         max_filling_ratio_kg_l=0.75,
                         sources=("TWA 5000 ppm: OSHA 29 CFR 1910.1000 Table Z-1",
                                  "filling ratio 0.75 kg/L: common practice for CO2 cylinders",
                                  "STEL 30000 ppm: NIOSH Pocket Guide (from memory); UK EH40 STEL 15000 ppm",
                                  "IDLH 40000 ppm: NIOSH IDLH values (from memory)",
                                  "incapacitating above about 10 %: unconsciousness within minutes "
                                  "(EIGA and CGA carbon dioxide safety guidance, from memory)",
                                  "liquefied below its critical temperature 31.0 °C (Span & Wagner 1996)"),
                         notes="toxic well before it displaces oxygen")),
        PureGas("sulfur hexafluoride", "sulfur hexafluoride", "SulfurHexafluoride", "2551-62-4",
                0.1460554, ("sf6", "sulphur hexafluoride", "sulfurhexafluoride"),
                Handling(exposure_twa_ppm=1000.0, sold_liquefied=True, max_filling_ratio_kg_l=1.04,
                         sources=("TWA 1000 ppm: OSHA 29 CFR 1910.1000 Table Z-1",
                                  "filling ratio 1.04 kg/L: ADR packing instruction P200 (from memory)",
                                  "liquefied below its critical temperature 45.6 °C (Guder & Wagner 2009)"),
                         notes="SF6 that has been through a discharge or an arc contains toxic breakdown products "
                               "(sulfur fluorides such as S2F10 and SOF2, and HF): recover used gas for reuse or "
                               "disposal, never vent it (EU F-gas Regulation 2024/573 and IEC 62271-4 on handling "
                               "used SF6, from memory); open arced gaps only ventilated, with gloves, eye and "
                               "respiratory protection; take the powdery deposits up with a filtered vacuum "
                               "cleaner, never by wiping or blowing, and dispose of them as hazardous waste")),
    ]
}

_FORMULA = {"nitrogen": "N2", "air": "air", "argon": "Ar", "helium": "He", "neon": "Ne", "krypton": "Kr",
            "xenon": "Xe", "oxygen": "O2", "hydrogen": "H2", "carbon dioxide": "CO2", "sulfur hexafluoride": "SF6"}

_ALIASES: dict[str, str] = {}
for _g in PURE_GASES.values():
    _ALIASES[_g.key] = _g.key
    _ALIASES[_g.coolprop.lower()] = _g.key
    for _a in _g.aliases:
        _ALIASES[_a] = _g.key


def _norm(name: str) -> str:
    return re.sub(r"\s+", " ", name.strip().lower().replace("_", " "))


def pure_gas(name: str) -> PureGas:
    """Look up a pure gas by name or common spelling (``co2``, ``sf6``, ``n2``).

    Parameters
    ----------
    name : a gas name or common spelling

    Returns
    -------
    PureGas
        The catalogue's entry with its handling facts.

    References
    ----------
    The catalogue's handling facts name their sources (supplier SDSs, EIGA, CGA, OSHA); the
    fluids are CoolProp's (Bell et al. 2014).
    """
    key = _ALIASES.get(_norm(name)) or _ALIASES.get(_norm(name).replace(" ", ""))
    if key is None:
        raise InputError(f"unknown gas {name!r}; known: {', '.join(PURE_GASES)} (or a mixture 'a:0.9,b:0.1')")
    return PURE_GASES[key]


@dataclass(frozen=True)
class Gas:
    """A pure gas or a mixture by mole fraction (components sorted as given)."""

    components: tuple[tuple[PureGas, float], ...]
    text: str = field(default="", compare=False)

    @property
    def is_mixture(self) -> bool:
        return len(self.components) > 1

    @property
    def key(self) -> str:
        if not self.is_mixture:
            return self.components[0][0].key
        return ",".join(f"{g.key}:{x:.6g}" for g, x in self.components)

    @property
    def name(self) -> str:
        if not self.is_mixture:
            return self.components[0][0].name
        return " / ".join(f"{g.name} {100 * x:.4g} %" for g, x in self.components)

    @property
    def short_name(self) -> str:
        """Short label for narrow tables: the name of a pure gas, formulas for a mixture
        (``"He/N2/CO2 mix"``).

        >>> parse_gas("sf6").short_name, parse_gas("he:0.8,n2:0.2").short_name
        ('SF6', 'He/N2 mix')
        """
        if not self.is_mixture:
            g = self.components[0][0]
            return g.name if len(g.name) <= 14 else _FORMULA.get(g.key, g.name)
        return "/".join(_FORMULA.get(g.key, g.key) for g, _ in self.components) + " mix"

    @property
    def molar_mass(self) -> float:
        """Molar mass [kg/mol] from the catalogue's IUPAC values (no CoolProp needed)."""
        return sum(g.molar_mass * x for g, x in self.components)

    @property
    def relative_density_to_air(self) -> float:
        """Ideal-gas density relative to dry air (M / M_air)."""
        return self.molar_mass / AIR_MOLAR_MASS

    def fraction(self, key: str) -> float:
        return sum(x for g, x in self.components if g.key == key)

    @property
    def sold_liquefied(self) -> bool:
        return not self.is_mixture and self.components[0][0].handling.sold_liquefied


def parse_gas(text: str) -> Gas:
    """Parse a gas name or a mixture ``"helium:0.8,nitrogen:0.135,carbon dioxide:0.065"``.

    Parameters
    ----------
    text : a gas name, or ``name:fraction`` pairs joined by commas (mole fractions)

    Returns
    -------
    Gas
        The pure gas or the mixture, its mole fractions summing to 1.

    References
    ----------
    Fluid names of CoolProp (Bell et al., Ind. Eng. Chem. Res. 53 (2014) 2498–2508).

    Examples
    --------
    >>> parse_gas("co2").name
    'carbon dioxide'
    >>> parse_gas("he:0.8, n2:0.135, co2:0.065").key
    'helium:0.8,nitrogen:0.135,carbon dioxide:0.065'
    """
    if not isinstance(text, str) or not text.strip():
        raise InputError("gas is empty; name one, e.g. 'nitrogen' or 'helium:0.8,nitrogen:0.2'")
    if ":" not in text:
        return Gas(((pure_gas(text), 1.0),), text)
    parts: dict[str, float] = {}
    order: list[PureGas] = []
    for item in text.split(","):
        if not item.strip():
            continue
        if ":" not in item:
            raise InputError(f"mixture component {item.strip()!r} has no mole fraction; write 'name:fraction'")
        name, _, frac = item.rpartition(":")
        g = pure_gas(name)
        try:
            x = float(frac)
        except ValueError:
            raise InputError(f"mole fraction {frac.strip()!r} of {name.strip()} is not a number") from None
        if not math.isfinite(x) or x <= 0 or x > 1:
            raise InputError(f"mole fraction {frac.strip()} of {g.name} must be > 0 and ≤ 1")
        if g.key in parts:
            raise InputError(f"{g.name} appears twice in mixture {text!r}")
        parts[g.key] = x
        order.append(g)
    total = sum(parts.values())
    if abs(total - 1.0) > 1e-4:
        raise InputError(f"mole fractions in {text!r} sum to {total:.6g}; they must sum to 1 within 1e-4")
    comps = tuple((g, parts[g.key] / total) for g in order)
    if len(comps) == 1:
        return Gas(((comps[0][0], 1.0),), text)
    return Gas(comps, text)


#: Sublimation-pressure equation of carbon dioxide (Span & Wagner 1996, J. Phys. Chem. Ref.
#: Data 25, 1509, eq. 3.12): ln(p/p_t) = (T_t/T)·Σ a_i·(1 − T/T_t)^t_i, with the triple point
#: T_t = 216.592 K, p_t = 0.51795 MPa. Coefficients from the paper (from memory; the test
#: checks the normal sublimation point 194.69 K at 1 atm, NIST Webbook).
_SUBLIMATION = {
    "carbon dioxide": (216.592, 0.51795e6, ((-14.740846, 1.0), (2.4327015, 1.9), (-5.3061778, 2.9))),
}


def has_sublimation_line(gas: Gas) -> bool:
    """Whether a sublimation line is known here for the gas (pure CO2).

    Parameters
    ----------
    gas : the gas (pure or a mixture by mole fraction)

    Returns
    -------
    bool
        True for pure CO2.

    References
    ----------
    Span & Wagner, J. Phys. Chem. Ref. Data 25 (1996) 1509–1596, eq. 3.12 (CO2's sublimation line).
    """
    return not gas.is_mixture and gas.components[0][0].key in _SUBLIMATION


def sublimation_pressure(gas: Gas, T: float) -> float:
    """Sublimation pressure [Pa] of solid CO2 at T [K] below its triple point
    (Span & Wagner 1996, eq. 3.12).

    Parameters
    ----------
    gas : the gas (pure or a mixture by mole fraction) (pure CO2)
    T : Temperature below the triple point, [K]

    Returns
    -------
    float
        Sublimation pressure [Pa].

    References
    ----------
    Span & Wagner, J. Phys. Chem. Ref. Data 25 (1996) 1509–1596, eq. 3.12.

    Examples
    --------
    >>> round(sublimation_pressure(parse_gas("co2"), 194.686) / 1e3, 2)   # 1 atm
    101.33
    """
    if not has_sublimation_line(gas):
        raise InputError(f"no sublimation line is known here for {gas.name}")
    Tt, pt, terms = _SUBLIMATION[gas.components[0][0].key]
    if not 0 < T <= Tt:
        raise RangeError(what="temperature", value=T, lo=0.0, lo_open=True, hi=Tt, unit=KELVIN,
                         hi_name=f"the triple point of {gas.name}")
    x = 1.0 - T / Tt
    return pt * math.exp(Tt / T * sum(a * x**e for a, e in terms))


def sublimation_temperature(gas: Gas, p: float) -> float:
    """Temperature [K] on the sublimation line at absolute pressure p [Pa] (inverse of
    :func:`sublimation_pressure` by bisection).

    Parameters
    ----------
    gas : the gas (pure or a mixture by mole fraction) (pure CO2)
    p : Absolute pressure below the triple-point pressure, [Pa]

    Returns
    -------
    float
        Temperature on the sublimation line [K].

    References
    ----------
    Span & Wagner, J. Phys. Chem. Ref. Data 25 (1996) 1509–1596, eq. 3.12 (inverted by bisection).

    Examples
    --------
    >>> round(sublimation_temperature(parse_gas("co2"), 101325.0) - 273.15, 2)
    -78.46
    """
    Tt, pt, _ = _SUBLIMATION[gas.components[0][0].key] if has_sublimation_line(gas) else (0, 0, ())
    if not has_sublimation_line(gas):
        raise InputError(f"no sublimation line is known here for {gas.name}")
    if not 0 < p <= pt:
        raise RangeError(what="pressure", value=p, lo=0.0, lo_open=True, hi=pt, unit=PA_ABS,
                         hi_name=f"the triple-point pressure of {gas.name}")
    lo, hi = 100.0, Tt
    for _ in range(80):
        mid = 0.5 * (lo + hi)
        if sublimation_pressure(gas, mid) < p:
            lo = mid
        else:
            hi = mid
    return 0.5 * (lo + hi)
