"""Gases: the catalogue, their handling facts, and real-gas properties from CoolProp.

Real-gas properties come from CoolProp's HEOS backend (the reference multiparameter
equations of state: Span et al. 2000 for nitrogen, Tegeler et al. 1999 for argon, Lemmon et
al. 2000 for air, Span & Wagner 1996 for CO2, ...). Mixtures use CoolProp's GERG-2008 /
Kunz-Wagner mixing with published binary parameters; where CoolProp has no parameters for a
pair, the Lorentz-Berthelot rule is applied and the result says it is an estimate.

CoolProp is imported lazily; each gas has one cached ``AbstractState`` (about ten times
cheaper per call than ``PropsSI``). These cached states are the package's only global
mutable state.
"""

from __future__ import annotations

import math
import re
from dataclasses import dataclass, field
from functools import lru_cache
from typing import Any

from gasbench.errors import InputError, PropertyError

#: Molar mass of dry air, [kg/mol] (Lemmon et al. 2000, J. Phys. Chem. Ref. Data 29, 331).
AIR_MOLAR_MASS = 0.0289586
#: Molar gas constant, [J/(mol·K)] (CODATA 2018, exact).
R = 8.314462618


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
    sold_liquefied: bool = False
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
                Handling(exposure_twa_ppm=5000.0, exposure_stel_ppm=30000.0, sold_liquefied=True,
                         sources=("TWA 5000 ppm: OSHA 29 CFR 1910.1000 Table Z-1",
                                  "STEL 30000 ppm: NIOSH Pocket Guide (from memory); UK EH40 STEL 15000 ppm",
                                  "liquefied below its critical temperature 31.0 °C (Span & Wagner 1996)"),
                         notes="toxic well before it displaces oxygen")),
        PureGas("sulfur hexafluoride", "sulfur hexafluoride", "SulfurHexafluoride", "2551-62-4",
                0.1460554, ("sf6", "sulphur hexafluoride", "sulfurhexafluoride"),
                Handling(exposure_twa_ppm=1000.0, sold_liquefied=True,
                         sources=("TWA 1000 ppm: OSHA 29 CFR 1910.1000 Table Z-1",
                                  "liquefied below its critical temperature 45.6 °C (Guder & Wagner 2009)"),
                         notes="arc by-products (S2F10, SOF2, HF) are toxic: handle used gas as hazardous")),
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
    """Look up a pure gas by name or common spelling (``co2``, ``sf6``, ``n2``)."""
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


# --------------------------------------------------------------------------------------
# CoolProp states (lazy, cached)


@lru_cache(maxsize=1)
def coolprop() -> Any:
    """The ``CoolProp`` module, imported on first use."""
    import CoolProp

    return CoolProp


@dataclass
class _State:
    AS: Any
    estimated_pairs: tuple[tuple[str, str], ...]


@lru_cache(maxsize=64)
def _state(key: str) -> _State:
    gas = parse_gas(key)
    CP = coolprop()
    names = "&".join(g.coolprop for g, _ in gas.components)
    estimated: list[tuple[str, str]] = []
    for _ in range(len(gas.components) ** 2 + 1):
        try:
            AS = CP.AbstractState("HEOS", names)
            break
        except ValueError as exc:
            m = re.search(r"binary pair \[([\d-]+),([\d-]+)\]", str(exc))
            if not m:
                raise PropertyError(f"CoolProp cannot build {gas.name}: {exc}") from None
            cas1, cas2 = m.group(1), m.group(2)
            # CoolProp ships no interaction parameters for this pair: estimate them.
            CP.CoolProp.apply_simple_mixing_rule(cas1, cas2, "Lorentz-Berthelot")
            by_cas = {g.cas: g.name for g in PURE_GASES.values()}
            estimated.append((by_cas.get(cas1, cas1), by_cas.get(cas2, cas2)))
    else:  # pragma: no cover - defensive
        raise PropertyError(f"CoolProp cannot build {gas.name}")
    if gas.is_mixture:
        AS.set_mole_fractions([x for _, x in gas.components])
    return _State(AS, tuple(estimated))


def state(gas: Gas) -> Any:
    """The cached CoolProp ``AbstractState`` of ``gas`` (HEOS backend)."""
    return _state(gas.key).AS


def estimated_pairs(gas: Gas) -> tuple[tuple[str, str], ...]:
    """Binary pairs of a mixture whose interaction parameters were estimated (Lorentz-Berthelot)."""
    return _state(gas.key).estimated_pairs


def limits(gas: Gas) -> tuple[float, float, float]:
    """Equation-of-state limits: (T_min [K], T_max [K], p_max [Pa])."""
    AS = state(gas)
    return AS.Tmin(), AS.Tmax(), AS.pmax()


def _check_range(gas: Gas, T: float, p: float | None = None) -> None:
    if not math.isfinite(T) or T <= 0:
        raise InputError(f"temperature {T!r} K is not a positive finite number")
    tmin, tmax, pmax = limits(gas)
    if gas.is_mixture:
        tmin = max(tmin, 100.0)
    if not tmin <= T <= tmax:
        raise InputError(
            f"temperature {T - 273.15:.1f} °C is outside the equation of state for {gas.name} "
            f"({tmin - 273.15:.1f} °C to {tmax - 273.15:.0f} °C)"
        )
    if p is not None:
        if not math.isfinite(p) or p <= 0:
            raise InputError(f"absolute pressure {p!r} Pa must be greater than zero")
        if p > min(pmax, 1e9):
            raise InputError(f"pressure {p / 1e5:.0f} bar(a) is beyond the equation of state for {gas.name}")


def _update(gas: Gas, pair: str, a: float, b: float) -> Any:
    CP = coolprop()
    AS = state(gas)
    if gas.is_mixture:
        AS.specify_phase(CP.iphase_gas)
    try:
        AS.update(getattr(CP, pair), a, b)
    except ValueError as exc:
        raise PropertyError(f"no {gas.name} state at {pair.split('_')[0]} = {a:.6g}, {b:.6g}: {exc}") from None
    return AS


def density(gas: Gas, T: float, p: float) -> float:
    """Mass density [kg/m³] at temperature T [K] and absolute pressure p [Pa] (CoolProp HEOS).

    >>> round(density(parse_gas("nitrogen"), 350.0, 20e6) / 0.0280134 / 1000, 4)  # Span et al. 2000
    6.3552
    """
    _check_range(gas, T, p)
    return float(_update(gas, "PT_INPUTS", p, T).rhomass())


def z_factor(gas: Gas, T: float, p: float) -> float:
    """Compressibility factor Z = p/(ρ_molar·R·T) (CoolProp HEOS)."""
    _check_range(gas, T, p)
    return float(_update(gas, "PT_INPUTS", p, T).compressibility_factor())


def pressure_from_density(gas: Gas, rho: float, T: float) -> float:
    """Absolute pressure [Pa] of the gas at mass density ρ [kg/m³] and temperature T [K]."""
    _check_range(gas, T)
    if not math.isfinite(rho) or rho <= 0:
        raise InputError(f"density {rho!r} kg/m³ must be greater than zero")
    return float(_update(gas, "DmassT_INPUTS", rho, T).p())


def enthalpy(gas: Gas, T: float, p: float) -> float:
    """Specific enthalpy [J/kg] at T [K], p [Pa] (CoolProp HEOS)."""
    _check_range(gas, T, p)
    return float(_update(gas, "PT_INPUTS", p, T).hmass())


def critical_temperature(gas: Gas) -> float:
    """Critical temperature [K] of a pure gas (pseudo-critical for a mixture)."""
    AS = state(gas)
    if gas.is_mixture:
        return sum(x * float(state(Gas(((g, 1.0),))).T_critical()) for g, x in gas.components)
    return float(AS.T_critical())


def triple_point(gas: Gas) -> tuple[float, float]:
    """Triple point (T [K], p [Pa]) of a pure gas."""
    if gas.is_mixture:
        raise InputError("a mixture has no single triple point")
    CP = coolprop()
    AS = state(gas)
    return float(AS.Ttriple()), float(AS.trivial_keyed_output(CP.iP_triple))


def saturation_pressure(gas: Gas, T: float) -> float:
    """Vapour pressure [Pa] of a pure gas at T [K] between its triple and critical points."""
    if gas.is_mixture:
        raise InputError("saturation pressure is defined here only for pure gases")
    AS = _update(gas, "QT_INPUTS", 0.0, T)
    return float(AS.p())


def is_liquefied(gas: Gas, T: float, p: float) -> bool:
    """Whether a cylinder of a gas sold liquefied (CO2, SF6) holds liquid at T [K], p [Pa].

    True when T is below the critical temperature and p is at least 95 % of the vapour pressure;
    below that the cylinder holds only vapour and its pressure does tell its contents.
    """
    if not gas.sold_liquefied:
        return False
    if T >= critical_temperature(gas):
        return False
    return p >= 0.95 * saturation_pressure(gas, T)


# --------------------------------------------------------------------------------------
# tabulated properties for long series


class DensityTable:
    """Compressibility Z tabulated from CoolProp on a (p, T) grid, for long series.

    Method: Z(p, T) = p·M/(ρ·R·T) at ``n_p`` × ``n_T`` grid points from CoolProp HEOS, then
    bilinear interpolation of Z (which is smooth and close to 1) instead of one CoolProp call
    per row. The interpolation error is tested against direct CoolProp calls (below 1e-4
    relative in density for 64 pressure points over 1–300 bar; see tests/test_gas.py).
    """

    def __init__(self, gas: Gas, p_lo: float, p_hi: float, T_lo: float, T_hi: float,
                 n_p: int = 64, n_T: int | None = None) -> None:
        import numpy as np

        if not (p_hi > p_lo > 0):
            raise InputError(f"pressure range {p_lo:g}–{p_hi:g} Pa is empty")
        if n_T is None:
            n_T = 1 if T_hi - T_lo < 1e-9 else min(9, 2 + int((T_hi - T_lo) / 3.0))
        self.gas = gas
        self.M = gas.molar_mass
        self.p = np.linspace(p_lo, p_hi, n_p)
        self.T = np.linspace(T_lo, T_hi, n_T) if n_T > 1 else np.array([T_lo])
        Z = np.empty((len(self.T), n_p))
        for i, T in enumerate(self.T):
            for j, p in enumerate(self.p):
                Z[i, j] = p * self.M / (density(gas, float(T), float(p)) * R * T)
        self.Z = Z

    def _z_row(self, T: float) -> Any:
        import numpy as np

        if len(self.T) == 1:
            return self.Z[0]
        i = int(np.clip(np.searchsorted(self.T, T) - 1, 0, len(self.T) - 2))
        w = (T - self.T[i]) / (self.T[i + 1] - self.T[i])
        return self.Z[i] * (1 - w) + self.Z[i + 1] * w

    def density(self, p: Any, T: Any) -> Any:
        """Density [kg/m³] at arrays of absolute pressure [Pa] and temperature [K]."""
        import numpy as np

        p = np.asarray(p, dtype=float)
        T = np.broadcast_to(np.asarray(T, dtype=float), p.shape)
        if len(self.T) == 1:
            z = np.interp(p, self.p, self.Z[0])
        else:
            # interpolate every temperature row at all pressures, then blend the two rows around T
            rows = np.stack([np.interp(p.ravel(), self.p, self.Z[k]) for k in range(len(self.T))])
            ti = np.clip(np.searchsorted(self.T, T.ravel()) - 1, 0, len(self.T) - 2)
            w = (T.ravel() - self.T[ti]) / (self.T[ti + 1] - self.T[ti])
            idx = np.arange(p.size)
            z = (rows[ti, idx] * (1 - w) + rows[ti + 1, idx] * w).reshape(p.shape)
        return p * self.M / (z * R * T)

    def pressure(self, rho: Any, T: float) -> Any:
        """Absolute pressure [Pa] at an array of densities [kg/m³] and one temperature [K]."""
        import numpy as np

        z = self._z_row(T)
        rho_grid = self.p * self.M / (z * R * T)
        rho = np.asarray(rho, dtype=float)
        return rho * np.interp(rho, rho_grid, z) * R * T / self.M
