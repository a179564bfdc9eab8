"""A hold test in words: its figures and notes in the display unit, one wording for the command
line (``benchwarden hold``) and the app's hold-test screen."""

from __future__ import annotations

from benchwarden.render.budget import budget_assumption
from benchwarden.render.display import Display
from benchwarden.render.findings import verdict_words
from benchwarden.render.numbers import fmt_uncertain
from benchwarden.workflows.hold_runs import HoldRun

__all__ = ["hold_rows", "hold_notes", "hold_lines"]


def hold_rows(run: HoldRun, d: Display) -> list[tuple[str, str]]:
    """(label, figure) rows of a computed hold test: readings, mass loss and leak rate with their
    standard uncertainty, the verdict, the target and the times to empty and to the reserve."""
    r, fit = run.result, run.fit
    rows = [("gas", r.gas_name), ("volume", f"{r.volume_m3 * 1000:.4g} L"),
            ("start", f"{d.both(r.start_abs_pa)} at {d.temperature(r.start_temperature_k)}"),
            ("end", f"{d.both(r.end_abs_pa)} at {d.temperature(r.end_temperature_k)}"),
            ("hold", d.hours(r.duration_s / 3600)),
            ("mass loss", fmt_uncertain(r.mass_loss_kg * 1000, r.mass_loss_uncertainty_kg * 1000, "g") + " (1σ)"),
            ("leak rate", fmt_uncertain(r.leak_rate_sccm, r.leak_rate_uncertainty_sccm, "sccm")
             + " (0 °C, 101.325 kPa; 1σ)"),
            ("", f"{r.leak_rate_pa_m3_s:.3g} Pa·m³/s = {r.leak_rate_mbar_l_s:.3g} mbar·L/s"),
            ("", f"{r.kg_per_day * 1000:.3g} g/day = {r.percent_per_day:.3g} % of contents/day = "
                 f"{d.difference(r.pressure_fall_per_day_pa)}/day at constant temperature"),
            ("verdict", verdict_words(r.verdict, r.leak_rate_sccm, r.smallest_resolvable_sccm, r.target_sccm)),
            ("target", f"{r.target_sccm:.3g} sccm; hold needed to resolve it ≈ {d.hours(r.hold_needed_h)}"),
            ("to empty at this rate", d.hours(r.hours_to_empty) if r.leak_rate_kg_s > 0 else "—")]
    if r.hours_to_reserve is not None:
        rows.append(("to reserve at this rate", d.hours(r.hours_to_reserve)))
    if fit is not None:
        rows.append(("log fit", f"{fit.n} rows; residual rms {d.difference(fit.residual_rms_pa)} "
                                f"(max {d.difference(fit.residual_max_kg * fit.residual_rms_pa / fit.residual_rms_kg)})"
                                if fit.residual_rms_kg > 0 else f"{fit.n} rows; no residual"))
    rows.append(("method", r.method))
    return rows


def hold_notes(run: HoldRun, d: Display) -> list[str]:
    """The hold test's notes: the method's, the gauge budget's assumption, and the ASTM E2930
    rules for the gauge's resolution and accuracy against the target."""
    r, gauge = run.result, run.gauge
    notes = list(r.notes)
    assumption = budget_assumption(r)
    if assumption:
        notes.append(assumption)
    if gauge is not None and r.astm_resolution_ok is False:
        res = gauge.resolution_pa if gauge.resolution_pa is not None else gauge.mpe_pa
        notes.append(f"ASTM E2930 rule: resolution {d.difference(res)} should be ≤ 1/10 of the "
                     f"{d.difference(r.target_pressure_change_pa)} the target leak causes in this hold")
    if gauge is not None and r.astm_accuracy_ok is False:
        notes.append(f"ASTM E2930 rule: accuracy ±{d.difference(gauge.mpe_pa)} should be ≤ 1/4 of "
                     f"{d.difference(r.target_pressure_change_pa)}")
    return notes


def hold_lines(run: HoldRun, d: Display) -> list[str]:
    """The same rows and notes as lines for a screen: ``leak rate  0.32 ± 0.05 sccm …``, ``! note``."""
    rows = hold_rows(run, d)
    width = max(len(k) for k, _ in rows)
    return [f"{k:<{width}}  {v}" for k, v in rows] + [f"! {n}" for n in hold_notes(run, d)]
