"""Ranges that need the gas's properties, checked at the edge before a computation so the core's
functions stay as they are (a range of sense is the application's to decide); and bounded reads of
the files a person names on the command line (a hold-test log).
"""

from __future__ import annotations

from benchwarden.core import gas as g
from benchwarden.errors import PropertyError
from benchwarden.storage.profile import read_text_file
from benchwarden.units.constants import BAR_PA
from benchwarden.units.limits import within

__all__ = ["MAX_FILL_PRESSURE_PA", "check_weight_fits", "MAX_LOG_BYTES", "read_log"]

#: The largest hold-test log read [bytes]: a year of readings every second is about 20 MB.
MAX_LOG_BYTES = 20_000_000


def read_log(path: str) -> str:
    """A hold-test log's text: a regular file (not ``/dev/zero``, a pipe or a folder) of at most
    :data:`MAX_LOG_BYTES`, UTF-8."""
    return read_text_file(path, "hold-test log (.csv)", MAX_LOG_BYTES)

#: No gas cylinder is filled beyond this [Pa, absolute] (1000 bar; the highest-pressure cylinders
#: in common use are rated at 300 bar, common practice): the densest a cylinder's gas can be is
#: its density at this pressure and the cylinder's temperature.
MAX_FILL_PRESSURE_PA = 1e8


def check_weight_fits(gas: g.Gas, net_kg: float, volume_m3: float, T: float, text: str = "") -> float:
    """Refuse a net weight that the cylinder cannot hold: more than its water volume filled with
    the gas (liquid or supercritical) at :data:`MAX_FILL_PRESSURE_PA` and ``T`` (CoolProp HEOS,
    through :func:`benchwarden.core.gas.density`). A filling above the permitted ratio but within
    this bound is a finding (overfilled), not bad input. Returns the net mass [kg].

    Where the equation of state has no state at that pressure (a solid, a mixture it cannot flash),
    the bound is not applied.
    """
    try:
        rho_max = g.density(gas, T, MAX_FILL_PRESSURE_PA)
    except (PropertyError, ValueError):
        return net_kg
    cap = rho_max * volume_m3
    return within(net_kg, "net weight (gross − tare)", 0.0, cap, "kg", lo_open=True, text=text or None,
                  words=f"at most {cap:.3g} kg: {volume_m3 * 1000:.3g} L of {gas.name} holds no more even at "
                        f"{MAX_FILL_PRESSURE_PA / BAR_PA:g} bar; check the weights and the volume")
