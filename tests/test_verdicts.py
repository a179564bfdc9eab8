"""Hold-test verdicts: "fine" only where the data show it (issue 23).

Independent reference: the held masses are recomputed with the Peng-Robinson equation of state
of `thermo` (Bell et al., a general-purpose chemical-engineering library, not CoolProp), and the
uncertainty by hand from EN 837-1 (class = maximum permitted error in % of span) and the GUM
(JCGM 100:2008: rectangular distribution, u = MPE/√3; two uncorrelated readings).
"""

import json
import math

import pytest

from benchwarden.cli import main
from benchwarden.core import gas as g
from benchwarden.core import hold as h

N2 = g.parse_gas("nitrogen")
AMB = 101325.0


def _pr_mass(T, p, V):
    from thermo import ChemicalConstantsPackage, CEOSGas, PRMIX

    consts, props = ChemicalConstantsPackage.from_IDs(["nitrogen"])
    kw = {"Tcs": consts.Tcs, "Pcs": consts.Pcs, "omegas": consts.omegas}
    gas = CEOSGas(PRMIX, eos_kwargs=kw, HeatCapacityGases=props.HeatCapacityGases, T=T, P=p, zs=[1.0])
    return consts.MWs[0] / 1000.0 / gas.V() * V


def test_likely_leak_from_the_issue_case_matches_an_independent_equation_of_state():
    # 150 → 149 bar(g), 18 → 22 °C, 12 h, 50 L nitrogen, class 1.0 gauge of 250 bar
    p1, p2, T1, T2, V, t = 150e5 + AMB, 149e5 + AMB, 291.15, 295.15, 0.050, 12 * 3600
    r = h.hold_two_readings(N2, V, p1, p2, t, T1, T2, h.GaugeSpec(250e5, 1.0), ambient_pa=AMB)
    dm_pr = _pr_mass(T1, p1, V) - _pr_mass(T2, p2, V)
    # PR vs the reference equation of state differ by ~1 % in each mass (≈ 85 g of 8.5 kg)
    # but the difference of two masses at nearly the same state agrees far better
    assert r.mass_loss_kg == pytest.approx(dm_pr, abs=0.02)
    # u(p) = 1 % × 250 bar / √3 for each reading (EN 837-1, GUM): the rate is 1.8 σ, 4.5× target
    assert r.leak_rate_sccm == pytest.approx(215.6, rel=0.02)
    assert r.leak_rate_uncertainty_sccm == pytest.approx(121.1, rel=0.05)
    assert r.verdict == "likely-leak"


@pytest.mark.parametrize(("rate", "u", "target", "verdict"), [
    (-3.0, 1.0, 10.0, "pressure-rose"),    # a gain beyond U = 2u
    (-1.9, 1.0, 10.0, "no-leak-resolved"),  # within U, and rate + U < target
    (2.1, 1.0, 10.0, "leak"),              # beyond U
    (15.0, 10.0, 10.0, "likely-leak"),     # above target and u, not above U = 20
    (9.0, 10.0, 10.0, "inconclusive"),     # below the target, U too wide to say
    (5.0, 10.0, 4.0, "inconclusive"),      # above the target but not above its standard uncertainty
])
def test_verdict_rule_edges(rate, u, target, verdict):
    assert h.verdict_of(rate, u, target) == verdict


def test_verdict_of_nan_is_never_fine():
    assert h.verdict_of(math.nan, 1.0, 10.0) == "inconclusive"
    assert h.verdict_of(1.0, math.inf, 10.0) == "inconclusive"


def test_a_pressure_rise_on_the_command_line_is_pressure_rose_never_fine(capsys):
    # issue 23 case: 152 → 200 bar with the temperature falling
    argv = ["hold", "--gas", "nitrogen", "--volume", "50 L", "--start", "152 bar", "--end", "200 bar",
            "--t-start", "22 degC", "--t-end", "18 degC", "--duration", "12 h", "--gauge-range", "250 bar",
            "--gauge-class", "1.0"]
    assert main([*argv, "--json"]) == 0
    out = json.loads(capsys.readouterr().out)
    assert out["verdict"] == "pressure-rose" and out["leak_rate_sccm"] < 0
    assert main(argv) == 0
    text = capsys.readouterr().out
    assert "ROSE" in text and "no leak above" not in text


def test_likely_leak_words_say_what_to_do(capsys):
    argv = ["hold", "--gas", "nitrogen", "--volume", "50 L", "--start", "150 bar", "--end", "149 bar",
            "--t-start", "18 degC", "--t-end", "22 degC", "--duration", "12 h", "--gauge-range", "250 bar",
            "--gauge-class", "1.0"]
    assert main(argv) == 0
    text = capsys.readouterr().out
    assert "LIKELY LEAK" in text and "repeat" in text and "cannot tell" not in text
