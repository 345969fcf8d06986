"""Plate geometry and meshing: the only part of planar that talks to gmsh.

Shapes (:class:`Rectangle`, :class:`Polygon`, :class:`Outline`, :class:`Circle`, :class:`Ellipse`,
:class:`Slot`, :class:`RoundedRectangle`) make a :class:`Plate`; :func:`mesh` turns it into a
:class:`planar.core.mesh.Mesh` of the element named (``mesh(plate, size=5.0, element="T6")``) with
every boundary piece, point and region named. gmsh is imported only when a plate is built or meshed.
"""
from .lugs import lug
from .meshing import Refine, element_options, mesh
from .plate import Plate
from .shapes import Circle, Ellipse, Outline, Polygon, Rectangle, RoundedRectangle, Shape, Slot

__all__ = [
    "Plate",
    "Shape",
    "Rectangle",
    "Polygon",
    "Outline",
    "Circle",
    "Ellipse",
    "Slot",
    "RoundedRectangle",
    "Refine",
    "mesh",
    "element_options",
    "lug",
]
