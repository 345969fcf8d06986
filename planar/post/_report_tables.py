"""Report sections for contact pins and bolted joints, with the units of the model, and the warnings.

:func:`contact_section` tables the state of each contact pin of a result (its contact arc, peak
pressure, force, clearance); :func:`joint_section` the fasteners of a solved joint (the shear each
passes between two layers, the bearing and bypass load at each hole, the load transfer by row).
Anything else that describes itself (a ``section()`` method) or is a list of records is tabled as
it is.
"""
from __future__ import annotations

from typing import Any, Mapping, Sequence

from ._blocks import Notice, Paragraph, Section, Table

__all__ = ["contact_section", "joint_section", "records_section", "warnings_section", "WARNINGS_SHOWN_PER_CODE"]


def _f(v, spec: str = ".5g") -> str:
    if v is None:
        return "-"
    try:
        return format(float(v), spec)
    except (TypeError, ValueError):
        return str(v)


def _pt(p) -> str:
    return "-" if p is None else f"({_f(p[0], '.4g')}, {_f(p[1], '.4g')})"


def _force(f) -> str:
    """A force (fx, fy): six figures, a component below 1e-9 of the force's size (round-off) printed as 0."""
    if f is None:
        return "-"
    tiny = 1e-9 * max(abs(float(f[0])), abs(float(f[1])), 1e-300)
    return "(" + ", ".join(_f(0.0 if abs(float(v)) < tiny else float(v) + 0.0, ".6g") for v in f[:2]) + ")"


def _unit(units, q: str) -> str:
    try:
        u = units.unit_of(q)
    except Exception:  # noqa: BLE001 - a plain dict of units
        u = (units or {}).get(q, "") if isinstance(units, Mapping) else ""
    return f" [{u}]" if u else ""


def contact_section(states, units=None) -> Section | None:
    """The contact pins' states (a mapping pin -> state, or a list of states), or None when there are none."""
    items = list(states.values()) if isinstance(states, Mapping) else list(states or [])
    if not items:
        return None
    if units is None:
        units = getattr(items[0], "units", {}) or {}
    rows = []
    for s in items:
        if s.arc_start_deg is None:
            arc = "no contact"
        else:
            arc = f"{s.arc_start_deg:.1f} to {s.arc_end_deg:.1f} ({s.arc_deg:.1f})"
        rows.append([str(s.pin), arc, _f(s.peak_pressure), _pt(s.peak_at), _force(s.force), _f(s.clearance, ".4g"),
                     str(s.iterations)])
    head = ["pin", "contact arc, deg (extent)", "peak pressure" + _unit(units, "stress"),
            "at" + _unit(units, "length"), "force on the part" + _unit(units, "force"),
            "clearance" + _unit(units, "length"), "iterations"]
    return Section("Contact", [Table(head, rows, caption=f"Contact of each pin with its hole, load case "
                                                         f"'{items[0].case}': the arc in contact (angles about the "
                                                         "pin's point, counter-clockwise from x), the peak contact "
                                                         "pressure and the force the pin passes to the part.",
                                     numeric=[2, 5, 6])])


def joint_section(joint_result) -> Section:
    """The fastener table of a solved joint: shear per fastener, bearing and bypass per hole, load by row."""
    tab = joint_result.fasteners
    units = tab.units
    f, s, lu = _unit(units, "force"), _unit(units, "stress"), _unit(units, "length")
    blocks: list = []
    if tab.pairs:
        cu = f" [{tab.compliance_unit()}]" if tab.compliance_unit() else ""  # compliance: length per force
        blocks.append(Table(["fastener", "layers", "at" + lu, "shear Vx, Vy" + f, "shear" + f, "compliance" + cu],
                            [[f"{p['group']} {p['index'] + 1}", f"{p['layers'][0]} to {p['layers'][1]}",
                              _pt(p["point"]), _force(p["shear"]), _f(p["magnitude"]), _f(p["compliance"], ".4g")]
                             for p in tab.pairs],
                            caption=f"Shear each fastener passes from one layer into the next, load case "
                                    f"'{tab.case}', and the compliance of the spring between the two layers "
                                    "(one shear plane in double shear).", numeric=[4, 5]))
    if tab.holes:
        blocks.append(Table(["hole", "layer", "bearing load" + f, "bearing stress P/(d t)" + s, "bypass load" + f,
                             "diameter" + lu, "thickness" + lu],
                            [[f"{h['group']} {h['index'] + 1}", str(h["layer"]), _f(h["bearing"]),
                              _f(h["bearing_stress"]), _f(h["bypass"]), _f(h["diameter"], ".4g"),
                              _f(h["thickness"], ".4g")] for h in tab.holes],
                            caption="Bearing and bypass load at each hole of each layer. Bypass: the load the layer "
                                    "carries past the hole across a cut through it along its row of holes (square "
                                    "to the fastener load where the holes stand in no such row; tension positive), "
                                    "per fastener on that cut.", numeric=[2, 3, 4, 5, 6]))
    if tab.rows:
        blocks.append(Table(["fastener group", "row", "layers", "fasteners", "load" + f, "share"],
                            [[str(r["group"]), str(r["row"]), f"{r['layers'][0]} to {r['layers'][1]}", str(r["count"]),
                              _f(r["load"]), f"{100 * float(r['share']):.1f} %"] for r in tab.rows],
                            caption="Load transfer row by row (rows numbered along the load).", numeric=[1, 3, 4, 5]))
    return Section("Joints and fasteners", blocks or [Paragraph("The joint has no fasteners.")])


def records_section(title: str, thing: Any) -> Section | None:
    """A section for anything else: its own ``section()``, or a table of its records (dicts or ``as_dict()``)."""
    if thing is None:
        return None
    if isinstance(thing, Section):
        return thing
    own = getattr(thing, "section", None)
    if callable(own):
        return own()
    items = list(thing.values()) if isinstance(thing, Mapping) else list(thing)
    rows = [r.as_dict() if hasattr(r, "as_dict") else dict(r) for r in items]
    if not rows:
        return None
    heads = list(dict.fromkeys(k for r in rows for k in r))

    def cell(v):
        if isinstance(v, float):
            return f"{v:.5g}"
        if isinstance(v, (tuple, list)):
            return "(" + ", ".join(cell(x) for x in v) + ")"
        return "-" if v is None else str(v)

    return Section(title, [Table(heads, [[cell(r.get(h)) for h in heads] for r in rows])])


#: warnings of one code listed in full in the report; the rest of that code are counted in one row
WARNINGS_SHOWN_PER_CODE = 3


def warnings_section(warnings: Sequence[Any], per_code: int = WARNINGS_SHOWN_PER_CODE) -> Section:
    """A "Warnings" section listing planar warnings (code and message), e.g. ``result.warnings``.

    The first ``per_code`` warnings of each code are listed in full; further ones of that code (the
    same concern at many holes, say) are counted in one row after them, so the list stays readable.
    """
    by_code: dict[str, list[str]] = {}
    for w in warnings:
        d = w.as_dict() if hasattr(w, "as_dict") else dict(w)
        by_code.setdefault(str(d.get("code", "general")), []).append(str(d.get("message", "")))
    rows = []
    total = 0
    for code, msgs in by_code.items():
        total += len(msgs)
        rows += [[code, m] for m in msgs[:per_code]]
        if len(msgs) > per_code:
            rows.append([code, f"... and {len(msgs) - per_code} more {code!r} warning(s) of the same kind at other "
                               "places (all are kept in the result's warnings, Result.warnings)"])
    return Section("Warnings", [
        Notice([f"planar raised {total} warning(s) about this result: read them before using its figures."],
               kind="caution"),
        Table(["code", "message"], rows, caption="Each warning names the concern, where it is and the fix.")])
