"""The application's surface for the interfaces: every computation, file and database the command
line and the app use, named once here, so that ``cli/`` and ``tui/`` import no core, storage, live
or lab module (a contract in ``pyproject.toml``).

The one-off computations of the command line (contents, heat-up, run time, throttle, gap,
orifice, purge, a hold test) are the core's functions, each with its published method in its own
docstring; profiles, the journal and hold-test logs come from storage; the simulator from live.
"""

from __future__ import annotations

import importlib
from typing import TYPE_CHECKING, Any

if TYPE_CHECKING:  # the names as mypy sees them; at run time each loads when first used
    from benchwarden.core.cautions import DEFER, ESTIMATES, GENERAL, gas_cautions
    from benchwarden.core.flow import orifice_flow
    from benchwarden.core.gap import breakdown
    from benchwarden.core.gas import Gas, parse_gas
    from benchwarden.core.hold import (
        GUIDANCE,
        U_T_DEFAULT,
        GaugeSpec,
        HoldResult,
        LogFit,
        hold_from_log,
        hold_two_readings,
        line_volume,
        target_sccm,
    )
    from benchwarden.core.purge import cycle_purge, flush
    from benchwarden.core.regulator import throttle
    from benchwarden.core.supply import contents, contents_by_weight, heat_up, mass_flow, runtime
    from benchwarden.live.simulator import Cylinder, serve
    from benchwarden.storage.holdlog import parse_log
    from benchwarden.storage.journal import Journal, default_path, open_journal
    from benchwarden.storage.profile import (
        MAX_PROFILE_BYTES,
        Profile,
        demo_profile_path,
        load_profile,
        read_profile_text,
        read_text_file,
    )

__all__ = [
    "DEFER", "ESTIMATES", "GENERAL", "gas_cautions", "orifice_flow", "breakdown", "Gas", "parse_gas", "GUIDANCE",
    "U_T_DEFAULT", "GaugeSpec", "HoldResult", "LogFit", "hold_from_log", "hold_two_readings", "line_volume",
    "target_sccm", "cycle_purge", "flush", "throttle", "contents", "contents_by_weight", "heat_up", "mass_flow",
    "runtime", "Cylinder", "serve", "parse_log", "Journal", "default_path", "open_journal", "Profile",
    "demo_profile_path", "load_profile", "read_text_file", "read_profile_text", "MAX_PROFILE_BYTES",
]

#: name → module it comes from (imported when first used: `--help` and a quick command stay fast)
_WHERE: dict[str, str] = {
    "DEFER": "benchwarden.core.cautions",
    "ESTIMATES": "benchwarden.core.cautions",
    "GENERAL": "benchwarden.core.cautions",
    "gas_cautions": "benchwarden.core.cautions",
    "orifice_flow": "benchwarden.core.flow",
    "breakdown": "benchwarden.core.gap",
    "Gas": "benchwarden.core.gas",
    "parse_gas": "benchwarden.core.gas",
    "GUIDANCE": "benchwarden.core.hold",
    "U_T_DEFAULT": "benchwarden.core.hold",
    "GaugeSpec": "benchwarden.core.hold",
    "HoldResult": "benchwarden.core.hold",
    "LogFit": "benchwarden.core.hold",
    "hold_from_log": "benchwarden.core.hold",
    "hold_two_readings": "benchwarden.core.hold",
    "line_volume": "benchwarden.core.hold",
    "target_sccm": "benchwarden.core.hold",
    "cycle_purge": "benchwarden.core.purge",
    "flush": "benchwarden.core.purge",
    "throttle": "benchwarden.core.regulator",
    "contents": "benchwarden.core.supply",
    "contents_by_weight": "benchwarden.core.supply",
    "heat_up": "benchwarden.core.supply",
    "mass_flow": "benchwarden.core.supply",
    "runtime": "benchwarden.core.supply",
    "Cylinder": "benchwarden.live.simulator",
    "serve": "benchwarden.live.simulator",
    "parse_log": "benchwarden.storage.holdlog",
    "Journal": "benchwarden.storage.journal",
    "default_path": "benchwarden.storage.journal",
    "open_journal": "benchwarden.storage.journal",
    "Profile": "benchwarden.storage.profile",
    "demo_profile_path": "benchwarden.storage.profile_view",
    "read_text_file": "benchwarden.storage.profile_view",
    "read_profile_text": "benchwarden.storage.profile_view",
    "MAX_PROFILE_BYTES": "benchwarden.storage.profile_view",
    "load_profile": "benchwarden.storage.profile",
}


def __getattr__(name: str) -> Any:
    module = _WHERE.get(name)
    if module is None:
        raise AttributeError(f"module {__name__!r} has no attribute {name!r}")
    value = getattr(importlib.import_module(module), name)
    globals()[name] = value
    return value
