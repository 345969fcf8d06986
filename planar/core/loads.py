"""Load kinds (natural conditions): traction, pressure, point force, body force, gravity, temperature change.

Every load kind, built-in or plugin, is a class registered in the ``planar.loads`` entry-point group.
An instance knows where it acts (a named edge, point or region) and turns itself into consistent
nodal forces through :meth:`LoadKind.nodal_forces`, given a :class:`LoadContext` that exposes the
geometry and integrates with Gauss quadrature on the element's own edge or cell shape functions.

Units are the user's: tractions and pressures in force per area, point forces in force, body forces
in force per volume, temperature changes in the unit of the material's alpha.
"""
from __future__ import annotations

import warnings
from dataclasses import dataclass
from typing import Any, Callable, ClassVar, Union

import numpy as np

from .values import number_or_function, thermal_expansion
from .errors import InputError, MeshError, PlanarError, PluginError, fmt_point
from .elements import line_shape
from .quadrature import gauss_line
from .units import gravity_vector, unit_direction
from ._load_guards import NAME_WORDS, _TEXT_HOOKS, _guarded_init, _guarded_text_hook, checked_names  # noqa: F401

__all__ = [
    "LoadKind",
    "LoadContext",
    "NAME_WORDS",
    "checked_names",
    "EdgeGeometry",
    "Traction",
    "Pressure",
    "PointForce",
    "BodyForce",
    "Gravity",
    "TemperatureChange",
]

Value = Union[float, Callable[[np.ndarray, np.ndarray], np.ndarray]]


def call_function(name: str, fn: Callable, x: np.ndarray, y: np.ndarray) -> np.ndarray:
    """Call a user function f(x, y) on arrays and return finite real values of the shape of x.

    Every way the function can fail (it raises, returns something that is not a number, an array of
    another shape, complex, NaN or infinite values) ends in an :class:`InputError` that names ``name``.
    """
    shape = np.shape(x)
    try:
        with np.errstate(all="ignore"):
            raw = fn(x, y)
    except Exception as exc:
        raise InputError(
            f"{name}: the function f(x, y) raised {type(exc).__name__}: {exc}; it is called with numpy "
            f"arrays x, y of shape {shape} and must return numbers of that shape (or one number)"
        ) from exc
    try:
        arr = np.asarray(raw)
        if np.iscomplexobj(arr):
            raise InputError(f"{name}: the function f(x, y) returned complex values; return real numbers")
        out = np.broadcast_to(arr.astype(float), shape)
    except PlanarError:
        raise
    except (TypeError, ValueError) as exc:
        got = f"shape {np.shape(raw)}" if isinstance(raw, np.ndarray) else repr(raw)[:60]
        raise InputError(
            f"{name}: the function f(x, y) must return numbers of shape {shape} (or one number), "
            f"got {got} ({exc})"
        ) from None
    if not np.all(np.isfinite(out)):
        i = int(np.flatnonzero(~np.isfinite(out.ravel()))[0])
        at = f" (first at ({np.ravel(x)[i]:.6g}, {np.ravel(y)[i]:.6g}))" if np.size(x) else ""
        raise InputError(f"{name} evaluates to NaN or infinite values on the mesh{at}; check the function")
    return out


def _fmt(v) -> str:
    """A value for descriptions: numbers to 6 significant digits, functions by name."""
    if v is None:
        return "None"
    if callable(v):
        return f"f(x, y) {getattr(v, '__name__', '')}".rstrip()
    return f"{float(v):.6g}"


def _evaluate(name: str, v: Value | None, x: np.ndarray) -> np.ndarray:
    """Evaluate a constant or a function f(x, y) at points x (..., 2)."""
    if v is None:
        return np.zeros(x.shape[:-1])
    if callable(v):
        return call_function(name, v, x[..., 0], x[..., 1])
    out = np.full(x.shape[:-1], float(v))
    if not np.all(np.isfinite(out)):
        raise InputError(f"{name} evaluates to NaN or infinite values on the mesh; check the function")
    return out


@dataclass
class EdgeGeometry:
    """A named edge set seen from the cells it bounds.

    Attributes
    ----------
    name : str
    nodes : ndarray, shape (m, 2 or 3)
        Node numbers (start, end[, middle]), oriented counter-clockwise around the owning cell, so the
        outward normal is the tangent turned clockwise.
    coords : ndarray, shape (m, 2 or 3, 2)
    thickness : ndarray, shape (m,)
        Thickness of the cell each segment belongs to.
    """

    name: str
    nodes: np.ndarray
    coords: np.ndarray
    thickness: np.ndarray

    def gauss(self, n_points: int | None = None):
        """Quadrature data on the segments.

        Returns
        -------
        x : ndarray, shape (m, q, 2)
            Gauss point coordinates.
        normal : ndarray, shape (m, q, 2)
            Unit outward normal.
        wdl : ndarray, shape (m, q)
            Weight times length element times thickness (area element for tractions).
        N : ndarray, shape (q, nn)
            Edge shape functions.
        """
        nn = self.nodes.shape[1]
        q = n_points or (3 if nn == 2 else 4)
        rule = gauss_line(q)
        N, dN = line_shape(nn, rule.points[:, 0])
        x = np.einsum("qa,mai->mqi", N, self.coords)
        tang = np.einsum("qa,mai->mqi", dN, self.coords)
        jac = np.linalg.norm(tang, axis=-1)
        if np.any(jac <= 0):
            raise MeshError(f"edge set {self.name!r} has segments of zero length")
        normal = np.stack([tang[..., 1], -tang[..., 0]], axis=-1) / jac[..., None]
        wdl = rule.weights[None, :] * jac * self.thickness[:, None]
        return x, normal, wdl, N

    def length(self) -> float:
        x, n, wdl, N = self.gauss()
        return float(np.sum(wdl / self.thickness[:, None]))


class LoadContext:
    """What a load kind sees of the model: geometry by name, materials by region, and consistent integration.

    Built by the assembly; a plugin uses its methods and never the assembly's internals.

    Parameters
    ----------
    mesh : Mesh
    analysis : {"plane stress", "plane strain"}
    edge_owner : callable
        ``edge_owner(name) -> EdgeGeometry``.
    cell_blocks : callable
        ``cell_blocks(region or None) -> list`` of block views (``conn``, ``N``, ``x_gauss``,
        ``dvol``, ``region``, ``material``).
    material_of : callable, optional
        ``material_of(region) -> material``; by default read from the region's cell blocks.
    units : UnitSystem, optional
        The model's unit system (:mod:`planar.core.units`, e.g. for the standard g), if known.
    """

    def __init__(self, mesh, analysis: str, edge_owner: Callable[[str], EdgeGeometry],
                 cell_blocks: Callable[[str | None], list], material_of: Callable[[str], Any] | None = None,
                 units=None):
        self.mesh = mesh
        self.analysis = analysis
        self.units = units
        self._edge_owner = edge_owner
        self._cell_blocks = cell_blocks
        self._material_of = material_of

    def material_of(self, region: str):
        """The material of a named region (a body force from its density, say).

        Raises
        ------
        NameNotFoundError
            For a region the mesh does not have (listing those it has).
        """
        if self._material_of is not None:
            return self._material_of(region)
        blocks = self._cell_blocks(region)
        if not blocks:
            raise InputError(f"region {region!r} has no cells, so no material")
        return blocks[0].material

    @property
    def n_nodes(self) -> int:
        return self.mesh.n_nodes

    def edge(self, name: str) -> EdgeGeometry:
        """Geometry of a named edge set, oriented with outward normals."""
        return self._edge_owner(name)

    def point(self, name: str) -> int:
        """Node number of a named single point."""
        ids = self.mesh.nodes_of(name)
        if ids.size != 1:
            raise InputError(
                f"{name!r} holds {ids.size} nodes; a point force needs a named single point "
                "(use a traction for a load spread along an edge)"
            )
        return int(ids[0])

    def integrate_traction(self, name: str, traction: Callable[[np.ndarray, np.ndarray], np.ndarray],
                           n_points: int | None = None) -> np.ndarray:
        """Consistent nodal forces of a traction on a named edge.

        Parameters
        ----------
        traction : callable
            ``traction(x, normal) -> t`` with x, normal of shape (m, q, 2) and t of shape (m, q, 2),
            force per unit area in global components.

        Returns
        -------
        ndarray, shape (n_nodes, 2)
            f_a = sum over segments of sum_q N_a(t_q) t(x_q) w_q |dx/dt| thickness.
        """
        eg = self.edge(name)
        x, normal, wdl, N = eg.gauss(n_points)
        t = np.asarray(traction(x, normal), dtype=float)
        if t.shape != x.shape:
            raise InputError(f"a traction function must return shape {x.shape}, got {t.shape}")
        if not np.all(np.isfinite(t)):
            raise InputError(f"the traction on {name!r} has NaN or infinite values")
        fe = np.einsum("qa,mqi,mq->mai", N, t, wdl)
        out = np.zeros((self.n_nodes, 2))
        np.add.at(out, eg.nodes.ravel(), fe.reshape(-1, 2))
        return out

    def integrate_body(self, region: str | None, body: Callable[[np.ndarray], np.ndarray]) -> np.ndarray:
        """Consistent nodal forces of a force per unit volume over a region (all cells if None).

        Parameters
        ----------
        body : callable
            ``body(x) -> b`` with x of shape (e, q, 2) and b of shape (e, q, 2).
        """
        out = np.zeros((self.n_nodes, 2))
        for blk in self._cell_blocks(region):
            b = np.asarray(body(blk.x_gauss), dtype=float)
            if b.shape != blk.x_gauss.shape:
                raise InputError(f"a body-force function must return shape {blk.x_gauss.shape}, got {b.shape}")
            if not np.all(np.isfinite(b)):
                raise InputError("the body force has NaN or infinite values")
            fe = np.einsum("qa,eqi,eq->eai", blk.N, b, blk.dvol)
            np.add.at(out, blk.conn.ravel(), fe.reshape(-1, 2))
        return out

    def cell_blocks(self, region: str | None):
        """Per cell block of a region: conn, N, x_gauss (e, q, 2), dvol (e, q) = w detJ t, cells."""
        return self._cell_blocks(region)


class _OldNameWord:
    """``kind``, the former name of a load kind's ``name`` attribute."""

    def __get__(self, obj, owner) -> str:
        warnings.warn(f"load kind {owner.__name__}: the attribute `kind` is now `name`; the old word works for "
                      "one release", DeprecationWarning, stacklevel=2)
        return owner.name


class LoadKind:
    """Base of every load kind.

    A subclass sets ``name`` (its registered name, the entry-point name, as for element types) and
    implements :meth:`nodal_forces`; a thermal-type load also implements :meth:`initial_strain`.
    ``kind`` is the deprecated former spelling of ``name`` (a subclass that sets it still works, with
    a DeprecationWarning).
    """

    name: ClassVar[str] = ""
    kind = _OldNameWord()

    def __init_subclass__(cls, **kwargs) -> None:
        super().__init_subclass__(**kwargs)
        own = cls.__dict__
        if "kind" in own and "name" not in own:
            warnings.warn(f"load kind {own['kind']!r}: the class attribute `kind` is now `name`; the old word works "
                          "for one release", DeprecationWarning, stacklevel=2)
            cls.name = own["kind"]
        if "__init__" in own and not cls.__module__.startswith("planar.") and \
                not getattr(own["__init__"], "_planar_guarded", False):
            cls.__init__ = _guarded_init(own["__init__"])  # a plugin's parameters, refused in planar's words
        for hook in _TEXT_HOOKS:  # a load kind's own plain-words hooks, guarded wherever they are called
            fn = own.get(hook)
            if callable(fn) and not getattr(fn, "_planar_guarded", False):
                setattr(cls, hook, _guarded_text_hook(fn, hook))

    def nodal_forces(self, ctx: LoadContext) -> np.ndarray:
        """Consistent nodal forces, shape (n_nodes, 2)."""
        raise NotImplementedError

    def initial_strain(self, ctx: LoadContext, block) -> np.ndarray | None:
        """Initial strain (xx, yy, zz, xy-engineering) at the block's Gauss points, (e, q, 4), or None."""
        return None

    def names_used(self) -> list[tuple[str, str]]:
        """(word, name) pairs this load refers to, checked against the mesh when added.

        The word is one of :data:`NAME_WORDS`: ``"edge"``, ``"point"``, ``"node set"``, ``"region"``.
        """
        return []

    def describe(self) -> str:
        return self.name

    def concentrated_nodes(self, mesh) -> np.ndarray:
        """Nodes where this load is concentrated (a point force): peaks next to them are flagged as made by
        the idealisation (:mod:`planar.core.zones`). Distributed loads return no nodes."""
        return np.zeros(0, dtype=np.int64)


class Traction(LoadKind):
    """Distributed force per unit area on a named edge.

    Parameters
    ----------
    where : str
        Edge name.
    tx, ty : float or callable f(x, y), optional
        Global components.
    normal, tangential : float or callable f(x, y), optional
        Components along the outward normal (positive pulls outward, tension) and along the tangent
        (the normal turned counter-clockwise). Give either (tx, ty) or (normal, tangential).

    Examples
    --------
    >>> Traction("right", tx=100.0)            # 100 MPa tension on the right edge
    Traction('right', tx=100, ty=None)
    """

    name = "traction"

    def __init__(self, where: str, tx: Value | None = None, ty: Value | None = None, *,
                 normal: Value | None = None, tangential: Value | None = None):
        if (tx is not None or ty is not None) and (normal is not None or tangential is not None):
            raise InputError("give a traction either by global components (tx, ty) or by "
                             "(normal, tangential), not both")
        if all(v is None for v in (tx, ty, normal, tangential)):
            raise InputError(f"the traction on {where!r} has no value: give tx/ty or normal/tangential")
        self.where = str(where)
        self.tx = number_or_function(tx, "tx")
        self.ty = number_or_function(ty, "ty")
        self.normal = number_or_function(normal, "normal")
        self.tangential = number_or_function(tangential, "tangential")

    def __repr__(self) -> str:
        if self.normal is not None or self.tangential is not None:
            return f"Traction({self.where!r}, normal={_fmt(self.normal)}, tangential={_fmt(self.tangential)})"
        return f"Traction({self.where!r}, tx={_fmt(self.tx)}, ty={_fmt(self.ty)})"

    def names_used(self):
        return [("edge", self.where)]

    def traction(self, x: np.ndarray, n: np.ndarray) -> np.ndarray:
        if self.normal is not None or self.tangential is not None:
            tn = _evaluate("normal traction", self.normal, x)
            tt = _evaluate("tangential traction", self.tangential, x)
            tvec = np.stack([-n[..., 1], n[..., 0]], axis=-1)
            return tn[..., None] * n + tt[..., None] * tvec
        return np.stack([_evaluate("tx", self.tx, x), _evaluate("ty", self.ty, x)], axis=-1)

    def nodal_forces(self, ctx):
        return ctx.integrate_traction(self.where, self.traction)

    def describe(self):
        return repr(self)


class Pressure(LoadKind):
    """Pressure normal to a named edge, positive pushing into the material.

    Parameters
    ----------
    where : str
        Edge name.
    p : float or callable f(x, y)
        Pressure (force per area); positive acts inward (compression), negative is suction.
    """

    name = "pressure"

    def __init__(self, where: str, p: Value):
        self.where = str(where)
        self.p = number_or_function(p, "pressure p")
        if self.p is None:
            raise InputError("a pressure needs a value p")

    def __repr__(self):
        return f"Pressure({self.where!r}, p={_fmt(self.p)})"

    def names_used(self):
        return [("edge", self.where)]

    def nodal_forces(self, ctx):
        return ctx.integrate_traction(
            self.where, lambda x, n: -_evaluate("pressure", self.p, x)[..., None] * n
        )

    def describe(self):
        return repr(self)


class PointForce(LoadKind):
    """A concentrated force at a named point (or at the node nearest to given coordinates).

    Parameters
    ----------
    where : str or (x, y)
        Point name, or coordinates: the nearest node must then lie within 1e-6 of the model size.
    fx, fy : float
        Force components.

    Notes
    -----
    A point force gives an infinite stress under it in 2D elasticity (Flamant's solution); read the
    stresses away from its point of action.
    """

    name = "point-force"

    def __init__(self, where, fx: float = 0.0, fy: float = 0.0):
        if isinstance(where, str):
            self.where = where
        else:
            try:
                xy = np.asarray(where, dtype=float).reshape(-1)
            except (TypeError, ValueError):
                xy = np.zeros(0)
            if xy.shape != (2,) or not np.all(np.isfinite(xy)):
                raise InputError(
                    f"a point force acts at a named point or at coordinates (x, y) of finite numbers, got {where!r}"
                )
            self.where = (float(xy[0]), float(xy[1]))
        self.fx = number_or_function(fx, "fx")
        self.fy = number_or_function(fy, "fy")
        if callable(self.fx) or callable(self.fy):
            raise InputError("a point force takes numbers fx, fy, not functions")

    def __repr__(self):
        return f"PointForce({self.where!r}, fx={_fmt(self.fx)}, fy={_fmt(self.fy)})"

    def names_used(self):
        return [("point", self.where)] if isinstance(self.where, str) else []

    def node(self, ctx) -> int:
        if isinstance(self.where, str):
            return ctx.point(self.where)
        i = ctx.mesh.nearest_node(self.where)
        d = float(np.hypot(*(ctx.mesh.nodes[i] - np.asarray(self.where))))
        if d > 1e-6 * ctx.mesh.size():
            raise InputError(
                f"no node at {fmt_point(self.where)}: the nearest is {d:g} away at {fmt_point(ctx.mesh.nodes[i])}; "
                "add a named point to the geometry there"
            )
        return i

    def nodal_forces(self, ctx):
        out = np.zeros((ctx.n_nodes, 2))
        out[self.node(ctx)] = (self.fx, self.fy)
        return out

    def concentrated_nodes(self, mesh) -> np.ndarray:
        if isinstance(self.where, str):
            return np.asarray(mesh.nodes_of(self.where), dtype=np.int64)
        return np.array([mesh.nearest_node(self.where)], dtype=np.int64)

    def describe(self):
        return repr(self)


class BodyForce(LoadKind):
    """Force per unit volume over a region (all of the plate when ``region`` is None).

    Parameters
    ----------
    bx, by : float or callable f(x, y)
        Components, force per volume (e.g. density times acceleration).
    region : str, optional
    """

    name = "body-force"

    def __init__(self, bx: Value = 0.0, by: Value = 0.0, region: str | None = None):
        self.bx = number_or_function(bx, "bx")
        self.by = number_or_function(by, "by")
        self.region = region

    def __repr__(self):
        return f"BodyForce(bx={_fmt(self.bx)}, by={_fmt(self.by)}, region={self.region!r})"

    def names_used(self):
        return [("region", self.region)] if self.region is not None else []

    def nodal_forces(self, ctx):
        return ctx.integrate_body(
            self.region, lambda x: np.stack([_evaluate("bx", self.bx, x), _evaluate("by", self.by, x)], -1)
        )

    def describe(self):
        return repr(self)


class Gravity(LoadKind):
    """The weight of the part: rho g over every region, rho from the region's material ``density``.

    Parameters
    ----------
    gx, gy : float
        The acceleration of gravity (a vector), in the length unit of the model per second squared.
    regions : str or sequence of str, optional
        Only these regions carry their weight. By default every region does, and each must have a
        material with a density.
    direction : (float, float), optional
        Instead of gx, gy: where gravity pulls, e.g. ``(0, -1)``, with the standard g (9.80665 m/s^2)
        in the model's unit system (:mod:`planar.core.units`); refused when the model states none.

    Notes
    -----
    Units are the user's consistent system. In N, mm, MPa the density is in t/mm^3 (steel 7.85e-9)
    and g = 9806.65 mm/s^2, so ``Gravity(gy=-9806.65)`` pulls down; in N, m, Pa, kg/m^3 and 9.80665
    m/s^2. Each region's force per volume rho g is integrated as a :class:`BodyForce` (consistent
    nodal forces with the stiffness's own rule and thickness).

    Raises
    ------
    InputError
        A region carrying its weight without a (non-zero) density, naming it; ``direction=`` in a model
        that states no units; (gx, gy) one standard g in another length unit (9.81 in N, mm, MPa).

    Examples
    --------
    >>> Gravity(gy=-9810.0)
    Gravity(gx=0, gy=-9810, regions=None)
    >>> Gravity(direction=(0, -2))
    Gravity(direction=(0, -1), regions=None)
    """

    name = "gravity"

    def __init__(self, gx: float = 0.0, gy: float = 0.0, regions: str | list[str] | None = None, *,
                 direction=None):
        from .values import number

        self.gx = number(gx, "gravity gx")
        self.gy = number(gy, "gravity gy")
        self.direction = None if direction is None else unit_direction(direction, "gravity direction")
        if self.direction is not None and (self.gx != 0.0 or self.gy != 0.0):
            raise InputError("gravity: give direction= (the standard g of the model's units) or gx, gy, not both")
        if self.direction is None and self.gx == 0.0 and self.gy == 0.0:
            raise InputError("gravity needs a non-zero vector (gx, gy), e.g. gy=-9806.65 in N, mm, MPa (g in "
                             "mm/s^2), or direction=(0, -1) with the model's units stated")
        if isinstance(regions, str):
            regions = [regions]
        self.regions = None if regions is None else [str(r) for r in regions]
        if self.regions is not None and not self.regions:
            raise InputError("gravity on no region: give regions=None (every region) or name some")

    def __repr__(self):
        d = self.direction
        g = f"direction=({_fmt(d[0])}, {_fmt(d[1])})" if d else f"gx={_fmt(self.gx)}, gy={_fmt(self.gy)}"
        return f"Gravity({g}, regions={self.regions!r})"

    def names_used(self):
        return [("region", r) for r in self.regions] if self.regions is not None else []

    def densities(self, ctx) -> dict[str, float]:
        """The density of each region that carries its weight (regions without cells left out)."""
        regions = self.regions if self.regions is not None else ctx.mesh.region_names()
        out = {}
        for r in regions:
            if not ctx.cell_blocks(r):
                continue
            mat = ctx.material_of(r)
            rho = getattr(mat, "density", None)
            try:
                rho = float(rho)
            except (TypeError, ValueError):
                rho = float("nan")
            if not (np.isfinite(rho) and rho > 0):
                what = "no density" if getattr(mat, "density", None) is None else f"density {rho:g}"
                raise InputError(
                    f"gravity: region {r!r} has a material with {what}, so no weight; give the material a density "
                    f"(e.g. Isotropic(..., density=7.85e-9) for steel in t/mm^3), or pass regions= naming the "
                    "regions that carry their weight"
                )
            out[r] = rho
        return out

    def nodal_forces(self, ctx):
        out = np.zeros((ctx.n_nodes, 2))
        gx, gy = gravity_vector(self.gx, self.gy, self.direction, ctx.units)
        for r, rho in self.densities(ctx).items():
            out += BodyForce(rho * gx, rho * gy, region=r).nodal_forces(ctx)
        return out

    def describe(self):
        return repr(self)


class TemperatureChange(LoadKind):
    """A temperature change from the stress-free state, as an initial (thermal) strain.

    Parameters
    ----------
    dT : float, callable f(x, y), or ndarray of shape (n_nodes,)
        Temperature change: uniform, a function of position, or given per node (interpolated with
        the element shape functions).
    region : str, optional
        Only this region is heated (all of the plate when None).

    Notes
    -----
    The initial strain is alpha dT in every normal direction (the material's alpha, or alpha1..3
    for an orthotropic material); stresses are D (eps - eps0). In plane strain the restrained
    out-of-plane expansion adds sigma_zz = nu (sigma_xx + sigma_yy) - E alpha dT.
    """

    name = "temperature-change"

    def __init__(self, dT, region: str | None = None):
        if isinstance(dT, np.ndarray):
            try:
                dT = np.asarray(dT, dtype=float)
            except (TypeError, ValueError):
                raise InputError(f"nodal temperature changes must be numbers, got an array of {dT.dtype}") from None
            if dT.ndim != 1:
                raise InputError(f"nodal temperature changes need shape (n_nodes,), got {dT.shape}")
            if not np.all(np.isfinite(dT)):
                raise InputError("the nodal temperature changes contain NaN or infinite values")
            self.dT = dT
        else:
            self.dT = number_or_function(dT, "temperature change dT")
            if self.dT is None:
                raise InputError("a temperature change needs a value dT (a number, a function f(x, y) or one "
                                 "value per node)")
        self.region = region

    def __repr__(self):
        d = f"array({self.dT.shape[0]} nodes)" if isinstance(self.dT, np.ndarray) else _fmt(self.dT)
        return f"TemperatureChange({d}, region={self.region!r})"

    def names_used(self):
        return [("region", self.region)] if self.region is not None else []

    def nodal_forces(self, ctx):
        return np.zeros((ctx.n_nodes, 2))  # the assembly adds the equivalent of the initial strain

    def temperature(self, ctx, blk) -> np.ndarray:
        if isinstance(self.dT, np.ndarray):
            if self.dT.shape != (ctx.n_nodes,):
                raise InputError(
                    f"nodal temperature changes need one value per node ({ctx.n_nodes}), got {self.dT.shape}"
                )
            return np.einsum("qa,ea->eq", blk.N, self.dT[blk.conn])
        return _evaluate("temperature change", self.dT, blk.x_gauss)

    def initial_strain(self, ctx, blk):
        if self.region is not None and blk.region != self.region:
            return None
        dT = self.temperature(ctx, blk)
        return dT[..., None] * thermal_expansion(blk.material, blk.region)  # alpha 0: refused, not a silent no-op

    def describe(self):
        return repr(self)
