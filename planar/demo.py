"""The demo: a complete stress check on a built-in part.

:func:`run_demo` (the ``planar demo`` command, :mod:`planar.cli.demo`) runs the whole job of a
stress check on a built-in part, a fictional aluminium splice strap with an open bolt hole pulled in tension: gmsh mesh of quadratic triangles, static
solution, stresses by superconvergent patch recovery, a convergence study on a family of meshes,
the net-section stress concentration factor against the handbook curve, the margin of safety
against an allowable with a factor of safety, and the estimated discretisation error. It writes the
VTK result, PNG figures and the HTML report into one folder and prints a summary table.

:func:`output_dir` lives in :mod:`planar.paths` and is re-exported here for scripts written against
``from planar.demo import output_dir``; ``planar run`` and ``planar show`` are modules of
:mod:`planar.cli`.
"""
from __future__ import annotations

import json
import math
import os
import time
from dataclasses import dataclass, field
from pathlib import Path
from typing import Any

from .core.progress import Progress
from .paths import DEFAULT_OUT, OUT_ENV, output_dir  # noqa: F401 (re-exported: scripts import output_dir from here)

#: the feature under check: the peaks, Kt and margin are read on this edge (``where=``)
HOLE_EDGE = "bolt_hole"

__all__ = ["SpliceStrap", "run_demo", "output_dir", "DemoOutcome", "format_summary"]


# ---------------------------------------------------------------------------------------- the demo part
@dataclass(frozen=True)
class SpliceStrap:
    """The built-in demo part: an aluminium splice strap with an open bolt hole, in tension.

    A fictional part (values are for demonstration, not design data). Units N, mm, MPa. The strap
    is clamped at its left end, where it is bolted into the joint, and pulled at its right end by a
    uniform tension. The hole is in the middle of the strap, far (two widths) from both ends.

    Attributes
    ----------
    length, width, thickness : float
        Strap size [mm].
    hole_diameter : float
        Diameter of the open bolt hole [mm], centred on the strap.
    load : float
        Axial tension [N].
    E, nu : float
        Young's modulus [MPa] and Poisson's ratio of the aluminium alloy sheet.
    allowable : float
        Allowable stress [MPa] for the peak elastic stress (a demonstration value).
    factor_of_safety : float
        Factor applied to the computed stress before comparing it with the allowable.
    sizes : tuple of float
        Element size at the hole edge for the meshes of the convergence study, coarse to fine; the
        size away from the hole is four times as large on each mesh.
    """

    length: float = 200.0
    width: float = 50.0
    thickness: float = 3.0
    hole_diameter: float = 20.0
    load: float = 6000.0
    E: float = 71_000.0
    nu: float = 0.33
    allowable: float = 290.0
    factor_of_safety: float = 1.5
    sizes: tuple = (1.6, 1.07, 0.71, 0.47)
    units: str = "N, mm, MPa"
    name: str = "splice strap SP-50 with open bolt hole (demo part)"

    @property
    def net_area(self) -> float:
        """Net cross-section through the hole, (W - d) t [mm^2]."""
        return (self.width - self.hole_diameter) * self.thickness

    @property
    def net_stress(self) -> float:
        """Nominal net-section stress P / ((W - d) t) [MPa]."""
        return self.load / self.net_area

    @property
    def gross_stress(self) -> float:
        """Nominal gross-section stress P / (W t) [MPa]."""
        return self.load / (self.width * self.thickness)

    def peterson_kt(self) -> float:
        """Net-section Kt of a central circular hole in a finite-width strip in tension.

        Notes
        -----
        :func:`planar.post.handbook.kt_hole_in_strip` (Peterson's chart 4.1 fit).
        """
        from .post.handbook import kt_hole_in_strip

        return kt_hole_in_strip(self.hole_diameter / self.width)

    def plate(self):
        """The strap as a geometry-layer plate: centred on the origin, hole named ``bolt_hole``."""
        from .geometry import Circle, Plate

        r = self.hole_diameter / 2
        return (Plate.rectangle(self.length, self.width, centre=(0.0, 0.0))
                .cut(Circle((0.0, 0.0), r, name=HOLE_EDGE))
                .add_point("hole_top", (0.0, r)).add_point("hole_bottom", (0.0, -r)))

    def mesh(self, hole_size: float):
        """Quadratic triangles (T6), ``hole_size`` at the hole growing to 4 x ``hole_size`` away."""
        from .geometry import Refine, mesh

        return mesh(self.plate(), size=4.0 * hole_size, element="T6", seed=1,
                    refine=[Refine(HOLE_EDGE, size=hole_size, growth=1.15, within=0.5 * self.hole_diameter)])

    def model(self, mesh):
        """Material, thickness, the clamped end and the tension on the far end (case ``tension``)."""
        from .core.loads import Traction
        from .core.materials import Isotropic
        from .core.model import Model
        from .core.supports import Fixed

        model = Model(mesh, Isotropic(E=self.E, nu=self.nu), thickness=self.thickness, units=self.units)
        model.add_support(Fixed("left"))
        model.add_load(Traction("right", tx=self.load / (self.width * self.thickness)), case="tension")
        return model

    def part_rows(self) -> list[tuple[str, str]]:
        return [
            ("part", self.name),
            ("strap", f"{self.length:g} mm long, {self.width:g} mm wide, {self.thickness:g} mm thick"),
            ("open bolt hole", f"diameter {self.hole_diameter:g} mm at the centre; "
                               f"d/W = {self.hole_diameter / self.width:.3f}"),
            ("material", f"aluminium alloy sheet, E = {self.E:g} MPa, nu = {self.nu:g} (demo values)"),
            ("support", "left end clamped (bolted into the joint)"),
            ("load", f"{self.load:g} N axial tension on the right end (uniform traction "
                     f"{self.gross_stress:.2f} MPa; net-section stress {self.net_stress:.2f} MPa)"),
            ("allowable", f"{self.allowable:g} MPa for the peak elastic stress, factor of safety "
                          f"{self.factor_of_safety:g} (demonstration values, not design data)"),
        ]


# ---------------------------------------------------------------------------------------- the demo job
@dataclass
class DemoOutcome:
    """What ``planar demo`` found and wrote.

    Attributes
    ----------
    summary : dict
        The numbers of the check (also written as ``summary.json``).
    files : dict of str to Path
        The files written, by role.
    convergence : GridConvergence
        The convergence study of the peak stress (:mod:`planar.post.convergence`).
    """

    summary: dict[str, Any]
    files: dict[str, Path] = field(default_factory=dict)
    convergence: Any = None


def _fmt_int(n: int) -> str:
    return f"{int(n):,}".replace(",", " ")


def run_demo(out: str | os.PathLike = DEFAULT_OUT, *, part: SpliceStrap | None = None,
             verbose: bool | None = None) -> DemoOutcome:
    """Run the demo stress check and write its files into ``out``.

    Steps: for each element size of ``part.sizes``, mesh (T6), solve and take the peak stresses by
    superconvergent patch recovery; study their convergence (observed order, Richardson
    extrapolation, GCI); on the finest mesh, the net-section Kt against the handbook curve, the
    margin of safety, the Zienkiewicz-Zhu error estimate, the net-section resultant against the
    applied load, and the equilibrium of the whole strap. Writes ``splice_strap.vtu``, PNG figures,
    ``report.html`` and ``summary.json``.

    Parameters
    ----------
    out : path
        Output folder (created if missing).
    part : SpliceStrap, optional
        The part; default the built-in strap.
    verbose : bool, optional
        Progress on stderr; default: only when stderr is a terminal.

    Returns
    -------
    DemoOutcome

    Raises
    ------
    InputError
        If ``out`` holds files of the demo's names that an earlier demo did not write (a user's
        ``report.html``, say): they are never replaced without a word.
    """
    from .core.static import solve
    from .post.checks import cut_resultant, kt, margin_of_safety, nominal_net
    from .post.convergence import grid_convergence
    from .post.estimate import estimate_error
    from .post.vtk import write_vtu

    part = part or SpliceStrap()
    say = Progress(verbose, "planar demo")
    out = output_dir(out)
    _check_not_users(out)
    from .post.files import atomic_write_text

    # the folder marked the demo's before its first file: a run stopped half-way (Ctrl-C, an error) leaves
    # files that the next run knows for its own, not a user's; the full summary replaces this at the end
    atomic_write_text(out / "summary.json", json.dumps({"written_by": _WRITTEN_BY, "part": part.name,
                                                        "status": "incomplete: the demo stopped before its end"},
                                                       indent=2) + "\n")
    t_start = time.perf_counter()
    r = part.hole_diameter / 2

    # -- the mesh family: mesh, solve, recovered peaks ----------------------------------------
    meshes, fine, solved = [], None, []
    for k, h in enumerate(part.sizes, 1):
        say(f"mesh {k} of {len(part.sizes)}: quadratic triangles, {h:g} mm at the hole edge")
        t = time.perf_counter()
        m = part.mesh(h)
        t_mesh = time.perf_counter() - t
        say(f"  solving {_fmt_int(m.n_dofs)} unknowns ({m.n_cells} T6 elements)")
        res = solve(part.model(m))["tension"]
        say("  recovering stresses at the nodes (superconvergent patch recovery)")
        # the check reads the feature under check, the bolt hole's edge, not the whole strap (the
        # clamped end is idealised); on this strap the two peaks are the same points
        vm, vm_at, _ = res.max("von_mises", recovery="spr", where=HOLE_EDGE)
        sxx, sxx_at, _ = res.max("sigma_xx", recovery="spr", where=HOLE_EDGE)
        meshes.append({"hole_edge_size": h, "elements": m.n_cells, "nodes": m.n_nodes,
                       "unknowns": res.n_dofs, "peak_von_mises": vm, "peak_sigma_xx": sxx,
                       "peak_location": list(vm_at), "seconds": time.perf_counter() - t,
                       "mesh_seconds": t_mesh})
        fine = res
        solved.append(res)
    t_solved = time.perf_counter()

    # -- convergence, checks and the error estimate on the finest mesh -------------------------
    say("convergence study of the peak stress (Richardson extrapolation, GCI)")
    nominal = nominal_net(part.load, part.width, part.hole_diameter, part.thickness)
    dofs = [mm["unknowns"] for mm in meshes]
    conv = grid_convergence([mm["peak_von_mises"] for mm in meshes], dofs=dofs,
                            name="peak von Mises stress", unit="MPa")
    conv_kt = grid_convergence([mm["peak_sigma_xx"] / nominal for mm in meshes], dofs=dofs,
                               name="Kt (net section)")
    conc = kt(fine, nominal, field="sigma_xx", recovery="spr", where=HOLE_EDGE)
    margin = margin_of_safety(fine, part.allowable, part.factor_of_safety, field="von_mises", recovery="spr",
                              where=HOLE_EDGE)
    margin_band = margin_of_safety(conv.band()[1], part.allowable, part.factor_of_safety)
    say("estimating the discretisation error (Zienkiewicz-Zhu, energy norm)")
    est = estimate_error(fine, recovery="spr")
    eps = 1e-9 * part.width
    cut_top = cut_resultant(fine, (0.0, r + eps), (0.0, part.width / 2 - eps))
    cut_bottom = cut_resultant(fine, (0.0, -part.width / 2 + eps), (0.0, -r - eps))
    # both cuts run in +y, so their normals point to +x, towards the loaded end: F_x is the pull
    net_force = cut_top.force[0] + cut_bottom.force[0]
    vm_ext = fine.max("von_mises", recovery="spr", where=HOLE_EDGE)
    vm_peak, vm_at, _ = vm_ext
    everywhere = fine.max("von_mises", recovery="spr")  # the whole strap's, to say whether it is the hole's
    from .post.hotspots import hot_spots

    spots = hot_spots(fine, recovery="spr", nominal=nominal, allowable=part.allowable,
                      factor_of_safety=part.factor_of_safety)  # the local peaks by feature, ranked
    t_checked = time.perf_counter()

    # -- files: result, figures, report ----------------------------------------------------------
    files: dict[str, Path] = {}
    say("writing the result for VTK viewers (splice_strap.vtu)")
    files["result"] = write_vtu(out / "splice_strap.vtu", fine, recovery="spr", cell_fields=est.cell_fields())
    say("drawing the figures")
    figs = _demo_figures(part, fine, conv, out)
    spots.plot(out / "hot_spots.png")
    figs["hot_spots"] = (out / "hot_spots.png", "Hot spots of the von Mises stress, numbered by rank; grey "
                                                "squares mark spots made by the clamp (an idealisation), not by "
                                                "the strap.")
    files.update({k: v[0] for k, v in figs.items()})
    t_figures = time.perf_counter()

    summary = {
        "written_by": _WRITTEN_BY,  # the folder's mark: a later demo writes over these files only
        "part": part.name,
        "units": part.units,
        "unit_system": fine.unit_system.as_dict(),  # the system's name and the unit of each quantity
        "length": part.length, "width": part.width, "thickness": part.thickness,
        "hole_diameter": part.hole_diameter, "load": part.load,
        "peak_von_mises": vm_peak,
        "peak_location": [float(vm_at[0]), float(vm_at[1])],
        "peak_where": vm_ext.where,  # the peaks, Kt and margin are read on the bolt hole's edge
        "peak_note": vm_ext.note or conc.note or margin.note,
        "peak_everywhere": everywhere.value,
        "peak_everywhere_location": [float(everywhere.location[0]), float(everywhere.location[1])],
        "peak_sigma_xx": conc.peak,
        "net_stress": nominal,
        "kt": conc.Kt,
        "kt_handbook": part.peterson_kt(),
        "kt_difference": conc.Kt / part.peterson_kt() - 1.0,
        "kt_extrapolated": conv_kt.extrapolated,
        "allowable": part.allowable,
        "factor_of_safety": part.factor_of_safety,
        "margin_of_safety": margin.margin,
        "margin_of_safety_upper_band": margin_band.margin,
        "error_estimate": est.relative,
        "extrapolated_peak": conv.extrapolated,
        "gci": conv.gci,   # None when the meshes are not in the asymptotic range
        "observed_order": conv.order,
        "convergence": conv.kind,
        "convergence_verdict": conv.verdict,
        "net_section_force": net_force,
        "equilibrium_error": fine.equilibrium_error(),
        "unknowns": fine.n_dofs,
        "elements": fine.mesh.n_cells,
        "solver": fine.solver,
        "meshes": meshes,
    }
    summary["hot_spots"] = spots.as_dict()  # ranked local peaks: feature, location, value, Kt, margin, flag
    # every planar warning of the solves and checks, once each (none for the built-in strap)
    summary["warnings"] = list({(w.code, w.message): w.as_dict() for r in solved for w in r.warnings}.values())
    summary["seconds_by_step"] = {"meshes and solutions": t_solved - t_start,
                                  "checks and error estimate": t_checked - t_solved,
                                  "result file and figures": t_figures - t_checked}
    say("writing the report (report.html)")
    report = _demo_report(part, fine, conv, conv_kt, conc, margin, margin_band, est, net_force, summary, figs,
                          spots)
    from .post.report import write_report

    files["report"] = write_report(out / "report.html", report)
    summary["seconds"] = time.perf_counter() - t_start
    summary["seconds_by_step"]["report"] = time.perf_counter() - t_figures
    from .post.files import atomic_write_text, json_safe

    files["summary"] = atomic_write_text(out / "summary.json",
                                         json.dumps(json_safe(summary), indent=2, allow_nan=False) + "\n")
    say(f"done in {summary['seconds']:.1f} s")
    return DemoOutcome(summary, files, conv)


#: the files the demo writes into its folder
DEMO_FILES = ("splice_strap.vtu", "von_mises.png", "hole_close_up.png", "sigma_xx.png", "net_section.png",
              "convergence.png", "hot_spots.png", "report.html", "summary.json")
#: the mark in summary.json of a folder the demo wrote
_WRITTEN_BY = "planar demo"


def _check_not_users(out: Path) -> None:
    """Refuse to replace files of the demo's names that an earlier demo did not write (e.g. a user's report).

    A folder the demo wrote before has its summary.json, marked ``"written_by": "planar demo"`` (or,
    written before the mark, naming a demo part): the demo writes over its own files only.
    """
    from .core.errors import InputError

    there = [n for n in DEMO_FILES if (out / n).exists()]
    if not there:
        return
    try:
        mark = json.loads((out / "summary.json").read_text(encoding="utf-8"))
        ours = mark.get("written_by") == _WRITTEN_BY or "(demo part)" in str(mark.get("part", ""))
    except (OSError, ValueError, AttributeError):
        ours = False
    if not ours:
        raise InputError(f"the folder {str(out)!r} already holds {', '.join(there)}, not written by planar demo; "
                         "the demo would replace them: give it a folder of its own (planar demo --out DIR, or "
                         "run_demo(out=DIR)), or move those files away")


def _demo_figures(part: SpliceStrap, fine, conv, out: Path) -> dict[str, tuple[Path, str]]:
    """The PNG figures of the demo: {role: (path, caption)}."""
    from .post.plots import plot_along, plot_field

    r = part.hole_diameter / 2
    w = part.width / 2
    figs: dict[str, tuple[Path, str]] = {}
    p = out / "von_mises.png"
    plot_field(fine, "von_mises", recovery="spr", path=p,
               title=f"von Mises stress in the splice strap, {part.load / 1000:g} kN tension")
    figs["von_mises"] = (p, "von Mises stress on the strap, with its deformed outline dashed (displacements "
                            "magnified), recovered by superconvergent patch recovery; the peak is marked.")
    p = out / "hole_close_up.png"
    plot_field(fine, "von_mises", recovery="spr", path=p, mesh_lines=True, scale=None,
               window=(-2.5 * r, -w, 2.5 * r, w), title="von Mises stress around the bolt hole, finest mesh")
    figs["hole_close_up"] = (p, "Close-up of the bolt hole on the undeformed shape with the finest mesh: "
                                "quadratic triangles whose sides follow the hole.")
    p = out / "sigma_xx.png"
    plot_field(fine, "sigma_xx", recovery="spr", path=p, title=r"axial stress $\sigma_{xx}$")
    figs["sigma_xx"] = (p, "Axial stress sigma_xx (diverging colours centred on zero: red tension, "
                           "blue compression); its maximum and minimum are marked.")
    p = out / "net_section.png"
    plot_along(fine, (0.0, r), (0.0, w), "sigma_xx", recovery="spr", n_points=201, path=p,
               lines={"net-section stress P/((W-d)t)": part.net_stress,
                      "handbook peak Kt x net stress": part.peterson_kt() * part.net_stress},
               title="axial stress across the net section, from the hole edge to the strap edge")
    figs["net_section"] = (p, "sigma_xx along the net section (x = 0) from the hole edge to the free edge, "
                              "with the nominal net-section stress and the handbook peak.")
    p = out / "convergence.png"
    conv.plot(p, title="peak von Mises stress against the number of unknowns")
    figs["convergence"] = (p, f"Peak von Mises stress on the {len(part.sizes)} meshes, with the Richardson "
                              "extrapolation and the grid convergence index band on the finest mesh.")
    return figs


def _demo_report(part, fine, conv, conv_kt, conc, margin, margin_band, est, net_force, summary, figs, spots=None):
    from .post.handbook import HOLE_IN_STRIP_FORMULA, HOLE_IN_STRIP_SOURCE
    from .post.report import Figure, KeyValues, Notice, Paragraph, Table, stress_check_report

    def fig(role):
        path, caption = figs[role]
        return Figure(path.read_bytes(), caption)

    x, y = summary["peak_location"]
    on_hole = abs(math.hypot(x, y) - part.hole_diameter / 2) < 1e-6 * part.width
    kt_hb = part.peterson_kt()
    ms_status = "pass" if margin.passed else "fail"
    headline = [
        ("peak von Mises stress", f"{summary['peak_von_mises']:.1f} MPa",
         f"at ({x:.1f}, {y:.1f}) mm" + (", edge of the bolt hole" if on_hole else ""), ""),
        ("Kt, net section", f"{conc.Kt:.3f}", f"handbook {kt_hb:.3f} ({100 * summary['kt_difference']:+.1f} %)", ""),
        ("margin of safety", f"{margin.margin:+.2f}",
         f"allowable {part.allowable:g} MPa, factor of safety {part.factor_of_safety:g}", ms_status),
        ("estimated error", f"{100 * est.relative:.2f} %", "energy norm (Zienkiewicz-Zhu), finest mesh", ""),
        ("unknowns", _fmt_int(fine.n_dofs), f"finest of {len(summary['meshes'])} meshes", ""),
    ]
    results = [
        Table(["quantity", "value", "where / how"], [
            ["peak von Mises stress [MPa]", f"{summary['peak_von_mises']:.2f}",
             f"({x:.2f}, {y:.2f}) mm, SPR, read {summary['peak_where']}"],
            ["peak sigma_xx [MPa]", f"{conc.peak:.2f}",
             f"({conc.location[0]:.2f}, {conc.location[1]:.2f}) mm, SPR, read {conc.where}"],
            ["nominal net-section stress P/((W-d)t) [MPa]", f"{part.net_stress:.2f}",
             f"{part.load:g} N / ({part.width - part.hole_diameter:g} mm x {part.thickness:g} mm)"],
            ["nominal gross-section stress P/(Wt) [MPa]", f"{part.gross_stress:.2f}", "far from the hole"],
            ["largest displacement [mm]", f"{float((fine.u ** 2).sum(axis=1).max() ** 0.5):.4f}", "loaded end"],
        ], caption="Peak stresses on the finest mesh (stresses recovered by superconvergent patch recovery)"),
        fig("von_mises"), fig("hole_close_up"), fig("sigma_xx"), fig("net_section"),
    ]
    checks = [
        Table(["check", "computed", "reference", "difference / margin", "status"], [
            ["Kt, net section (sigma_xx peak / net-section stress)", f"{conc.Kt:.4f}",
             f"{kt_hb:.4f} (Peterson's chart 4.1)", f"{100 * summary['kt_difference']:+.2f} %",
             "pass" if abs(summary["kt_difference"]) < 0.03 else "note"],
            ["margin of safety, finest-mesh peak", f"{summary['peak_von_mises']:.2f} MPa x {part.factor_of_safety:g}",
             f"allowable {part.allowable:g} MPa", f"{margin.margin:+.3f}", ms_status],
            ["margin of safety, upper end of the convergence band",
             f"{margin_band.peak:.2f} MPa x {part.factor_of_safety:g}", f"allowable {part.allowable:g} MPa",
             f"{margin_band.margin:+.3f}", "pass" if margin_band.passed else "fail"],
            ["load carried by the net section (stress resultant of the two ligaments)",
             f"{net_force:.1f} N", f"{part.load:g} N applied", f"{100 * abs(net_force / part.load - 1):.3f} %",
             "pass" if abs(net_force / part.load - 1) < 0.01 else "fail"],
        ], status_column=4,
            caption=f"Checks. Handbook curve: {HOLE_IN_STRIP_FORMULA} ({HOLE_IN_STRIP_SOURCE}). "
                    "Margin of safety MS = allowable / (factor of safety x peak) - 1."),
        Paragraph(f"d/W = {part.hole_diameter / part.width:.3f}. The handbook curve is for a long strip; "
                  f"here the hole is {part.length / 2 / part.width:g} widths from the clamped and the "
                  f"loaded ends, far enough for their effect on the peak to be small. The allowable and "
                  f"the factor of safety are demonstration values, not design data."),
    ]  # the scope caution is said once, in the report's own section Cautions and limits
    conv_rows = []
    for i, mm in enumerate(summary["meshes"], 1):
        conv_rows.append([str(i), f"{mm['hole_edge_size']:g}", str(mm["elements"]), _fmt_int(mm["unknowns"]),
                          f"{mm['peak_von_mises']:.3f}", f"{mm['peak_sigma_xx'] / part.net_stress:.4f}"])
    lo, hi = conv.band()
    ratio = (part.sizes[0] / part.sizes[-1]) ** (1.0 / max(len(part.sizes) - 1, 1))
    convergence = [
        Table(["mesh", "element size at the hole [mm]", "elements", "unknowns", "peak von Mises [MPa]",
               "Kt, net section"], conv_rows,
              caption=f"The same strap on {len(part.sizes)} meshes, each about {ratio:.2g} times finer than "
                      "the last (sizes away from the hole scale with those at the hole)."),
        KeyValues([
            ("behaviour", conv.kind),
            ("observed order of convergence", f"{conv.order:.2f}"),
            ("Richardson extrapolation of the peak", f"{conv.extrapolated:.2f} MPa"),
            ("grid convergence index, finest mesh", f"{100 * conv.gci_fine:.3f} % (factor of safety "
                                                      f"{conv.safety_factor:g})" if conv.gci is not None
             else "none claimed: not in the asymptotic range"),
            ("verdict", conv.verdict),
            ("band on the finest peak", f"{lo:.2f} to {hi:.2f} MPa"),
            ("Kt extrapolated", f"{conv_kt.extrapolated:.4f}" if conv_kt.extrapolated == conv_kt.extrapolated
             else "-"),
            ("estimated error in the energy norm (Zienkiewicz-Zhu)", f"{100 * est.relative:.3f} %"),
        ], caption="Convergence of the peak (P. J. Roache, 1998; I. B. Celik et al., J. Fluids Eng. 130, "
                   "2008): order from the three finest meshes"),
        fig("convergence"),
    ] + ([Notice(conv.notes, kind="note")] if conv.notes else [])
    # the versions, the script's digest and the date are the report's own (planar.post.provenance)
    run_rows = [(f"time: {k}", f"{v:.1f} s") for k, v in summary.get("seconds_by_step", {}).items()]
    return stress_check_report(
        fine, title="Stress check: splice strap with an open bolt hole",
        subtitle=f"{part.name}; {part.load:g} N axial tension; units {part.units}",
        part=part.part_rows(), headline=headline, results=results, checks=checks, convergence=convergence,
        mesh_rows=[("element type", "T6, quadratic triangles (curved sides on the hole)"),
                   ("element size", f"{part.sizes[-1]:g} mm at the hole edge, growing to "
                                    f"{4 * part.sizes[-1]:g} mm away from it"),
                   ("mesher", "gmsh, through planar.geometry")],
        run_rows=run_rows, hot_spots=None if spots is None else _hot_spot_section(spots, figs),
        script=__file__)  # the code that made the report is this module


def _hot_spot_section(spots, figs):
    from .post.hotspots import hot_spot_section

    return hot_spot_section(spots, figure=figs["hot_spots"][0].read_bytes() if "hot_spots" in figs else None)


def format_summary(outcome: DemoOutcome) -> str:
    """The summary table printed by ``planar demo``."""
    from .post.scope import CAUTION

    s = outcome.summary
    x, y = s["peak_location"]
    on_hole = abs(math.hypot(x, y) - s["hole_diameter"] / 2) < 1e-6 * s["width"]
    ext = s["extrapolated_peak"]
    rows = [
        ("peak von Mises (SPR)", f"{s['peak_von_mises']:.1f} MPa",
         f"at ({x:.1f}, {y:.1f}) mm" + (f", read {s['peak_where']}" if s.get("peak_where", "everywhere") != "everywhere"
                                        else ", edge of the bolt hole" if on_hole else "")),
        ("converged peak", f"{ext:.1f} MPa" if ext is not None and math.isfinite(ext) else "-",
         (f"Richardson extrapolation; GCI {100 * s['gci']:.2f} % ({s['convergence']})" if s.get("gci") is not None
          else f"Richardson extrapolation, no GCI claimed ({s.get('convergence_verdict', s['convergence'])})")
         if ext is not None and math.isfinite(ext) else f"no extrapolation ({s['convergence']} convergence)"),
        ("Kt (net section)", f"{s['kt']:.3f}",
         f"handbook {s['kt_handbook']:.3f} (Peterson chart 4.1), {100 * s['kt_difference']:+.1f} %"),
        ("margin of safety", f"{s['margin_of_safety']:+.2f}",
         f"allowable {s['allowable']:g} MPa, factor of safety {s['factor_of_safety']:g}"),
        ("estimated error (ZZ)", f"{100 * s['error_estimate']:.2f} %", "energy norm, finest mesh"),
        ("unknowns", _fmt_int(s["unknowns"]), f"finest of {len(s['meshes'])} meshes, {_fmt_int(s['elements'])} T6 elements"),
        ("time", f"{s['seconds']:.1f} s", "meshing, solutions, checks, figures and report"),
    ]
    w0 = max(len(r[0]) for r in rows)
    w1 = max(len(r[1]) for r in rows)
    lines = [f"planar demo: {s['part']}, {s['load']:g} N tension (units {s['units']})", "",
             f"  {'quantity':<{w0}}  {'value':>{w1}}  remark",
             f"  {'-' * w0}  {'-' * w1}  {'-' * 40}"]
    lines += [f"  {a:<{w0}}  {b:>{w1}}  {c}" for a, b, c in rows]
    import textwrap

    if s.get("peak_where", "everywhere") != "everywhere":  # the check reads the feature, not the plate
        glob, (gx, gy) = s["peak_everywhere"], s["peak_everywhere_location"]
        same = math.isclose(glob, s["peak_von_mises"], rel_tol=1e-12) and [gx, gy] == list(s["peak_location"])
        said = (f"Peaks, Kt and margin are read {s['peak_where']}, the feature under check; the whole strap's "
                "peak is " + ("the same point." if same else
                              f"{glob:.1f} MPa at ({gx:.1f}, {gy:.1f}) mm, away from the feature."))
        if s.get("peak_note"):
            said += f" CAUTION: the peak sits {s['peak_note']}."
        lines += [""] + textwrap.wrap(said, 100, initial_indent="  ", subsequent_indent="  ")

    for w in s.get("warnings", []):
        lines += [""] + textwrap.wrap(f"warning [{w['code']}]: {w['message']}", 100, initial_indent="  ",
                                      subsequent_indent="    ")

    folder = Path(outcome.files["report"]).parent
    names = ", ".join(sorted(p.name for p in outcome.files.values()))
    lines += ["", f"  written to {folder}{os.sep}"]
    lines += textwrap.wrap(names, 96, initial_indent="    ", subsequent_indent="    ")
    lines += ["  open report.html in a browser; splice_strap.vtu in any VTK viewer", ""]
    lines += textwrap.wrap(CAUTION, 100, initial_indent="  ", subsequent_indent="  ")
    return "\n".join(lines)
