"""Checklist renderers: plain text (≤ 100 characters a line), Markdown, HTML with print styles,
and PDF (fpdf2 with the bundled DejaVu Sans font, which prints °, ±, ≥ and ³). All user text is
escaped in Markdown and HTML.
"""

from __future__ import annotations

import html
import re
import textwrap
from importlib import resources
from pathlib import Path
from typing import Any

from benchwarden.render.checklist import Checklist, Item

WIDTH = 100
MARK = {"ok": "OK", "info": "INFO", "attention": "ATTENTION", "warning": "WARNING", "stop": "STOP"}
SYMBOL = {"ok": "✔", "info": "ℹ", "attention": "●", "warning": "▲", "stop": "✖"}


def _summary(cl: Checklist) -> str:
    return f"{cl.stops} stop, {cl.warnings} warning, {cl.attentions} attention"


def _box(it: Item) -> str:
    return "[ ]" if it.status is None else f"[{MARK[it.status]}]"


def _tick(it: Item) -> str:
    """A box to tick: its text, this bench's figure where it has one, and the basis."""
    line = it.text + (f": {it.figure}" if it.figure else "")
    return line + (f" [{it.basis}]" if it.basis else "")


def _line(it: Item) -> str:
    """One item as a line of text: box, text, figure, (for computed items) the reason, basis."""
    if it.status is None:
        return f"{_box(it)} {_tick(it)}"
    line = f"{_box(it)} {it.text}"
    if it.figure:
        line += f": {it.figure}"
    if it.reason:
        line += f" — {it.reason}"
    return line + (f" [{it.basis}]" if it.basis else "")


def render_text(cl: Checklist, width: int = WIDTH) -> str:
    """Plain text for a printed page: no line longer than ``width`` (100) characters."""
    out: list[str] = []

    def para(text: str, indent: str = "", first: str | None = None) -> None:
        out.extend(textwrap.wrap(text, width, initial_indent=first if first is not None else indent,
                                 subsequent_indent=indent, break_long_words=True, break_on_hyphens=False) or [""])

    para(f"PRE-SESSION CHECKLIST — {cl.bench}")
    para(f"Generated {cl.generated_at}; planned session {cl.session}.")
    para(f"Summary: {_summary(cl)}.")
    out.append("")
    for s in cl.sections:
        para(s.title.upper())
        for it in s.items:
            para(_line(it), indent="      ", first="  ")
        out.append("")
    para("CAUTIONS")
    for c in cl.cautions:
        para(f"{c.topic}: {c.text}", indent="    ", first="  - ")
    out.append("")
    para(cl.estimates)
    para(cl.defer)
    out.append("")
    para("SIGN-OFF")
    para(f"Operator: {cl.operator or '_' * 30}   Date and time: {'_' * 20}   Signature: {'_' * 20}")
    if cl.second_person:
        para(f"Second person: {'_' * 30}   Date and time: {'_' * 20}   Signature: {'_' * 20}")
    return "\n".join(out) + "\n"




def md_escape(text: str) -> str:
    """Escape what Markdown would act on in user text: emphasis, code, links, table pipes, HTML
    (``&``, ``<``, ``>``); brackets, ``+`` and ``#`` inside a line are left as they are.

    >>> md_escape('<script>a|b & "c"</script> (N2 laser) +00:00')
    '&lt;script&gt;a\\\\|b &amp; "c"&lt;/script&gt; (N2 laser) +00:00'
    """
    flat = text.replace("\n", " ").replace("&", "&amp;").replace("<", "&lt;").replace(">", "&gt;")
    return re.sub(r"([\\`*_\[\]|])", r"\\\1", flat)


def render_markdown(cl: Checklist) -> str:
    e = md_escape
    out = [f"# Pre-session checklist — {e(cl.bench)}", "",
           f"Generated {e(cl.generated_at)}; planned session {e(cl.session)}. "
           f"**{_summary(cl)}.**", ""]
    for s in cl.sections:
        out += [f"## {e(s.title)}", ""]
        ticks = [it for it in s.items if it.status is None]
        figs = [it for it in s.items if it.status is not None]
        out += [f"- [ ] {e(_tick(it))}" for it in ticks]
        if figs:
            if ticks:
                out.append("")
            out += ["| Item | Figure | Status | Why |", "|---|---|---|---|"]
            out += [f"| {e(it.text)} | {e(it.figure or '')} | {SYMBOL[it.status]} {MARK[it.status]} | "
                    f"{e(it.reason or '')}{e(f' [{it.basis}]' if it.basis else '')} |"
                    for it in figs if it.status]
        out.append("")
    out += ["## Cautions", ""] + [f"- **{e(c.topic)}**: {e(c.text)}" for c in cl.cautions]
    out += ["", f"*{e(cl.estimates)}*", "", f"*{e(cl.defer)}*", "", "## Sign-off", "",
            f"- Operator: {e(cl.operator) if cl.operator else '________________'} — date and time: __________ — signature: __________"]
    if cl.second_person:
        out.append("- Second person: ________________ — date and time: __________ — signature: __________")
    return "\n".join(out) + "\n"


_CSS = """
body { font-family: 'DejaVu Sans', Arial, sans-serif; font-size: 11pt; margin: 2em; color: #111; }
h1 { font-size: 16pt; } h2 { font-size: 13pt; margin-top: 1.2em; border-bottom: 1px solid #999; }
table { border-collapse: collapse; width: 100%; } td, th { border: 1px solid #999; padding: 3px 6px; text-align: left; }
.stop { font-weight: bold; } .warning { font-weight: bold; } .attention { font-style: italic; }
ul.ticks { list-style: none; padding-left: 0; } ul.ticks li::before { content: "\\2610  "; }
ul.ticks li { display: flex; } .initials { margin-left: auto; min-width: 5em; border-bottom: 1px solid #000; }
.sign { margin-top: 1.5em; } .sign span { display: inline-block; min-width: 14em; border-bottom: 1px solid #000; }
@media print { @page { @bottom-right { content: "page " counter(page) " of " counter(pages); } }
  body { margin: 0; font-size: 10pt; } h2 { break-after: avoid; } tr, li { break-inside: avoid; }
  .sign { break-inside: avoid; }
  a { color: inherit; text-decoration: none; } }
"""


def render_html(cl: Checklist) -> str:
    e = html.escape
    out = ["<!DOCTYPE html>", '<html lang="en"><head><meta charset="utf-8">',
           f"<title>Pre-session checklist — {e(cl.bench)}</title><style>{_CSS}</style></head><body>",
           f"<h1>Pre-session checklist — {e(cl.bench)}</h1>",
           f"<p>Generated {e(cl.generated_at)}; planned session {e(cl.session)}. "
           f"<strong>{_summary(cl)}.</strong></p>"]
    for s in cl.sections:
        out.append(f"<h2>{e(s.title)}</h2>")
        ticks = [it for it in s.items if it.status is None]
        figs = [it for it in s.items if it.status is not None]
        if ticks:
            out.append('<ul class="ticks">' + "".join(f'<li>{e(_tick(it))}<span class="initials"></span></li>'
                                                     for it in ticks) + "</ul>")
        if figs:
            out.append("<table><tr><th>Item</th><th>Figure</th><th>Status</th><th>Why</th><th>Initials</th></tr>")
            for it in figs:
                st = it.status or "ok"
                out.append(f'<tr class="{st}"><td>{e(it.text)}</td><td>{e(it.figure or "")}</td>'
                           f"<td>{SYMBOL[st]} {MARK[st]}</td><td>{e(it.reason or '')}"
                           f"{e(f' [{it.basis}]' if it.basis else '')}</td><td></td></tr>")
            out.append("</table>")
    out.append("<h2>Cautions</h2><ul>" + "".join(f"<li><strong>{e(c.topic)}</strong>: {e(c.text)}</li>"
                                                 for c in cl.cautions) + "</ul>")
    out.append(f"<p><em>{e(cl.estimates)}</em></p><p><em>{e(cl.defer)}</em></p>")
    out.append('<h2>Sign-off</h2><p class="sign">Operator: <span>' + e(cl.operator or "") +
               "</span> Date and time: <span></span> Signature: <span></span></p>")
    if cl.second_person:
        out.append('<p class="sign">Second person: <span></span> Date and time: <span></span> Signature: <span></span></p>')
    out.append("</body></html>")
    return "\n".join(out) + "\n"


def _font_path(bold: bool = False) -> str:
    name = "DejaVuSans-Bold.ttf" if bold else "DejaVuSans.ttf"
    return str(resources.files("benchwarden.data").joinpath("fonts").joinpath(name))


def _new_pdf(cl: Checklist) -> Any:
    """An A4 document with the bench and date in a header and "page x of y" in a footer."""
    from fpdf import FPDF

    class _Pdf(FPDF):
        def header(self) -> None:
            self.set_font("DejaVu", "", 8)
            self.cell(0, 5, f"Pre-session checklist — {cl.bench} — {cl.generated_at}", new_x="LMARGIN",
                      new_y="NEXT")
            self.ln(2)

        def footer(self) -> None:
            self.set_y(-12)
            self.set_font("DejaVu", "", 8)
            self.cell(0, 6, f"page {self.page_no()} of {{nb}}", align="R")

    pdf = _Pdf(format="A4")
    pdf.set_auto_page_break(True, margin=18)
    pdf.add_font("DejaVu", "", _font_path())
    pdf.add_font("DejaVu", "B", _font_path(bold=True))
    pdf.set_title(f"Pre-session checklist — {cl.bench}")
    pdf.add_page()
    return pdf


class _PdfWriter:
    """Paragraphs, page breaks that keep blocks whole, and checklist lines with a status or a box
    to tick and a line for initials."""

    INITIALS_W = 22.0

    def __init__(self, pdf: Any) -> None:
        self.pdf = pdf
        self.w = pdf.epw
        pdf.set_font("DejaVu", "B", 7)
        #: the status column: as wide as the widest status word, so none is cut ("ATTENTION")
        self.mark_w = max(9.0, max(pdf.get_string_width(m) for m in MARK.values()) + 2.0)

    def text(self, t: str, size: float = 10, style: str = "", gap: float = 1.0) -> None:
        self.pdf.set_font("DejaVu", style, size)
        self.pdf.multi_cell(self.w, size * 0.5, t, new_x="LMARGIN", new_y="NEXT")
        self.pdf.ln(gap)

    def room_for(self, mm: float) -> None:
        pdf = self.pdf
        if pdf.get_y() + mm > pdf.h - pdf.b_margin:
            pdf.add_page()

    def item(self, it: Item) -> None:
        pdf, w, mark_w, initials_w = self.pdf, self.w, self.mark_w, self.INITIALS_W
        pdf.set_font("DejaVu", "B" if it.status in ("stop", "warning") else "", 10)
        body = _tick(it) if it.status is None else _line(it)[len(_box(it)) + 1:]
        lines = pdf.multi_cell(w - mark_w - initials_w, 5, body, dry_run=True, output="LINES")
        self.room_for(5 * len(lines if isinstance(lines, list) else [body]) + 1.5)
        x, y = pdf.l_margin, pdf.get_y()
        if it.status is None:
            pdf.rect(x, y + 0.8, 3.6, 3.6)  # a box to tick
        else:
            pdf.set_font("DejaVu", "B", 7)
            pdf.text(x, y + 3.8, MARK[it.status])
            pdf.set_font("DejaVu", "B" if it.status in ("stop", "warning") else "", 10)
        pdf.set_xy(x + mark_w, y)
        pdf.multi_cell(w - mark_w - initials_w, 5, body, new_x="LMARGIN", new_y="NEXT")
        end = pdf.get_y()
        pdf.line(x + w - initials_w + 4, y + 4.5, x + w, y + 4.5)  # initials
        pdf.set_y(max(end, y + 5) + 1.5)


def render_pdf(cl: Checklist, path: str | Path) -> Path:
    """Write the checklist as an A4 PDF (fpdf2, DejaVu Sans): the bench and date in a header and
    "page x of y" in a footer on every page, drawn boxes to tick and a column for initials,
    sections never split from their first line, the sign-off kept whole."""
    pdf = _new_pdf(cl)
    out = _PdfWriter(pdf)
    out.text(f"Pre-session checklist — {cl.bench}", 15, "B", 2)
    out.text(f"Generated {cl.generated_at}; planned session {cl.session}. Summary: {_summary(cl)}.", 10)
    pdf.set_font("DejaVu", "", 8)
    pdf.cell(0, 5, "Tick each box when done; initials on the right.", new_x="LMARGIN", new_y="NEXT")
    for sec in cl.sections:
        out.room_for(20)  # a section never starts at the foot of a page
        pdf.ln(2)
        out.text(sec.title, 12, "B", 1)
        for it in sec.items:
            out.item(it)
    out.room_for(30)
    pdf.ln(2)
    out.text("Cautions", 12, "B")
    for c in cl.cautions:
        out.text(f"{c.topic}: {c.text}", 9, "", 0.5)
    pdf.ln(1)
    out.text(cl.estimates, 9)
    out.text(cl.defer, 9)
    out.room_for(45 if cl.second_person else 30)  # the sign-off block stays whole
    pdf.ln(3)
    out.text("Sign-off", 12, "B")
    out.text(f"Operator: {cl.operator or '______________________'}    Date and time: ______________    "
             "Signature: ______________", 10)
    if cl.second_person:
        out.text("Second person: ______________________    Date and time: ______________    "
                 "Signature: ______________", 10)
    target = Path(path)
    pdf.output(str(target))
    return target
