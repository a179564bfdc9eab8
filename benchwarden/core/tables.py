"""Tabulated real-gas properties for long series (projections, logged hold tests): a Z(p, T)
table from CoolProp with interpolation of a bounded, tested error (see :class:`DensityTable`)."""

from __future__ import annotations

from typing import Any

from benchwarden.core import gas as g
from benchwarden.core.gas import Gas, R, density
from benchwarden.errors import PA_ABS, PropertyError, RangeError

__all__ = ["DensityTable"]


class DensityTable:
    """Compressibility Z tabulated from CoolProp on a (p, T) grid, for long series.

    Method: Z(p, T) = p·M/(ρ·R·T) at ``n_p`` × ``n_T`` grid points from CoolProp HEOS, then
    bilinear interpolation of Z (which is smooth and close to 1) instead of one CoolProp call
    per row. The interpolation error is tested against direct CoolProp calls (below 1e-4
    relative in density for 64 pressure points over 1–300 bar; see tests/test_gas.py).

    For a mixture, a full phase-equilibrium flash costs about 8 ms; the grid is evaluated on
    the gas branch (0.2 ms a point) after a stability check at both ends and every 8th
    pressure of each temperature row: if any checked point is not a single stable phase,
    every point gets the full flash.
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
        Z = np.empty((len(self.T), n_p))
        for i, T in enumerate(self.T):
            rho = _gas_branch_densities(gas, float(T), self.p) if gas.is_mixture else None
            for j, p in enumerate(self.p):
                r = rho[j] if rho is not None else density(gas, float(T), float(p))
                Z[i, j] = p * self.M / (r * R * T)
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


def _gas_branch_densities(gas: Gas, T: float, ps: Any) -> list[float] | None:
    """Densities of a mixture at T over the pressures ``ps`` on the gas branch, or None when a
    stability check (both ends and every 8th pressure) finds a state that is not a single
    stable phase (the caller then uses full flashes).

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
    n = len(ps)
    for j in sorted(set(range(0, n, 8)) | {n - 1}):
        if g.phase(gas, T, float(ps[j])).kind not in ("gas", "supercritical"):
            return None
    out: list[float] = []
    try:
        for p in ps:
            g.check_state(gas, T, float(p))
            out.append(float(g.state_at(gas, "PT_INPUTS", float(p), T, imposed="gas").rhomass()))
    except PropertyError:
        return None
    return out
