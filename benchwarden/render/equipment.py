"""Regulators, orifices and gaps in words: the codes the core returns
(:attr:`benchwarden.core.regulator.Throttle.flags`, the orifice's phases) worded in the display
units, for the command line and the app alike."""

from __future__ import annotations

from typing import Any

from benchwarden.render.display import Display

__all__ = ["throttle_notes", "SATURATED_RULE", "orifice_phase_words", "orifice_rows", "orifice_notes"]

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


def _g_min(kg_s: float) -> str:
    return f"{kg_s * 6e4:.4g} g/min"


def orifice_rows(o: Any, gas_name: str, up: float, down: float, d: Display) -> list[tuple[str, str]]:
    """The ``orifice`` table: phases, the figure that feeds a release, both figures for a liquid
    inlet, and the ideal-gas comparison only where the inlet is a gas."""
    rows = [("gas", gas_name), ("upstream", d.both(up)), ("downstream", d.both(down)),
            ("inlet phase", orifice_phase_words(o.inlet_phase)),
            ("throat phase", orifice_phase_words(o.throat_phase, o.throat_vapour_fraction)),
            ("flow", f"{_g_min(o.mass_flow_kg_s)} = {o.standard_flow_slpm:.4g} slpm (0 °C, 101.325 kPa)"
             + (" — the larger figure, used for releases" if o.mass_flow_liquid_kg_s is not None else ""))]
    if o.mass_flow_liquid_kg_s is not None:
        rows += [("homogeneous equilibrium", f"{_g_min(o.mass_flow_hem_kg_s)} (lower bound)"),
                 ("liquid (short orifice)", f"{_g_min(o.mass_flow_liquid_kg_s)} (upper bound)")]
    if o.ideal_mass_flow_kg_s is not None:
        rows.append(("ideal-gas nozzle", f"{_g_min(o.ideal_mass_flow_kg_s)} (comparison, k = cp0/cv0 = {o.k:.3f})"))
    rows += [("regime", f"{'choked' if o.choked else 'subcritical'} (critical ratio {o.critical_ratio:.3f})"),
             ("method", o.method)]
    return rows


def orifice_notes(o: Any) -> list[str]:
    """What the phases mean for the flow."""
    out = []
    if o.mass_flow_liquid_kg_s is not None:
        out.append(f"{o.inlet_phase} at the inlet: a short orifice can pass up to "
                   f"{o.mass_flow_liquid_kg_s / o.mass_flow_hem_kg_s:.1f}× the homogeneous-equilibrium flow as a "
                   "liquid jet; the larger figure is the one to plan a release or the room with")
    elif o.throat_phase == "two-phase":
        out.append("the gas condenses at the throat (homogeneous equilibrium assumed): liquid and cold in the "
                   "line downstream")
    return out
