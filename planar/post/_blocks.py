"""The building blocks of a report and their rendering: one self-contained HTML file that prints.

A report is plain data (:class:`Report` made of :class:`Section` objects holding paragraphs, tables,
key-value lists, figures, notices, tiles and a sign-off block) rendered by :func:`render_html`.
Figures are embedded as base64 PNG data URIs and the style sheet is inline, so the file opens
anywhere, offline, and can be mailed or archived as it is; a content-security policy in the file
forbids loading anything from outside it. All text is HTML-escaped. :func:`write_report` writes the
file atomically.

The print layout (a browser's "print" or ``chromium --headless --no-pdf-header-footer
--print-to-pdf``): the page size and margins of :attr:`Report.page`, the title and revision at the
top of every page and "page N of M" at the bottom (CSS page-margin boxes, printed by Chromium 131
and later), tables whose header repeats on each page they span, and table rows, figures, tiles,
notices and the sign-off block never split across a page break.

:mod:`planar.post.report` re-exports every name here; import them from there.
"""
from __future__ import annotations

import base64
import datetime as _dt
import html
import os
import re
from dataclasses import dataclass, field
from pathlib import Path
from typing import Any, Sequence, Union

from ..core.errors import InputError
from .files import atomic_write_text

__all__ = ["Report", "Section", "Paragraph", "Table", "KeyValues", "Figure", "Notice", "Tiles", "SignOff",
           "Block", "render_html", "write_report", "PAGE_SIZES"]

# ---------------------------------------------------------------------------------------- content
@dataclass
class Paragraph:
    """A paragraph of plain text (escaped; blank lines are not special)."""

    text: str


@dataclass
class Table:
    """A table of plain-text cells.

    Parameters
    ----------
    headers : sequence of str
    rows : sequence of sequence
        Cells are converted with ``str`` (numbers should be formatted by the caller).
    caption : str, optional
    numeric : sequence of int, optional
        Columns to right-align (default: columns whose cells all look like numbers).
    status_column : int, optional
        A column whose cells ``"pass"``/``"fail"``/``"note"`` are shown as coloured marks.
    """

    headers: Sequence[str]
    rows: Sequence[Sequence[Any]]
    caption: str = ""
    numeric: Sequence[int] | None = None
    status_column: int | None = None


@dataclass
class KeyValues:
    """Two-column list of labels and values."""

    rows: Sequence[tuple[str, Any]]
    caption: str = ""


@dataclass
class Figure:
    """A PNG figure with its caption.

    Parameters
    ----------
    png : bytes or path
        PNG data, or a PNG file to read.
    caption : str
    alt : str, optional
        Text for readers that cannot see the picture (default: the caption).
    """

    png: Union[bytes, str, os.PathLike]
    caption: str = ""
    alt: str = ""

    def data(self) -> bytes:
        if isinstance(self.png, (bytes, bytearray)):
            data = bytes(self.png)
        else:
            data = Path(self.png).read_bytes()
        if not data.startswith(b"\x89PNG\r\n\x1a\n"):
            raise InputError(f"figure {self.caption or self.png!r} is not PNG data")
        return data


@dataclass
class Notice:
    """A framed box of points: ``kind`` "caution" (amber) or "note" (blue-grey)."""

    items: Sequence[str]
    kind: str = "caution"
    heading: str = ""


@dataclass
class Tiles:
    """A row of headline figures: (label, value, detail, status) with status "pass", "fail" or ""."""

    items: Sequence[tuple[str, str, str, str]]


@dataclass
class SignOff:
    """The sign-off block: who prepared, checked and approved the check, and its revision.

    A role left empty prints as a blank line to be filled in by hand (name, signature and date).

    Parameters
    ----------
    prepared_by, checked_by, approved_by : str
    revision : str
    date : str
        The date the names are for (default blank: written by hand when signed).
    """

    prepared_by: str = ""
    checked_by: str = ""
    approved_by: str = ""
    revision: str = ""
    date: str = ""


Block = Union[Paragraph, Table, KeyValues, Figure, Notice, Tiles, SignOff]


@dataclass
class Section:
    """A titled part of the report."""

    title: str
    blocks: list = field(default_factory=list)


@dataclass
class Report:
    """A whole report: title, a line under it, sections, and a footer.

    Parameters
    ----------
    title : str
    subtitle : str, optional
    sections : list of Section
    footer : str, optional
        Default: the planar version and the date and time of writing.
    revision : str, optional
        Printed with the title at the top of every page (``"revision -"`` when not given).
    page : str, default "A4"
        Printed page size: a key of :data:`PAGE_SIZES` (``"A4"``, ``"Letter"``, ...) or a CSS size
        such as ``"210mm 297mm"``.
    """

    title: str
    subtitle: str = ""
    sections: list = field(default_factory=list)
    footer: str = ""
    revision: str = ""
    page: str = "A4"


# ---------------------------------------------------------------------------------------- rendering
_CSS = """
:root { --ink:#1c2430; --muted:#5b6675; --rule:#d7dde4; --band:#f3f6f8; --accent:#155e75;
        --pass:#2f7d32; --fail:#b42318; --amber:#fff6df; --amber-edge:#c7890a; --note:#eef3f7; }
* { box-sizing: border-box; }
body { margin: 0; background: #fff; color: var(--ink);
       font: 15px/1.5 "DejaVu Sans", "Segoe UI", Helvetica, Arial, sans-serif;
       font-variant-ligatures: none; font-feature-settings: "liga" 0, "clig" 0; }
main { max-width: 1060px; margin: 0 auto; padding: 28px 32px 40px; }
header { border-bottom: 3px solid var(--accent); padding-bottom: 12px; margin-bottom: 18px; }
h1 { font-size: 26px; margin: 0 0 4px; letter-spacing: .2px; }
.subtitle { color: var(--muted); margin: 0; }
h2 { font-size: 19px; color: var(--accent); margin: 30px 0 10px; padding-bottom: 4px;
     border-bottom: 1px solid var(--rule); }
table { border-collapse: collapse; margin: 8px 0 14px; min-width: 50%; }
caption { text-align: left; color: var(--muted); font-size: 13.5px; padding: 2px 0 6px; }
th, td { padding: 5px 12px; border-bottom: 1px solid var(--rule); text-align: left; vertical-align: top; }
th { background: var(--band); font-weight: 600; }
td.num { text-align: right; font-variant-numeric: tabular-nums; white-space: nowrap; }
table.kv th { width: 16em; background: none; font-weight: 600; color: var(--muted); }
code, .mono { font-family: "DejaVu Sans Mono", Consolas, monospace; font-size: 13.5px; }
figure { margin: 12px 0 20px; }
figure img { display: block; max-width: 100%; height: auto; border: 1px solid var(--rule); }
figcaption { color: var(--muted); font-size: 13.5px; margin-top: 6px; }
.tiles { display: flex; flex-wrap: wrap; gap: 12px; margin: 10px 0 6px; }
.tile { flex: 1 1 180px; border: 1px solid var(--rule); border-top: 4px solid var(--accent);
        padding: 10px 12px; background: #fff; }
.tile.pass { border-top-color: var(--pass); }
.tile.fail { border-top-color: var(--fail); }
.tile .label { color: var(--muted); font-size: 13px; }
.tile .value { font-size: 22px; font-weight: 600; }
.tile .detail { color: var(--muted); font-size: 12.5px; }
.notice { padding: 10px 16px; margin: 12px 0; border-left: 5px solid var(--amber-edge);
          background: var(--amber); }
.notice.note { border-left-color: #6b8299; background: var(--note); }
.notice h3 { margin: 2px 0 6px; font-size: 15px; }
.notice ul { margin: 0; padding-left: 20px; }
.status { font-weight: 700; }
.status.pass { color: var(--pass); }
.status.fail { color: var(--fail); }
.status.note { color: var(--muted); }
footer { margin-top: 36px; padding-top: 8px; border-top: 1px solid var(--rule); color: var(--muted);
         font-size: 12.5px; }
table.signoff { width: 100%; }
table.signoff td { height: 2.6em; vertical-align: bottom; }
table.signoff td.blank { border-bottom: 1px solid var(--ink); }
thead { display: table-header-group; }
tr, figure, .tile, .notice, table.kv, table.signoff, caption { break-inside: avoid; }
table { break-inside: avoid; }
h2, h3, caption { break-after: avoid; }
@media print {
  body { font-size: 10pt; }
  main { max-width: none; padding: 0; }
  h1 { font-size: 18pt; } h2 { font-size: 13pt; margin-top: 16pt; }
  figure img { max-height: 118mm; width: auto; max-width: 100%; }
  .tile .value { font-size: 15pt; }
  a { color: inherit; text-decoration: none; }
}
"""

#: printed page sizes by name (CSS ``size`` values)
PAGE_SIZES = {"A4": "210mm 297mm", "A3": "297mm 420mm", "A5": "148mm 210mm", "Letter": "8.5in 11in",
              "Legal": "8.5in 14in"}


def _css_string(text: str) -> str:
    """``text`` as a quoted CSS string: every character but letters, digits and plain punctuation escaped."""
    safe = set("abcdefghijklmnopqrstuvwxyzABCDEFGHIJKLMNOPQRSTUVWXYZ0123456789 .,:;-_()/+=%#!?*[]")
    return '"' + "".join(c if c in safe else f"\\{ord(c):06x}" for c in str(text)) + '"'


def _page_css(report, corner: str) -> str:
    """The printed page: size, margins, title and revision on top, page N of M below (page-margin boxes)."""
    page = str(report.page or "A4").strip()
    size = PAGE_SIZES.get(page, PAGE_SIZES.get(page.upper(), PAGE_SIZES.get(page.title())))
    if size is None:
        if not re.fullmatch(r"[0-9.]+(mm|cm|in|pt) [0-9.]+(mm|cm|in|pt)", page):
            raise InputError(f"page size {page!r}: give one of {', '.join(PAGE_SIZES)} or a CSS size such as "
                             "'210mm 297mm'")
        size = page
    box = "font: 8.5pt 'DejaVu Sans', Helvetica, Arial, sans-serif; color: #5b6675;"
    revision = f"revision {report.revision}" if str(report.revision).strip() else "revision -"
    return (f"@page {{ size: {size}; margin: 18mm 15mm 17mm 15mm;\n"
            f"  @top-left {{ content: {_css_string(report.title)}; {box} }}\n"
            f"  @top-right {{ content: {_css_string(revision)}; {box} }}\n"
            f"  @bottom-left {{ content: {_css_string(corner)}; {box} }}\n"
            f'  @bottom-right {{ content: "page " counter(page) " of " counter(pages); {box} }}\n}}\n')


def _e(text: Any) -> str:
    return html.escape(str(text), quote=True)


def _looks_numeric(s: str) -> bool:
    t = s.strip().replace(",", "").replace("%", "").replace("+", "").replace("\u2212", "-")
    t = t.split(" ")[0] if t else t
    try:
        float(t)
        return True
    except ValueError:
        return False


def _status(text: str) -> str:
    t = str(text).strip().lower()
    cls = "pass" if t in ("pass", "ok", "yes") else "fail" if t in ("fail", "no") else "note"
    return f'<span class="status {cls}">{_e(text)}</span>'


def _render_block(b) -> str:
    if isinstance(b, Paragraph):
        return f"<p>{_e(b.text)}</p>"
    if isinstance(b, Table):
        rows = [[str(c) for c in r] for r in b.rows]
        ncol = len(b.headers)
        if any(len(r) != ncol for r in rows):
            raise InputError(f"table {b.caption!r}: every row needs {ncol} cells")
        if b.numeric is None:
            numeric = {j for j in range(ncol) if rows and all(_looks_numeric(r[j]) or r[j] in ("", "-")
                                                             for r in rows)}
        else:
            numeric = set(b.numeric)
        out = ["<table>"]
        if b.caption:
            out.append(f"<caption>{_e(b.caption)}</caption>")
        out.append("<thead><tr>" + "".join(f"<th>{_e(h)}</th>" for h in b.headers) + "</tr></thead><tbody>")
        for r in rows:
            cells = []
            for j, c in enumerate(r):
                if j == b.status_column:
                    cells.append(f"<td>{_status(c)}</td>")
                else:
                    cells.append(f'<td class="num">{_e(c)}</td>' if j in numeric else f"<td>{_e(c)}</td>")
            out.append("<tr>" + "".join(cells) + "</tr>")
        out.append("</tbody></table>")
        return "".join(out)
    if isinstance(b, KeyValues):
        out = ['<table class="kv">']
        if b.caption:
            out.append(f"<caption>{_e(b.caption)}</caption>")
        out += [f"<tr><th>{_e(k)}</th><td>{_e(v)}</td></tr>" for k, v in b.rows]
        out.append("</table>")
        return "".join(out)
    if isinstance(b, Figure):
        data = base64.b64encode(b.data()).decode("ascii")
        alt = b.alt or b.caption or "figure"
        cap = f"<figcaption>{_e(b.caption)}</figcaption>" if b.caption else ""
        return f'<figure><img alt="{_e(alt)}" src="data:image/png;base64,{data}">{cap}</figure>'
    if isinstance(b, Notice):
        kind = "note" if b.kind == "note" else "caution"
        head = f"<h3>{_e(b.heading)}</h3>" if b.heading else ""
        items = "".join(f"<li>{_e(i)}</li>" for i in b.items)
        return f'<div class="notice {kind}" role="note">{head}<ul>{items}</ul></div>'
    if isinstance(b, Tiles):
        out = ['<div class="tiles">']
        for label, value, detail, status in b.items:
            cls = f" {status}" if status in ("pass", "fail") else ""
            out.append(f'<div class="tile{cls}"><div class="label">{_e(label)}</div>'
                       f'<div class="value">{_e(value)}</div><div class="detail">{_e(detail)}</div></div>')
        out.append("</div>")
        return "".join(out)
    if isinstance(b, SignOff):
        out = ['<table class="signoff"><caption>Sign-off: an empty line is filled in by hand when signed.</caption>'
               "<thead><tr><th>role</th><th>name</th><th>signature</th><th>date</th></tr></thead><tbody>"]
        for role, name in (("prepared by", b.prepared_by), ("checked by", b.checked_by),
                           ("approved by", b.approved_by)):
            name_cell = f"<td>{_e(name)}</td>" if str(name).strip() else '<td class="blank"></td>'
            date_cell = f"<td>{_e(b.date)}</td>" if str(b.date).strip() else '<td class="blank"></td>'
            out.append(f"<tr><th>{role}</th>{name_cell}<td class=\"blank\"></td>{date_cell}</tr>")
        rev = f"<td colspan=\"3\">{_e(b.revision)}</td>" if str(b.revision).strip() else \
            '<td class="blank" colspan="3"></td>'
        out.append(f"<tr><th>revision</th>{rev}</tr></tbody></table>")
        return "".join(out)
    raise InputError("a report block must be Paragraph, Table, KeyValues, Figure, Notice, Tiles or SignOff, "
                     f"got {b!r}")


def render_html(report: Report) -> str:
    """The report as one self-contained HTML document (a string).

    Nothing outside the file is referenced: the style sheet is inline and figures are data URIs. A
    ``Content-Security-Policy`` meta element forbids scripts and any outside resource. Printed, each
    page carries the title and revision on top and "page N of M" below (see the module notes).
    """
    from .. import __version__

    now = _dt.datetime.now().astimezone()
    footer = report.footer or (f"Written by planar {__version__} on "
                               f"{now.strftime('%Y-%m-%d %H:%M %Z').strip()}.")
    page_css = _page_css(report, f"planar {__version__}, {now.strftime('%Y-%m-%d')}")
    parts = [
        "<!DOCTYPE html>",
        '<html lang="en"><head><meta charset="utf-8">',
        '<meta http-equiv="Content-Security-Policy" content="default-src \'none\'; img-src data:; '
        'style-src \'unsafe-inline\'">',
        '<meta name="viewport" content="width=device-width, initial-scale=1">',
        f'<meta name="generator" content="planar {_e(__version__)}">',
        f"<title>{_e(report.title)}</title><style>{page_css}{_CSS}</style></head><body><main>",
        f"<header><h1>{_e(report.title)}</h1>"
        + (f'<p class="subtitle">{_e(report.subtitle)}</p>' if report.subtitle else "") + "</header>",
    ]
    for i, sec in enumerate(report.sections, 1):
        anchor = f"s{i}"
        parts.append(f'<section id="{anchor}"><h2>{i}. {_e(sec.title)}</h2>')
        parts += [_render_block(b) for b in sec.blocks]
        parts.append("</section>")
    parts.append(f"<footer>{_e(footer)}</footer></main></body></html>")
    return "\n".join(parts) + "\n"


def write_report(path: str | os.PathLike, report: Report) -> Path:
    """Write the report as a self-contained HTML file, atomically.

    Parameters
    ----------
    path : path
        Target file, normally ending in ``.html``.
    report : Report

    Returns
    -------
    Path
    """
    path = Path(path)
    if path.suffix.lower() not in (".html", ".htm"):
        raise InputError(f"the report is an HTML file; give a name ending in .html, got {str(path)!r}")
    return atomic_write_text(path, render_html(report))


