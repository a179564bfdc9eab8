"""Cylinder contents in words: the phase, the sensitivity to temperature, and the notes the core
returns as codes (:attr:`benchwarden.core.supply.Contents.flags`), in the display units.

The plan, the checklist and the app word a supply's phase and sensitivity with the same helpers
(:func:`phase_words`, :func:`sensitivity_words`), so the words follow the figure everywhere.
"""

from __future__ import annotations

from typing import Any

from benchwarden.render.display import Display

__all__ = ["contents_notes", "contents_refusal", "phase_words", "sensitivity_words", "supply_state_words",
           "mass_words", "phase_short", "ADVISE_WEIGHING"]

ADVISE_WEIGHING = "weigh the cylinder (gross − tare) for its contents"


def phase_words(phase: str, d: Display, pressure_abs_pa: float | None = None,
                liquid_full_temperature_k: float | None = None, vapour_fraction: float | None = None) -> str:
    """The phase of a cylinder's contents with its pressure, e.g. ``"liquid-full at 90.8 bar(g)
    (liquid-full from 22.1 °C)"``."""
    words = {"gas": "gas", "supercritical": "supercritical (one dense phase)",
             "two-phase": "two-phase (liquid under its vapour)", "liquid-full": "LIQUID-FULL (no vapour space)",
             "liquid": "liquid", "liquefied": "liquefied (at its vapour pressure)"}.get(phase, phase)
    if vapour_fraction is not None and phase == "two-phase":
        words += f", vapour fraction {vapour_fraction:.2f} by moles"
    if pressure_abs_pa is not None:
        words += f" at {d.gauge(pressure_abs_pa)}"
    if liquid_full_temperature_k is not None:
        words += f"; liquid-full from {d.temperature(liquid_full_temperature_k)}"
    return words


def sensitivity_words(mass_kg: float, sensitivity_kg_per_k: float, uncertainty_kg: float, u_T: float) -> str:
    """``"±0.048 kg (0.4 %) for ±1 K; −0.048 kg/K"``: the mass uncertainty from the temperature's."""
    pct = 100.0 * uncertainty_kg / mass_kg if mass_kg > 0 else float("inf")
    return f"±{uncertainty_kg:.3g} kg ({pct:.1f} %) for ±{u_T:g} K; {sensitivity_kg_per_k:+.3g} kg/K"


def contents_refusal(c: Any, d: Display) -> str:
    """The one line that says why a pressure gives no contents (``liquid-full``, ``liquefied``)."""
    p, T = c.pressure_abs_pa, c.temperature_k
    p_sat = c.vapour_pressure_abs_pa
    if c.phase == "liquid-full":
        return (f"{d.absolute(p)} is well above the vapour pressure of {c.gas_name} at {d.temperature(T)} "
                f"({d.absolute(p_sat)}): liquid-full, a hydraulic-rupture hazard — keep it cool, call the supplier")
    return (f"{c.gas_name} is liquid in the cylinder at {d.temperature(T)}: its pressure is the vapour pressure, "
            "not the contents — weigh it (--gross, --tare, --volume)")


def contents_notes(c: Any, d: Display) -> list[str]:
    """The informational flags of a :class:`~benchwarden.core.supply.Contents` in words (the
    judgements — liquid-full, overfilled, too sensitive to temperature — are findings,
    :func:`benchwarden.workflows.findings.contents_findings`)."""
    out: list[str] = []
    flags = set(c.flags)
    if "may-hold-liquid" in flags:
        out.append(f"within ±{c.temperature_uncertainty_k:g} K the cylinder may be below the saturation "
                   "temperature at this pressure and hold liquid: the mass shown is the vapour's; "
                   + ADVISE_WEIGHING)
    if "near-vapour-pressure" in flags:
        out.append(f"the reading is within 5 % below the vapour pressure of {c.gas_name} "
                   f"({d.gauge(c.vapour_pressure_abs_pa)}): liquid may still be present (gauge error, a warmer "
                   f"cylinder); {ADVISE_WEIGHING}")
    if "vapour-only" in flags:
        out.append("below the vapour pressure: no liquid left, only vapour; the pressure falls fast from here")
    if "two-phase" in flags:
        out.append(f"two phases in the cylinder: {100 * (c.vapour_fraction or 0.0):.0f} % of the moles are vapour, "
                   "the rest liquid (phase-equilibrium flash); the mass is the total, but the gas drawn off is "
                   "not the filled mixture, and the pressure no longer falls in proportion to the contents")
    if "liquid" in flags:
        out.append(f"{c.gas_name} is a liquid at {d.temperature(c.temperature_k)} and {d.absolute(c.pressure_abs_pa)}, "
                   "not a gas: check the temperature and pressure you gave")
    if "estimated-mixing" in flags:
        out.append("mixing parameters estimated (Lorentz-Berthelot) for " + ", ".join(c.estimated_pairs))
    return out


def mass_words(mass_kg: float, uncertainty_kg: float | None, decimals: int = 3) -> str:
    """``"11.210 kg"``, or with its uncertainty where that is 0.5 % or more: ``"16.3 ± 2.3 kg"``."""
    if uncertainty_kg is None or mass_kg <= 0 or uncertainty_kg < 0.005 * mass_kg:
        return f"{mass_kg:.{decimals}f} kg"
    return f"{mass_kg:.3g} ± {uncertainty_kg:.2g} kg"


def phase_short(s: Any, d: Display) -> str:
    """A planned supply's phase in a few characters for a table cell (the app): ``"2-phase 56.3"``,
    ``"LIQ-FULL 90.8"`` (gauge, display unit), ``"supercrit."``."""
    short = {"two-phase": "2-phase", "liquid-full": "LIQ-FULL", "supercritical": "supercrit.", "gas": "gas"}
    return f"{short.get(s.phase, s.phase)} {d.gauge_number(s.pressure_abs_pa)}"


def supply_state_words(s: Any, d: Display) -> str:
    """A planned supply's phase and the sensitivity of its contents, for the plan, the checklist
    and the app: ``"two-phase at 56.3 bar(g); liquid-full from 22.1 °C"`` or ``"gas; ±0.048 kg
    (0.4 %) for ±1 K; −0.048 kg/K"``."""
    words = phase_words(s.phase, d, s.pressure_abs_pa if s.liquefied or s.phase == "liquid-full" else None,
                        s.liquid_full_temperature_k)
    if s.mass_uncertainty_kg is not None and s.mass_sensitivity_kg_per_k is not None:
        words += "; " + sensitivity_words(s.mass_kg, s.mass_sensitivity_kg_per_k, s.mass_uncertainty_kg,
                                          s.temperature_uncertainty_k or 1.0)
    return words
