"""The stress-check report: one self-contained HTML file that prints as a signed calculation.

A report is plain data (:class:`Report` made of :class:`Section` objects holding paragraphs, tables,
key-value lists, figures, notices, tiles and a sign-off block) rendered by :func:`render_html`
(the blocks and the rendering live in :mod:`planar.post._blocks`). Figures are embedded as base64
PNG data URIs and the style sheet is inline, so the file opens anywhere, offline, and can be mailed
or archived as it is; a content-security policy in the file forbids loading anything from outside
it. All text is HTML-escaped. :func:`write_report` writes the file atomically. Printed (from a
browser, or ``chromium --headless --no-pdf-header-footer --print-to-pdf``), each page carries the
title and revision on top and "page N of M" below; tables and figures are not split.

:func:`stress_check_report` builds the complete check of a :class:`planar.Result` from the model
and the result alone (summary tiles from the hot spots, the model picture, the inputs in plain
words with units, the mesh and its worst element shapes, results, hot spots, equilibrium and
reactions, warnings, the cautions once, provenance and sign-off); every part can be given or
left out by the caller.

Examples
--------
>>> from planar.post.report import Report, Section, Table, render_html
>>> rep = Report("Strap check", sections=[Section("Results", [Table(["quantity", "value"],
...                                                                  [["peak", "12 < 13"]])])])
>>> "12 &lt; 13" in render_html(rep)
True
"""
from __future__ import annotations

import os
from typing import Any, Iterable, Sequence

from ..core.errors import InputError
from ..core.result import as_result
from .scope import CAUTIONS, SCOPE_NOTE

__all__ = [
    "SignOff",
    "SECTION_KEYS",
    "PAGE_SIZES",
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

from ._blocks import (Block, Figure, KeyValues, Notice, Paragraph, Report, Section, SignOff, Table,
                      Tiles, render_html, write_report, PAGE_SIZES)
from ._report_convergence import _convergence_blocks, _convergence_tiles, _evidence, _v  # noqa: F401
from ._report_tables import WARNINGS_SHOWN_PER_CODE, warnings_section  # noqa: F401


# ---------------------------------------------------------------------------------------- stress check
def _g(v: float, digits: int = 4) -> str:
    return f"{v:.{digits}g}"


def describe_model_rows(model, case: str | None = None) -> list[tuple[str, str]]:
    """Label/value rows of what was analysed, in plain words with units (:func:`planar.post.inputs.input_rows`)."""
    from .inputs import input_rows

    return input_rows(model, case)


def equilibrium_table(result) -> Table:
    """Reactions against applied loads for one result (sums over the model)."""
    result = as_result(result, "equilibrium_table")
    import numpy as np

    R = np.asarray(result.total_reaction(), float)
    F = np.asarray(result.total_applied(), float)
    from ..core.units import force_unit

    force = force_unit(getattr(result, "units", ""))
    rows = []
    for k, comp in enumerate(("x", "y")):
        rows.append([f"force in {comp}" + (f" [{force}]" if force else ""), f"{F[k]:.6g}", f"{R[k]:.6g}",
                     f"{F[k] + R[k]:.3g}"])
    if hasattr(result, "total_moment"):  # moments about the origin, the pins' loads and reactions included
        from ..core.units import length_unit

        ma, mr = result.total_moment((0.0, 0.0))
        unit = f"{force} {length_unit(getattr(result, 'units', ''))}".strip() if force else ""
        rows.append(["moment about (0, 0)" + (f" [{unit}]" if unit else ""), f"{ma:.6g}", f"{mr:.6g}",
                     f"{ma + mr:.3g}"])
    err = result.equilibrium_error()
    status = "pass" if err < 1e-6 else "fail"
    rows.append(["relative equilibrium error (forces and moment)", "", "", f"{err:.2e}"])
    from ..core.supports import Symmetry

    lines = [getattr(s, "where", "") for s in getattr(getattr(result, "model", None), "supports", [])
             if isinstance(s, Symmetry)]
    what = "the whole plate" if not lines else (
        f"the part modelled (a symmetry model, cut along {', '.join(repr(str(n)) for n in lines)}: the loads and "
        "reactions are the modelled part's share, not the whole part's)")
    t = Table(["quantity", "applied loads", "reactions (supports and pins)", "sum"], rows,
              caption=f"Equilibrium of {what}, load case '{result.case}': the reactions must "
                      f"balance the applied loads ({status}: relative error {err:.1e}, limit 1e-6).",
              numeric=[1, 2, 3])
    return t


def reactions_table(result, about=(0.0, 0.0)) -> Table:
    """The force and moment of each support and each pin on the part (:meth:`planar.Result.support_reactions`)."""
    result = as_result(result, "reactions_table")
    from ..core.units import force_unit, length_unit

    force = force_unit(getattr(result, "units", ""))
    moment = f"{force} {length_unit(getattr(result, 'units', ''))}".strip() if force else ""
    recs = result.support_reactions(about=about)
    # round-off (below 1e-9 of the largest force, or of it times the part's size for a moment) prints as 0
    import numpy as np

    big = max([abs(float(v)) for r in recs for v in r.force] + [1e-300])
    nodes = result.mesh.nodes
    span = max(float(np.ptp(nodes, axis=0).max()), float(np.abs(nodes).max())) if nodes.size else 1.0
    z = lambda v, scale: format(0.0 if abs(v) < 1e-9 * scale else float(v) + 0.0, ".6g")  # noqa: E731
    from .inputs import _snapped, short_name

    units = result.unit_system  # the supports come first, in the model's order: named in plain words
    names = [short_name(s, units) + _snapped(s, units) for s in getattr(result.model, "supports", [])]
    names += [r.name for r in recs[len(names):]]
    rows = [[n, r.kind, z(r.force[0], big), z(r.force[1], big), z(r.moment, big * span)] for n, r in zip(names, recs)]
    where = f"({recs[0].about[0]:.6g}, {recs[0].about[1]:.6g})" if recs and about != "own" else "each one's own point"
    loaded = [r.name for r in recs if r.load is not None and any(abs(float(v)) > 0.0 for v in r.load)]
    sums = ("they add up to zero" if about != "own" else "the forces add up to zero (the moments, each about "
            "its own point, add up only when taken about one point)")
    if loaded:  # a loaded pin's row is the whole force it passes to the part, its load included
        sums = (f"and each pin's reaction (its force minus its load) in place of its row, {sums}; the rows of the "
                f"loaded pins ({', '.join(repr(n) for n in loaded)}) are the whole force each passes to the part, "
                "its load (counted with the applied loads) included.")
    else:
        sums += "."
    return Table(["support or pin", "kind", "force in x" + (f" [{force}]" if force else ""),
                  "force in y" + (f" [{force}]" if force else ""), "moment" + (f" [{moment}]" if moment else "")],
                 rows, caption=f"Reactions of each support and pin on the part, load case '{result.case}'; moments "
                               f"about {where}, counter-clockwise positive. With the applied loads " + sums,
                 numeric=[2, 3, 4])


# ---------------------------------------------------------------------------------------- the complete check
#: the sections of :func:`stress_check_report`, by the key ``omit=`` names them with
SECTION_KEYS = ("summary", "warnings", "what was analysed", "mesh", "results", "hot spots", "checks", "contact",
                "joints", "convergence", "equilibrium", "cautions", "run details", "sign-off")
_FIELD_WORDS = {"von_mises": "von Mises stress", "tresca": "Tresca stress", "sigma_1": "largest principal stress",
                "sigma_2": "smallest principal stress"}


def _png(fig) -> bytes:
    from .plots import figure_png

    try:
        return figure_png(fig)
    finally:
        import matplotlib.pyplot as plt

        plt.close(fig)


def _units(result) -> tuple[str, str, str]:
    """(stress, length, force) units of a result ("" when not stated)."""
    s = result.unit_system
    return s.unit_of("stress"), s.unit_of("length"), s.unit_of("force")


def _pt(p, length: str) -> str:
    return f"({p[0]:.4g}, {p[1]:.4g})" + (f" {length}" if length else "")


def _spots(result, given, field, recovery, nominal, allowable, factor_of_safety):
    """The hot spots to report: the caller's, none (False), or found here.

    A nominal, allowable or factor of safety hot_spots refuses is refused here too (a report without
    the margins asked for is not written).
    """
    if given is False:
        return None
    if given is not None:
        return given
    from .hotspots import hot_spots

    return hot_spots(result, field, recovery=recovery, nominal=nominal, allowable=allowable,
                     factor_of_safety=factor_of_safety)


def _tiles(result, hs, field, recovery, nominal, allowable, factor_of_safety) -> list:
    """Headline tiles: the governing spot, its Kt and margin, the other features' peaks, the largest motion."""
    import numpy as np

    from ..core.units import field_unit

    stress, length, _ = _units(result)
    if hs is not None and not isinstance(hs, Section):  # the spots say what they were found with
        field, nominal = getattr(hs, "field", field), getattr(hs, "nominal", nominal)
        allowable, factor_of_safety = getattr(hs, "allowable", allowable), getattr(hs, "factor_of_safety", 1.0)
    unit = field_unit(field, result.unit_system) if result.unit_system.stated else ""
    word = _FIELD_WORDS.get(field, field)
    u = f" {unit}" if unit else ""
    tiles = []
    spots = list(getattr(hs, "spots", []) or []) if hs is not None and not isinstance(hs, Section) else []
    if spots:
        gov = hs.governing
        first = gov if gov is not None else spots[0]
        detail = f"{first.feature}, at {_pt(first.location, length)}"
        if first.flagged:
            detail += f"; made by the idealisation next to it ({first.next_to})"
        if getattr(first, "singular", ""):
            detail += f"; at a singular point ({first.singular}): the value is set by the mesh, see the warnings"
        tiles.append((f"governing {word}" if gov is not None else f"highest {word} (every spot flagged)",
                      f"{_v(first.value)}{u}", detail, ""))
        if first.Kt is not None:
            tiles.append((f"Kt, {first.feature}", _v(first.Kt, ".3f"), f"peak {word} / nominal {_v(nominal)}{u}", ""))
        if first.margin is not None:
            tiles.append((f"margin of safety, {first.feature}", _v(first.margin, "+.2f"),
                          f"allowable {_v(allowable)}{u}, factor of safety {_v(factor_of_safety, 'g')}",
                          "pass" if first.margin >= 0 else "fail"))
        top = spots[0]
        if gov is not None and top is not gov and top.value > gov.value:  # a flagged spot above the governing one
            extra = [f"{top.feature}, at {_pt(top.location, length)}", f"next to {top.next_to}: judge it by how the "
                     "part is really held or loaded"]
            if top.Kt is not None:
                extra.insert(1, f"Kt {_v(top.Kt, '.3f')}")
            if top.margin is not None:
                extra.insert(1, f"margin {_v(top.margin, '+.2f')}")
            tiles.append((f"highest {word}, flagged", f"{_v(top.value)}{u}", "; ".join(extra),
                          "fail" if top.margin is not None and top.margin < 0 else ""))
        if gov is None:  # every spot is made by how the part is held or loaded: say what the part carries away from them
            from ..core.zones import Away

            try:
                away = result.max(field, recovery=recovery, where=Away())
                tiles.append((f"highest {word} away from supports and point loads", f"{_v(away.value)}{u}",
                              f"at {_pt(away.location, length)}", ""))
            except InputError:  # the whole part lies next to them
                pass
        seen = {first.feature}
        for s in spots:
            if s.feature in seen or len(tiles) >= 6:
                continue
            seen.add(s.feature)
            extra = [f"at {_pt(s.location, length)}"]
            if s.Kt is not None:
                extra.append(f"Kt {_v(s.Kt, '.3f')}")
            if s.margin is not None:
                extra.append(f"margin {_v(s.margin, '+.2f')}")
            if s.flagged:
                extra.append("flagged: made by the idealisation")
            tiles.append((f"{word}, {s.feature}", f"{_v(s.value)}{u}", "; ".join(extra),
                          "" if s.margin is None or s.flagged else ("pass" if s.margin >= 0 else "fail")))
    else:
        peak = result.max(field, recovery=recovery)
        detail = f"at {_pt(peak.location, length)}" + (f"; it sits {peak.note}" if peak.note else "")
        tiles.append((f"peak {word}", f"{_v(peak.value)}{u}", detail, ""))
    umax = float(np.sqrt((np.asarray(result.u, float) ** 2).sum(axis=1)).max())
    tiles.append(("largest displacement", f"{umax:.4g}" + (f" {length}" if length else ""),
                  f"load case '{result.case}'", ""))
    return tiles


def _model_picture(result, picture, fasteners=None):
    """The picture of the model with its supports, pins and loads as symbols (a Figure), or None."""
    if picture is False:
        return None
    if picture is True:
        picture = None
    if isinstance(picture, Figure):
        return picture
    if picture is not None and callable(getattr(picture, "savefig", None)):  # a matplotlib figure (plot_model's)
        return Figure(_png(picture), "The model: supports, pins and loads.")
    if isinstance(picture, (bytes, bytearray)):
        return Figure(bytes(picture), "The model: supports, pins and loads.")
    if isinstance(picture, (str, os.PathLike)):
        if not os.path.isfile(picture):
            raise InputError(f"picture={os.fspath(picture)!r}: no such file; give the path of a PNG file, PNG bytes, "
                             "a figure (e.g. planar.post.plot_model(model)), or picture=False for none")
        return Figure(picture, "The model: supports, pins and loads.")
    if picture is not None:
        raise InputError(f"picture= takes a figure (e.g. planar.post.plot_model(model)), PNG bytes, the path of a PNG "
                         f"file or False, got {type(picture).__name__}")
    model = result.model
    try:
        from .picture import plot_model
    except ImportError:  # no model-picture module: the stress contour stands in for it
        from .plots import plot_field

        fig = plot_field(result, "von_mises", mesh_lines=False)
        return Figure(_png(fig), "von Mises stress on the part as made, its deformed outline dashed over it (no "
                                 "picture of the supports and loads "
                                 "is available in this installation).")
    case = result.case if result.case in model.cases else None
    fig = plot_model(model, case=case, fasteners=fasteners)
    return Figure(_png(fig), "The model as analysed: outline, named edges, supports, pins and loads drawn as "
                             "symbols" + (f" (load case '{case}')" if case else "") + ".")


def _mesh_section(result, mesh_rows) -> Section:
    from ..core.registry import element_type
    from .meshquality import mesh_quality

    mesh = result.mesh
    _, length, _ = _units(result)
    kinds = []
    for t, b in mesh.cells.items():
        try:
            et = element_type(t)
            what = f"{'quadratic' if et.degree == 2 else 'linear' if et.degree == 1 else f'degree {et.degree}'} " \
                   f"{'triangles' if et.cell == 'triangle' else 'quadrilaterals'}"
        except Exception:  # noqa: BLE001 - a layout the registry does not know: named as it is
            what = "elements"
        kinds.append(f"{b.shape[0]} {t} ({what})")
    x0, y0, x1, y1 = mesh.bounding_box()
    rows = [("elements by type", ", ".join(kinds)), ("elements in all", str(mesh.n_cells)),
            ("nodes", str(mesh.n_nodes)),
            ("unknowns (two displacements per node, before supports)", str(result.n_dofs))]
    free = getattr(result, "n_free", None)
    if free is not None:
        rows.append(("free unknowns solved", str(free)))
    rows += [("extent of the mesh", f"x {x0:g} to {x1:g}, y {y0:g} to {y1:g}" + (f" {length}" if length else "")),
             ("named edges", ", ".join(sorted(mesh.edge_sets)) or "-")]
    rows += [(str(k), str(v)) for k, v in mesh_rows]
    q = mesh_quality(mesh)
    return Section("Mesh", [KeyValues(rows, caption="Elements, nodes and unknowns"),
                            KeyValues(q.rows(length), caption="Worst element shapes: aspect ratio (1 for an "
                                      "equilateral triangle or a square), Jacobian ratio (smallest over largest "
                                      "determinant in the element; 1 undistorted) and corner angles")])


def _auto_results(result, field, recovery) -> list:
    from .plots import plot_field

    stress, length, _ = _units(result)
    su = f" [{stress}]" if stress else ""
    rows = []
    names = {"von_mises": "von Mises stress", "sigma_1": "sigma_1 (largest principal stress)",
             "sigma_2": "sigma_2 (smallest principal stress)"}
    for f, how in (("von_mises", "max"), ("sigma_1", "max"), ("sigma_2", "min"), ("sigma_xx", "max"),
                   ("sigma_xx", "min"), ("sigma_yy", "max"), ("sigma_yy", "min"), ("tau_xy", "max"), ("tau_xy", "min")):
        e = result.max(f, recovery=recovery) if how == "max" else result.min(f, recovery=recovery)
        remark = e.note.split(":")[0] + ": made by the idealisation" if e.note else ""
        rows.append([f"{names.get(f, f)}, {'highest' if how == 'max' else 'lowest'}{su}", _v(e.value, ".5g"),
                     _pt(e.location, length), remark])
    fig = plot_field(result, field, recovery=recovery)
    return [Table(["quantity", "value", "where", "remark"], rows,
                  caption=f"Extremes of the stresses over the whole part, load case '{result.case}' ({recovery} "
                          "recovery); a remark says when a value is made by how the part is held or loaded.",
                  numeric=[1]),
            Figure(_png(fig), f"{_FIELD_WORDS.get(field, field)} on the part as made, its deformed outline dashed "
                              f"over it, load case '{result.case}'; the magnification is stated on the picture.")]


def _table_of(title: str, thing, units=None) -> Section | None:
    """A section for contact states or a joint: their own tables, or a table of their records."""
    from ._report_tables import contact_section, joint_section, records_section

    if thing is None:
        return None
    if hasattr(thing, "fasteners") and hasattr(thing, "layers"):
        return joint_section(thing)
    items = list(thing.values()) if hasattr(thing, "values") and callable(thing.values) else thing
    if not isinstance(thing, Section) and not hasattr(thing, "section"):
        items = list(items)
        if not items:
            return None
        if all(hasattr(s, "peak_pressure") and hasattr(s, "arc_start_deg") for s in items):
            return contact_section(items, units)
    return records_section(title, thing)


def _check_blocks(checks) -> list:
    """The caller's checks as blocks: blocks as they are; a check object (a lug check, Kt, a margin) tabled."""
    out = []
    for c in checks:
        if isinstance(c, (Paragraph, Table, KeyValues, Figure, Notice, Tiles, SignOff)):
            out.append(c)
        elif callable(getattr(c, "rows", None)) and isinstance(getattr(c, "margins", None), dict):
            keys = {"net-section tension": "net_section", "bearing": "bearing", "shear-out": "shear_out",
                    "peak hoop stress on the hole": "peak"}
            rows = []
            for name, formula, value, unit in c.rows():
                ms = c.margins.get(keys.get(name, ""))
                rows.append([name, formula, f"{value:.4g}" + (f" {unit}" if unit and unit != "-" else ""),
                             "-" if ms is None else f"{ms:+.3f}", "" if ms is None else ("pass" if ms >= 0 else "fail")])
            fs = getattr(c, "factor_of_safety", 1.0)
            note = getattr(getattr(c, "concentration", None), "note", "")
            out.append(Table(["check", "formula", "value", "margin of safety", "status"], rows, status_column=4,
                             caption=f"{type(c).__name__.replace('Check', ' check')}, load case '{c.case}': "
                                     f"margins = allowable / ({fs:g} x stress) - 1"
                                     + (f". The peak sits {note}." if note else "."), numeric=[3]))
            # the check's own cautions (sizes not the model's, a load off the axis or not the hole's, the mesh)
            own = c.cautions(peak=False) if callable(getattr(c, "cautions", None)) else []  # the peak's: in the caption
            cautions = [t[0].upper() + t[1:] + ("" if t.endswith(".") else ".") for t in own]
            if cautions:
                out.append(Notice(cautions, kind="caution"))
        elif callable(getattr(c, "summary", None)):
            out.append(Paragraph(str(c.summary())))
        else:
            raise InputError(f"checks= takes report blocks or check results (a lug check, Kt, a margin), got {c!r}")
    return out


def _plain_text(sections: list, names: dict[str, str]) -> None:
    """Replace the Python spellings of supports, pins and loads in the text of every block by plain words.

    The report's own tables say them plainly; this catches what it quotes from elsewhere (warnings and
    notes raised while solving, a caller's extra sections).
    """
    if not names:
        return
    import re

    pattern = re.compile("|".join(re.escape(k) for k in names))

    def fix(text):
        return pattern.sub(lambda m: names[m.group(0)], text) if isinstance(text, str) else text

    for sec in sections:
        for b in sec.blocks:
            if isinstance(b, Paragraph):
                b.text = fix(b.text)
            elif isinstance(b, Table):
                b.caption = fix(b.caption)
                b.headers = [fix(h) for h in b.headers]
                b.rows = [[fix(str(c)) for c in r] for r in b.rows]
            elif isinstance(b, KeyValues):
                b.caption = fix(b.caption)
                b.rows = [(fix(str(k)), fix(str(v))) for k, v in b.rows]
            elif isinstance(b, Notice):
                b.items = [fix(i) for i in b.items]
            elif isinstance(b, Tiles):
                b.items = [tuple(fix(str(c)) for c in item) for item in b.items]


def _once(sections: list, cautions: Sequence[str]) -> None:
    """The scope caution is said once, in its own section: drop its repetitions from other blocks."""
    from .scope import CAUTION

    for sec in sections:
        keep = []
        for b in sec.blocks:
            if isinstance(b, Paragraph) and CAUTION in b.text:
                b = Paragraph(b.text.replace(CAUTION, "").strip())
                if not b.text:
                    continue
            if isinstance(b, Notice) and sec.title != "Cautions and limits":
                items = [i.replace(CAUTION, "").strip() for i in b.items]
                items = [i for i in items if i and i not in cautions]
                if not items:
                    continue
                b = Notice(items, b.kind, b.heading)
            keep.append(b)
        sec.blocks = keep


def stress_check_report(result, *, title: str | None = None, subtitle: str = "",
                        part: Sequence[tuple[str, Any]] = (),
                        headline: Sequence[tuple[str, str, str, str]] | None = None,
                        results: Sequence[Block] | None = None,
                        checks: Sequence[Block] = (),
                        convergence: Any = (),
                        mesh_rows: Sequence[tuple[str, Any]] = (),
                        extra_sections: Sequence[Section] = (),
                        run_rows: Sequence[tuple[str, Any]] = (),
                        cautions: Iterable[str] = CAUTIONS,
                        hot_spots: Any = None,
                        field: str = "von_mises", recovery: str = "spr",
                        nominal: float | None = None, allowable: float | None = None,
                        factor_of_safety: float = 1.0,
                        picture: Any = None, fasteners: Any = None,
                        contact: Any = None, joints: Any = None, combinations: Any = (),
                        prepared_by: str = "", checked_by: str = "", approved_by: str = "",
                        revision: str = "", signed_date: str = "",
                        script: str | os.PathLike | None = None,
                        omit: Iterable[str] = (), page: str = "A4") -> Report:
    """The complete stress check of one result, built from the model and the result.

    With the result alone it gives: summary tiles (the governing hot spot by feature, with Kt when
    ``nominal`` is given and the margin of safety when ``allowable`` is given, the other features'
    peaks, the largest displacement); a picture of the model with its supports, pins and loads as
    symbols; the inputs in plain words with units (materials and thicknesses per region, supports,
    pins, load cases and loads); the mesh (elements by type, nodes, unknowns, the worst aspect
    ratio, Jacobian ratio and corner angles); the extremes of the stresses and a contour; the
    hot-spot table; contact and joint tables when given or present on the result; the convergence
    evidence when given, with its verdict; the equilibrium of forces and moment and the reaction
    of each support and pin; the warnings of the solve; the cautions, once; the date, the script
    and its SHA-256 digest, the versions of planar, gmsh, numpy, scipy and the solver back end; and
    a sign-off block (filled when names are given, blank lines otherwise). Printed, every page
    carries the title, the revision and "page N of M".

    Parameters
    ----------
    result : Result
        The load case (or combination) checked.
    title, subtitle : str, optional
        Default title: "Stress check, load case '<case>'".
    part : sequence of (label, value)
        Geometry summary of the part, shown first under "What was analysed".
    headline : sequence of (label, value, detail, status), optional
        Replaces the summary tiles found from the hot spots.
    results : sequence of blocks, optional
        Replaces the section "Results" (default: the extremes of the stresses and a contour of ``field``).
    checks : sequence of blocks or check results
        Section "Checks against handbook values and allowables" (left out when empty); a check result
        (:func:`planar.post.lug_check`, :func:`planar.post.kt`, :func:`planar.post.margin_of_safety`)
        is tabled or summarised.
    convergence : GridConvergence or AdaptiveRun, or a sequence of them or of blocks
        Convergence evidence; a study is tabled with its verdict (including "not in the asymptotic
        range"), an adaptive run (:func:`planar.post.adapt`) with its cycles and whether it reached its
        target; each gets a summary tile. Without it the section says that no study was made.
    mesh_rows, run_rows : sequence of (label, value)
        More rows for the "Mesh" and "Run details" sections.
    extra_sections : sequence of Section
        Placed before the cautions.
    cautions : iterable of str
        Default :data:`CAUTIONS`; said once, in their own section, which cannot be left out or empty.
    hot_spots : HotSpots, Section or False, optional
        The hot spots of the result; default :func:`planar.post.hot_spots` of ``field`` with
        ``nominal``, ``allowable`` and ``factor_of_safety``; False leaves them out.
    field, recovery : str
        The stress field the summary, the hot spots and the contour read (default von Mises, SPR).
    nominal : float, optional
        Nominal stress for Kt (value / nominal) in the model's stress unit.
    allowable, factor_of_safety : float, optional
        For the margins of safety, allowable / (factor_of_safety x value) - 1.
    picture : Figure, matplotlib figure, PNG bytes or path, or False, optional
        The model picture (default drawn by :func:`planar.post.picture.plot_model`); False for none.
    fasteners : iterable of (x, y), optional
        Fastener positions drawn on the model picture.
    combinations : sequence of Combination, or mapping of name to {case: factor}, optional
        The load combinations of the job, listed with the inputs (a combined result lists its own);
        also what :func:`planar.post.combinations` returns (name -> CombinedResult).
    contact, joints : optional
        Contact states (default ``result.contact_states`` when present) and a joint result (its
        ``section()``, or its fastener table; default the joint of a joint's layer): each gets a
        section when given.
    prepared_by, checked_by, approved_by, revision, signed_date : str
        The sign-off block; the revision is also printed on every page.
    script : path, optional
        The script whose name and digest are reported (default the running script).
    omit : iterable of str
        Sections to leave out, by key (:data:`SECTION_KEYS`) or title; not the cautions.
    page : str
        Printed page size ("A4", "Letter", ...).

    Returns
    -------
    Report
    """
    from ..core.errors import unknown_name

    result = as_result(result, "stress_check_report")
    model = result.model
    omit = {str(o).strip().lower() for o in ([omit] if isinstance(omit, str) else omit)}
    known = set(SECTION_KEYS)
    for o in omit:
        if o not in known and o not in {"checks against handbook values and allowables", "convergence evidence",
                                        "cautions and limits"}:
            raise unknown_name("report section", o, [k for k in SECTION_KEYS if k != "cautions"])  # kept always
    if omit & {"cautions", "cautions and limits"}:
        raise InputError("omit=: the cautions cannot be left out of a stress-check report (they say what its "
                         "figures are not: linear elastic, no buckling, fatigue or plasticity check, review by a "
                         "qualified engineer); give your own list with cautions=[...] instead")
    want = lambda key: key not in omit  # noqa: E731
    cautions = [str(c) for c in ([cautions] if isinstance(cautions, str) else cautions) if str(c).strip()]
    if not cautions:
        raise InputError("cautions= is empty: a stress-check report states its limits; leave cautions= out for "
                         "planar's own (planar.post.CAUTIONS), or give your own list")
    if title is None:
        title = f"Stress check, load case '{result.case}'"
    from ..core.values import number  # a margin or Kt asked for with a bad number: refused, not left out

    nominal = None if nominal is None else number(nominal, "the nominal stress", positive=True)
    allowable = None if allowable is None else number(allowable, "the allowable", positive=True)
    factor_of_safety = number(factor_of_safety, "the factor of safety", positive=True)
    convergence = _evidence(convergence)  # once: a generator given would be used up by the tiles below
    from ..core.progress import step  # each long part of the report on a terminal, as the stages of a solve

    dofs = int(getattr(result, "n_dofs", 0) or 0)
    with step("report: hot spots", dofs):
        hs = _spots(result, hot_spots, field, recovery, nominal, allowable, factor_of_safety)
    headline = None if headline is None else list(headline)  # once: a generator is checked and then shown
    for item in headline or ():
        if isinstance(item, str) or len(item) != 4:
            raise InputError(f"headline= takes tiles as (label, value, detail, status) with status 'pass', 'fail' or "
                             f"'', got {item!r}")
    top: list = [Tiles(list(headline) if headline else _tiles(result, hs, field, recovery, nominal, allowable,
                                                              factor_of_safety) + _convergence_tiles(convergence))]
    top.append(Notice([SCOPE_NOTE], kind="note"))
    import numpy as np

    # nothing moved and nothing is stressed: a case with no load, or its loads on another case (a held part
    # heated moves nothing either, but its restrained expansion stresses it)
    if not np.any(np.asarray(result.u, float)) and not np.any(np.nan_to_num(result.field("von_mises"))):
        top.append(Notice([f"Load case '{result.case}' moves nothing: every displacement, and so every stress, is "
                           "zero. Check that its loads were given to this case (model.add_load(..., case=...)) and "
                           "are not zero."], kind="caution"))
    layer = getattr(model, "joint_layer", None)  # a joint's layer: fasteners tied where no hole is modelled
    unholed = [fz.name for fz in getattr(model, "joint_fasteners", None) or [] if layer not in fz.holes]
    if unholed:
        top.append(Notice([f"The fasteners {', '.join(repr(n) for n in unholed)} are tied to this layer with no hole "
                           "modelled: the stresses near them leave out each hole's concentration, so the peaks "
                           "above are not the holes' peaks. Check the holes by their bearing and bypass loads "
                           "(section Joints and fasteners), or model the holes (holes=)."], kind="caution"))
    sections = [Section("Summary", top)]
    if getattr(result, "warnings", None):
        sections.append(warnings_section(result.warnings))
    analysed: list = [KeyValues(list(part), caption="The part")] if part else []
    if joints is None:  # a joint's layer: its joint's tables, as the contact states below
        joints = getattr(result, "joint_result", None)
    if fasteners is None and joints is not None and hasattr(joints, "fasteners"):  # a joint's fasteners in this layer
        layer = next((k for k, r in getattr(joints, "layers", {}).items() if r is result), None)
        fasteners = [h["point"] for h in joints.fasteners.holes if h["layer"] == layer] or None
    with step("report: model picture", dofs):
        pic = _model_picture(result, picture, fasteners)
    if pic is not None:
        analysed.append(pic)
    analysed.append(KeyValues(describe_model_rows(model, result.case),
                              caption="Inputs: analysis, units, materials and thicknesses, supports, pins, load "
                                      "cases and loads"))
    from .combine import combination_text

    combos = []
    factors = getattr(result, "factors", None)
    if factors:
        combos.append(("combination checked", combination_text(result.case, factors)))
    items = combinations.items() if hasattr(combinations, "items") else \
        [(getattr(c, "name", None) or getattr(c, "case", ""), c) for c in combinations]
    for name, fac in items:  # {case: factor}, a Combination or a CombinedResult (what combinations() returns)
        fac = getattr(fac, "factors", fac)
        if not hasattr(fac, "items"):
            raise InputError(f"combinations=: {name!r} is a {type(fac).__name__}; give a mapping of name to "
                             "{case: factor}, Combination objects, or what planar.post.combinations() returns")
        if not factors or str(name) != str(result.case):
            combos.append(("combination", combination_text(name, dict(fac))))
    if combos:
        analysed.append(KeyValues(combos, caption="Load combinations (linear superposition of the solved cases)"))
    sections.append(Section("What was analysed", analysed))
    with step("report: mesh quality", dofs):
        sections.append(_mesh_section(result, mesh_rows))
    with step("report: extremes and contour", dofs):
        res_blocks = list(results) if results is not None else _auto_results(result, field, recovery)
    if res_blocks:
        sections.append(Section("Results", res_blocks))
    if isinstance(hs, Section):
        sections.append(hs)
    elif hs is not None:
        sections.append(hs.section())
    if checks:
        sections.append(Section("Checks against handbook values and allowables", _check_blocks(checks)))
    if contact is None:
        contact = getattr(result, "contact_states", None)
    for title_, thing in (("Contact", contact), ("Joints and fasteners", joints)):
        sec = _table_of(title_, thing, result.unit_system)
        if sec is not None:
            sections.append(sec)
    sections.append(Section("Convergence evidence", _convergence_blocks(convergence, _units(result)[0]) or [
        Paragraph("No convergence study was made for this report: the figures above come from one "
                  "mesh, and their discretisation error is not shown.")]))
    sections.append(Section("Equilibrium", [equilibrium_table(result)]
                            + ([reactions_table(result)] if hasattr(result, "support_reactions") else [])))
    sections += list(extra_sections)
    _once(sections, cautions)
    from .inputs import plain_names

    _plain_text(sections, plain_names(model))
    sections.append(Section("Cautions and limits", [Notice(cautions, heading="Read before using these results")]))
    from .provenance import provenance_rows

    run = [("load case", str(result.case))] + [(str(k), str(v)) for k, v in run_rows] + provenance_rows(result, script)
    sections.append(Section("Run details", [KeyValues(run, caption="What made this report")]))
    sections.append(Section("Sign-off", [SignOff(prepared_by, checked_by, approved_by, revision, signed_date)]))
    keys = {"Summary": "summary", "Warnings": "warnings", "What was analysed": "what was analysed", "Mesh": "mesh",
            "Results": "results", "Hot spots": "hot spots", "Checks against handbook values and allowables": "checks",
            "Contact": "contact", "Joints and fasteners": "joints", "Convergence evidence": "convergence",
            "Equilibrium": "equilibrium", "Cautions and limits": "cautions", "Run details": "run details",
            "Sign-off": "sign-off"}
    sections = [s for s in sections if want(keys.get(s.title, s.title.lower())) and want(s.title.lower())]
    return Report(title, subtitle, sections, revision=revision, page=page)
