"""The geometry's one tolerance, shared by the plate recipe and the gmsh build below it."""
from __future__ import annotations

__all__ = ["REL_TOL"]

#: relative tolerance (times the plate's size) for "on the boundary" and "touching"
REL_TOL = 1e-6
