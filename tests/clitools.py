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
