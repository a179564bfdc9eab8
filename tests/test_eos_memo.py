"""A mixture's repeated (T, p) state is not flashed again (issue 28).

`benchwarden.core.eos` remembers, per thread, the single phase CoolProp's full flash found at a
mixture's exact (p, T) and updates the same inputs again with that phase imposed. Reference for
every check: CoolProp's own full (T, p) flash on a fresh ``AbstractState`` made here, outside
`benchwarden.core.eos` (CoolProp HEOS, Bell et al., Ind. Eng. Chem. Res. 53 (2014) 2498–2508).
"""

from __future__ import annotations

import pytest

from benchwarden.core import eos
from benchwarden.core import gas as g

PREMIX = g.parse_gas("helium:0.78,nitrogen:0.14,carbon dioxide:0.08")
CO2_N2 = g.parse_gas("co2:0.95,nitrogen:0.05")

#: (gas, p [Pa], T [K], CoolProp's phase there): gas, liquid, supercritical-side and two-phase states
STATES = [
    (PREMIX, 118e5 + 99800.0, 292.15, "gas"),
    (PREMIX, 101325.0, 273.15, "gas"),
    (PREMIX, 2e8, 400.0, "liquid"),  # CoolProp calls this dense state liquid
    (CO2_N2, 20e5, 300.0, "gas"),
    (CO2_N2, 150e5, 300.0, "liquid"),
    (CO2_N2, 51.01325e5, 283.15, "two-phase"),
]


def _fresh(gas: g.Gas, p: float, T: float) -> dict[str, float]:
    """The reference: CoolProp's full flash on a new AbstractState of its own."""
    CP = g.coolprop()
    AS = CP.AbstractState("HEOS", "&".join(c.coolprop for c, _ in gas.components))
    AS.set_mole_fractions([x for _, x in gas.components])
    AS.update(CP.PT_INPUTS, p, T)
    return {"rho": AS.rhomass(), "h": AS.hmass(), "s": AS.smass(), "Z": AS.compressibility_factor(),
            "Q": AS.Q(), "phase": int(AS.phase())}


def _ours(gas: g.Gas, p: float, T: float) -> dict[str, float]:
    AS = g.state_at(gas, "PT_INPUTS", p, T)
    return {"rho": AS.rhomass(), "h": AS.hmass(), "s": AS.smass(), "Z": AS.compressibility_factor(),
            "Q": AS.Q(), "phase": int(AS.phase())}


def _agree(a: dict[str, float], b: dict[str, float]) -> None:
    assert a["phase"] == b["phase"]
    for k in ("rho", "h", "s", "Z", "Q"):
        assert a[k] == pytest.approx(b[k], rel=1e-12, abs=1e-9), k


@pytest.mark.parametrize("gas, p, T, kind", STATES, ids=[f"{s[0].short_name}-{s[1]:.0f}-{s[2]}" for s in STATES])
def test_a_repeated_state_is_the_full_flash(gas, p, T, kind, monkeypatch):
    eos.discard()
    ref = _fresh(gas, p, T)
    first = _ours(gas, p, T)
    assert g.phase_of(gas, g.state_at(gas, "PT_INPUTS", p, T)).kind == kind
    imposed: list[object] = []
    real_try = eos._try

    def spy(AS, code, a, b, phase):
        imposed.append(phase)
        return real_try(AS, code, a, b, phase)

    monkeypatch.setattr(eos, "_try", spy)
    again = _ours(gas, p, T)
    _agree(first, ref)
    _agree(again, ref)
    if kind == "two-phase":  # never remembered: flashed in full again
        assert (gas.key, p, T) not in eos._single() and imposed == [None]
    else:  # the remembered phase imposed: one update on that branch, no stability analysis
        assert (gas.key, p, T) in eos._single() and imposed and imposed[0] is not None and len(imposed) == 1


def test_a_remembered_state_that_does_not_match_is_flashed_in_full():
    # the memo checks itself: a wrong remembered density makes the call flash in full again
    eos.discard()
    p, T = 118e5 + 99800.0, 292.15
    _ours(PREMIX, p, T)
    phase, q, rho = eos._single()[(PREMIX.key, p, T)]
    eos._single()[(PREMIX.key, p, T)] = (phase, q, rho * 1.001)
    _agree(_ours(PREMIX, p, T), _fresh(PREMIX, p, T))
    assert eos._single()[(PREMIX.key, p, T)][2] == pytest.approx(rho, rel=1e-12)


def test_discard_forgets_the_remembered_states_as_a_fresh_process_would():
    eos.discard()
    g.density(PREMIX, 288.15, 200e5)
    assert eos._single()
    eos.discard()
    assert not eos._single()


def test_the_memo_is_bounded(monkeypatch):
    eos.discard()
    monkeypatch.setattr(eos, "SINGLE_PHASE_LIMIT", 3)
    for i in range(5):
        g.density(PREMIX, 290.0 + i, 10e5)
    assert 1 <= len(eos._single()) <= 3
    assert g.density(PREMIX, 290.0, 10e5) == pytest.approx(_fresh(PREMIX, 10e5, 290.0)["rho"], rel=1e-12)
