"""The ``checklist`` command: the pre-session checklist in text, Markdown, HTML, PDF or JSON."""

from __future__ import annotations

import argparse
import shutil
import subprocess
import sys
from pathlib import Path
from typing import Any

from benchwarden.cli.common import (
    add_display,
    add_fail_on,
    add_journal,
    display,
    emit_json,
    exit_for,
    input_error,
    journal_if_exists,
)
from benchwarden.render.checklist import build_checklist, checklist_json
from benchwarden.render.checklist.render import (
    render_html,
    render_markdown,
    render_pdf,
    render_text,
)
from benchwarden.render.files import write_output
from benchwarden.workflows import computations as comp
from benchwarden.workflows.bench import assess


def configure(sub: Any, name: str) -> None:
    p = sub.add_parser("checklist", help="pre-session checklist filled with this bench's figures")
    p.add_argument("profile", help="bench profile (TOML)")
    p.add_argument("--format", choices=["txt", "md", "html", "pdf", "json"], default="txt")
    p.add_argument("--output", metavar="FILE", help="write to FILE (required for pdf); an existing file is kept "
                                                   "unless --force")
    p.add_argument("--force", action="store_true", help="replace an existing --output file")
    p.add_argument("--operator", help="operator's name for the sign-off")
    p.add_argument("--print", action="store_true", help="send the written file to the system's print command")
    add_journal(p)
    add_display(p)
    add_fail_on(p)
    p.set_defaults(func=cmd_checklist)


def cmd_checklist(args: argparse.Namespace) -> int:
    if args.format == "pdf" and not args.output:
        raise input_error("--format pdf needs --output FILE")
    if args.print and not args.output:
        raise input_error("--print needs --output FILE")
    prof = comp.load_profile(args.profile)
    journal = journal_if_exists(args)
    try:
        a = assess(prof, journal)
    finally:
        if journal is not None:
            journal.close()
    cl = build_checklist(prof, a, Path(args.profile).resolve().parent, operator=args.operator,
                         display=display(args, prof.ambient_pa, prof))
    if args.format == "json" and not args.output:
        emit_json(checklist_json(cl))
        return exit_for(args, a.findings)
    protected = (comp.default_path(getattr(args, "journal", None)), args.profile)
    if args.format == "pdf":
        out = write_output(args.output, lambda tmp: render_pdf(cl, tmp), force=args.force, protected=protected)
    else:
        if args.format == "json":
            import json

            text = json.dumps(checklist_json(cl), indent=2, ensure_ascii=False) + "\n"
        else:
            text = {"txt": render_text, "md": render_markdown, "html": render_html}[args.format](cl)
        if not args.output:
            sys.stdout.write(text)
            return exit_for(args, a.findings)
        out = write_output(args.output, text, force=args.force, protected=protected)
    print(f"checklist written to {out}")
    if args.print:
        cmd = shutil.which("lp") or shutil.which("lpr")
        if cmd is None:
            sys.stderr.write(f"benchwarden: no print command (lp or lpr) on this system; print {out} yourself\n")
            return 1
        r = subprocess.run([cmd, str(out)], capture_output=True, text=True)
        if r.returncode != 0:
            sys.stderr.write(f"benchwarden: {Path(cmd).name} failed: {r.stderr.strip() or r.returncode}\n")
            return 1
        print(f"sent to {Path(cmd).name}")
    return exit_for(args, a.findings)
