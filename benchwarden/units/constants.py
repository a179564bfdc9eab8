"""Physical and conventional constants, each defined once for the whole package.

Every other module imports these names; a literal 273.15, 101325, 1e5 (as a bar) or 60e6 (as a
sccm factor) elsewhere in the package is a defect.
"""

from __future__ import annotations

__all__ = ["ATM_PA", "BAR_PA", "PSI_PA", "TORR_PA", "T0_K", "T_FULL_K", "SCCM_PER_M3_S", "SECONDS_PER_DAY"]

#: Standard atmosphere, [Pa] (ISO 2533; also the definition of 1 atm).
ATM_PA = 101325.0
#: One bar, [Pa] (exact, ISO 80000-4).
BAR_PA = 1e5
#: Pounds per square inch in pascal (exact from the definitions of the pound-force and inch).
PSI_PA = 6894.757293168361
#: One torr, [Pa] (1/760 of a standard atmosphere, by definition).
TORR_PA = ATM_PA / 760.0
#: 0 °C in kelvin (exact, ITS-90 / SI definition of the Celsius scale).
T0_K = 273.15
#: Temperature at which a cylinder's "full" content and free-gas volume are stated by default,
#: 15 °C [K] (ISO 13443 standard reference conditions).
T_FULL_K = T0_K + 15.0
#: Standard cubic centimetres per minute in one standard cubic metre per second
#: (1 sccm = 1e-6 m³ / 60 s).
SCCM_PER_M3_S = 60e6
#: Seconds in a day.
SECONDS_PER_DAY = 86400.0
