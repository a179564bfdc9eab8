"""Real-gas properties from CoolProp: one name for the catalogue (:mod:`benchwarden.core.gases`),
the property functions (:mod:`benchwarden.core.properties`) and saturation
(:mod:`benchwarden.core.saturation`), re-exported here.

Real-gas properties come from CoolProp's HEOS backend (the reference multiparameter
equations of state: Span et al. 2000 for nitrogen, Tegeler et al. 1999 for argon, Lemmon et
al. 2000 for air, Span & Wagner 1996 for CO2, ...). Mixtures use CoolProp's GERG-2008 /
Kunz-Wagner mixing with published binary parameters; where CoolProp has no parameters for a
pair, the Lorentz-Berthelot rule is applied and the result says it is an estimate.

CoolProp is imported lazily; each gas has one ``AbstractState`` per thread (about ten times
cheaper per call than ``PropsSI``). These cached states are the package's only global
mutable state.
"""

from __future__ import annotations

from benchwarden.core.gases import (
    AIR_MOLAR_MASS,
    PURE_GASES,
    T0,
    Gas,
    Handling,
    PureGas,
    R,
    has_sublimation_line,
    parse_gas,
    pure_gas,
    sublimation_pressure,
    sublimation_temperature,
)
from benchwarden.core.properties import *  # noqa: F403 - the façade re-exports the property functions
from benchwarden.core.properties import __all__ as _properties_all
from benchwarden.core.saturation import *  # noqa: F403
from benchwarden.core.saturation import __all__ as _saturation_all

__all__ = ["has_sublimation_line", "sublimation_pressure", "sublimation_temperature", "AIR_MOLAR_MASS",
           "PURE_GASES", "R", "T0", "Gas", "Handling", "PureGas", "parse_gas", "pure_gas",
           *_properties_all, *_saturation_all]


