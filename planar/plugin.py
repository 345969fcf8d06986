"""The plugin author's one import: the whole contract of element types and load kinds.

An element plugin subclasses :class:`ElementType` (or a built-in element such as :class:`Q4`), a
load-kind plugin subclasses :class:`LoadKind`; both are registered by an entry point in the
``planar.elements`` or ``planar.loads`` group whose name equals the class's ``name``. Everything a
plugin needs is here, so it never reaches into planar's modules (whose layout may change):

- the bases and the built-in elements: ElementType, T3, T6, Q4, Q8, Q9, LoadKind;
- what a load kind sees: LoadContext, EdgeGeometry, and NAME_WORDS, the words of ``names_used()``;
- the batched element maps an element's own ``stiffness`` or ``strain`` hook builds on: shape_values,
  jacobian, jacobian_det, strain_matrix, strains, element_strains, line_shape;
- quadrature: Rule, rule_for, gauss_line, gauss_quad, gauss_triangle;
- the errors to raise (each message says what is wrong and how to fix it): PlanarError, InputError,
  MeshError, ElementError, MaterialError, NameNotFoundError, PluginError;
- the registry: element_type, load_kind, registry, reload_plugins.

See docs/plugins.md for the contract in full, with two plugins built from scratch.

Examples
--------
>>> import numpy as np
>>> from planar.plugin import ElementType, element_type
>>> class Linear(ElementType):          # what only it can know; the rest is derived
...     name, cell, degree, meshio_type = "linear", "triangle", 1, "triangle"
...     ref_nodes = np.array([[0.0, 0.0], [1.0, 0.0], [0.0, 1.0]])
...     edges = np.array([[0, 1], [1, 2], [2, 0]])
>>> Linear.n_nodes, Linear.reversed_order.tolist(), Linear.rule_degree
(3, [0, 2, 1], 1)
>>> element_type("Q8").default_rule().n_points
9
"""
from __future__ import annotations

from .core._element_maps import element_strains, jacobian, jacobian_det, shape_values, strain_matrix, strains
from .core.elements import Q4, Q8, Q9, T3, T6, ElementType, full_rule_degree, line_shape, mirrored_order
from .core.errors import (ElementError, InputError, MaterialError, MeshError, NameNotFoundError, PlanarError,
                          PluginError)
from .core.loads import NAME_WORDS, EdgeGeometry, LoadContext, LoadKind, checked_names
from .core.quadrature import Rule, gauss_line, gauss_quad, gauss_triangle, rule_for
from .core.registry import element_type, load_kind, registry, reload_plugins

__all__ = [
    "ElementType", "T3", "T6", "Q4", "Q8", "Q9", "mirrored_order", "full_rule_degree", "line_shape",
    "LoadKind", "LoadContext", "EdgeGeometry", "NAME_WORDS", "checked_names",
    "shape_values", "jacobian", "jacobian_det", "strain_matrix", "strains", "element_strains",
    "Rule", "rule_for", "gauss_line", "gauss_quad", "gauss_triangle",
    "PlanarError", "InputError", "MeshError", "ElementError", "MaterialError", "NameNotFoundError", "PluginError",
    "element_type", "load_kind", "registry", "reload_plugins",
]
