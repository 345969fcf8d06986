"""A fastened joint's results: per-layer Results, fastener loads, bearing, bypass and load transfer by row.

The bypass load at a hole comes from a cut through the hole's centre across its layer. The cut runs
along the group's row of holes most nearly square to the principal direction of the loads the group
passes into that layer in the load case (the axis of the largest eigenvalue of ``sum F F^T`` over the
group's ends: a line, not an arrow, so reversing or scaling the load keeps the cut; where the loads
have no principal direction, the x axis): the rows are the lines from each fastener to its nearest
neighbours, and the one whose normal is under :data:`ROW_ANGLE` from that axis is taken, so a load a
little off the rows keeps the cut on the line of holes (:func:`_row_normal`); with none (one fastener,
or a single line of fasteners along the load), the cut is square to the axis. A row's holes share one
cut. The free body read is the layer on one side of the
cut, and the side is chosen from the layer's geometry and load path, the same in every load case
(never from the sign of a load), as the side where the layer carries the lesser load past a row:

* where the layer's own load enters (supports, applied loads, its own pins) on one side of the cut
  only, the other side (downstream: a lap plate's load leaves through the fasteners beyond);
* where it enters on neither side (a doubler or strap loaded through its fasteners only), the side
  with fewer fasteners (outwards: a doubler picks its load up from its ends);
* where it enters on both sides (a skin running past a doubler), the side with more fasteners
  (inwards: the fasteners divert part of the skin's load);

ties go to the side of lower coordinate along the cut's normal. The free body carries the layer's
applied loads, support and pin reactions and the other fasteners' forces on that side, so the force
crossing the cut is their sum (statics of the free body, common practice; the same force a stress
integral along the net section gives, as :func:`planar.post.cut_resultant` does on a cut within the
plate, without its quadrature error). The equivalent nodal forces of a temperature change or other
initial strain are no external load and are not summed (``Result.rest_forces`` of a joint layer
leaves them out), so the cut force is the stress resultant through the cut. The fasteners whose
centres lie within ``d / 2`` of the cut (the hole itself and the others of its row) are taken out,
their bearing loads going in at the cut; what crosses the cut beyond them is the bypass, shared
equally among them (the bypass per fastener pitch). The bypass scales with the loads of a case, and
at every hole the load arriving through the other side of the cut equals the bypass plus the bearing
loads taken out there (along the cut's normal).

Rows are numbered from the geometry: along the normal of the group's rows taken as above from the
principal direction of its loads over all its shear planes in the case, its sense fixed by the coordinates (x increasing, or y
increasing where the line runs along y), row 1 at the lowest coordinate; so the numbering is the same
for a pull and a push and in each shear plane of a double-shear group.
"""
from __future__ import annotations

from typing import Any

import numpy as np

from .errors import InputError

__all__ = ["JointResult", "FastenerTable"]


def _f(x: float) -> float:
    x = float(x) + 0.0  # no "-0" in a table
    return x if np.isfinite(x) else 0.0


def _unit(us, q: str) -> str:
    return f" [{us.unit_of(q)}]" if us.stated else ""


class FastenerTable:
    """Fastener loads of one load case (built by :attr:`JointResult.fasteners`).

    Attributes
    ----------
    pairs : list of dict
        One per fastener and joined pair of layers: ``group``, ``index``, ``layers`` (a, b), ``point``,
        ``shear`` (the force the fastener passes from layer a into layer b, (Vx, Vy)), ``magnitude``,
        ``compliance``.
    holes : list of dict
        One per fastener end (hole) in a layer: ``group``, ``index``, ``layer``, ``point``, ``load``
        (the force the fastener exerts on the layer), ``bearing`` (its magnitude), ``thickness``,
        ``bearing_stress`` = P / (d t), ``bypass`` (the load the layer carries past the hole across a cut
        through it along its row of holes, square to the fastener load, tension positive, per fastener on
        the cut),
        ``section_bypass`` (the whole cut), ``on_cut`` (fasteners on the cut).
    rows : list of dict
        Load transfer row by row: ``group``, ``row`` (1, 2, ... along the load direction), ``layers``,
        ``centre``, ``count``, ``load`` (magnitude of the row's summed shear), ``share`` of the load
        passed between those two layers.
    shear : ndarray (p, 2), magnitude : ndarray (p,)
        The pairs' shear loads as arrays.
    """

    def __init__(self, jr: "JointResult"):
        self.case = jr.case
        self.units = jr.unit_system
        joint = jr.joint
        pairs = []
        for sd in jr._springs:
            fz = joint.fasteners[sd["group"]]
            for i in range(sd["points"].shape[0]):
                v = sd["V"][i]
                pairs.append(dict(group=fz.name, index=i, layers=(sd["a"], sd["b"]),
                                  point=(float(sd["points"][i, 0]), float(sd["points"][i, 1])),
                                  shear=(_f(v[0]), _f(v[1])), magnitude=_f(np.hypot(*v)),
                                  compliance=_f(sd["compliance"][i])))
        self.pairs = pairs
        self.shear = np.array([p["shear"] for p in pairs]).reshape(-1, 2)
        self.magnitude = np.array([p["magnitude"] for p in pairs])
        self.holes = self._holes(jr)
        self.rows = self._rows(jr)
        # an orthotropic layer's modulus in a flexibility formula: along its load direction (stated)
        self.formula_moduli = {k: r.formula_modulus for k, r in jr.layers.items()
                               if getattr(r, "formula_modulus", None)}

    def _holes(self, jr) -> list[dict]:
        joint = jr.joint
        out = []
        for layer, res in jr.layers.items():
            ends = [e for e in jr._ends if e["layer"] == layer]
            if not ends:
                continue
            P = np.vstack([e["points"] for e in ends])
            F = np.vstack([e["force"] for e in ends])
            d = np.concatenate([np.full(e["count"], joint.fasteners[e["group"]].diameter) for e in ends])
            t = np.concatenate([e["t"] for e in ends])
            # each hole's cut is square to the principal direction of its group's loads in this layer
            axes = np.vstack([np.tile(_row_normal(e["points"], _axis(e["force"])), (e["count"], 1))
                              for e in ends])
            entry = getattr(res, "joint_entries", None)
            if entry is None:
                entry = np.zeros(res.mesh.n_nodes, bool)
            bypass, section, count = _bypass(res.mesh.nodes, res.rest_forces, entry, P, F, d, axes)
            h = 0
            for e in ends:
                fz = joint.fasteners[e["group"]]
                for i in range(e["count"]):
                    P_b = float(np.hypot(*F[h]))
                    out.append(dict(group=fz.name, index=i, layer=layer, point=(float(P[h, 0]), float(P[h, 1])),
                                    load=(_f(F[h, 0]), _f(F[h, 1])), bearing=_f(P_b), thickness=_f(t[h]),
                                    diameter=_f(d[h]), bearing_stress=_f(P_b / (d[h] * t[h])) if t[h] > 0 else 0.0,
                                    bypass=_f(bypass[h]), section_bypass=_f(section[h]), on_cut=int(count[h])))
                    h += 1
        return out

    def _rows(self, jr) -> list[dict]:
        joint = jr.joint
        rows = []
        totals: dict[tuple[str, str], float] = {}
        axes: dict = {}  # one row direction per group over all its shear planes (the same numbering in each)
        for sd in jr._springs:
            axes.setdefault(sd["group"], []).append(sd)
        axes = {g: _row_normal(v[0]["points"], _axis(np.vstack([sd["V"] for sd in v])))
                for g, v in axes.items()}
        for sd in jr._springs:
            fz = joint.fasteners[sd["group"]]
            pts, V = sd["points"], sd["V"]
            u = axes[sd["group"]]
            proj = pts @ u
            order = np.argsort(proj, kind="stable")
            label = np.zeros(proj.size, np.int64)
            label[order] = np.cumsum(np.r_[0, np.diff(proj[order]) > fz.diameter / 2])
            nrow = int(label.max()) + 1
            key = (sd["a"], sd["b"])
            n = np.bincount(label, minlength=nrow)  # each row's count, load and centre, summed in one pass
            Vr = np.column_stack([np.bincount(label, V[:, j], nrow) for j in (0, 1)])
            cr = np.column_stack([np.bincount(label, pts[:, j], nrow) for j in (0, 1)]) / n[:, None]
            loads = np.hypot(*Vr.T)
            totals[key] = totals.get(key, 0.0) + float(loads.sum())
            for r in range(nrow):
                rows.append(dict(group=fz.name, row=r + 1, layers=key, centre=(float(cr[r, 0]), float(cr[r, 1])),
                                 count=int(n[r]), load=_f(loads[r])))
        for r in rows:
            tot = totals[r["layers"]]
            r["share"] = _f(r["load"] / tot) if tot > 0 else 0.0
        return rows

    def compliance_unit(self) -> str:
        """The unit of a spring's compliance, length per force (``""`` when the units are not stated)."""
        us = self.units
        return f"{us.unit_of('length')}/{us.unit_of('force')}" if us.stated else ""

    def as_dict(self) -> dict[str, Any]:
        """The table as plain data (JSON-ready): units, fastener pairs, holes, rows.

        ``compliance_unit`` states the unit of each pair's ``compliance`` (length per force; one shear
        plane's spring in double shear); ``formula_moduli``, for each orthotropic layer a flexibility
        formula read, the moduli used, the direction they are taken along and why
        (:func:`planar.core._joint_solve._load_axes`).
        """
        return {"case": self.case, "units": self.units.as_dict(), "compliance_unit": self.compliance_unit(),
                "formula_moduli": {k: dict(v) for k, v in self.formula_moduli.items()},
                "fasteners": [dict(p, layers=list(p["layers"]), point=list(p["point"]), shear=list(p["shear"]))
                              for p in self.pairs],
                "holes": [dict(h, point=list(h["point"]), load=list(h["load"])) for h in self.holes],
                "rows": [dict(r, layers=list(r["layers"]), centre=list(r["centre"])) for r in self.rows]}

    def text(self) -> str:
        """The table as text, units stated; the name columns are as wide as the longest name."""
        us = self.units
        F, L, S = _unit(us, "force"), _unit(us, "length"), _unit(us, "stress")
        C = f" [{self.compliance_unit()}]" if us.stated else ""
        tiny = 1e-9 * max(float(self.magnitude.max(initial=0.0)), 1e-300)
        z = lambda v: 0.0 if abs(v) < tiny else v  # noqa: E731  (round-off of a load printed as 0)
        groups = [p["group"] for p in self.pairs] + [h["group"] for h in self.holes] + [r["group"] for r in self.rows]
        gw = max([len("group")] + [len(g) for g in groups])
        lw = max([len("layer")] + [len(h["layer"]) for h in self.holes])
        pw = max([len("layers")] + [len("-".join(p["layers"])) for p in self.pairs]
                 + [len("-".join(r["layers"])) for r in self.rows])
        lines = [f"Fastener loads, load case {self.case!r} ({us.label})", "",
                 f"{'group':<{gw}} {'#':>3} {'x' + L:>12} {'y' + L:>12} {'layers':<{pw}} {'Vx' + F:>12} "
                 f"{'Vy' + F:>12} {'|V|' + F:>12} {'compliance' + C:>18}"]
        for p in self.pairs:
            lines.append(f"{p['group']:<{gw}} {p['index'] + 1:>3} {p['point'][0]:>12.4g} {p['point'][1]:>12.4g} "
                         f"{'-'.join(p['layers']):<{pw}} {z(p['shear'][0]):>12.5g} {z(p['shear'][1]):>12.5g} "
                         f"{p['magnitude']:>12.5g} {p['compliance']:>18.4g}")
        lines.append("(compliance: the spring's slip per unit force between the two layers; in double shear one "
                     "shear plane's spring)")
        for k, v in self.formula_moduli.items():
            mods = ", ".join(f"{m:.5g}" for m in v["moduli"])
            along = "" if v["direction"] is None else f" along ({v['direction'][0]:.4g}, {v['direction'][1]:.4g}),"
            su = f" {us.unit_of('stress')}" if us.stated else ""
            lines.append(f"(flexibility formula: orthotropic layer {k!r} read with modulus {mods}{su}"
                         f"{along} {v['basis']})")
        lines += ["", f"{'group':<{gw}} {'#':>3} {'layer':<{lw}} {'bearing P' + F:>16} {'t' + L:>10} "
                      f"{'P/(d t)' + S:>16} {'bypass' + F:>14} {'on cut':>7}"]
        for h in self.holes:
            lines.append(f"{h['group']:<{gw}} {h['index'] + 1:>3} {h['layer']:<{lw}} {h['bearing']:>16.5g} "
                         f"{h['thickness']:>10.4g} {h['bearing_stress']:>16.5g} {z(h['bypass']):>14.5g} {h['on_cut']:>7}")
        lines.append("(bypass: the load the layer carries past the hole across a cut through it along its row of "
                     "holes, square to the fastener loads, tension positive, per fastener on the cut)")
        lines += ["", "Load transfer by row", f"{'group':<{gw}} {'row':>4} {'layers':<{pw}} {'x' + L:>12} "
                                              f"{'y' + L:>12} {'n':>4} {'load' + F:>14} {'share':>7}"]
        for r in self.rows:
            lines.append(f"{r['group']:<{gw}} {r['row']:>4} {'-'.join(r['layers']):<{pw}} {r['centre'][0]:>12.4g} "
                         f"{r['centre'][1]:>12.4g} {r['count']:>4} {r['load']:>14.5g} {100 * r['share']:>6.1f}%")
        return "\n".join(lines)

    def __str__(self) -> str:
        return self.text()

    def __repr__(self) -> str:
        return f"FastenerTable(case={self.case!r}, {len(self.pairs)} fastener pairs, {len(self.holes)} holes)"


class _LayerAttributeError(InputError, AttributeError):
    """A Result's attribute asked of a joint's result (an InputError naming the layer to ask)."""


def _axis(F: np.ndarray) -> np.ndarray:
    """The principal direction of forces F (k, 2), a unit vector of fixed sense (a line, not an arrow).

    The eigenvector of the largest eigenvalue of ``F^T F`` (unchanged when F is scaled by any non-zero
    factor, a reversal too); its sense has x increasing (y increasing where it runs along y). Forces
    with no principal direction (nil, or as strong along every direction to 1e-6) give the x axis.
    """
    F = np.asarray(F, dtype=float).reshape(-1, 2)
    w, v = np.linalg.eigh(F.T @ F)
    if not w[1] > 0 or w[1] - w[0] <= 1e-6 * w[1]:
        return np.array([1.0, 0.0])
    n = v[:, 1]
    if abs(n[0]) <= 1e-9:
        return np.array([0.0, 1.0])
    return n if n[0] > 0 else -n


#: the angle between the load's principal direction and a row's normal below which the row is taken as the
#: line of holes across the load (at or beyond it, as for a single line of fasteners along the load or
#: a zig-zag line at 45 degrees, the load's direction is kept)
ROW_ANGLE = 45.0


def _row_normal(points: np.ndarray, axis: np.ndarray) -> np.ndarray:
    """The normal of the group's row of holes most nearly square to the load's principal direction ``axis``.

    The candidate rows are the lines from each fastener to its nearest neighbours (up to eight) in the
    group; the one whose normal is closest to ``axis`` is taken, when under :data:`ROW_ANGLE`, so the
    cuts and rows run along the lines of holes as laid out, not across them at the small angle a
    transverse part of the load gives (a tilted cut misses the other holes of the row and splits it).
    A group of one fastener, or with no line within the angle, keeps ``axis``. The sense is fixed as
    :func:`_axis` fixes it (x increasing, or y increasing along y).
    """
    P = np.asarray(points, dtype=float).reshape(-1, 2)
    k = P.shape[0]
    if k < 2:
        return axis
    from scipy.spatial import cKDTree

    _, idx = cKDTree(P).query(P, min(k, 9))
    v = (P[idx[:, 1:]] - P[:, None, :]).reshape(-1, 2)
    length = np.hypot(*v.T)
    ok = length > 1e-9 * max(float(np.ptp(P, axis=0).max()), 1e-300)
    if not ok.any():
        return axis
    v = v[ok] / length[ok, None]
    n = np.column_stack([-v[:, 1], v[:, 0]])
    fit = np.abs(n @ axis)
    best = int(np.argmax(fit))
    if fit[best] <= np.cos(np.radians(ROW_ANGLE)) + 1e-9:  # a line at 45 degrees (a zig-zag's) is no row
        return axis
    nb = n[best]
    if abs(nb[0]) <= 1e-9:
        return np.array([0.0, 1.0])
    return (nb if nb[0] > 0 else -nb) + 0.0  # no -0


def _bypass(nodes, rest, entry, P, F, d, axes):
    """(bypass per fastener on the cut, whole-cut bypass, fasteners on the cut) for each end of one layer.

    ``rest`` (n, 2): the layer's forces other than the fasteners' (no initial-strain equivalents);
    ``entry`` (n,) bool: the nodes where the layer's own load enters in any case (:func:`entry_nodes`); ``P``, ``F`` (H, 2): the ends' points and the fasteners' forces on the layer; ``d`` (H,):
    diameters; ``axes`` (H, 2): each end's cut normal (:func:`_axis`). The side read is chosen as the
    module notes say, from the geometry only.
    """
    H = P.shape[0]
    key = np.round(np.arctan2(axes[:, 1], axes[:, 0]), 9)
    out = np.zeros(H)
    count = np.zeros(H, np.int64)
    span = max(float(np.ptp(nodes, axis=0).max()), 1e-300)
    eps = 1e-9 * span
    # only the nodes with a force of their own or where the load enters weigh in the sums (the others add
    # nothing), so each cut direction sorts those few and not the whole layer: groups of one fastener, each
    # with its own direction, sorted the layer once each
    keep = np.flatnonzero(np.any(rest != 0, axis=1) | entry)
    nodes, rest, entry = nodes[keep], rest[keep], entry[keep]
    for k in np.unique(key):  # one sort per cut direction (usually one)
        sel = np.flatnonzero(key == k)
        nv = axes[sel[0]]
        pn = nodes @ nv
        o = np.argsort(pn, kind="stable")
        ps = pn[o]
        cum = np.r_[0.0, np.cumsum((rest @ nv)[o])]
        pe = P @ nv
        oe = np.argsort(pe, kind="stable")
        pes = pe[oe]
        cume = np.r_[0.0, np.cumsum((F @ nv)[oe])]
        c = pe[sel]
        tol = d[sel] / 2
        lo = np.searchsorted(ps, c - eps, side="left")
        hi = np.searchsorted(ps, c + eps, side="right")
        below = cum[lo] + 0.5 * (cum[hi] - cum[lo])  # nodes on the cut line: half to each side
        lo_e = np.searchsorted(pes, c - tol, side="left")
        hi_e = np.searchsorted(pes, c + tol, side="right")
        t_lo = -(below + cume[lo_e])  # tension through the cut, read on the low side
        t_hi = (cum[-1] - below) + (cume[-1] - cume[hi_e])  # the same, read on the high side
        pen = np.sort(pn[entry])
        e_lo = np.searchsorted(pen, c - eps, side="left") > 0
        e_hi = np.searchsorted(pen, c + eps, side="right") < pen.size
        n_lo, n_hi = lo_e, H - hi_e  # the layer's fasteners off the cut on each side
        read_lo = np.where(e_lo & ~e_hi, False,
                           np.where(e_hi & ~e_lo, True,
                                    np.where(~e_lo & ~e_hi, n_lo <= n_hi, n_lo >= n_hi)))
        out[sel] = np.where(read_lo, t_lo, t_hi)
        count[sel] = hi_e - lo_e
    count = np.maximum(count, 1)
    return out / count, out, count


def external_loads(asm, cases: list[str]) -> np.ndarray:
    """(2n, m): each case's nodal forces of the loads themselves, without the equivalent forces of
    initial strains (a temperature change), which are no external load on a free body."""
    from .registry import check_plugin_array, plugin_call

    n = asm.mesh.n_nodes
    out = np.zeros((2 * n, len(cases)))
    for j, c in enumerate(cases):
        f = np.zeros((n, 2))
        for load in asm.model.cases.get(c, []):
            with plugin_call("load", load, "nodal_forces"):
                fl = load.nodal_forces(asm.context)
            f += check_plugin_array("load", load, "nodal_forces", fl, f.shape)
        out[:, j] = f.reshape(-1)
    return out


def entry_nodes(forces: np.ndarray, fasteners: np.ndarray, n: int) -> np.ndarray:
    """(n,) bool: the nodes where a joint layer's own load enters in any of the solve's cases.

    ``forces`` (2n, m): the layer's forces other than the fasteners' (loads without initial-strain
    equivalents, support reactions, its own pins' forces); ``fasteners`` (2n, m): the fasteners'
    forces on it. A node enters the load path where its force is above 1e-8 of the largest force on
    the layer in a case (a support that carries nothing in every case, as one of a statically
    determinate set under a self-balanced temperature change, is not a way in).
    """
    F = np.abs(forces).reshape(n, 2, -1).max(axis=1)
    scale = np.maximum(F.max(axis=0, initial=0.0), np.abs(fasteners).max(axis=0, initial=0.0))
    return np.any(F > 1e-8 * np.maximum(scale, 1e-300), axis=1)


class JointResult:
    """One load case of a solved :class:`planar.core.joints.Joint`.

    Attributes
    ----------
    case : str
    layers : dict of str to Result
        Each layer's result (stresses, hot spots, edge stresses, VTK: everything a Result does). The
        fasteners' forces on a layer are among its pin forces, so each layer balances on its own.
    joint : Joint
    """

    def __init__(self, joint, case: str, layers: dict, springs: list[dict], ends: list[dict], *, timer=None):
        self.joint = joint
        self.case = case
        self.layers = layers
        self._springs = springs
        self._ends = ends
        self.timer = timer
        self._table = None
        for r in layers.values():  # a layer's report finds its joint (its fastener tables) from the layer alone
            r.joint_result = self

    def __getattr__(self, name: str):
        # called only for a name the joint's result lacks: one a layer's Result has (max, field, u, ...) is
        # refused with the fix (an error that is also an AttributeError, so hasattr and getattr with a
        # default still work)
        from .result import Result

        if name.startswith("_") or not hasattr(Result, name):
            raise AttributeError(f"{type(self).__name__!r} object has no attribute {name!r}")
        names = list(self.__dict__.get("layers") or {}) or ["layer"]
        raise _LayerAttributeError(f"a joint's result has no {name!r}: it holds one Result per layer "
                                   f"({', '.join(map(repr, names))}); ask a layer, e.g. "
                                   f"result.layers[{names[0]!r}].{name}")

    def __repr__(self):
        return f"JointResult(case={self.case!r}, layers={list(self.layers)}, {sum(s['points'].shape[0] for s in self._springs)} springs)"

    @property
    def unit_system(self):
        return self.joint.unit_system

    @property
    def warnings(self) -> list:
        """The layers' warnings, each once."""
        seen, out = set(), []
        for r in self.layers.values():
            for w in r.warnings:
                if id(w) not in seen:
                    seen.add(id(w)); out.append(w)
        return out

    @property
    def fasteners(self) -> FastenerTable:
        """The fasteners' loads, bearing and bypass at each hole, and the load transfer by row."""
        if self._table is None:
            self._table = FastenerTable(self)
        return self._table

    def balance_error(self) -> float:
        """|sum over the layers of loads, support and pin reactions| over the load's scale (the fasteners are internal)."""
        tot = sum(r.rest_forces.sum(axis=0) for r in self.layers.values())
        scale = max(sum(float(np.abs(r.applied.sum(axis=0)).max()) for r in self.layers.values()),
                    sum(0.5 * float(np.abs(r.reactions).sum()) for r in self.layers.values()),
                    sum(0.5 * float(np.abs(r.applied).sum()) for r in self.layers.values()), 1e-300)
        return float(np.hypot(*tot) / scale)

    def table(self) -> str:
        """The fastener table as text, units stated."""
        return self.fasteners.text()

    def as_dict(self) -> dict[str, Any]:
        """Summary (JSON-ready): units, each layer's summary, the fastener table (with the unit of the springs'
        compliance, ``compliance_unit``), the load balance."""
        out = {"case": self.case, "units": self.unit_system.as_dict(),
               "layers": {k: r.summary() for k, r in self.layers.items()},
               "load_balance_error": self.balance_error()}
        tab = self.fasteners.as_dict()
        out.update({k: tab[k] for k in ("compliance_unit", "formula_moduli", "fasteners", "holes", "rows")})
        return out
