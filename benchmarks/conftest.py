"""Benchmarks compare benchwarden with the plain approach in the same run and report the ratio.

Run: uv run pytest benchmarks   (pytest-benchmark; not part of the test suite's pass/fail).
Each comparison stores both timings in benchmark.extra_info and prints the ratio at the end.
"""

import pytest

RATIOS: list[tuple[str, float, float]] = []


def record(name: str, ours_s: float, plain_s: float) -> None:
    RATIOS.append((name, ours_s, plain_s))


@pytest.fixture
def ratio():
    return record


def pytest_terminal_summary(terminalreporter):
    if not RATIOS:
        return
    terminalreporter.write_sep("-", "benchwarden vs plain approach (same run)")
    for name, ours, plain in RATIOS:
        terminalreporter.write_line(f"{name:<48} ours {ours * 1e3:10.3f} ms   plain {plain * 1e3:10.3f} ms   "
                                    f"ratio {plain / ours:7.1f}x")
