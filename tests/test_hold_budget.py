"""The hold test's pressure budget says its assumption, and a gauge may declare its repeatability
for the difference of two readings (issue 24, item 8).

Reference: GUM (JCGM 100:2008) law of propagation for two readings, u(Δm) = √2·|∂m/∂p|·u_p with
temperatures held fixed, u_p = r/√3 for a ± limit r (rectangular, §4.3.7); ∂m/∂p = V·(∂ρ/∂p)_T
from CoolProp's analytic derivative in a fresh state.
"""

from __future__ import annotations

import json
import math
import re
from pathlib import Path

import pytest

from benchwarden.cli import main
from benchwarden.core import eos
from benchwarden.core import gas as g
from benchwarden.core import hold as hd
from benchwarden.storage.profile import parse_profile
from benchwarden.workflows.holds import gauge_spec, profile_gauge_spec

N2 = g.parse_gas("nitrogen")
ROOT = Path(__file__).resolve().parents[1]


def _drho_dp(T: float, p: float) -> float:
    CP = eos.coolprop()
    AS = CP.AbstractState("HEOS", "Nitrogen")
    AS.update(CP.PT_INPUTS, p, T)
    return float(AS.first_partial_deriv(CP.iDmass, CP.iP, CP.iT))


def test_repeatability_is_used_for_the_difference_of_two_readings():
    spec = gauge_spec(250e5, 1.6, None, 0.05e5)
    assert spec.budget == "repeatability" and spec.u_difference_pa == pytest.approx(0.05e5 / math.sqrt(3))
    T, p1, p2, V = 293.15, 152e5, 150e5, 0.05
    r = hd.hold_two_readings(N2, V, p1, p2, 14 * 3600.0, T, T, spec, u_T=0.0)
    expected = math.hypot(V * _drho_dp(T, p1), V * _drho_dp(T, p2)) * 0.05e5 / math.sqrt(3)
    assert r.mass_loss_uncertainty_kg == pytest.approx(expected, rel=1e-4)
    assert r.pressure_budget == "repeatability"
    plain = hd.hold_two_readings(N2, V, p1, p2, 14 * 3600.0, T, T, gauge_spec(250e5, 1.6), u_T=0.0)
    assert plain.pressure_budget == "uncorrelated"
    # uncorrelated: each reading carries MPE/√3 = 1.6 % × 250 bar / √3 (EN 837-1 class as a ± limit)
    assert plain.mass_loss_uncertainty_kg == pytest.approx(expected * (0.016 * 250e5) / 0.05e5, rel=1e-4)


def test_a_profile_gauge_declares_its_repeatability():
    text = (ROOT / "profiles" / "demo-teaching-bench.toml").read_text("utf-8")
    text = text.replace('gauge = { range = "315 bar", accuracy_class = 1.6 }',
                        'gauge = { range = "315 bar", accuracy_class = 1.6, repeatability = "0.2 bar" }')
    assert "repeatability" in text
    prof = parse_profile(text)
    spec = profile_gauge_spec(prof.supplies[0].gauge)
    assert spec is not None and spec.repeatability_pa == pytest.approx(0.2e5) and spec.budget == "repeatability"
    with pytest.raises(Exception, match=re.escape("repeatability")):
        gauge_spec(315e5, 1.6, None, 10e5)  # more than the class error: not a repeatability


def test_the_assumption_is_said(capsys):
    base = ["hold", "--gas", "nitrogen", "--volume", "50 L", "--start", "152 bar", "--end", "150 bar", "--duration",
            "14 h", "--t-start", "21 degC", "--t-end", "18 degC", "--gauge-range", "250 bar", "--gauge-class", "1.6"]
    assert main(base) == 0
    assert "taken as uncorrelated" in capsys.readouterr().out
    assert main([*base, "--gauge-repeatability", "0.1 bar", "--json"]) == 0
    d = json.loads(capsys.readouterr().out)
    assert d["pressure_budget"] == "repeatability" and "repeatability" in d["budget_assumption"]
