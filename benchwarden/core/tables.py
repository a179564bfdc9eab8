"""Tabulated real-gas properties for long series (projections, logged hold tests): a Z(p, T)
table from CoolProp with interpolation of a bounded, tested error (see :class:`DensityTable`)."""

from __future__ import annotations

import threading
from typing import Any

from benchwarden.core import gas as g
from benchwarden.core.gas import Gas, R, density
from benchwarden.errors import PA_ABS, PropertyError, RangeError

__all__ = ["DensityTable"]


#: A mixture row's stability is checked at both ends of each block of this many pressure intervals.
CHECK_BLOCK = 8


class DensityTable:
    """Compressibility Z tabulated from CoolProp on a (p, T) grid, for long series.

    Method: Z(p, T) = p·M/(ρ·R·T) at ``n_p`` × ``n_T`` grid points from CoolProp HEOS, then
    bilinear interpolation of Z (which is smooth and close to 1) instead of one CoolProp call
    per row. The interpolation error is tested against direct CoolProp calls (below 1e-4
    relative in density for 64 pressure points over 1–300 bar; see tests/test_gas.py).

    For a mixture, a full phase-equilibrium flash costs about 10 ms; the grid is evaluated on
    the gas branch (0.1 ms a point) and its stability checked with full flashes at both ends of
    every block of :data:`CHECK_BLOCK` pressure intervals of a temperature row — the first time a
    query falls in that block, so a table answers only from checked blocks and checks no block
    nobody asks about (``tests/test_tables.py``: the same answers as checking every block up
    front). Where a check finds a state that is not a single stable phase, every point of that
    row gets the full flash.
    """

    def __init__(self, gas: Gas, p_lo: float, p_hi: float, T_lo: float, T_hi: float,
                 n_p: int = 64, n_T: int | None = None) -> None:
        import numpy as np

        if not (p_hi > p_lo > 0):
            raise RangeError(what="table's lowest pressure", value=p_lo, lo=0.0, lo_open=True, hi=p_hi, hi_open=True,
                             unit=PA_ABS, hi_name="its highest pressure")
        if n_T is None:
            n_T = 1 if T_hi - T_lo < 1e-9 else min(9, 2 + int((T_hi - T_lo) / 3.0))
        self.gas = gas
        self.M = gas.molar_mass
        self.p = np.linspace(p_lo, p_hi, n_p)
        self.T = np.linspace(T_lo, T_hi, n_T) if n_T > 1 else np.array([T_lo])
        self._lock = threading.Lock()
        #: per row: the blocks whose stability is checked, or None once the row is fully flashed
        self._checked: list[set[int] | None] = [set() if gas.is_mixture else None for _ in self.T]
        Z = np.empty((len(self.T), n_p))
        for i, T in enumerate(self.T):
            rho = _gas_branch_densities(gas, float(T), self.p) if gas.is_mixture else None
            if rho is None:
                self._checked[i] = None
                rho = [density(gas, float(T), float(p)) for p in self.p]
            Z[i] = self.p * self.M / (np.asarray(rho) * R * T)
        self.Z = Z

    def _check(self, rows: Any, intervals: Any) -> None:
        """Check the stability of the blocks holding ``intervals`` (indices of the pressure
        interval [p_j, p_j+1]) in ``rows`` not checked yet; a row that fails is fully flashed."""
        import numpy as np

        # the distinct (row, block) pairs asked for, found in one vectorised pass (a long log asks
        # for a few blocks with many points each)
        blocks = len(self.p) // CHECK_BLOCK + 1
        keys = np.unique(np.ravel(rows).astype(np.int64) * blocks + np.ravel(intervals).astype(np.int64) // CHECK_BLOCK)
        pending = [(int(i), int(k)) for i, k in zip(*np.divmod(keys, blocks), strict=True)
                   if self._checked[i] is not None and k not in self._checked[i]]  # type: ignore[operator]
        if not pending:
            return
        with self._lock:
            n = len(self.p)
            for i, k in sorted(pending):
                done = self._checked[i]
                if done is None or k in done:
                    continue
                T = float(self.T[i])
                ends = (k * CHECK_BLOCK, min((k + 1) * CHECK_BLOCK, n - 1))
                if all(_single_gas_phase(self.gas, T, float(self.p[j])) for j in ends):
                    done.add(k)
                    continue
                rho = np.array([density(self.gas, T, float(p)) for p in self.p])
                self.Z[i] = self.p * self.M / (rho * R * T)
                self._checked[i] = None

    def _intervals(self, p: Any) -> Any:
        import numpy as np

        return np.clip(np.searchsorted(self.p, p, side="right") - 1, 0, len(self.p) - 2)

    def _z_row(self, T: float) -> Any:
        import numpy as np

        if len(self.T) == 1:
            return self.Z[0]
        i = int(np.clip(np.searchsorted(self.T, T) - 1, 0, len(self.T) - 2))
        w = (T - self.T[i]) / (self.T[i + 1] - self.T[i])
        return self.Z[i] * (1 - w) + self.Z[i + 1] * w

    def _rows_of(self, T: float) -> list[int]:
        import numpy as np

        if len(self.T) == 1:
            return [0]
        i = int(np.clip(np.searchsorted(self.T, T) - 1, 0, len(self.T) - 2))
        return [i, i + 1]

    def density(self, p: Any, T: Any) -> Any:
        """Density [kg/m³] at arrays of absolute pressure [Pa] and temperature [K]."""
        import numpy as np

        p = np.asarray(p, dtype=float)
        T = np.broadcast_to(np.asarray(T, dtype=float), p.shape)
        j = self._intervals(p.ravel())
        if len(self.T) == 1:
            self._check(np.zeros_like(j), j)
            z = np.interp(p, self.p, self.Z[0])
        else:
            ti = np.clip(np.searchsorted(self.T, T.ravel()) - 1, 0, len(self.T) - 2)
            self._check(np.concatenate([ti, ti + 1]), np.concatenate([j, j]))
            # interpolate every temperature row at all pressures, then blend the two rows around T
            rows = np.stack([np.interp(p.ravel(), self.p, self.Z[k]) for k in range(len(self.T))])
            w = (T.ravel() - self.T[ti]) / (self.T[ti + 1] - self.T[ti])
            idx = np.arange(p.size)
            z = (rows[ti, idx] * (1 - w) + rows[ti + 1, idx] * w).reshape(p.shape)
        return p * self.M / (z * R * T)

    def pressure(self, rho: Any, T: float) -> Any:
        """Absolute pressure [Pa] at an array of densities [kg/m³] and one temperature [K]."""
        import numpy as np

        rho = np.asarray(rho, dtype=float)
        rows = self._rows_of(T)
        for _ in range(len(rows) + 1):  # a row found unstable is flashed again: look once more
            z = self._z_row(T)
            rho_grid = self.p * self.M / (z * R * T)
            j = np.clip(np.searchsorted(rho_grid, rho.ravel(), side="right") - 1, 0, len(self.p) - 2)
            before = [self._checked[i] is None for i in rows]
            self._check(np.repeat(rows, j.size), np.tile(j, len(rows)))
            if [self._checked[i] is None for i in rows] == before:
                break
        return rho * np.interp(rho, rho_grid, z) * R * T / self.M


def _single_gas_phase(gas: Gas, T: float, p: float) -> bool:
    """Whether a full (T, p) flash finds the mixture one stable gas (or supercritical) phase."""
    return g.phase(gas, T, p).kind in ("gas", "supercritical")


def _gas_branch_densities(gas: Gas, T: float, ps: Any) -> list[float] | None:
    """Densities of a mixture at T over the pressures ``ps`` on the gas branch (no stability
    check: :meth:`DensityTable._check` does that where the table is asked), or None where the
    gas branch has no state at one of them.

    Parameters
    ----------
    gas : a mixture
    T : Temperature, [K]
    ps : Absolute pressures, [Pa]

    References
    ----------
    CoolProp HEOS (Bell et al., Ind. Eng. Chem. Res. 53 (2014) 2498–2508) and the
    fluid's reference equation of state.
    """
    out: list[float] = []
    try:
        for p in ps:
            g.check_state(gas, T, float(p))
            out.append(float(g.state_at(gas, "PT_INPUTS", float(p), T, imposed="gas").rhomass()))
    except PropertyError:
        return None
    return out
