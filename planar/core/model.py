"""The model: plain data saying what acts where. It computes nothing.

A model holds the mesh, the analysis (plane stress or plane strain), the material and thickness of
each region, the supports (shared by every load case) and the loads of each named load case.
Names are checked against the mesh as they are added, so a typo fails at once with the list of
names that exist.
"""
from __future__ import annotations

from dataclasses import dataclass
from typing import Any

from .values import number
from .errors import InputError, unknown_name
from .loads import LoadKind
from .materials import Isotropic, Orthotropic, check_analysis, check_material
from .mesh import Mesh
from .supports import Support
from .units import UnitSystem, unit_system

__all__ = ["Model", "Section"]

_RULE_WORDS = ("full", "reduced", "selective")


@dataclass
class Section:
    """Material and thickness of a region."""

    material: Any
    thickness: float


_PER_REGION = ("one value per region is given with model.assign(region, material=..., thickness=...) "
               "after Model(mesh, material, thickness) sets the default")


def _check_thickness(t) -> float:
    if isinstance(t, dict):
        raise InputError(f"thickness must be one positive number, got a dict {t!r}; {_PER_REGION}")
    return number(t, "thickness", positive=True)


def _check_material(m, analysis: str):
    if isinstance(m, dict):
        raise InputError(f"a material must be Isotropic or Orthotropic, got a dict of {len(m)}; {_PER_REGION}")
    if not isinstance(m, (Isotropic, Orthotropic)) and not hasattr(m, "D"):
        raise InputError(f"a material must be Isotropic or Orthotropic (or provide D()), got {m!r}")
    check_material(m, analysis)  # shape, finite, symmetric, positive definite: MaterialError naming it
    return m


class Model:
    """Materials, thickness, supports and load cases on a mesh.

    Parameters
    ----------
    mesh : Mesh
    material : Isotropic or Orthotropic, optional
        Material of every region not assigned otherwise.
    thickness : float, default 1.0
        Plate thickness of every region not assigned otherwise (set 1 for plane strain per unit depth).
    analysis : {"plane stress", "plane strain"}
    elements : mapping of str to str, optional
        Element formulation per mesh layout, e.g. ``{"Q4": "QM6"}`` to use a plugin's element on the
        mesh's 4-node quadrilaterals. Default: the layout's own element.
    quadrature : mapping of str to int or str, optional
        Integration rule per element name: an int (points per direction for quads, degree for
        triangles) or ``"full"`` (default), ``"reduced"``, ``"selective"`` (shear terms reduced).
    units : str or UnitSystem, optional
        The consistent unit system, by name or spelling, e.g. ``"N, mm, MPa"``, ``"kip-in-ksi"``
        (:mod:`planar.core.units` lists them); an unknown one is refused with the list. Left out:
        units not stated (the numbers are still taken as consistent; outputs say so). ``units``
        then reads as the system's label (``"N, mm, MPa"``) and ``unit_system`` gives the system.
    zero_energy : {"refuse", "warn", "stabilise"}
        What to do with element blocks whose stiffness has zero-energy (hourglass) modes beyond the
        three rigid motions, as a reduced or one-point rule gives: refuse them (default), go on with
        a loud ``"zero-energy"`` warning, or add a small stiffness on those modes only (see
        :func:`planar.core.kinematics.zero_energy_check`).

    Examples
    --------
    >>> from planar.geometry.structured import rectangle_mesh
    >>> from planar.core.materials import Isotropic
    >>> from planar.core.supports import Fixed
    >>> from planar.core.loads import Traction
    >>> model = Model(rectangle_mesh(100.0, 20.0, 10, 2), Isotropic(70e3, 0.33), thickness=2.0)
    >>> model.add_support(Fixed("left"))
    Fixed('left')
    >>> model.add_load(Traction("right", ty=-5.0), case="tip shear")
    Traction('right', tx=None, ty=-5)
    """

    def __init__(self, mesh: Mesh, material=None, thickness: float = 1.0, *,
                 analysis: str = "plane stress", elements: dict[str, str] | None = None,
                 quadrature: dict[str, Any] | None = None, units: str | UnitSystem | None = "consistent units",
                 zero_energy: str = "refuse"):
        if not isinstance(mesh, Mesh):
            raise InputError(f"Model needs a planar Mesh, got {type(mesh).__name__}")
        self.mesh = mesh
        self.analysis = check_analysis(analysis)
        self.default = Section(_check_material(material, self.analysis) if material is not None else None,
                               _check_thickness(thickness))
        self.sections: dict[str, Section] = {}
        self.supports: list[Support] = []
        self.pins: list = []  # planar.core.pins.Pin, added with add_pin
        self.cases: dict[str, list[LoadKind]] = {}
        self.elements = dict(elements or {})
        self.quadrature = dict(quadrature or {})
        self._unit_system = unit_system(units)  # an unknown name is refused with the known systems
        from .kinematics import ZERO_ENERGY_CHOICES

        if not isinstance(zero_energy, str) or zero_energy not in ZERO_ENERGY_CHOICES:
            raise InputError(f"zero_energy must be one of {ZERO_ENERGY_CHOICES}, got {zero_energy!r}; the default "
                             "'refuse' stops elements with zero-energy (hourglass) modes")
        self.zero_energy = zero_energy
        from .registry import element_type, registry

        for layout, name in self.elements.items():
            if layout not in mesh.cells:
                raise unknown_name("mesh cell layout", layout, mesh.cells)
            # an unknown element name fails here, listing the registered ones; a former name becomes the new one
            self.elements[layout] = element_type(registry().canonical("element", name, stacklevel=3)).name
        self.quadrature = {registry().canonical("element", k, stacklevel=3): v for k, v in self.quadrature.items()}
        used = {self.elements.get(layout, layout) for layout in mesh.cells}
        for name, q in self.quadrature.items():
            if name not in used:
                raise unknown_name("element in this model", name, used,
                                   "quadrature= is keyed by the element names the model uses")
            if isinstance(q, bool) or not (isinstance(q, int) or q in _RULE_WORDS):
                raise InputError(f"quadrature for {name!r} must be an int or one of {_RULE_WORDS}, got {q!r}")

    @property
    def units(self) -> str:
        """The unit system's label, ``"N, mm, MPa"`` (``"consistent units"`` when not stated)."""
        return self._unit_system.label

    @units.setter
    def units(self, value) -> None:
        self._unit_system = unit_system(value)

    @property
    def unit_system(self) -> UnitSystem:
        """The model's :class:`~planar.core.units.UnitSystem` (``NOT_STATED`` when none was named)."""
        return self._unit_system

    # ------------------------------------------------------------------ building
    def assign(self, region: str, material=None, thickness: float | None = None) -> Section:
        """Give a named region its own material and/or thickness."""
        if region not in self.mesh.region_names():
            raise unknown_name("region", region, self.mesh.region_names())
        old = self.sections.get(region, Section(self.default.material, self.default.thickness))
        sec = Section(_check_material(material, self.analysis) if material is not None else old.material,
                      _check_thickness(thickness) if thickness is not None else old.thickness)
        self.sections[region] = sec
        return sec

    def section(self, region: str) -> Section:
        """Material and thickness of a region (the model default where not assigned)."""
        sec = self.sections.get(region, self.default)
        if sec.material is None:
            raise InputError(
                f"region {region!r} has no material: pass material= to Model or call "
                f"model.assign({region!r}, material=...)"
            )
        return sec

    def _check_names(self, pairs):
        names = self.mesh.names()
        for what, name in pairs:
            if what == "edge" and name not in self.mesh.edge_sets:
                raise unknown_name("edge", name, self.mesh.edge_sets)
            if what in ("point", "node set") and name not in self.mesh.node_sets:
                raise unknown_name("point or edge", name, self.mesh.node_sets)
            if what == "region" and name not in names["regions"]:
                raise unknown_name("region", name, names["regions"])

    def add_support(self, support: Support) -> Support:
        """Add a support (it acts in every load case)."""
        if not isinstance(support, Support):
            raise InputError(f"add_support takes Fixed, Roller, Prescribed or Symmetry, got {support!r}")
        if isinstance(support.where, str):
            self._check_names([("node set", support.where)])
        else:  # a point (x, y): held at the nearest node, refused when far (SupportError)
            support.snap(self.mesh)
        self.supports.append(support)
        return support

    def add_pin(self, pin):
        """Add a pin tied to a named edge (:class:`planar.core.pins.Pin`); it acts in every load case.

        Load it per case with ``add_load(PinLoad(name, fx=..., fy=..., moment=...), case=...)`` or
        ``add_load("pin-load", pin=name, ...)``.
        """
        from .pins import check_new_pin

        check_new_pin(self, pin)
        self.pins.append(pin)
        return pin

    def add_case(self, case: str) -> str:
        """Create a load case with no load yet (e.g. one driven by prescribed displacements only)."""
        self.cases.setdefault(str(case), [])
        return str(case)

    def add_load(self, load: LoadKind | str, case: str = "load case 1", **params) -> LoadKind:
        """Add a load to a named load case.

        Parameters
        ----------
        load : LoadKind or str
            A load object, or the registered name of a load kind (e.g. ``"pressure"``), built with
            ``params``.
        case : str
            Load case name; created on first use.
        """
        if isinstance(load, str):
            from .registry import load_kind

            cls = load_kind(load)
            try:
                load = cls(**params)
            except TypeError as exc:
                raise InputError(f"load kind {cls.name or cls.__name__!r}: {exc}") from None
        elif params:
            raise InputError("keyword parameters go with a load kind name, not with a load object")
        if not hasattr(load, "nodal_forces"):
            raise InputError(f"not a load: {load!r}")
        from .loads import checked_names

        self._check_names(checked_names(load))  # words checked: a misspelt one is a PluginError
        self.cases.setdefault(str(case), []).append(load)
        return load

    def case_names(self) -> list[str]:
        return list(self.cases)

    def describe(self) -> dict[str, Any]:
        """A summary for reports: analysis, sections, supports and loads."""
        regions = self.mesh.region_names()
        return {
            "analysis": self.analysis,
            "units": self.units,
            "regions": {
                r: {"material": getattr(self.section(r).material, "describe", lambda: repr(self.section(r).material))(),
                    "thickness": self.section(r).thickness}
                for r in regions
            },
            "supports": [s.describe() for s in self.supports] + [p.describe() for p in self.pins],
            "cases": {c: [l.describe() for l in ls] for c, ls in self.cases.items()},
        }
