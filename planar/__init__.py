"""planar: stress checks of flat parts under in-plane loads.

Linear elastic, small strain, static 2D analysis (plane stress or plane strain) with T3, T6, Q4, Q8
and Q9 elements. Units are the user's and must be consistent (e.g. N, mm, MPa).

Results are linear-elastic, static figures with the limits stated once in :data:`planar.post.CAUTION`
(no buckling, fatigue, fracture or plasticity check; review by a qualified engineer).

The faces: ``planar`` (model, solve, results, errors), ``planar.geometry`` (plates and meshing),
``planar.post`` (checks, estimates, combinations, files, figures, reports).

Examples
--------
>>> import planar
>>> mesh = planar.rectangle_mesh(100.0, 20.0, 20, 4, "Q8")          # mm
>>> model = planar.Model(mesh, planar.Isotropic(E=70e3, nu=0.33), thickness=2.0)   # MPa, mm
>>> model.add_support(planar.Roller("left", fixed="x"))
Roller('left', fixed='x')
>>> model.add_support(planar.Roller("corner_00", fixed="y"))
Roller('corner_00', fixed='y')
>>> model.add_load(planar.Traction("right", tx=50.0), case="pull")   # MPa
Traction('right', tx=50, ty=None)
>>> result = planar.solve(model)["pull"]
>>> round(result.max("von_mises")[0], 6)
50.0
"""
from __future__ import annotations

__version__ = "0.1.0"

from .core.errors import (DiscretisationWarning, ElementError, GeometryError, InputError, MaterialError,
                          MeshError, NameNotFoundError, OutputError, PlanarError, PlanarWarning, PluginError,
                          ResourceError, SolverError, SupportError)
from .core.elements import ElementType
from .core.loads import BodyForce, Gravity, LoadKind, PointForce, Pressure, TemperatureChange, Traction
from .core.materials import Isotropic, Orthotropic
from .core.mesh import Mesh
from .core.model import Model
from .core.result import Extreme, Result
from .core.static import solve
from .core.supports import Fixed, Prescribed, Roller, Symmetry
from .core.pins import Pin, PinLoad
from .core.joints import Fasteners, Joint, JointResult
from .core.units import UnitSystem, unit_system
from .core.zones import Away, InBox, InCircle, InRegion, Near, OnEdge, Outside, Zone
from .geometry.structured import rectangle_mesh
from .post.vtk import write_vtu
from .paths import output_dir  # the output folder of a script run by ``planar run SCRIPT --out DIR``

__all__ = [
    "Mesh", "Model", "Result", "Extreme", "ElementType", "solve", "write_vtu", "rectangle_mesh", "output_dir",
    "Isotropic", "Orthotropic", "UnitSystem", "unit_system",
    "Fixed", "Roller", "Prescribed", "Symmetry", "Pin", "PinLoad",
    "Joint", "Fasteners", "JointResult",
    "Zone", "OnEdge", "InRegion", "InCircle", "InBox", "Near", "Outside", "Away",
    "Traction", "Pressure", "PointForce", "BodyForce", "Gravity", "TemperatureChange", "LoadKind",
    "PlanarError", "InputError", "MeshError", "ElementError", "MaterialError", "NameNotFoundError",
    "SupportError", "SolverError", "PluginError", "GeometryError", "ResourceError", "OutputError",
    "PlanarWarning", "DiscretisationWarning",
]
