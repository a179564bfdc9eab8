"""Core public functions name their units and their published method (issue 22, item 11):
numpydoc ``Parameters`` (units in brackets) and ``References`` sections."""

from __future__ import annotations

import importlib
import inspect
import re

import pytest

#: parameters that carry no unit (a gas, a record, a flag, a function, a name)
UNITLESS = {"gas", "AS", "f", "part", "flow", "reference", "pair", "imposed", "verify", "saturated_vapour",
            "A", "B", "gamma", "a, b"}
MODULES = ["properties", "saturation", "contents", "supply", "flash", "flow", "regulator", "gap"]


@pytest.mark.parametrize("name", MODULES)
def test_public_core_functions_have_parameters_and_references(name):
    mod = importlib.import_module(f"benchwarden.core.{name}")
    missing = []
    for fname, fn in inspect.getmembers(mod, inspect.isfunction):
        if fname.startswith("_") or fn.__module__ != mod.__name__:
            continue
        doc = inspect.getdoc(fn) or ""
        if "Parameters\n----------" not in doc or "References\n----------" not in doc:
            missing.append(fname)
        else:
            section = doc.split("Parameters\n----------", 1)[1].split("\n\n", 1)[0]
            for name, text in re.findall(r"^(\w[\w, ]*?) : (.*)$", section, re.M):
                if name not in UNITLESS and "[" not in text:
                    missing.append(f"{fname}: {name} has no unit in brackets")
    assert not missing, missing
