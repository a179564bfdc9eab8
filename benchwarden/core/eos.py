"""CoolProp's HEOS backend behind one door: a quiet lazy import, one ``AbstractState`` per gas
and per thread, and :func:`update`, the only place a state is updated.

Why one door
------------
An ``AbstractState`` keeps what its last update left behind. After an update that fails (an
isentrope that runs into the two-phase dome, a flash CoolProp cannot solve) the state is left
half-set, and the next update on it can fail, or worse, return another root (measured with
CoolProp 8.0: SF6 at 4.9 bar(a), 15 °C gave the liquid-branch cp/cv 1.98 instead of 1.13 after a
failed isentropic flash). The bounds of CoolProp's single-phase (p, s) and (p, h) flashes are
also taken from the previous state. :func:`update` therefore throws a state away after any
failure and retries the same inputs on a fresh one, so every call answers what it answers in a
fresh process, whatever ran before in that thread (``tests/test_order_independence.py``).
Imposing a phase is an argument of the call, never left on a state between calls.

Repeated mixture states
-----------------------
A mixture's full (T, p) flash (stability analysis, then the phase equilibrium where the mixture
splits) costs about 10 ms with CoolProp 8 for a three-component premix; the same state on a
given branch about 0.1 ms. A plan asks for the same mixture state several times (the supply now
for its density, its enthalpy, its phase; the regulator's outlet). Each thread therefore
remembers, per gas and exact (p, T), the phase CoolProp's full flash found where it found one
single phase, with its density; the same inputs again are updated with that phase imposed, and
the answer is kept only if CoolProp reports the same phase, vapour fraction and density (to
1e-12), else the full flash runs again. A two-phase state is never remembered. The result is the
full flash's state (``tests/test_eos_memo.py``, against fresh ``AbstractState`` objects).
:func:`discard` with no gas forgets these too, as a fresh process would.
"""

from __future__ import annotations

import os
import re
import sys
import threading
from dataclasses import dataclass
from typing import Any

from benchwarden.core.gases import PURE_GASES, Gas, parse_gas
from benchwarden.errors import PropertyError

__all__ = ["SUPERANCILLARY_SWITCH", "coolprop", "discard", "estimated_pairs", "state", "update"]

#: Set before CoolProp 8 is imported: it then skips building superancillary curves for every
#: fluid (2–4 s here) and takes about 0.3 s; saturation states agree to 1e-11 (DEVELOPERS.md).
SUPERANCILLARY_SWITCH = "COOLPROP_DISABLE_SUPERANCILLARIES_ENTIRELY"

_IMPORT_LOCK = threading.Lock()
_BUILD_LOCK = threading.Lock()  # CoolProp's mixing-rule table is process-wide
_local = threading.local()
#: Remembered single-phase mixture states per thread: at most this many, then forgotten.
SINGLE_PHASE_LIMIT = 4096
#: Pairs whose parameters were estimated: mirrors CoolProp's own process-wide pair table.
_ESTIMATED: set[frozenset[str]] = set()


def _import_quietly() -> Any:
    """Import CoolProp with the superancillary switch set and standard output (file
    descriptor 1) sent to /dev/null meanwhile: the C++ library announces the switch with a
    line on standard output, which must never reach command output such as ``--json``."""
    os.environ.setdefault(SUPERANCILLARY_SWITCH, "1")
    try:
        sys.stdout.flush()
    except (OSError, ValueError):  # pragma: no cover - closed stdout
        pass
    try:
        saved = os.dup(1)
    except OSError:  # pragma: no cover - no fd 1 at all
        saved = -1
    devnull = os.open(os.devnull, os.O_WRONLY)
    try:
        if saved >= 0:
            os.dup2(devnull, 1)
        import CoolProp
    finally:
        if saved >= 0:
            os.dup2(saved, 1)
            os.close(saved)
        os.close(devnull)
    return CoolProp


def coolprop() -> Any:
    """The ``CoolProp`` module, imported quietly on first use (thread-safe).

    Parameters
    ----------
    None

    Returns
    -------
    module
        The imported ``CoolProp`` module.

    References
    ----------
    CoolProp HEOS (Bell et al., Ind. Eng. Chem. Res. 53 (2014) 2498–2508).
    """
    module = sys.modules.get("CoolProp")
    if module is not None and hasattr(module, "AbstractState"):
        return module
    with _IMPORT_LOCK:
        module = sys.modules.get("CoolProp")
        if module is not None and hasattr(module, "AbstractState"):
            return module
        return _import_quietly()


@dataclass
class _State:
    AS: Any
    estimated_pairs: tuple[tuple[str, str], ...]


def _build(key: str) -> _State:
    gas = parse_gas(key)
    CP = coolprop()
    names = "&".join(g.coolprop for g, _ in gas.components)
    estimated: list[tuple[str, str]] = []
    with _BUILD_LOCK:
        for _ in range(len(gas.components) ** 2 + 1):
            try:
                AS = CP.AbstractState("HEOS", names)
                break
            except ValueError as exc:
                m = re.search(r"binary pair \[([\d-]+),([\d-]+)\]", str(exc))
                if not m:
                    raise PropertyError(f"CoolProp cannot build {gas.name}") from None
                cas1, cas2 = m.group(1), m.group(2)
                # CoolProp ships no interaction parameters for this pair: estimate them.
                CP.CoolProp.apply_simple_mixing_rule(cas1, cas2, "Lorentz-Berthelot")
                by_cas = {g.cas: g.name for g in PURE_GASES.values()}
                estimated.append((by_cas.get(cas1, cas1), by_cas.get(cas2, cas2)))
        else:  # pragma: no cover - defensive
            raise PropertyError(f"CoolProp cannot build {gas.name}")
        _ESTIMATED.update(frozenset(p) for p in estimated)
        comps = [c.name for c, _ in gas.components]
        estimated = [(a, b) for i, a in enumerate(comps) for b in comps[i + 1:] if frozenset((a, b)) in _ESTIMATED]
    if gas.is_mixture:
        AS.set_mole_fractions([x for _, x in gas.components])
    return _State(AS, tuple(estimated))


def _state(key: str) -> _State:
    states: dict[str, _State] | None = getattr(_local, "states", None)
    if states is None:
        states = _local.states = {}
    st = states.get(key)
    if st is None:
        st = states[key] = _build(key)
    return st


def state(gas: Gas) -> Any:
    """This thread's CoolProp ``AbstractState`` of ``gas`` (HEOS backend), for constants and
    read-only queries (limits, critical and triple points, melting line). Update it only
    through :func:`update`.

    Each thread has its own states: an ``AbstractState`` is updated in place by every call,
    so sharing one between threads returns another thread's numbers.

    Parameters
    ----------
    gas : the gas (pure or a mixture by mole fraction)

    Returns
    -------
    AbstractState
        This thread's CoolProp state of the gas (not updated here).

    References
    ----------
    CoolProp HEOS (Bell et al., Ind. Eng. Chem. Res. 53 (2014) 2498–2508).
    """
    return _state(gas.key).AS


def estimated_pairs(gas: Gas) -> tuple[tuple[str, str], ...]:
    """Binary pairs of a mixture whose interaction parameters were estimated (Lorentz-Berthelot).

    Parameters
    ----------
    gas : the gas (pure or a mixture by mole fraction)

    Returns
    -------
    tuple of (str, str)
        The component pairs whose parameters were estimated.

    References
    ----------
    CoolProp HEOS (Bell et al., Ind. Eng. Chem. Res. 53 (2014) 2498–2508).
    Lorentz–Berthelot combining rules for binary pairs without fitted parameters (CoolProp's
    estimated interaction parameters).
    """
    return _state(gas.key).estimated_pairs


def discard(gas: Gas | None = None) -> None:
    """Throw away this thread's state of ``gas`` (of every gas when None); the next call builds
    a fresh one.

    Parameters
    ----------
    gas : the gas (pure or a mixture by mole fraction), or None for every gas

    Returns
    -------
    None
        Nothing; the next call builds a fresh state.

    References
    ----------
    CoolProp HEOS (Bell et al., Ind. Eng. Chem. Res. 53 (2014) 2498–2508).
    """
    if gas is None:
        _single().clear()
    states: dict[str, _State] | None = getattr(_local, "states", None)
    if not states:
        return
    if gas is None:
        states.clear()
    else:
        states.pop(gas.key, None)


def _try(AS: Any, code: int, a: float, b: float, imposed: int | None) -> bool:
    if imposed is not None:
        AS.specify_phase(imposed)
    try:
        AS.update(code, a, b)
        return True
    except ValueError:
        return False
    finally:
        if imposed is not None:
            AS.unspecify_phase()


def _single() -> dict[tuple[str, float, float], tuple[Any, float, float]]:
    """This thread's remembered single-phase mixture states: (gas key, p, T) → (CoolProp phase
    index, vapour fraction as CoolProp reports it, density [kg/m³])."""
    single: dict[tuple[str, float, float], tuple[Any, float, float]] | None = getattr(_local, "single", None)
    if single is None:
        single = _local.single = {}
    return single


def _same_single(AS: Any, known: tuple[Any, float, float]) -> bool:
    phase, q, rho = known
    return AS.phase() == phase and float(AS.Q()) == q and abs(float(AS.rhomass()) - rho) <= 1e-12 * rho


def _full_pt(gas: Gas, CP: Any, a: float, b: float) -> Any | None:
    """A mixture's (T, p) state (``PT_INPUTS``, no phase imposed): the remembered single phase
    imposed where these inputs were flashed before in this thread and the answer is the same
    (see the module docstring), else CoolProp's full flash, remembered where it is one phase."""
    single = _single()
    key = (gas.key, a, b)
    known = single.get(key)
    if known is not None:
        AS = state(gas)
        if _try(AS, CP.PT_INPUTS, a, b, known[0]) and _same_single(AS, known):
            return AS
        discard(gas)
        single.pop(key, None)
    for _ in range(2):
        AS = state(gas)
        if _try(AS, CP.PT_INPUTS, a, b, None):
            phase, q = AS.phase(), float(AS.Q())
            if phase != CP.iphase_twophase and not 0.0 <= q < 1.0:
                if len(single) >= SINGLE_PHASE_LIMIT:
                    single.clear()
                single[key] = (phase, q, float(AS.rhomass()))
            return AS
        discard(gas)
    return None


def update(gas: Gas, pair: str, a: float, b: float, imposed: str | None = None) -> Any | None:
    """Update this thread's state of ``gas`` with the CoolProp input pair ``pair`` (e.g.
    ``"PT_INPUTS"``) and return it, or None when the equation of state has no solution there.

    ``imposed`` names a phase to impose for this one update (``"gas"`` to stay on the vapour
    branch, CoolProp's ``iphase_gas``); it is lifted again before the call returns, and the
    properties read from the returned state are those of the imposed branch.

    A failed update throws the state away and the same inputs are tried once more on a fresh
    state (see the module docstring); a second failure throws that one away too, so no call
    leaves a half-set state behind.

    Parameters
    ----------
    gas : the gas (pure or a mixture by mole fraction)
    pair : CoolProp input pair, e.g. ``"PT_INPUTS"``
    a, b : the pair's values, SI ([Pa], [K], [kg/m³], [J/kg], [J/(kg·K)])
    imposed : a phase to impose for this call (``"gas"``), or None

    Returns
    -------
    AbstractState or None
        The updated state, or None where the equation of state has no solution.

    References
    ----------
    CoolProp HEOS (Bell et al., Ind. Eng. Chem. Res. 53 (2014) 2498–2508).
    """
    CP = coolprop()
    if imposed is None and pair == "PT_INPUTS" and gas.is_mixture:
        return _full_pt(gas, CP, a, b)
    code = getattr(CP, pair)
    phase_code = None if imposed is None else getattr(CP, f"iphase_{imposed}")
    for _ in range(2):
        AS = state(gas)
        if _try(AS, code, a, b, phase_code):
            return AS
        discard(gas)
    return None
