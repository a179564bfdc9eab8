"""The command line as the tests run it: ``main`` in this process, its exit status (also when it
exits through ``SystemExit``, as argparse does) and what it printed."""

from __future__ import annotations

from benchwarden.cli import main


def run(capsys, *argv: str) -> tuple[int, str, str]:
    """Run ``benchwarden ARGV``; returns (exit status, stdout, stderr)."""
    try:
        code = main(list(argv))
    except SystemExit as exc:
        code = exc.code
    out, err = capsys.readouterr()
    return code, out, err


def limit_s(seconds: float) -> float | None:
    """A child process's time limit [s], or None under libfaketime: a timed wait polls with
    ``time.sleep``, which fails with EINVAL there now and then (the date-independence check runs
    the tests under ``faketime``); the commands so waited for end by themselves."""
    import os

    return None if "faketime" in os.environ.get("LD_PRELOAD", "") else seconds
