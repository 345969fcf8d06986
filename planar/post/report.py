"""The stress-check report: one self-contained HTML file.

A report is plain data (:class:`Report` made of :class:`Section` objects holding paragraphs, tables,
key-value lists, figures and notices) rendered by :func:`render_html`. Figures are embedded as
base64 PNG data URIs and the style sheet is inline, so the file opens anywhere, offline, and can be
mailed or archived as it is; a content-security policy in the file forbids loading anything from
outside it. All text is HTML-escaped. :func:`write_report` writes the file atomically.

:func:`stress_check_report` assembles the usual sections of a check from a :class:`planar.Result`
(what was analysed, mesh and unknowns, equilibrium, the cautions) around the figures and tables the
caller supplies (peak stresses, Kt, margins, convergence evidence).

Examples
--------
>>> from planar.post.report import Report, Section, Table, render_html
>>> rep = Report("Strap check", sections=[Section("Results", [Table(["quantity", "value"],
...                                                                  [["peak", "12 < 13"]])])])
>>> "12 &lt; 13" in render_html(rep)
True
"""
from __future__ import annotations

import base64
import datetime as _dt
import html
import os
from dataclasses import dataclass, field
from pathlib import Path
from typing import Any, Iterable, Sequence, Union

from ..core.errors import InputError
from ..core.result import as_result
from .files import atomic_write_text
from .scope import CAUTIONS, SCOPE_NOTE

__all__ = [
    "Report",
    "Section",
    "Paragraph",
    "Table",
    "KeyValues",
    "Figure",
    "Notice",
    "Tiles",
    "CAUTIONS",
    "render_html",
    "write_report",
    "stress_check_report",
    "equilibrium_table",
    "reactions_table",
    "describe_model_rows",
    "warnings_section",
]

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


Block = Union[Paragraph, Table, KeyValues, Figure, Notice, Tiles]


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
    """

    title: str
    subtitle: str = ""
    sections: list = field(default_factory=list)
    footer: str = ""


# ---------------------------------------------------------------------------------------- rendering
_CSS = """
:root { --ink:#1c2430; --muted:#5b6675; --rule:#d7dde4; --band:#f3f6f8; --accent:#155e75;
        --pass:#2f7d32; --fail:#b42318; --amber:#fff6df; --amber-edge:#c7890a; --note:#eef3f7; }
* { box-sizing: border-box; }
body { margin: 0; background: #fff; color: var(--ink);
       font: 15px/1.5 "DejaVu Sans", "Segoe UI", Helvetica, Arial, sans-serif; }
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
@media print { main { padding: 0; } h2 { break-after: avoid; } figure, table { break-inside: avoid; } }
"""


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
    raise InputError(f"a report block must be Paragraph, Table, KeyValues, Figure, Notice or Tiles, got {b!r}")


def render_html(report: Report) -> str:
    """The report as one self-contained HTML document (a string).

    Nothing outside the file is referenced: the style sheet is inline and figures are data URIs. A
    ``Content-Security-Policy`` meta element forbids scripts and any outside resource.
    """
    from .. import __version__

    footer = report.footer or (f"Written by planar {__version__} on "
                               f"{_dt.datetime.now().astimezone().strftime('%Y-%m-%d %H:%M %Z').strip()}.")
    parts = [
        "<!DOCTYPE html>",
        '<html lang="en"><head><meta charset="utf-8">',
        '<meta http-equiv="Content-Security-Policy" content="default-src \'none\'; img-src data:; '
        'style-src \'unsafe-inline\'">',
        '<meta name="viewport" content="width=device-width, initial-scale=1">',
        f'<meta name="generator" content="planar {_e(__version__)}">',
        f"<title>{_e(report.title)}</title><style>{_CSS}</style></head><body><main>",
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


# ---------------------------------------------------------------------------------------- stress check
def _g(v: float, digits: int = 4) -> str:
    return f"{v:.{digits}g}"


def describe_model_rows(model) -> list[tuple[str, str]]:
    """Label/value rows of what was analysed, from ``model.describe()``."""
    d = model.describe()
    system = getattr(model, "unit_system", None)  # its units, mass, density and g, or "units not stated"
    rows = [("analysis", d.get("analysis", "")),
            ("units", system.describe() if system is not None else d.get("units", ""))]
    for region, sec in d.get("regions", {}).items():
        rows.append((f"material ({region})", str(sec.get("material", ""))))
        rows.append((f"thickness ({region})", _g(float(sec.get("thickness", 0.0)))))
    sup = d.get("supports", [])
    rows.append(("supports (essential conditions)", "; ".join(map(str, sup)) or "none"))
    for case, loads in d.get("cases", {}).items():
        rows.append((f"loads, case '{case}' (natural conditions)", "; ".join(map(str, loads)) or "none"))
    return rows


def equilibrium_table(result) -> Table:
    """Reactions against applied loads for one result (sums over the model)."""
    result = as_result(result, "equilibrium_table")
    import numpy as np

    R = np.asarray(result.total_reaction(), float)
    F = np.asarray(result.total_applied(), float)
    from .plots import force_unit

    force = force_unit(getattr(result, "units", ""))
    rows = []
    for k, comp in enumerate(("x", "y")):
        rows.append([f"force in {comp}" + (f" [{force}]" if force else ""), f"{F[k]:.6g}", f"{R[k]:.6g}",
                     f"{F[k] + R[k]:.3g}"])
    if hasattr(result, "total_moment"):  # moments about the origin, the pins' loads and reactions included
        from .plots import length_unit

        ma, mr = result.total_moment((0.0, 0.0))
        unit = f"{force} {length_unit(getattr(result, 'units', ''))}".strip() if force else ""
        rows.append(["moment about (0, 0)" + (f" [{unit}]" if unit else ""), f"{ma:.6g}", f"{mr:.6g}",
                     f"{ma + mr:.3g}"])
    err = result.equilibrium_error()
    status = "pass" if err < 1e-6 else "fail"
    rows.append(["relative equilibrium error (forces and moment)", "", "", f"{err:.2e}"])
    t = Table(["quantity", "applied loads", "reactions (supports and pins)", "sum"], rows,
              caption=f"Equilibrium of the whole plate, load case '{result.case}': the reactions must "
                      f"balance the applied loads ({status}: relative error {err:.1e}, limit 1e-6).",
              numeric=[1, 2, 3])
    return t


def reactions_table(result, about=(0.0, 0.0)) -> Table:
    """The force and moment of each support and each pin on the part (:meth:`planar.Result.support_reactions`)."""
    result = as_result(result, "reactions_table")
    from .plots import force_unit, length_unit

    force = force_unit(getattr(result, "units", ""))
    moment = f"{force} {length_unit(getattr(result, 'units', ''))}".strip() if force else ""
    recs = result.support_reactions(about=about)
    rows = [[r.name, r.kind, f"{r.force[0]:.6g}", f"{r.force[1]:.6g}", f"{r.moment:.6g}"] for r in recs]
    where = f"({recs[0].about[0]:.6g}, {recs[0].about[1]:.6g})" if recs and about != "own" else "each one's own point"
    return Table(["support or pin", "kind", "force in x" + (f" [{force}]" if force else ""),
                  "force in y" + (f" [{force}]" if force else ""), "moment" + (f" [{moment}]" if moment else "")],
                 rows, caption=f"Reactions of each support and pin on the part, load case '{result.case}'; moments "
                               f"about {where}, counter-clockwise positive. With the applied loads they add up to zero.",
                 numeric=[2, 3, 4])


def warnings_section(warnings: Sequence[Any]) -> Section:
    """A "Warnings" section listing planar warnings (code and message), e.g. ``result.warnings``."""
    rows = []
    for w in warnings:
        d = w.as_dict() if hasattr(w, "as_dict") else dict(w)
        rows.append([str(d.get("code", "general")), str(d.get("message", ""))])
    return Section("Warnings", [
        Notice([f"planar raised {len(rows)} warning(s) about this result: read them before using its figures."],
               kind="caution"),
        Table(["code", "message"], rows, caption="Each warning names the concern, where it is and the fix.")])


def stress_check_report(result, *, title: str, subtitle: str = "",
                        part: Sequence[tuple[str, Any]] = (),
                        headline: Sequence[tuple[str, str, str, str]] = (),
                        results: Sequence[Block] = (),
                        checks: Sequence[Block] = (),
                        convergence: Sequence[Block] = (),
                        mesh_rows: Sequence[tuple[str, Any]] = (),
                        extra_sections: Sequence[Section] = (),
                        run_rows: Sequence[tuple[str, Any]] = (),
                        cautions: Iterable[str] = CAUTIONS,
                        hot_spots: Any = None) -> Report:
    """The usual sections of a stress check around one result.

    Parameters
    ----------
    result : Result
        The load case checked; gives the model description, mesh, unknowns and equilibrium.
    title, subtitle : str
    part : sequence of (label, value)
        Geometry summary of the part (dimensions, features), shown first under "What was analysed".
    headline : sequence of (label, value, detail, status)
        Headline figures shown at the top (peak stress, Kt, margin of safety, error, ...).
    results, checks, convergence : sequence of blocks
        Content of the sections "Results", "Checks against handbook values and allowables" and
        "Convergence evidence" (figures, tables, paragraphs); a section with no blocks is left out,
        except "Convergence evidence", which then states that no study was made.
    mesh_rows : sequence of (label, value)
        More rows for the "Mesh" section.
    extra_sections : sequence of Section
        Placed before the cautions.
    run_rows : sequence of (label, value)
        Run details (times, versions) for the last section.
    cautions : iterable of str
        Default :data:`CAUTIONS`.
    hot_spots : HotSpots or Section, optional
        The hot spots of the result (:func:`planar.post.hot_spots`), tabled in a section "Hot spots"
        after "Results" (or a section made by :func:`planar.post.hot_spot_section`, e.g. with its figure).

    Returns
    -------
    Report
    """
    result = as_result(result, "stress_check_report")
    model = result.model
    mesh = result.mesh
    blocks_top: list = []
    if headline:
        blocks_top.append(Tiles(list(headline)))
    blocks_top.append(Notice([SCOPE_NOTE], kind="note"))
    sections = [Section("Summary", blocks_top)]
    if getattr(result, "warnings", None):
        sections.append(warnings_section(result.warnings))
    sections.append(Section("What was analysed", [
        KeyValues(list(part), caption="The part") if part else Paragraph("Geometry as given by the script."),
        KeyValues(describe_model_rows(model), caption="Model: analysis, material, thickness, supports and loads"),
    ]))
    blocks = ", ".join(f"{b.shape[0]} {t}" for t, b in mesh.cells.items())
    x0, y0, x1, y1 = mesh.bounding_box()
    free = getattr(result, "n_free", None)
    rows = [("elements", blocks), ("nodes", str(mesh.n_nodes)),
            ("unknowns (two displacements per node, before supports)", str(result.n_dofs)),
            ("extent of the mesh", f"x {x0:g} to {x1:g}, y {y0:g} to {y1:g}"
                                   + (f" [{result.unit_system.length}]" if result.unit_system.stated else "")),
            ("named edges", ", ".join(sorted(mesh.edge_sets)) or "-")]
    if free is not None:
        rows.insert(3, ("free unknowns solved", str(free)))
    rows += [(str(k), str(v)) for k, v in mesh_rows]
    sections.append(Section("Mesh", [KeyValues(rows)]))
    if results:
        sections.append(Section("Results", list(results)))
    if hot_spots is not None:  # a HotSpots tables itself (planar.post.hotspots.hot_spot_section)
        sections.append(hot_spots if isinstance(hot_spots, Section) else hot_spots.section())
    if checks:
        sections.append(Section("Checks against handbook values and allowables", list(checks)))
    sections.append(Section("Convergence evidence", list(convergence) or [
        Paragraph("No convergence study was made for this report: the figures above come from one "
                  "mesh, and their discretisation error is not shown.")]))
    sections.append(Section("Equilibrium", [equilibrium_table(result)]
                            + ([reactions_table(result)] if hasattr(result, "support_reactions") else [])))
    sections += list(extra_sections)
    sections.append(Section("Cautions and limits", [Notice(list(cautions), heading="Read before using these results")]))
    run = [("load case", result.case), ("solver", getattr(result, "solver", "") or "-")] + \
          [(str(k), str(v)) for k, v in run_rows]
    sections.append(Section("Run details", [KeyValues(run)]))
    return Report(title, subtitle, sections)
