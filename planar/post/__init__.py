"""After the solve: checks, error estimates, adaptivity, convergence, combinations, files, figures, reports.

The public face of the post layer: every name below is importable from ``planar.post`` (the
modules stay importable too: ``planar.post.checks.kt`` is ``planar.post.kt``). Names are loaded on
first use, so importing ``planar`` does not load matplotlib or the geometry layer.

Examples
--------
>>> from planar.post import kt, nominal_net, margin_of_safety
>>> nominal_net(12000.0, width=60.0, hole_diameter=20.0, thickness=4.0)
75.0
>>> import planar.post
>>> planar.post.kt is planar.post.checks.kt
True
"""
from __future__ import annotations

import importlib
from typing import TYPE_CHECKING, Any

#: public name -> the module of planar.post that defines it
_WHERE = {
    # checks
    "kt": "checks", "margin_of_safety": "checks", "nominal_gross": "checks", "nominal_net": "checks",
    "path_stresses": "checks", "cut_resultant": "checks", "StressConcentration": "checks", "Margin": "checks",
    "PathStresses": "checks", "CutResultant": "checks",
    # stresses along named edges
    "edge_stresses": "edges", "EdgeStresses": "edges", "EdgePeak": "edges", "plot_edge_stresses": "edges",
    # scope and handbook formulas
    "CAUTION": "scope", "CAUTIONS": "scope", "kt_hole_in_strip": "handbook",
    # lugs
    "lug_check": "lugs", "LugCheck": "lugs", "net_section_stress": "lugs", "bearing_stress": "lugs",
    "shear_out_stress": "lugs", "kt_pin_loaded_lug": "lugs",
    # error estimate, adaptivity, convergence
    "estimate_error": "estimate", "ErrorEstimate": "estimate", "effectivity": "estimate",
    "energy_norm_error": "norms",
    "adapt": "adapt", "remesher": "adapt", "size_field": "adapt", "AdaptiveRun": "adapt",
    "grid_convergence": "convergence", "convergence_study": "convergence", "GridConvergence": "convergence",
    # load cases
    "combine": "combine", "combinations": "combine", "Combination": "combine", "CombinedResult": "combine",
    "envelope": "combine", "Envelope": "combine", "EnvelopePeak": "combine", "write_envelope_vtu": "combine",
    "plot_envelope": "combine",
    # files, figures, reports
    "write_vtu": "vtk", "read_result_file": "files", "atomic_write_text": "files", "json_safe": "files",
    "plot_field": "plots", "plot_along": "plots", "plot_vtu": "plots", "vtu_fields": "plots",
    "plot_nodal_field": "plots", "save_figure": "plots", "plot_model": "picture",
    "plot_joint": "joints",
    # hot spots
    "hot_spots": "hotspots", "HotSpot": "hotspots", "HotSpots": "hotspots", "plot_hot_spots": "hotspots",
    "hot_spot_section": "hotspots",
    "Report": "report", "Section": "report", "Paragraph": "report", "Table": "report", "KeyValues": "report",
    "Figure": "report", "Notice": "report", "Tiles": "report", "render_html": "report",
    "write_report": "report", "stress_check_report": "report", "SignOff": "report",
    "mesh_quality": "meshquality", "MeshQuality": "meshquality",
}

__all__ = sorted(_WHERE)


def __getattr__(name: str) -> Any:
    if name in _WHERE:
        module = importlib.import_module(f".{_WHERE[name]}", __name__)
        # ``combine`` and ``adapt`` are modules that run their function when called
        # (planar.core.compat.callable_module), so the name means one thing whatever was imported first
        value = module if name == _WHERE[name] else getattr(module, name)
        globals()[name] = value
        return value
    raise AttributeError(f"module 'planar.post' has no attribute {name!r}")


def __dir__() -> list[str]:
    return sorted(set(globals()) | set(_WHERE))


if TYPE_CHECKING:  # what type checkers and editors see; at run time the names load on first use
    from .adapt import AdaptiveRun, adapt, remesher, size_field
    from .checks import (CutResultant, Margin, PathStresses, StressConcentration, cut_resultant, kt,
                         margin_of_safety, nominal_gross, nominal_net, path_stresses)
    from .combine import (Combination, CombinedResult, Envelope, EnvelopePeak, combinations, combine, envelope,
                          plot_envelope, write_envelope_vtu)
    from .convergence import GridConvergence, convergence_study, grid_convergence
    from .edges import EdgePeak, EdgeStresses, edge_stresses, plot_edge_stresses
    from .estimate import ErrorEstimate, effectivity, estimate_error
    from .files import atomic_write_text, json_safe, read_result_file
    from .handbook import kt_hole_in_strip
    from .lugs import LugCheck, bearing_stress, kt_pin_loaded_lug, lug_check, net_section_stress, shear_out_stress
    from .hotspots import HotSpot, HotSpots, hot_spot_section, hot_spots, plot_hot_spots
    from .norms import energy_norm_error
    from .picture import plot_model
    from .plots import plot_along, plot_field, plot_nodal_field, plot_vtu, save_figure, vtu_fields
    from .meshquality import MeshQuality, mesh_quality
    from .report import (Figure, KeyValues, Notice, Paragraph, Report, Section, SignOff, Table, Tiles, render_html,
                         stress_check_report, write_report)
    from .scope import CAUTION, CAUTIONS
    from .vtk import write_vtu
