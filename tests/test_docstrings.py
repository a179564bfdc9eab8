"""Core public functions name their units and their published method (issue 22, item 11):
numpydoc ``Parameters`` (units in brackets), ``Returns`` and ``References`` sections, in every
module of ``benchwarden.core``."""

from __future__ import annotations

import importlib
import inspect
import pkgutil
import re

import pytest

import benchwarden.core

#: parameters that carry no unit (a gas, a record, a flag, a function, a name)
UNITLESS = {"gas", "gases", "AS", "f", "part", "flow", "reference", "pair", "imposed", "verify", "saturated_vapour",
            "A", "B", "gamma", "a, b", "text", "name", "log", "gauge", "lk", "amount", "tox", "model", "kind",
            "max_cycles", "effects", "fractions"}
MODULES = sorted(m.name for m in pkgutil.iter_modules(benchwarden.core.__path__))
SECTIONS = ("Parameters\n----------", "Returns\n-------", "References\n----------")


def _params(section: str) -> list[tuple[str, str]]:
    """(name, its text with the indented lines under it) of a numpydoc Parameters section."""
    out: list[tuple[str, str]] = []
    for line in section.splitlines():
        m = re.match(r"^(\w[\w, ]*?) : (.*)$", line)
        if m:
            out.append((m.group(1), m.group(2)))
        elif out and line.startswith(" "):
            out[-1] = (out[-1][0], out[-1][1] + " " + line.strip())
    return out


def test_every_core_module_is_checked():
    assert {"properties", "hold", "room", "purge", "hazards", "eos", "uncertainty"} <= set(MODULES)


@pytest.mark.parametrize("name", MODULES)
def test_public_core_functions_have_parameters_returns_and_references(name):
    mod = importlib.import_module(f"benchwarden.core.{name}")
    missing = []
    for fname, fn in inspect.getmembers(mod, inspect.isfunction):
        if fname.startswith("_") or fn.__module__ != mod.__name__:
            continue
        doc = inspect.getdoc(fn) or ""
        absent = [s.split("\n")[0] for s in SECTIONS if s not in doc]
        if absent:
            missing.append(f"{fname}: no {', '.join(absent)}")
            continue
        section = doc.split("Parameters\n----------", 1)[1].split("\n\n", 1)[0]
        named = _params(section)
        if not named and section.strip() != "None":
            missing.append(f"{fname}: Parameters lists none")
        for pname, text in named:
            if pname not in UNITLESS and "[" not in text:
                missing.append(f"{fname}: {pname} has no unit in brackets")
        if not doc.split("References\n----------", 1)[1].strip():
            missing.append(f"{fname}: References is empty")
    assert not missing, missing
