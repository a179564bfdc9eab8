"""Regulators, orifices and gaps in words: the codes the core returns
(:attr:`benchwarden.core.regulator.Throttle.flags`, the orifice's phases) worded in the display
units, for the command line and the app alike."""

from __future__ import annotations

from typing import Any

from benchwarden.render.display import Display

__all__ = ["throttle_notes", "SATURATED_RULE", "orifice_phase_words"]

#: How a reading just below the vapour pressure is treated (issue 24), said wherever it applies.
SATURATED_RULE = ("a reading within 5 % below the vapour pressure is treated as saturated vapour drawn off the "
                  "liquid (conservative: more solid is predicted than from the slightly superheated vapour the "
                  "reading alone would mean)")


def throttle_notes(t: Any, d: Display) -> list[str]:
    """The flags of a :class:`~benchwarden.core.regulator.Throttle` in words (the judgements —
    solid, near the dry-ice line, liquid, icing — are findings:
    :func:`benchwarden.workflows.findings.outlet_findings`)."""
    flags = set(t.flags)
    out: list[str] = []
    if "inlet-near-vapour-pressure" in flags:
        out.append(f"the inlet {d.absolute(t.inlet_abs_pa)} is within 5 % below the vapour pressure of {t.gas_name} "
                   f"at {d.temperature(t.inlet_temperature_k)} ({d.absolute(t.inlet_vapour_pressure_abs_pa)}): "
                   + SATURATED_RULE)
    elif "inlet-saturated" in flags:
        out.append(f"{t.gas_name} is liquefied at the inlet: taken as vapour drawn off the liquid (a dip-tube "
                   "cylinder delivering liquid forms far more solid)")
    if "dry-ice" in flags:
        out.append(f"the outlet sits on the sublimation line at {d.temperature(t.outlet_temperature_k)} "
                   f"({d.absolute(t.outlet_abs_pa)}): solid {t.gas_name} (dry ice) forms, about "
                   f"{100 * (t.solid_fraction or 0.0):.0f} % of the flow by mass, and can block the regulator")
    if "solid-at-triple-point" in flags:
        out.append(f"outlet at the triple-point pressure of {t.gas_name}: solid can form")
    if "component-condenses" in flags:
        out.append(f"a component condenses at the outlet (vapour fraction {t.vapour_fraction or 0.0:.2f} by moles): "
                   "liquid in the regulator and the line, and the delivered gas is leaner in the heavy component")
    elif "liquid-forms" in flags:
        out.append(f"liquid forms at the outlet (vapour fraction {t.vapour_fraction or 0.0:.2f}) at "
                   f"{d.temperature(t.outlet_temperature_k)}")
    if "outlet-below-freezing" in flags and "dry-ice" not in flags:
        out.append(f"outlet {d.temperature(t.outlet_temperature_k)}: moisture freezes on the body; ice can form "
                   "outside")
    return out


def orifice_phase_words(phase: str, quality: float | None = None) -> str:
    """An orifice's inlet or throat phase: ``"gas"``, ``"two-phase (86 % vapour by mass)"``."""
    if phase == "two-phase" and quality is not None:
        return f"two-phase ({100 * quality:.0f} % vapour by mass)"
    return phase
