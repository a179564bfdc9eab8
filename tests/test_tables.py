"""The Z table of a mixture checks its stability only where it is asked (issue 28).

`benchwarden.core.tables.DensityTable` evaluates a mixture's grid on the gas branch and checks,
with full phase-equilibrium flashes, the ends of each block of pressure intervals the first time
a query falls in it. References: CoolProp's own full (T, p) flash on a fresh ``AbstractState``
made here, outside `benchwarden.core.eos` (CoolProp HEOS, Bell et al., Ind. Eng. Chem. Res. 53
(2014) 2498–2508), and the same table with every block checked before any query (the answers
must not depend on which blocks were asked first).
"""

from __future__ import annotations

import numpy as np
import pytest

from benchwarden.core import eos
from benchwarden.core import gas as g
from benchwarden.core.tables import CHECK_BLOCK, DensityTable

PREMIX = g.parse_gas("helium:0.78,nitrogen:0.14,carbon dioxide:0.08")
CO2_N2 = g.parse_gas("co2:0.5,nitrogen:0.5")


def _fresh_density(gas: g.Gas, p: float, T: float) -> float:
    CP = g.coolprop()
    AS = CP.AbstractState("HEOS", "&".join(c.coolprop for c, _ in gas.components))
    AS.set_mole_fractions([x for _, x in gas.components])
    AS.update(CP.PT_INPUTS, p, T)
    return float(AS.rhomass())


def _every_block_checked(table: DensityTable) -> DensityTable:
    rows = np.repeat(np.arange(len(table.T)), len(table.p) - 1)
    table._check(rows, np.tile(np.arange(len(table.p) - 1), len(table.T)))
    return table


def test_the_premix_table_checks_only_the_blocks_asked_and_answers_as_if_it_checked_all():
    # the premix bench's supply model: 0.5 to 205 bar at 19 °C; a plan asks near the reading
    # (118 bar) and the reserve (11 bar)
    T, lo, hi = 292.15, 0.499e5, 205.02e5
    lazy = DensityTable(PREMIX, lo, hi, T, T)
    eager = _every_block_checked(DensityTable(PREMIX, lo, hi, T, T))
    asked = np.array([11e5, 116.5e5, 119e5, 121.5e5])
    rho = lazy.density(asked, T)
    assert lazy._checked[0] == {int(np.searchsorted(lazy.p, p) - 1) // CHECK_BLOCK for p in asked}
    assert len(lazy._checked[0]) < len(eager._checked[0])
    np.testing.assert_allclose(rho, eager.density(asked, T), rtol=1e-12)
    masses = np.linspace(rho[2], rho[2] * 0.85, 50)
    np.testing.assert_allclose(lazy.pressure(masses, T), eager.pressure(masses, T), rtol=1e-12)
    # the table's documented bound against CoolProp's full flash (1e-4 relative in density)
    for p, r in zip(asked, rho, strict=True):
        assert r == pytest.approx(_fresh_density(PREMIX, float(p), T), rel=1e-4)


def test_a_block_found_two_phase_makes_the_row_full_flashes_whatever_was_asked_first():
    # CO2 and nitrogen half and half at −23 °C: CoolProp's flash finds one gas phase at 10 and
    # 40 bar, two phases from 60 bar up (its gas branch goes on to 150 bar)
    T, lo, hi = 250.0, 1e5, 100e5
    eos.discard()
    lazy = DensityTable(CO2_N2, lo, hi, T, T, n_p=24)  # 3 blocks
    low = float(lazy.density([5e5], T)[0])
    assert lazy._checked[0] == {0}  # the first block alone, found one phase
    inside = float(lazy.density([80e5], T)[0])
    assert lazy._checked[0] is None  # a check found two phases: every point flashed in full
    for j in (0, 10, 18, 23):
        assert lazy.Z[0, j] == pytest.approx(
            lazy.p[j] * CO2_N2.molar_mass / (_fresh_density(CO2_N2, float(lazy.p[j]), T) * g.R * T), rel=1e-9)
    # the first answer came from a checked gas-branch block: the same as the full flash there
    assert float(lazy.density([5e5], T)[0]) == pytest.approx(low, rel=1e-9)
    eager = _every_block_checked(DensityTable(CO2_N2, lo, hi, T, T, n_p=24))
    assert eager._checked[0] is None
    assert inside == pytest.approx(float(eager.density([80e5], T)[0]), rel=1e-12)
    np.testing.assert_allclose(lazy.Z, eager.Z, rtol=1e-12)


def test_pressure_from_density_looks_again_after_a_row_is_flashed():
    # asking pressures first (the projection's way in) checks the blocks they fall in, and a row
    # found two-phase answers from its full flashes
    T = 250.0
    table = DensityTable(CO2_N2, 1e5, 100e5, T, T, n_p=24)
    rho_in = _fresh_density(CO2_N2, 80e5, T)  # two-phase, denser than the gas branch there
    p = float(table.pressure([rho_in], T)[0])
    assert table._checked[0] is None
    assert p == pytest.approx(80e5, rel=5e-3)


def test_two_temperature_rows_are_checked_where_asked():
    # a hold log's table spans temperatures too: the rows around each reading's T are checked
    table = DensityTable(PREMIX, 100e5, 120e5, 288.15, 298.15)
    T = np.array([289.0, 297.0])
    p = np.array([105e5, 118e5])
    rho = table.density(p, T)
    assert all(c is not None and c for c in table._checked[:2]) and table._checked[-1]
    for pk, Tk, r in zip(p, T, rho, strict=True):
        assert r == pytest.approx(_fresh_density(PREMIX, float(pk), float(Tk)), rel=1e-4)
