"""The answer for one load case: displacements, reactions, strains and stresses, derived fields.

Stresses live at the Gauss points of each element block; nodal fields are recovered on demand
(region-wise averaging or superconvergent patch recovery, :mod:`planar.core.recovery`).
Units are those of the model (e.g. N, mm, MPa).
"""
from __future__ import annotations

from dataclasses import dataclass
from functools import cached_property
from typing import Any, Callable, NamedTuple

import numpy as np

from .caseresult import CaseResult, as_result, as_results
from .compat import renamed_keywords
from .errors import InputError
from .fields import FIELD_TABLE, as_centre, names, polar_stress
from .recovery import METHODS, combine_regions, recover
from .stress import extrapolation_matrix, nodal_average, stress_at, stress_measures, stress_rule

__all__ = ["Result", "GaussField", "Extreme", "stress_measures", "FIELDS", "FIELD_TABLE", "extrapolation_matrix",
           "as_result", "as_results"]

#: fields a user can ask for by name (from the one table, :data:`planar.core.fields.FIELD_TABLE`)
STRESS_FIELDS = names(kind="stress")
STRAIN_FIELDS = names(kind="strain")
POLAR_FIELDS = names(kind="polar")
FIELDS = tuple(FIELD_TABLE)


class _ExtremeTuple(NamedTuple):
    value: float
    location: tuple[float, float]
    node: int


class Extreme(_ExtremeTuple):
    """The largest or smallest value of a nodal field (unpacks as ``value, location, node``).

    Attributes
    ----------
    value : float
    location : (float, float)
    node : int
    where : str
        Where it was looked for (``"everywhere"``, or the zone's description, e.g. ``"on edge 'fillet'"``).
    note : str
        Why the value is not the part's own when it sits next to an idealised support or concentrated load
        (:func:`planar.core.zones.idealised_reason`); ``""`` otherwise.
    """

    def __new__(cls, value: float, location: tuple[float, float], node: int, where: str = "everywhere",
                note: str = ""):
        self = super().__new__(cls, value, location, node)
        self.where = where
        self.note = note
        return self

    def __getnewargs__(self):
        return (self.value, self.location, self.node, self.where, self.note)


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


class Result(CaseResult):
    """Solution of one load case.

    With pins (:class:`planar.core.pins.Pin`), ``pin_forces`` (n, 2) holds the forces the pins exert on
    their edge nodes and ``pin_states`` each pin's figures; :meth:`support_reactions` reports them.

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
    def initial_strains(self) -> list:
        """The initial strains of this case, one entry per element block (None where there are none).

        Each entry is an array (e, q, 4) of (eps_xx, eps_yy, eps_zz, gamma_xy) at the points of the
        block's stress rule (e.g. a temperature change times the expansion coefficients). Stress
        recovery and load combinations read them here.
        """
        return list(self._e0) if self._e0 is not None else [None] * len(self.assembly.blocks)

    @property
    def n_dofs(self) -> int:
        return 2 * self.mesh.n_nodes

    @property
    def units(self) -> str:
        return self.model.units

    @property
    def unit_system(self):
        """The model's :class:`~planar.core.units.UnitSystem`."""
        return self.model.unit_system

    # ------------------------------------------------------------------ Gauss-point fields
    @cached_property
    def gauss(self) -> list[GaussField]:
        """Strain and stress at the Gauss points, one entry per block."""
        out = []
        nodes = self.mesh.nodes
        for b, e0 in zip(self.assembly.blocks, self._e0):
            rule = stress_rule(b)
            x, dv, _ = b.geometry(nodes, rule)
            if e0 is not None:
                if e0.shape[1] != rule.n_points:
                    raise InputError("initial strains were given on another rule than the stress rule")
                at = stress_at(b, nodes, self.u, rule, analysis=self.model.analysis,
                               initial_strain=self.assembly.effective_initial_strain(b, e0), initial_zz=e0[..., 2])
            else:
                at = stress_at(b, nodes, self.u, rule, analysis=self.model.analysis)
            out.append(GaussField(b, rule, x, dv, at.strain, at.mech_strain, at.stress, at.szz))
        return out

    @renamed_keywords(name="field")
    def gauss_values(self, field: str) -> list[np.ndarray]:
        """A stress or strain field at the Gauss points, one (e, q) array per block."""
        if field in STRAIN_FIELDS:
            k = STRAIN_FIELDS.index(field)
            return [g.strain[..., k] for g in self.gauss]
        if field not in STRESS_FIELDS:
            raise InputError(f"unknown Gauss-point field {field!r}; pick one of {', '.join(STRESS_FIELDS + STRAIN_FIELDS)}")
        return [stress_measures(g.stress, g.szz)[field] for g in self.gauss]

    # ------------------------------------------------------------------ nodal fields
    @renamed_keywords(method="recovery")
    def nodal_stress(self, recovery: str = "spr") -> tuple[np.ndarray, np.ndarray]:
        """Nodal (sigma_xx, sigma_yy, tau_xy) and sigma_zz, shape (n, 3) and (n,).

        Parameters
        ----------
        recovery : {"spr", "average"}
            ``"spr"`` (default): superconvergent patch recovery; ``"average"``: Gauss values
            extrapolated to each element's nodes and averaged over the elements that share a node.
            Both work region by region (no smoothing across a change of material or thickness); at
            an interface node the region with the larger von Mises stress gives the value
            (:func:`planar.core.recovery.recover`).
        """
        key = f"stress:{recovery}"
        if key not in self._nodal_cache:
            if recovery not in METHODS:
                raise InputError(f"unknown stress recovery {recovery!r}; pick one of {', '.join(METHODS)}")
            # from the per-region values, kept for a peak read in one region (:meth:`_own_side`)
            self._nodal_cache[key] = combine_regions(self._per_region(recovery), self.mesh.n_nodes)
        v = self._nodal_cache[key]
        return v[:, :3], v[:, 3]

    def _per_region(self, recovery: str) -> dict[str, np.ndarray]:
        """Nodal stresses recovered region by region (NaN outside each), recovered once per method."""
        key = f"stress:{recovery}:per-region"
        if key not in self._nodal_cache:
            self._nodal_cache[key] = recover(self, recovery=recovery, per_region=True)
        return self._nodal_cache[key]

    def _average(self, getter: Callable) -> np.ndarray:
        """Gauss values (getter(g): (e, q, c)) averaged at the nodes; zero where no element is."""
        return nodal_average(self.mesh.n_nodes, ((g.block.etype, g.rule, g.block.conn, getter(g)) for g in self.gauss),
                             empty=0.0)

    @renamed_keywords(name="field", method="recovery")
    def field(self, field: str, *, recovery: str = "spr", centre=None) -> np.ndarray:
        """A nodal field by name.

        Parameters
        ----------
        field : str
            ``ux``, ``uy``, ``displacement`` (magnitude), a stress name (``sigma_xx``, ``sigma_yy``,
            ``tau_xy``, ``sigma_zz``, ``von_mises``, ``tresca``, ``sigma_1``, ``sigma_2``,
            ``principal_angle``), a strain name (``eps_xx``, ``eps_yy``, ``gamma_xy``) or a polar
            stress about ``centre`` (``sigma_r`` radial, ``sigma_theta`` hoop, ``tau_r_theta``).
        recovery : {"spr", "average"}
            Stress recovery (see :meth:`nodal_stress`); SPR by default.
        centre : (float, float), optional
            Origin of the polar axes, needed by the polar fields (e.g. the centre of a hole).

        Returns
        -------
        ndarray, shape (n,)

        Raises
        ------
        InputError
            An unknown field, or a polar field without a centre.
        """
        name = field
        if name in POLAR_FIELDS:
            c = as_centre(centre, f"the polar field {name!r}")
            return polar_stress(self.nodal_stress(recovery)[0], self.mesh.nodes, c)[name]
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
            s, szz = self.nodal_stress(recovery)
            return stress_measures(s, szz)[name]
        raise InputError(f"unknown field {name!r}; pick one of {', '.join(FIELDS)}")

    # ------------------------------------------------------------------ queries
    def _extreme(self, v: np.ndarray, i: int, where: str = "everywhere", note: str = "") -> Extreme:
        return Extreme(float(v[i]), (float(self.mesh.nodes[i, 0]), float(self.mesh.nodes[i, 1])), i, where, note)

    def zone_mask(self, where) -> tuple[np.ndarray, str]:
        """(mask over the nodes, description) of a zone (:mod:`planar.core.zones`) or an edge/region name.

        Only nodes of cells count; an empty zone is an InputError naming it.
        """
        from .zones import as_zone

        used = self.mesh.used_nodes()
        zone = as_zone(where, self.mesh)
        if zone is None:
            return used, "everywhere"
        m = zone.mask(self) & used
        if not m.any():
            raise InputError(f"no node of the mesh lies {zone.describe()}: widen the zone or check its name and "
                             "coordinates")
        return m, zone.describe()

    def _peak(self, field: str, recovery: str, where, *, largest: bool, absolute: bool = False,
              centre=None) -> Extreme:
        from .zones import idealised_reason

        v = self.field(field, recovery=recovery, centre=centre)
        mask, said = self.zone_mask(where)
        v = self._own_side(v, field, recovery, centre, where)
        a = np.abs(v) if absolute else v
        i = int(np.argmax(np.where(mask, a, -np.inf))) if largest else int(np.argmin(np.where(mask, a, np.inf)))
        note = ""
        info = FIELD_TABLE.get(field)
        # a smallest (most compressive) value is flagged on its magnitude, the same way; the smallest
        # of a measure that is never negative (von Mises, displacement) is no peak and is not flagged
        judged = largest or (not absolute and (info is None or info.signed))
        if judged:
            note = idealised_reason(self, i, a if largest else -a, mask, sign_of_values=1.0 if largest else -1.0)
        from ._advice_linear import has_linear, linear_peak

        if has_linear(self):  # linear elements under-read a peak at a hole or fillet: say so
            linear_peak(self, i, field, v, stacklevel=4)
        if judged:
            from ._advice_corner import sharp_corner_peak
            from ._advice_interface import interface_edge_peak

            sharp_corner_peak(self, i, field, v, stacklevel=4)  # a singular peak has no converged value
            interface_edge_peak(self, i, field, v, stacklevel=4)  # nor one where an interface meets the edge
            if not note:  # a peak made by an idealisation is not refined away: not judged for resolution
                from ._advice_peak import coarse_peak

                coarse_peak(self, i, field, v, centre=centre, stacklevel=4)  # is the mesh fine enough there?
        return self._extreme(v, i, said, note)

    def _own_side(self, v: np.ndarray, field: str, recovery: str, centre, where) -> np.ndarray:
        """``v`` with a region's own recovered stresses on its nodes when ``where`` is that region.

        The nodal field gives an interface node the value of the side with the larger von Mises stress;
        a peak read in one region (a doubler, a boss of another material) is that region's own.
        """
        from .zones import InRegion, as_zone

        zone = as_zone(where, self.mesh)
        if not isinstance(zone, InRegion) or (field not in STRESS_FIELDS and field not in POLAR_FIELDS):
            return v
        blocks = getattr(getattr(self, "assembly", None), "blocks", None) or ()
        regions = {getattr(b, "region", None) for b in blocks}
        if len(regions) < 2 or zone.name not in regions:
            return v
        own = self._per_region(recovery)[zone.name]
        inside = np.all(np.isfinite(own), axis=1)
        if field in POLAR_FIELDS:
            mine = polar_stress(own[inside, :3], self.mesh.nodes[inside], as_centre(centre))[field]
        else:
            mine = stress_measures(own[inside, :3], own[inside, 3])[field]
        out = np.array(v, dtype=float, copy=True)
        out[inside] = mine
        return out

    @renamed_keywords(name="field", method="recovery")
    def max(self, field: str = "von_mises", *, recovery: str = "spr", absolute: bool = False,
            where=None, centre=None) -> Extreme:
        """Largest value of a nodal field and where it occurs.

        Parameters
        ----------
        field : str, default "von_mises"
        recovery : {"spr", "average"}
        absolute : bool
            The largest magnitude instead of the largest signed value (the value keeps its sign).
        where : str or Zone, optional
            Read the peak only here: the name of an edge or region, or a zone of
            :mod:`planar.core.zones` (``OnEdge``, ``InRegion``, ``InCircle``, ``InBox``, ``Near``,
            ``Outside``, ``Away``, combined with ``&``). Default: everywhere.
        centre : (float, float), optional
            The centre of the polar fields (``sigma_r``, ``sigma_theta``, ``tau_r_theta``).

        Returns
        -------
        Extreme
            ``(value, location, node)``; unpacks as a tuple. Its ``where`` says where it was looked
            for, and its ``note`` why the value is not the part's own when it sits next to an
            idealised support or concentrated load (``""`` otherwise); Kt, margins and the report
            print the note beside the value.
        """
        return self._peak(field, recovery, where, largest=True, absolute=absolute, centre=centre)

    @renamed_keywords(name="field", method="recovery")
    def min(self, field: str, *, recovery: str = "spr", where=None, centre=None) -> Extreme:
        """Smallest value of a nodal field, with location and node (an :class:`Extreme`); ``where`` and
        ``centre`` as in :meth:`max`."""
        return self._peak(field, recovery, where, largest=False, centre=centre)

    @renamed_keywords(name="field", method="recovery")
    def at(self, points, field: str, *, recovery: str = "spr", centre=None) -> np.ndarray:
        """Values of a field at points inside the mesh, interpolated with the shape functions.

        Parameters
        ----------
        points : array_like, shape (p, 2) or (2,)
        field : str
            A name of :meth:`field`.
        recovery : {"spr", "average"}
        centre : (float, float), optional
            Origin of the polar axes for ``sigma_r``, ``sigma_theta`` and ``tau_r_theta`` (the
            Cartesian stresses are interpolated, then turned at each point).

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
        if field in POLAR_FIELDS:
            c = as_centre(centre, f"the polar field {field!r}")
            v = self.nodal_stress(recovery)[0]
        else:
            v = self.field(field, recovery=recovery)
        blk, cell, xi = locate(self.mesh, pts)
        out = np.empty((pts.shape[0],) + v.shape[1:])
        for layout, conn in self.mesh.cells.items():
            sel = blk == layout
            if not np.any(sel):
                continue
            et = [b.etype for b in self.assembly.blocks if b.layout == layout][0]
            N = et.shape(xi[sel])
            out[sel] = np.einsum("pk,pk...->p...", N, v[conn[cell[sel]]])
        if field in POLAR_FIELDS:
            out = polar_stress(out, pts, c)[field]
        return out if np.ndim(points) > 1 else float(out[0])

    @renamed_keywords(name="field", method="recovery")
    def along(self, start, end, field: str, *, n_points: int = 101, recovery: str = "spr", centre=None):
        """A field along the straight path from ``start`` to ``end`` (``centre``: as for :meth:`at`).

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
        return t * np.hypot(*(b - a)), pts, self.at(pts, field, recovery=recovery, centre=centre)

    # ------------------------------------------------------------------ totals
    @property
    def strain_energy(self) -> float:
        """Strain energy 1/2 integral of sigma : (eps - eps0) dV."""
        return float(sum(0.5 * np.einsum("eqa,eqa,eq->", g.stress, g.mech_strain, g.dvol) for g in self.gauss))

    #: forces the pins exert on their edge nodes (n, 2), None without pins
    pin_forces = None
    #: each pin's figures in this case (planar.core._tying.PinState), None without pins
    pin_states = None
    #: each contact pin's state in this case (planar.core.contact.ContactState) by pin name; empty without
    #: contact pins (a read-only mapping; a solve with contact sets a dict)
    contact_states = __import__("types").MappingProxyType({})

    def total_reaction(self) -> np.ndarray:
        """Sum of the support reactions and the pins' reactions (Rx, Ry)."""
        r = self.reactions.sum(axis=0)
        for st in self.pin_states or []:
            r = r + np.asarray(st["reaction"][:2])
        return r

    def total_applied(self) -> np.ndarray:
        """Sum of the applied nodal forces and the loads on pins (Fx, Fy)."""
        f = self.applied.sum(axis=0)
        for st in self.pin_states or []:
            f = f + np.asarray(st["load"][:2])
        return f

    def support_reactions(self, about=(0.0, 0.0)) -> list:
        """The force and moment each support and each pin exerts on the part.

        Parameters
        ----------
        about : (x, y) or "own"
            The point moments are taken about: the origin by default (then the supports' forces and
            moments, the pins' reactions and the applied loads, the pins' loads among them, add up to
            zero), or ``"own"``: each support about the centre of the nodes it holds, each pin about
            its reference point.

        Returns
        -------
        list of planar.core.reactions.Reaction
            name, kind, force (Rx, Ry), moment, about; pins also load, reaction and motion.
        """
        from .reactions import support_reactions

        return support_reactions(self, about)

    def total_moment(self, about=(0.0, 0.0)) -> tuple[float, float]:
        """(moment of the applied loads, moment of the reactions) about a point, pins' loads and reactions included."""
        a = np.asarray(about, dtype=float)
        x = self.mesh.nodes - a
        ma = float(x[:, 0] @ self.applied[:, 1] - x[:, 1] @ self.applied[:, 0])
        mr = float(x[:, 0] @ self.reactions[:, 1] - x[:, 1] @ self.reactions[:, 0])
        for st in self.pin_states or []:
            p = np.asarray(st["point"]) - a
            for part, sign in ((st["load"], "a"), (st["reaction"], "r")):
                m = part[2] + float(p[0] * part[1] - p[1] * part[0])
                if sign == "a":
                    ma += m
                else:
                    mr += m
        return ma, mr

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

        R = self.reactions if self.pin_forces is None else self.reactions + self.pin_forces
        return float(equilibrium_errors(self.assembly, R[:, :, None], self.applied[:, :, None])[0])

    def summary(self) -> dict[str, Any]:
        peak = self.max("von_mises")
        vm, loc, _ = peak
        return {
            "case": self.case,
            "units": self.unit_system.as_dict(),  # the system's name and the unit of each quantity
            "dofs": self.n_dofs,
            "max_displacement": float(np.hypot(self.u[:, 0], self.u[:, 1]).max()),
            "peak_von_mises": vm,
            "peak_location": loc,
            "peak_note": peak.note,
            "reaction": self.total_reaction().tolist(),
            "applied": self.total_applied().tolist(),
            "equilibrium_error": self.equilibrium_error(),
            "support_reactions": [r.as_dict() for r in self.support_reactions()],
            **({"contact": {k: v.as_dict() for k, v in self.contact_states.items()}} if self.contact_states else {}),
            "solver": self.solver,
            "warnings": [w.as_dict() for w in self.warnings],
        }
