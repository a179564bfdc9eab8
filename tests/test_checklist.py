"""Checklist: computed items carry the plan's figures; renderers escape user text; PDF text."""

import datetime as dt
import json
from pathlib import Path

import pytest

from benchwarden.cli import main
from benchwarden.errors import ProfileError
from benchwarden.render.checklist import build_checklist, checklist_json
from benchwarden.render.checklist.render import (
    render_html,
    render_markdown,
    render_pdf,
    render_text,
)
from benchwarden.render.plan import plan_json
from benchwarden.storage.profile import load_profile, parse_profile
from benchwarden.workflows.bench import Assessment, assess, findings_of
from benchwarden.workflows.build import build_plan
from benchwarden.workflows.holds import LastHold

ROOT = Path(__file__).resolve().parents[1]
DEMO = ROOT / "profiles" / "demo-teaching-bench.toml"


def _lookup(d, path):
    for part in path.replace("]", "").replace("[", ".").split("."):
        d = d[int(part)] if part.isdigit() else d[part]
    return d


@pytest.mark.parametrize("path", sorted((ROOT / "profiles").glob("*.toml")), ids=lambda p: p.name)
def test_computed_items_carry_the_plan_json_figures(path, capsys):
    prof = load_profile(path)
    a = assess(prof)
    cl = build_checklist(prof, a, path.parent)
    main(["plan", str(path), "--json"])
    pj = json.loads(capsys.readouterr().out)
    checked = 0
    for s in cl.sections:
        for it in s.items:
            if it.source:
                assert _lookup(pj, it.source) == pytest.approx(it.value, rel=1e-6), it.id
                checked += 1
    assert checked >= 4
    assert plan_json(a)["supplies"][0]["id"] == pj["supplies"][0]["id"]


def test_statuses_and_leak_status_from_journal():
    prof = load_profile(DEMO)
    plan = build_plan(prof)
    now = dt.datetime(2026, 12, 1, 9, 0).astimezone()
    fresh = LastHold(now - dt.timedelta(days=1), "n2-A", "no-leak-resolved", 0.2, 0.1, 1.0)
    old = LastHold(now - dt.timedelta(days=9), "n2-A", "no-leak-resolved", 0.2, 0.1, 9.0)
    leak = LastHold(now - dt.timedelta(days=1), "n2-A", "leak", 12.0, 1.0, 1.0)

    def status(last):
        cl = build_checklist(prof, Assessment(plan, last, findings_of(plan, last)), DEMO.parent, now=now)
        return next(i for s in cl.sections for i in s.items if i.id == "leak-status").status

    assert status(None) == "warning"  # no hold test ever recorded: a warning (issue 25 item 6)
    assert status(fresh) == "ok"
    assert status(old) == "attention"
    assert status(leak) == "stop"


HOSTILE = '<script>alert("x")</script> & Sons | "quotes" *bold* [link](http://x)'


def _hostile_checklist():
    text = DEMO.read_text().replace('name = "Demo: Larkfield teaching lab, bench 2 (N2 laser)"',
                                    f"name = '{HOSTILE}'")
    prof = parse_profile(text)
    return build_checklist(prof, assess(prof), DEMO.parent)


def test_hostile_bench_name_is_escaped_in_html():
    h = render_html(_hostile_checklist())
    assert "<script>" not in h
    assert "&lt;script&gt;" in h and "&amp; Sons" in h


def test_hostile_bench_name_does_not_break_markdown_tables():
    md = render_markdown(_hostile_checklist())
    assert "<script>" not in md
    for line in md.splitlines():
        if line.startswith("| ") and not line.startswith("|---"):
            # every table row has exactly 4 cells: 5 unescaped pipes
            unescaped = len(line) - len(line.replace("|", "")) - line.count("\\|")
            assert unescaped == 5, line


def test_text_fits_a_printed_page():
    txt = render_text(_hostile_checklist())
    assert max(len(line) for line in txt.splitlines()) <= 100
    assert "SIGN-OFF" in txt and "estimates" in txt


def test_pdf_opens_and_contains_the_items(tmp_path):
    from pypdf import PdfReader

    cl = _hostile_checklist()
    out = render_pdf(cl, tmp_path / "c.pdf")
    text = " ".join(p.extract_text() for p in PdfReader(out).pages)
    flat = " ".join(text.split())
    assert "time to reserve" in flat
    assert "°C" in flat.replace(" ", "") and "m³" in flat  # the bundled font prints ° and ³
    assert "Sign-off" in flat


def test_lab_items_add_remove_and_reword(tmp_path):
    items = tmp_path / "lab.toml"
    items.write_text(
        'remove = ["laser-goggles"]\n'
        '[[reword]]\nid = "estop"\ntext = "Red mushroom button by the door tested"\n'
        '[[sections]]\nid = "emergency"\nitems = [{ id = "call", text = "Call the lab manager on 4411" }]\n'
        '[[sections]]\nid = "local"\ntitle = "Our own"\nitems = [{ id = "keys", text = "Key cabinet locked" }]\n')
    text = DEMO.read_text() + f'\n[checklist]\nitems = "{items}"\noperator = "A. Example"\nsecond_person = true\n'
    prof = parse_profile(text)
    cl = build_checklist(prof, assess(prof), tmp_path)
    ids = {i.id: i for s in cl.sections for i in s.items}
    assert "laser-goggles" not in ids
    assert ids["estop"].text.startswith("Red mushroom")
    assert "call" in ids and "keys" in ids
    assert cl.second_person and cl.operator == "A. Example"
    bad = tmp_path / "bad.toml"
    bad.write_text('[[sections]]\nid = "x"\nitems = [{ id = "y", computed = "nonsense" }]\n')
    prof2 = parse_profile(DEMO.read_text() + f'\n[checklist]\nitems = "{bad}"\n')
    with pytest.raises(ProfileError, match="unknown computed key"):
        build_checklist(prof2, assess(prof2), tmp_path)


def test_checklist_cli_formats(tmp_path, capsys):
    for fmt in ("txt", "md", "html", "pdf", "json"):
        out = tmp_path / f"c.{fmt}"
        assert main(["checklist", str(DEMO), "--format", fmt, "--output", str(out)]) == 0
        assert out.stat().st_size > 500
    assert main(["checklist", str(DEMO), "--format", "pdf"]) == 2
    assert "needs --output" in capsys.readouterr().err


def test_print_without_print_command_says_so(tmp_path, capsys, monkeypatch):
    monkeypatch.setattr("shutil.which", lambda name: None)
    out = tmp_path / "c.txt"
    assert main(["checklist", str(DEMO), "--output", str(out), "--print"]) == 1
    assert "no print command" in capsys.readouterr().err
    assert out.exists()


def test_checklist_json_items_carry_finding_codes_and_severities(capsys):
    assert main(["checklist", str(DEMO), "--format", "json"]) == 0
    d = json.loads(capsys.readouterr().out)
    items = [it for s in d["sections"] for it in s["items"]]
    computed = [it for it in items if it["kind"] == "computed"]
    assert computed and all(it["status"] in ("ok", "stop", "warning", "attention", "info") for it in computed)
    assert any(it["code"] for it in computed)
    # the same figures as the Python model
    prof = load_profile(DEMO)
    cl = checklist_json(build_checklist(prof, assess(prof), DEMO.parent))
    assert [it["id"] for s in cl["sections"] for it in s["items"]] == [it["id"] for it in items]


def test_printed_checklist_has_header_and_page_numbers_on_every_page(tmp_path):
    # the PDF rendered to text: bench and date on top, "page x of y" at the foot of every page
    from pypdf import PdfReader

    prof = load_profile(DEMO)
    cl = build_checklist(prof, assess(prof), DEMO.parent, operator="A. Example")
    out = render_pdf(cl, tmp_path / "c.pdf")
    pages = PdfReader(out).pages
    n = len(pages)
    for i, page in enumerate(pages, start=1):
        lines = [x for x in page.extract_text().splitlines() if x.strip()]
        assert lines[0].startswith("Pre-session checklist") and prof.bench.name[:20] in lines[0]
        assert f"page {i} of {n}" in " ".join(lines[-2:])


def test_markdown_escapes_only_what_markdown_needs():
    from benchwarden.render.checklist.render import md_escape

    # regression: "\(N2 laser\)" and "\+00:00" were escaped needlessly
    assert md_escape("bench 2 (N2 laser) +00:00 #3") == "bench 2 (N2 laser) +00:00 #3"
    assert md_escape("a|b *c* [d](e) <f>") == "a\\|b \\*c\\* \\[d\\](e) &lt;f&gt;"
