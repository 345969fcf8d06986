"""The answer for one load case: displacements, reactions, strains and stresses, derived fields.

Stresses live at the Gauss points of each element block; nodal fields are recovered on demand
(region-wise averaging here; superconvergent patch recovery in :mod:`planar.post.recovery`).
Units are those of the model (e.g. N, mm, MPa).
"""
from __future__ import annotations

from dataclasses import dataclass
from functools import cached_property
from typing import Any, Callable

import numpy as np

from .assembly import CHUNK, element_strains
from .errors import InputError
from .materials import sigma_zz
from .parallel import map_chunks

__all__ = ["Result", "GaussField", "stress_measures", "FIELDS", "extrapolation_matrix", "as_result",
           "as_results"]

#: fields a user can ask for by name
STRESS_FIELDS = ("sigma_xx", "sigma_yy", "tau_xy", "sigma_zz", "von_mises", "tresca", "sigma_1",
                 "sigma_2", "principal_angle")
STRAIN_FIELDS = ("eps_xx", "eps_yy", "gamma_xy")
FIELDS = ("ux", "uy", "displacement") + STRESS_FIELDS + STRAIN_FIELDS


def stress_measures(s: np.ndarray, szz: np.ndarray | None = None) -> dict[str, np.ndarray]:
    """Derived stress measures from (sigma_xx, sigma_yy, tau_xy) and sigma_zz.

    Parameters
    ----------
    s : ndarray, shape (..., 3)
    szz : ndarray, shape (...), optional
        Out-of-plane stress (zero in plane stress).

    Returns
    -------
    dict
        ``sigma_xx``, ``sigma_yy``, ``tau_xy``, ``sigma_zz``, ``von_mises``, ``tresca``, ``sigma_1``,
        ``sigma_2`` (in-plane principal stresses, sigma_1 >= sigma_2) and ``principal_angle``
        (angle of sigma_1 from the x axis, degrees).

    Notes
    -----
    von Mises: sqrt(((sxx - syy)^2 + (syy - szz)^2 + (szz - sxx)^2) / 2 + 3 txy^2); Tresca: the
    largest difference of the three principal stresses (common practice).
    """
    s = np.asarray(s, dtype=float)
    sxx, syy, txy = s[..., 0], s[..., 1], s[..., 2]
    szz = np.zeros_like(sxx) if szz is None else np.asarray(szz, dtype=float)
    c = 0.5 * (sxx + syy)
    r = np.hypot(0.5 * (sxx - syy), txy)
    s1, s2 = c + r, c - r
    # scaled by the largest component so that the squares cannot overflow for huge stresses
    m = np.maximum(np.maximum(np.abs(sxx), np.abs(syy)), np.maximum(np.abs(szz), np.abs(txy)))
    with np.errstate(invalid="ignore", divide="ignore"):
        a, b, z, t = (np.where(m > 0, v / m, 0.0) for v in (sxx, syy, szz, txy))
    vm = m * np.sqrt(np.maximum(0.5 * ((a - b) ** 2 + (b - z) ** 2 + (z - a) ** 2) + 3 * t**2, 0.0))
    tr = np.maximum(np.maximum(np.abs(s1 - s2), np.abs(s1 - szz)), np.abs(s2 - szz))
    ang = np.degrees(0.5 * np.arctan2(2 * txy, sxx - syy))
    return {"sigma_xx": sxx, "sigma_yy": syy, "tau_xy": txy, "sigma_zz": szz, "von_mises": vm,
            "tresca": tr, "sigma_1": s1, "sigma_2": s2, "principal_angle": ang}


def _poly_basis(cell: str, xi: np.ndarray, deg: int) -> np.ndarray:
    x, y = xi[:, 0], xi[:, 1]
    if cell == "triangle":
        cols = [x**a * y**b for a in range(deg + 1) for b in range(deg + 1 - a)]
    else:
        cols = [x**a * y**b for a in range(deg + 1) for b in range(deg + 1)]
    return np.column_stack(cols)


def extrapolation_matrix(etype, rule) -> np.ndarray:
    """Matrix E (k, q) taking Gauss-point values to the element's nodes by a least-squares fit.

    The fit uses the complete polynomial of the stresses' own degree (p - 1 on triangles, p per
    direction on quadrilaterals), capped by what the rule's points can determine.
    """
    q = rule.n_points
    if etype.cell == "triangle":
        deg = max(etype.degree - 1, 0)
        while deg > 0 and (deg + 1) * (deg + 2) // 2 > q:
            deg -= 1
    else:
        deg = etype.degree
        while deg > 0 and (deg + 1) ** 2 > q:
            deg -= 1
    Pg = _poly_basis(etype.cell, rule.points, deg)
    while deg > 0 and np.linalg.matrix_rank(Pg) < Pg.shape[1]:
        deg -= 1
        Pg = _poly_basis(etype.cell, rule.points, deg)
    Pn = _poly_basis(etype.cell, etype.ref_nodes, deg)
    return Pn @ np.linalg.pinv(Pg)


@dataclass
class GaussField:
    """Strain and stress at the Gauss points of one block.

    Attributes
    ----------
    block : Block
    rule : Rule
    x : ndarray, shape (e, q, 2)
    dvol : ndarray, shape (e, q)
        Weight times Jacobian times thickness.
    strain : ndarray, shape (e, q, 3)
        Total strain (eps_xx, eps_yy, gamma_xy).
    mech_strain : ndarray, shape (e, q, 3)
        Strain minus the initial (e.g. thermal) strain.
    stress : ndarray, shape (e, q, 3)
    szz : ndarray, shape (e, q)
    """

    block: Any
    rule: Any
    x: np.ndarray
    dvol: np.ndarray
    strain: np.ndarray
    mech_strain: np.ndarray
    stress: np.ndarray
    szz: np.ndarray


class Result:
    """Solution of one load case.

    Attributes
    ----------
    case : str
    mesh : Mesh
        The mesh as analysed (elements turned counter-clockwise where needed).
    u : ndarray, shape (n, 2)
        Displacements (ux, uy).
    reactions : ndarray, shape (n, 2)
        Support reactions K u - f (zero at unsupported nodes).
    applied : ndarray, shape (n, 2)
        Consistent nodal forces of the applied loads (thermal equivalents included).
    solver : str
        Back end that solved it.
    """

    def __init__(self, assembly, case: str, u, reactions, applied, initial_strains, *, solver="", timer=None,
                 solver_info=None):
        self.assembly = assembly
        self.model = assembly.model
        self.mesh = assembly.mesh
        self.case = case
        self.u = u
        self.reactions = reactions
        self.applied = applied
        self.solver = solver
        self.solver_info = solver_info or {}
        self.timer = timer
        self._e0 = initial_strains
        self._nodal_cache: dict[str, np.ndarray] = {}
        #: planar warnings raised while solving and checking this case (PlanarWarning objects)
        self.warnings: list = list(getattr(assembly, "warnings", None) or [])  # kept by the checks before the solve

    @property
    def n_dofs(self) -> int:
        return 2 * self.mesh.n_nodes

    @property
    def units(self) -> str:
        return self.model.units

    # ------------------------------------------------------------------ Gauss-point fields
    @cached_property
    def gauss(self) -> list[GaussField]:
        """Strain and stress at the Gauss points, one entry per block."""
        out = []
        nodes = self.mesh.nodes
        for b, e0 in zip(self.assembly.blocks, self._e0):
            rule = b.etype.default_rule() if b.rule_mode == "selective" else b.rule
            x, dv, _ = b.geometry(nodes, rule)
            strain = np.empty((b.n, rule.n_points, 3))

            def chunk(s: int, b=b, rule=rule, strain=strain):
                coords = nodes[b.conn[s : s + CHUNK]]
                ue = self.u[b.conn[s : s + CHUNK]].reshape(coords.shape[0], -1)
                strain[s : s + CHUNK] = element_strains(b.etype, coords, b.D, ue, rule)

            map_chunks(chunk, range(0, b.n, CHUNK))
            if e0 is not None:
                if e0.shape[1] != rule.n_points:
                    raise InputError("initial strains were given on another rule than the stress rule")
                mech = strain - self.assembly.effective_initial_strain(b, e0)
                e0zz = e0[..., 2]
            else:
                mech = strain
                e0zz = 0.0
            stress = np.einsum("ab,eqb->eqa", b.D, mech)
            szz = sigma_zz(b.material, self.model.analysis, stress, e0zz) if hasattr(b.material, "compliance3d") else np.zeros(stress.shape[:2])
            out.append(GaussField(b, rule, x, dv, strain, mech, stress, szz))
        return out

    def gauss_values(self, name: str) -> list[np.ndarray]:
        """A stress or strain field at the Gauss points, one (e, q) array per block."""
        if name in STRAIN_FIELDS:
            k = STRAIN_FIELDS.index(name)
            return [g.strain[..., k] for g in self.gauss]
        if name not in STRESS_FIELDS:
            raise InputError(f"unknown Gauss-point field {name!r}; pick one of {', '.join(STRESS_FIELDS + STRAIN_FIELDS)}")
        return [stress_measures(g.stress, g.szz)[name] for g in self.gauss]

    # ------------------------------------------------------------------ nodal fields
    def nodal_stress(self, method: str = "spr") -> tuple[np.ndarray, np.ndarray]:
        """Nodal (sigma_xx, sigma_yy, tau_xy) and sigma_zz, shape (n, 3) and (n,).

        Parameters
        ----------
        method : {"spr", "average"}
            ``"spr"`` (default): superconvergent patch recovery; ``"average"``: Gauss values
            extrapolated to each element's nodes and averaged over the elements that share a node.
            Both work region by region (no smoothing across a change of material or thickness); at
            an interface node the region with the larger von Mises stress gives the value
            (:func:`planar.post.recovery.recover`).
        """
        key = f"stress:{method}"
        if key not in self._nodal_cache:
            if method not in ("average", "spr"):
                raise InputError(f"unknown stress recovery {method!r}; pick 'spr' or 'average'")
            from ..post.recovery import recover  # noqa: the one deferred core -> post import

            vals = recover(self, method=method)
            self._nodal_cache[key] = vals
        v = self._nodal_cache[key]
        return v[:, :3], v[:, 3]

    def _average(self, getter: Callable) -> np.ndarray:
        n = self.mesh.n_nodes
        acc = None
        cnt = np.zeros(n)
        for g in self.gauss:
            vals = getter(g)  # (e, q, c)
            E = extrapolation_matrix(g.block.etype, g.rule)  # (k, q)
            nv = np.einsum("kq,eqc->ekc", E, vals)
            if acc is None:
                acc = np.zeros((n, vals.shape[-1]))
            np.add.at(acc, g.block.conn.ravel(), nv.reshape(-1, vals.shape[-1]))
            np.add.at(cnt, g.block.conn.ravel(), 1.0)
        with np.errstate(invalid="ignore", divide="ignore"):
            out = acc / cnt[:, None]
        out[cnt == 0] = 0.0
        return out

    def field(self, name: str, *, method: str = "spr") -> np.ndarray:
        """A nodal field by name.

        Parameters
        ----------
        name : str
            ``ux``, ``uy``, ``displacement`` (magnitude), a stress name (``sigma_xx``, ``sigma_yy``,
            ``tau_xy``, ``sigma_zz``, ``von_mises``, ``tresca``, ``sigma_1``, ``sigma_2``,
            ``principal_angle``) or a strain name (``eps_xx``, ``eps_yy``, ``gamma_xy``).
        method : {"spr", "average"}
            Stress recovery (see :meth:`nodal_stress`); SPR by default.

        Returns
        -------
        ndarray, shape (n,)
        """
        if name == "ux":
            return self.u[:, 0].copy()
        if name == "uy":
            return self.u[:, 1].copy()
        if name == "displacement":
            return np.hypot(self.u[:, 0], self.u[:, 1])
        if name in STRAIN_FIELDS:
            k = STRAIN_FIELDS.index(name)
            return self._average(lambda g: g.strain[..., k : k + 1])[:, 0]
        if name in STRESS_FIELDS:
            s, szz = self.nodal_stress(method)
            return stress_measures(s, szz)[name]
        raise InputError(f"unknown field {name!r}; pick one of {', '.join(FIELDS)}")

    # ------------------------------------------------------------------ queries
    def max(self, name: str = "von_mises", *, method: str = "spr", absolute: bool = False):
        """Largest value of a nodal field and where it occurs.

        Returns
        -------
        value : float
        location : (float, float)
        node : int
        """
        v = self.field(name, method=method)
        used = self.mesh.used_nodes()
        w = np.where(used, np.abs(v) if absolute else v, -np.inf)
        i = int(np.argmax(w))
        return float(v[i]), (float(self.mesh.nodes[i, 0]), float(self.mesh.nodes[i, 1])), i

    def min(self, name: str, *, method: str = "spr"):
        """Smallest value of a nodal field, with location and node."""
        v = self.field(name, method=method)
        used = self.mesh.used_nodes()
        i = int(np.argmin(np.where(used, v, np.inf)))
        return float(v[i]), (float(self.mesh.nodes[i, 0]), float(self.mesh.nodes[i, 1])), i

    def at(self, points, name: str, *, method: str = "spr") -> np.ndarray:
        """Values of a field at points inside the mesh, interpolated with the shape functions.

        Parameters
        ----------
        points : array_like, shape (p, 2) or (2,)

        Returns
        -------
        ndarray, shape (p,) (or a float for one point)

        Raises
        ------
        InputError
            If a point lies outside the mesh.
        """
        from .locate import locate

        pts = np.atleast_2d(np.asarray(points, dtype=float))
        v = self.field(name, method=method)
        blk, cell, xi = locate(self.mesh, pts)
        out = np.empty(pts.shape[0])
        for layout, conn in self.mesh.cells.items():
            sel = blk == layout
            if not np.any(sel):
                continue
            et = [b.etype for b in self.assembly.blocks if b.layout == layout][0]
            N = et.shape(xi[sel])
            out[sel] = np.einsum("pk,pk->p", N, v[conn[cell[sel]]])
        return out if np.ndim(points) > 1 else float(out[0])

    def along(self, start, end, name: str, *, n_points: int = 101, method: str = "spr"):
        """A field along the straight path from ``start`` to ``end``.

        Returns
        -------
        distance : ndarray, shape (p,)
        points : ndarray, shape (p, 2)
        values : ndarray, shape (p,)
        """
        if isinstance(n_points, bool) or not isinstance(n_points, (int, np.integer)) or n_points < 2:
            raise InputError(f"n_points must be a whole number of at least 2, got {n_points!r}")
        a, b = np.asarray(start, float), np.asarray(end, float)
        t = np.linspace(0.0, 1.0, int(n_points))
        pts = a + t[:, None] * (b - a)
        return t * np.hypot(*(b - a)), pts, self.at(pts, name, method=method)

    # ------------------------------------------------------------------ totals
    @property
    def strain_energy(self) -> float:
        """Strain energy 1/2 integral of sigma : (eps - eps0) dV."""
        return float(sum(0.5 * np.einsum("eqa,eqa,eq->", g.stress, g.mech_strain, g.dvol) for g in self.gauss))

    def total_reaction(self) -> np.ndarray:
        """Sum of the support reactions (Rx, Ry)."""
        return self.reactions.sum(axis=0)

    def total_applied(self) -> np.ndarray:
        """Sum of the applied nodal forces (Fx, Fy)."""
        return self.applied.sum(axis=0)

    def equilibrium_error(self) -> float:
        """|sum of reactions + sum of applied forces| relative to the largest of their magnitudes.

        Includes the moment about the centre of the nodes, scaled by the model size.

        Notes
        -----
        The scale is the largest of the total load, the total reaction, half the sum of the reaction
        magnitudes, half the sum of the applied nodal force magnitudes (self-balanced loads such as a
        free thermal expansion), and 1e-4 of the force level that the prescribed displacements stand
        for (largest D times thickness times the largest prescribed value). The last term only matters
        for a model moved as a rigid body by prescribed displacements with little or no load, whose
        reactions are then round-off of K times that motion (some 100 machine epsilons of it). The
        figure is :func:`planar.core.diagnose.equilibrium_errors`, which every solve checks.
        """
        from .diagnose import equilibrium_errors

        return float(equilibrium_errors(self.assembly, self.reactions[:, :, None], self.applied[:, :, None])[0])

    def summary(self) -> dict[str, Any]:
        vm, loc, _ = self.max("von_mises")
        return {
            "case": self.case,
            "dofs": self.n_dofs,
            "max_displacement": float(np.hypot(self.u[:, 0], self.u[:, 1]).max()),
            "peak_von_mises": vm,
            "peak_location": loc,
            "reaction": self.total_reaction().tolist(),
            "applied": self.total_applied().tolist(),
            "equilibrium_error": self.equilibrium_error(),
            "solver": self.solver,
            "warnings": [w.as_dict() for w in self.warnings],
        }


def as_result(obj: Any, where: str, *, also: str = "") -> "Result":
    """``obj`` if it is one load case's :class:`Result`, else an InputError saying what to pass.

    The one check used by every function that takes a result (checks, plots, VTK output, reports,
    error estimates, combinations), so that the dict :func:`planar.solve` returns, a Model or
    anything else gets the same fix.

    Parameters
    ----------
    obj : Any
        What the user passed.
    where : str
        The function's name for the message (e.g. ``"kt"``).
    also : str, optional
        Another accepted input, added to the message (e.g. ``"give the peak stress as a number"``).

    Returns
    -------
    Result

    Raises
    ------
    InputError
        Naming what was given and the fix, e.g. ``results['pull']`` with the case names of a dict.
    """
    if isinstance(obj, Result):
        return obj
    try:
        _refuse(obj, where)
    except InputError as exc:
        raise InputError(f"{exc}{'; or ' + also if also else ''}") from None
    return obj  # pragma: no cover - _refuse always raises


def _refuse(obj: Any, where: str) -> None:
    from collections.abc import Mapping

    fix = "pass one load case's result"
    if isinstance(obj, Mapping):
        names = [str(k) for k in obj]
        if names and all(isinstance(v, Result) for v in obj.values()):
            raise InputError(
                f"{where} takes one load case's Result, but got the dict of results that solve() returns "
                f"(cases {', '.join(map(repr, names))}); {fix}: results[{names[0]!r}]"
            )
        raise InputError(f"{where} takes one load case's Result, got a {type(obj).__name__} with keys "
                         f"{names[:5]}; {fix}, e.g. planar.solve(model)['case name']")
    if type(obj).__name__ == "Model" and hasattr(obj, "cases") and hasattr(obj, "mesh"):
        cases = list(getattr(obj, "cases", {}) or {})
        first = repr(cases[0]) if cases else "'case name'"
        raise InputError(f"{where} takes one load case's Result, got the Model itself; solve it first and "
                         f"{fix}: planar.solve(model)[{first}]")
    raise InputError(f"{where} takes one load case's Result (from planar.solve(model)['case name']), got "
                     f"{type(obj).__name__}")


def as_results(obj: Any, where: str) -> "dict[str, Result]":
    """``obj`` as a dict of name -> :class:`Result` (what :func:`planar.solve` returns), else an InputError.

    Parameters
    ----------
    obj : Any
        What the user passed.
    where : str
        The function's name for the message (e.g. ``"envelope"``).

    Raises
    ------
    InputError
        One Result, a Model, or a mapping holding something else, with the fix.
    """
    from collections.abc import Mapping

    if isinstance(obj, Mapping):
        for k, v in obj.items():
            if not isinstance(v, Result):
                raise InputError(f"{where}: results[{k!r}] is a {type(v).__name__}, not a planar Result; "
                                 "pass the dict planar.solve(model) returns (name -> Result)")
        return dict(obj)
    if isinstance(obj, Result):
        raise InputError(f"{where} takes the dict of results that solve() returns (name -> Result), got one "
                         f"Result (load case {obj.case!r}); pass planar.solve(model), or {{{obj.case!r}: result}}")
    if type(obj).__name__ == "Model" and hasattr(obj, "cases") and hasattr(obj, "mesh"):
        raise InputError(f"{where} takes the dict of results that solve() returns, got the Model itself; solve it "
                         "first: planar.solve(model)")
    raise InputError(f"{where} takes the dict of results that solve() returns (name -> Result), got "
                     f"{type(obj).__name__}")
