"""The house's size rules (issue 22): every module of the package at most 450 lines and every
function at most 80, so that each can be read in one sitting. Counted from the source with
Python's own ``ast`` (a function's lines from its ``def`` or first decorator to its last line)."""

import ast
from pathlib import Path

import pytest

PKG = Path(__file__).resolve().parents[1] / "benchwarden"
MODULES = sorted(PKG.rglob("*.py"))
MAX_MODULE_LINES = 450
MAX_FUNCTION_LINES = 80


def test_the_package_has_modules_to_check():
    assert len(MODULES) > 50  # a moved package would make the checks below pass on nothing


@pytest.mark.parametrize("path", MODULES, ids=lambda p: str(p.relative_to(PKG)))
def test_modules_and_functions_stay_small(path):
    text = path.read_text(encoding="utf-8")
    n = len(text.splitlines())
    assert n <= MAX_MODULE_LINES, f"{path.relative_to(PKG)}: {n} lines (at most {MAX_MODULE_LINES}); split it"
    long = []
    for node in ast.walk(ast.parse(text)):
        if isinstance(node, (ast.FunctionDef, ast.AsyncFunctionDef)):
            first = min([node.lineno] + [d.lineno for d in node.decorator_list])
            size = (node.end_lineno or node.lineno) - first + 1
            if size > MAX_FUNCTION_LINES:
                long.append(f"{node.name} ({size} lines)")
    assert not long, f"{path.relative_to(PKG)}: functions over {MAX_FUNCTION_LINES} lines: {', '.join(long)}"
