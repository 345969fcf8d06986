"""Benchmark cases of the core: patch test, axial bar, cantilever, Cook's membrane, energy rate."""
from __future__ import annotations

import numpy as np

from ..core.errors import InputError
from ..core.loads import Traction
from ..core.materials import Isotropic
from ..core.mesh import Mesh
from ..core.model import Model
from ..core.registry import element_type
from ..core.static import solve
from ..core.supports import Fixed, Prescribed, Roller
from ..geometry.structured import quad_panel_mesh, rectangle_mesh
from ..post.norms import energy_norm_error
from ._register import case, check

MH1985 = ("R. H. MacNeal and R. L. Harder, A proposed standard set of problems to test finite element "
          "accuracy, Finite Elements in Analysis and Design 1 (1985)")
STATICS = "statics: sum of reactions and applied loads is zero (common practice)"
BUILTIN = ("T3", "T6", "Q4", "Q8", "Q9")


def layout_for(element: str) -> str:
    """The mesh layout (T3, T6, Q4, Q8, Q9) whose node arrangement an element uses."""
    if element in BUILTIN:
        return element
    et = element_type(element)
    table = {("triangle", 3): "T3", ("triangle", 6): "T6", ("quad", 4): "Q4", ("quad", 8): "Q8", ("quad", 9): "Q9"}
    key = (et.cell, et.n_nodes)
    if key not in table:
        raise InputError(f"element {element!r} has a node layout ({et.cell}, {et.n_nodes} nodes) the "
                         "benchmark meshes cannot build; the verification cases need a T3/T6/Q4/Q8/Q9 layout")
    return table[key]


def _model(mesh: Mesh, element: str, material, thickness=1.0, analysis="plane stress") -> Model:
    lay = layout_for(element)
    elements = {lay: element} if element != lay else None
    return Model(mesh, material, thickness, analysis=analysis, elements=elements)


def equilibrium_record(name: str, element: str, result) -> object:
    err = result.equilibrium_error()
    return check(name, element, "force and moment balance", 0.0, err, 1e-9, result.n_dofs, STATICS,
                 relative_to=1.0)


# ---------------------------------------------------------------------------- patch test
_PATCH_CORNERS = np.array([[0.0, 0.0], [0.24, 0.0], [0.24, 0.12], [0.0, 0.12],
                           [0.04, 0.02], [0.18, 0.03], [0.16, 0.08], [0.08, 0.08]])
_PATCH_QUADS = np.array([[0, 1, 5, 4], [1, 2, 6, 5], [2, 3, 7, 6], [3, 0, 4, 7], [4, 5, 6, 7]])


def patch_mesh(layout: str) -> Mesh:
    """MacNeal-Harder membrane patch: 0.24 x 0.12 with four distorted interior nodes.

    Quadratic layouts put mid-side nodes at edge midpoints (straight sides) and the Q9 centre at the
    mean of the corners; triangles split each quadrilateral along its 0-2 diagonal.
    """
    nodes = [p for p in _PATCH_CORNERS]
    if layout in ("T3", "T6"):
        cells = np.vstack([_PATCH_QUADS[:, [0, 1, 2]], _PATCH_QUADS[:, [0, 2, 3]]])
        edges_local = [(0, 1), (1, 2), (2, 0)]
    else:
        cells = _PATCH_QUADS.copy()
        edges_local = [(0, 1), (1, 2), (2, 3), (3, 0)]
    if layout in ("T3", "Q4"):
        out_cells = cells
    else:
        mid: dict[tuple[int, int], int] = {}
        rows = []
        for c in cells:  # a 5-cell fixture: building it node by node is clearest
            row = list(c)
            for a, b in edges_local:
                key = (min(c[a], c[b]), max(c[a], c[b]))
                if key not in mid:
                    mid[key] = len(nodes)
                    nodes.append(0.5 * (_PATCH_CORNERS[c[a]] + _PATCH_CORNERS[c[b]]))
                row.append(mid[key])
            if layout == "Q9":
                row.append(len(nodes))
                nodes.append(_PATCH_CORNERS[c].mean(axis=0))
            rows.append(row)
        out_cells = np.array(rows)
    nodes = np.array(nodes)
    boundary = np.flatnonzero(
        np.isclose(nodes[:, 0], 0) | np.isclose(nodes[:, 0], 0.24) | np.isclose(nodes[:, 1], 0) | np.isclose(nodes[:, 1], 0.12)
    )
    return Mesh(nodes, {layout: out_cells}, node_sets={"boundary": boundary})


@case("patch-test", BUILTIN, any_element=True)
def patch_test(element: str):
    """Constant-strain membrane patch test; exact stresses at every Gauss point."""
    lay = layout_for(element)
    mesh = patch_mesh(lay)
    model = _model(mesh, element, Isotropic(1.0e6, 0.25), thickness=0.001)
    model.add_support(Prescribed("boundary", ux=lambda x, y: 1e-3 * (x + y / 2), uy=lambda x, y: 1e-3 * (y + x / 2)))
    model.add_case("patch")  # driven by the prescribed boundary displacements alone
    r = solve(model)["patch"]
    src = MH1985 + ", membrane patch test; exact values follow from the imposed linear field (from memory)"
    exact = {"sigma_xx": 1333.3333333333333, "sigma_yy": 1333.3333333333333, "tau_xy": 400.0}
    recs = []
    for k, (name, ref) in enumerate(exact.items()):
        vals = np.concatenate([g.stress[..., k].ravel() for g in r.gauss])
        worst = vals[np.argmax(np.abs(vals - ref))]
        recs.append(check("patch-test", element, f"{name} at every Gauss point (worst)", ref, worst, 1e-8, r.n_dofs, src))
    recs.append(equilibrium_record("patch-test", element, r))
    return recs


# ---------------------------------------------------------------------------- axial bar
@case("axial-bar", BUILTIN, any_element=True)
def axial_bar(element: str):
    """Uniform strip under end traction: end displacement P L / (E A)."""
    L, W, t, E, nu, P = 120.0, 20.0, 3.0, 70e3, 0.33, 6000.0
    lay = layout_for(element)
    mesh = rectangle_mesh(L, W, 6, 2, lay)
    model = _model(mesh, element, Isotropic(E, nu), thickness=t)
    model.add_support(Roller("left", fixed="x"))
    model.add_support(Roller("corner_00", fixed="y"))
    model.add_load(Traction("right", tx=P / (W * t)), case="pull")
    r = solve(model)["pull"]
    ref = P * L / (E * W * t)
    comp = float(r.u[mesh.nodes_of("right"), 0].mean())
    src = "bar under axial load: delta = P L / (E A) (common practice)"
    return [check("axial-bar", element, "end displacement ux", ref, comp, 1e-9, r.n_dofs, src),
            equilibrium_record("axial-bar", element, r)]


# ---------------------------------------------------------------------------- cantilever
@case("cantilever-tip", ("Q8", "Q9"), any_element=True)
def cantilever_tip(element: str):
    """MacNeal-Harder straight cantilever, regular 6 x 1 mesh, unit in-plane tip shear."""
    L, W, t = 6.0, 0.2, 0.1
    lay = layout_for(element)
    mesh = rectangle_mesh(L, W, 6, 1, lay)
    model = _model(mesh, element, Isotropic(1.0e7, 0.3), thickness=t)
    model.add_support(Fixed("left"))
    model.add_load(Traction("right", ty=1.0 / (W * t)), case="tip shear")
    r = solve(model)["tip shear"]
    tip = float(r.u[mesh.nodes_of("right"), 1].mean())
    src = MH1985 + ", straight cantilever, in-plane shear, tip deflection 0.1081 (from memory)"
    return [check("cantilever-tip", element, "tip deflection uy (6 x 1 mesh)", 0.1081, tip, 0.02, r.n_dofs, src),
            equilibrium_record("cantilever-tip", element, r)]


# ---------------------------------------------------------------------------- Cook's membrane
@case("cook-membrane", ("T6", "Q8", "Q9"), any_element=True)
def cook_membrane(element: str):
    """Cook's tapered panel: left edge fixed, unit shear on the right edge.

    The converged 23.96 is the vertical displacement at the middle of the loaded edge, (48, 52) (the
    literature's point C); the top right corner (48, 60) moves about 25.2 and is not the reference
    point.
    """
    lay = layout_for(element)
    n = 32 if element_type(element).degree >= 2 else 96
    mesh = quad_panel_mesh([[0, 0], [48, 44], [48, 60], [0, 44]], n, n, lay)
    model = _model(mesh, element, Isotropic(1.0, 1.0 / 3.0), thickness=1.0)
    model.add_support(Fixed("left"))
    model.add_load(Traction("right", ty=1.0 / 16.0), case="shear")
    r = solve(model)["shear"]
    uy = float(r.at((48.0, 52.0), "uy"))
    src = ("R. D. Cook, Improved two-dimensional finite element, J. Struct. Div. ASCE 100 (1974); converged "
           "value 23.96 at the middle of the loaded edge from later literature (from memory)")
    return [check("cook-membrane", element, f"uy at (48, 52), mid-height of the loaded edge, {n} x {n} mesh", 23.96, uy, 0.01, r.n_dofs, src),
            equilibrium_record("cook-membrane", element, r)]


# ---------------------------------------------------------------------------- energy rate
class TimoshenkoCantilever:
    """Exact plane-stress solution of a cantilever with parabolic end shear.

    Beam 0 <= x <= L, -c <= y <= c, unit thickness, loaded end x = 0, clamped end x = L
    (S. P. Timoshenko and J. N. Goodier, Theory of Elasticity, 3rd ed., 1970, article 21):
    sigma_xx = -P x y / I, sigma_yy = 0, tau_xy = -P (c^2 - y^2) / (2 I), I = 2 c^3 / 3.
    """

    def __init__(self, L=10.0, c=1.0, P=1.0, E=1000.0, nu=0.25):
        self.L, self.c, self.P, self.E, self.nu = L, c, P, E, nu
        self.I = 2.0 * c**3 / 3.0
        self.G = E / (2 * (1 + nu))

    def stress(self, x, y):
        P, I, c = self.P, self.I, self.c
        return np.stack([-P * x * y / I, 0.0 * x, -P * (c * c - y * y) / (2 * I)], axis=-1)

    def ux(self, x, y):
        P, E, I, G, nu, L, c = self.P, self.E, self.I, self.G, self.nu, self.L, self.c
        return (-P * x**2 * y / (2 * E * I) - nu * P * y**3 / (6 * E * I) + P * y**3 / (6 * G * I)
                + (P * L**2 / (2 * E * I) - P * c**2 / (2 * G * I)) * y)

    def uy(self, x, y):
        P, E, I, nu, L = self.P, self.E, self.I, self.nu, self.L
        return nu * P * x * y**2 / (2 * E * I) + P * x**3 / (6 * E * I) - P * L**2 * x / (2 * E * I) + P * L**3 / (3 * E * I)


def timoshenko_model(element: str, nx: int, ny: int, beam: TimoshenkoCantilever | None = None):
    beam = beam or TimoshenkoCantilever()
    lay = layout_for(element)
    mesh = rectangle_mesh(beam.L, 2 * beam.c, nx, ny, lay, origin=(0.0, -beam.c))
    model = _model(mesh, element, Isotropic(beam.E, beam.nu), thickness=1.0)
    model.add_support(Prescribed("right", ux=beam.ux, uy=beam.uy))
    # loaded end x = 0, outward normal (-1, 0): t = -(sigma_xx, tau_xy)
    model.add_load(Traction("left", tx=lambda x, y: -beam.stress(x, y)[..., 0],
                            ty=lambda x, y: -beam.stress(x, y)[..., 2]), case="end shear")
    return mesh, model, beam


@case("energy-rate", BUILTIN, any_element=True)
def energy_rate(element: str):
    """Energy-norm error under uniform refinement against the exact cantilever solution."""
    et = element_type(element)
    levels = [(5, 1), (10, 2), (20, 4), (40, 8)] if et.degree >= 2 else [(10, 2), (20, 4), (40, 8), (80, 16)]
    hs, errs, dofs, last = [], [], [], None
    for nx, ny in levels:
        mesh, model, beam = timoshenko_model(element, nx, ny)
        r = solve(model)["end shear"]
        e, norm = energy_norm_error(r, beam.stress)
        hs.append(beam.L / nx); errs.append(e); dofs.append(r.n_dofs); last = r
    rates = np.diff(np.log(errs)) / np.diff(np.log(hs))
    floor = 1.85 if et.degree >= 2 else 0.9
    src = ("S. P. Timoshenko and J. N. Goodier, Theory of Elasticity, 3rd ed., 1970, art. 21 (exact field); "
           "rate h^p from G. Strang and G. J. Fix, An Analysis of the Finite Element Method, 1973")
    note = "errors " + ", ".join(f"{e:.3e}" for e in errs) + "; rates " + ", ".join(f"{p:.3f}" for p in rates)
    return [check("energy-rate", element, "energy-norm error rate p (last two meshes)", float(floor),
                  float(rates[-1]), 0.0, dofs[-1], src, at_least=True, note=note),
            equilibrium_record("energy-rate", element, last)]
