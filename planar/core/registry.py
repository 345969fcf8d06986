"""One registry for element types and load kinds, filled from entry points.

Built-in parts register through the package's own ``planar.elements`` and ``planar.loads`` entry
points, the same path plugins use. A plugin that fails to import or declares something invalid is
reported by name with its error and skipped; two distributions claiming one name is an error naming
both.
"""
from __future__ import annotations

import importlib.metadata as _md
from dataclasses import dataclass, field
from typing import Any

import numpy as np

from .errors import PluginError, unknown_name

__all__ = ["Registry", "PluginProblem", "element_type", "load_kind", "registry", "reload_plugins"]

GROUPS = {"element": "planar.elements", "load": "planar.loads"}


@dataclass
class PluginProblem:
    """A plugin entry that could not be used."""

    kind: str
    name: str
    distribution: str
    error: str

    def __str__(self) -> str:
        return f"{self.kind} plugin {self.name!r} from {self.distribution}: {self.error}"


@dataclass
class Entry:
    kind: str
    name: str
    obj: Any
    distribution: str
    version: str
    value: str


def _validate_element(obj: Any) -> None:
    needed = ["cell", "n_nodes", "degree", "ref_nodes", "edges", "default_order", "meshio_type",
              "reversed_order", "shape", "shape_derivatives"]
    missing = [a for a in needed if not hasattr(obj, a)]
    if missing:
        raise PluginError(f"element type lacks {', '.join(missing)}")
    if obj.cell not in ("triangle", "quad"):
        raise PluginError(f"element cell must be 'triangle' or 'quad', not {obj.cell!r}")
    ref = np.asarray(obj.ref_nodes, dtype=float)
    if ref.shape != (obj.n_nodes, 2):
        raise PluginError(f"ref_nodes has shape {ref.shape}, expected ({obj.n_nodes}, 2)")
    n = np.asarray(obj.shape(ref))
    if n.shape != (obj.n_nodes, obj.n_nodes) or not np.allclose(n, np.eye(obj.n_nodes), atol=1e-10):
        raise PluginError("shape functions are not 1 at their own node and 0 at the others")
    dn = np.asarray(obj.shape_derivatives(ref))
    if dn.shape != (obj.n_nodes, obj.n_nodes, 2):
        raise PluginError(f"shape_derivatives returned shape {dn.shape}, expected (q, n_nodes, 2)")


def _validate_load(obj: Any) -> None:
    if not isinstance(obj, type):
        raise PluginError("a load kind must be a class")
    if not hasattr(obj, "nodal_forces"):
        raise PluginError("load kind lacks nodal_forces(context)")


_VALIDATORS = {"element": _validate_element, "load": _validate_load}


@dataclass
class Registry:
    """Element types and load kinds found through entry points."""

    entries: dict[str, dict[str, Entry]] = field(default_factory=lambda: {"element": {}, "load": {}})
    problems: list[PluginProblem] = field(default_factory=list)

    @classmethod
    def discover(cls) -> "Registry":
        reg = cls()
        for kind, group in GROUPS.items():
            for ep in _md.entry_points(group=group):
                dist = ep.dist.name if ep.dist is not None else "unknown distribution"
                version = ep.dist.version if ep.dist is not None else "?"
                try:
                    obj = ep.load()
                    _VALIDATORS[kind](obj)
                except Exception as exc:  # a broken plugin never breaks the core
                    reg.problems.append(PluginProblem(kind, ep.name, dist, f"{type(exc).__name__}: {exc}"))
                    continue
                reg._add(Entry(kind, ep.name, obj, dist, version, ep.value))
        return reg

    def _add(self, entry: Entry) -> None:
        table = self.entries[entry.kind]
        old = table.get(entry.name)
        if old is not None and old.value != entry.value:
            raise PluginError(
                f"two distributions claim the {entry.kind} name {entry.name!r}: "
                f"{old.distribution} ({old.value}) and {entry.distribution} ({entry.value}); "
                "uninstall one of them or rename its entry point"
            )
        table[entry.name] = entry

    def get(self, kind: str, name: str) -> Any:
        table = self.entries[kind]
        if name not in table:
            hint = ""
            if not self.entries["element"]:
                hint = "No element types are registered at all: install planar (pip install -e .)"
            bad = [p for p in self.problems if p.kind == kind and p.name == name]
            if bad:
                hint = f"It is installed but could not be loaded: {bad[0].error}"
            raise unknown_name("element type" if kind == "element" else "load kind", name, table, hint)
        return table[name].obj

    def names(self, kind: str) -> list[str]:
        return sorted(self.entries[kind])


_REGISTRY: Registry | None = None


def registry() -> Registry:
    """The process-wide registry, discovered on first use."""
    global _REGISTRY
    if _REGISTRY is None:
        _REGISTRY = Registry.discover()
    return _REGISTRY


def reload_plugins() -> Registry:
    """Discover entry points again (after installing a plugin in a running process)."""
    global _REGISTRY
    _REGISTRY = None
    return registry()


def element_type(name: str):
    """The element type registered under ``name`` (e.g. ``"T6"``)."""
    return registry().get("element", name)


def load_kind(name: str):
    """The load kind class registered under ``name`` (e.g. ``"pressure"``)."""
    return registry().get("load", name)
