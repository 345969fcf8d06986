"""One registry for element types and load kinds, filled from entry points.

Built-in parts register through the package's own ``planar.elements`` and ``planar.loads`` entry
points, the same path plugins use. A plugin that fails to import or declares something invalid is
reported by name with its error and skipped; two distributions claiming one name is an error naming
both.

Discovery itself never raises: every problem (an import error, an invalid declaration, a name
claimed twice) is recorded in :attr:`Registry.problems`, shown by ``planar plugins``, and raised as a
:class:`~planar.core.errors.PluginError` only when the name in question is asked for, so one bad
plugin leaves every other name usable.
"""
from __future__ import annotations

import importlib.metadata as _md
import warnings
from contextlib import contextmanager
from dataclasses import dataclass, field
from typing import Any

import numpy as np

from .errors import PlanarError, PluginError, unknown_name

__all__ = ["Registry", "Entry", "PluginProblem", "element_type", "load_kind", "registry", "reload_plugins",
           "describe_provider", "plugin_call", "check_plugin_array"]

GROUPS = {"element": "planar.elements", "load": "planar.loads"}
KIND_WORDS = {"element": "element type", "load": "load kind"}
LOCKING_WORDS = ("volumetric", "shear")  # the words of an element's free_of_locking


@dataclass
class PluginProblem:
    """A plugin entry that could not be used.

    Attributes
    ----------
    kind : {"element", "load"}
    name : str
        The entry-point name.
    distribution : str
        The distribution(s) that declare it (two, comma-separated, for a name claimed twice).
    error : str
        What went wrong: the exception type and message, or the conflict.
    version : str
        Version of the distribution ("" when unknown or for a conflict).
    """

    kind: str
    name: str
    distribution: str
    error: str
    version: str = ""

    def __str__(self) -> str:
        return f"{self.kind} plugin {self.name!r} from {self.distribution}: {self.error}"


@dataclass
class Entry:
    """A usable registered element type or load kind.

    Attributes
    ----------
    kind : {"element", "load"}
    name : str
    obj : class
        The element type or load kind class.
    distribution, version : str
        The distribution that provides it (``"planar"`` for the built-in parts).
    value : str
        The entry-point target, ``"module:attribute"``.
    """

    kind: str
    name: str
    obj: Any
    distribution: str
    version: str
    value: str


def _require(obj: Any, attrs, has, what: str, base: str, name_attr: str, name: str) -> None:
    """The attributes a plugin must have, and its own name equal to its entry point's."""
    missing = [a for a in attrs if not has(obj, a)]
    if missing:
        raise PluginError(f"{what} lacks {', '.join(missing)} (subclass {base})")
    own = getattr(obj, name_attr, None)
    if own != name:
        raise PluginError(f"the entry point is named {name!r} but the {what} calls itself {own!r}; "
                          f"make its `{name_attr}` attribute equal to the entry-point name")


def _validate_element(obj: Any, name: str) -> None:
    needed = ["cell", "degree", "ref_nodes", "edges", "meshio_type", "shape", "shape_derivatives", "n_nodes",
              "default_rule"]
    _require(obj, needed, hasattr, "element type", "planar.plugin.ElementType", "name", name)
    if obj.cell not in ("triangle", "quad"):
        raise PluginError(f"element cell must be 'triangle' or 'quad', not {obj.cell!r}")
    if not isinstance(obj.degree, (int, np.integer)) or isinstance(obj.degree, bool) or obj.degree < 1:
        raise PluginError(f"element degree must be a whole number 1 or more, not {obj.degree!r}")
    if not isinstance(obj.meshio_type, str) or not obj.meshio_type:
        raise PluginError(f"meshio_type must be a meshio cell type name such as 'quad', not {obj.meshio_type!r}")
    for hook in ("stiffness", "strain"):
        h = getattr(obj, hook, None)
        if h is not None and not callable(h):
            raise PluginError(f"the optional hook {hook} must be callable or None, not {h!r}")
    free = getattr(obj, "free_of_locking", None)
    if free is not None and (isinstance(free, str) or not isinstance(free, (tuple, list, set, frozenset))
                             or any(w not in LOCKING_WORDS for w in free)):
        raise PluginError(f"free_of_locking must be a tuple of the words {', '.join(map(repr, LOCKING_WORDS))} "
                          f"(or left out), not {free!r}: a misspelt or bare word would be read as not free and "
                          "set off locking warnings that do not apply")
    k = int(obj.n_nodes)
    ref = np.asarray(obj.ref_nodes, dtype=float)
    if ref.shape != (k, 2):
        raise PluginError(f"ref_nodes has shape {ref.shape}, expected ({k}, 2)")
    if getattr(obj, "reversed_order", None) is None:
        raise PluginError("reversed_order cannot be derived: the node layout is not symmetric about the "
                          "diagonal through node 0; declare reversed_order, the permutation that turns a "
                          "clockwise element counter-clockwise")
    perm = np.asarray(obj.reversed_order)
    if perm.shape != (k,) or sorted(perm.tolist()) != list(range(k)):
        raise PluginError(f"reversed_order must be a permutation of 0..{k - 1}, got {perm.tolist()}")
    edges = np.asarray(obj.edges)
    if edges.ndim != 2 or edges.shape[1] not in (2, 3) or edges.min() < 0 or edges.max() >= k:
        raise PluginError(f"edges must be an (n_edges, 2 or 3) array of local node numbers 0..{k - 1}")
    n = np.asarray(obj.shape(ref))
    if n.shape != (k, k) or not np.allclose(n, np.eye(k), atol=1e-10):
        raise PluginError("shape functions are not 1 at their own node and 0 at the others")
    dn = np.asarray(obj.shape_derivatives(ref))
    if dn.shape != (k, k, 2):
        raise PluginError(f"shape_derivatives returned shape {dn.shape}, expected (q, n_nodes, 2)")
    # a point inside either reference cell: the functions must reproduce a constant (partition of unity)
    inner = np.array([[0.21, 0.17]])
    if not np.allclose(np.sum(obj.shape(inner), axis=1), 1.0, atol=1e-10) or \
            not np.allclose(np.sum(obj.shape_derivatives(inner), axis=1), 0.0, atol=1e-10):
        raise PluginError("shape functions do not sum to 1 (or their derivatives to 0) inside the cell")
    rule = obj.default_rule()
    if getattr(rule, "cell", obj.cell) != obj.cell:
        raise PluginError(f"default_rule() is a rule on a {rule.cell}, the element is a {obj.cell}")


def _validate_load(obj: Any, name: str) -> None:
    if not isinstance(obj, type):
        raise PluginError("a load kind must be a class (subclass planar.core.loads.LoadKind)")
    if not getattr(obj, "name", "") and getattr(obj, "kind", ""):
        warnings.warn(f"load kind {obj.kind!r}: the class attribute `kind` is now `name`; the old word works "
                      "for one release", DeprecationWarning, stacklevel=2)
        name_attr = "kind"
    else:
        name_attr = "name"
    _require(obj, ("nodal_forces", "initial_strain", "names_used", "describe"),
             lambda o, a: callable(getattr(o, a, None)), "load kind", "planar.plugin.LoadKind", name_attr, name)


_VALIDATORS = {"element": _validate_element, "load": _validate_load}


@dataclass
class Registry:
    """Element types and load kinds found through entry points.

    Attributes
    ----------
    entries : dict
        ``{"element": {name: Entry}, "load": {name: Entry}}``, the usable entries.
    problems : list of PluginProblem
        Entries that failed to import, declared something invalid, or claim a name twice.
    conflicts : dict
        ``{(kind, name): [Entry, Entry, ...]}`` for names claimed by more than one distribution;
        such a name is in no table and asking for it raises a PluginError naming every claimant.
    aliases : dict
        ``{"element": {old: new}, "load": {old: new}}``: former names that a registered class still
        answers to for one release (its ``deprecated_names`` attribute), each use with a
        DeprecationWarning. A former name never hides a registered one.
    """

    entries: dict[str, dict[str, Entry]] = field(default_factory=lambda: {"element": {}, "load": {}})
    problems: list[PluginProblem] = field(default_factory=list)
    conflicts: dict[tuple[str, str], list[Entry]] = field(default_factory=dict)
    aliases: dict[str, dict[str, str]] = field(default_factory=lambda: {"element": {}, "load": {}})

    @classmethod
    def discover(cls) -> "Registry":
        """Read both entry-point groups; never raises for a bad plugin (see :attr:`problems`)."""
        reg = cls()
        for kind, group in GROUPS.items():
            for ep in _md.entry_points(group=group):
                dist = ep.dist.name if ep.dist is not None else "unknown distribution"
                version = ep.dist.version if ep.dist is not None else "?"
                try:
                    obj = ep.load()
                    _VALIDATORS[kind](obj, ep.name)
                except (Exception, SystemExit) as exc:  # a broken plugin never breaks the core
                    reg.problems.append(PluginProblem(kind, ep.name, dist, f"{type(exc).__name__}: {exc}", version))
                    continue
                reg._add(Entry(kind, ep.name, obj, dist, version, ep.value))
        for (kind, name), claims in reg.conflicts.items():
            reg.problems.append(PluginProblem(kind, name, ", ".join(e.distribution for e in claims),
                                              reg._conflict_message(kind, name)))
        for kind, table in reg.entries.items():
            for entry in table.values():
                for old in getattr(entry.obj, "deprecated_names", ()) or ():
                    if old not in table and (kind, old) not in reg.conflicts:
                        reg.aliases[kind][str(old)] = entry.name
        return reg

    def _add(self, entry: Entry) -> None:
        table = self.entries[entry.kind]
        key = (entry.kind, entry.name)
        if key in self.conflicts:
            self.conflicts[key].append(entry)
            return
        old = table.get(entry.name)
        if old is None:
            table[entry.name] = entry
        elif old.distribution == entry.distribution and old.value == entry.value:
            return  # the same declaration seen twice (one distribution on two path entries)
        else:
            self.conflicts[key] = [table.pop(entry.name), entry]

    def _conflict_message(self, kind: str, name: str) -> str:
        claims = self.conflicts[(kind, name)]
        who = " and ".join(f"{e.distribution} {e.version} ({e.value})" for e in claims)
        return (f"two distributions claim the {KIND_WORDS[kind]} name {name!r}: {who}; "
                "uninstall one of them or rename its entry point")

    def get(self, kind: str, name: str) -> Any:
        """The class registered under ``name``.

        Raises
        ------
        PluginError
            If two distributions claim the name.
        NameNotFoundError
            If no usable entry has the name (listing those that exist, and the load error of an
            installed plugin of that name that could not be loaded).
        """
        table = self.entries[kind]
        if (kind, name) in self.conflicts:
            raise PluginError(self._conflict_message(kind, name))
        name = self.canonical(kind, name, stacklevel=4)
        if name not in table:
            hint = ""
            if not self.entries["element"]:
                hint = "No element types are registered at all: install planar (pip install -e .)"
            bad = [p for p in self.problems if p.kind == kind and p.name == name]
            if bad:
                hint = f"It is installed (by {bad[0].distribution}) but could not be loaded: {bad[0].error}"
            raise unknown_name(KIND_WORDS[kind], name, table, hint)
        return table[name].obj

    def canonical(self, kind: str, name: str, stacklevel: int = 2) -> str:
        """The registered name for ``name``: itself, or the new name of a former one (with a DeprecationWarning)."""
        new = self.aliases[kind].get(name) if name not in self.entries[kind] else None
        if new is None:
            return name
        warnings.warn(f"the {KIND_WORDS[kind]} {name!r} is now called {new!r}; the old name works for one "
                      "release", DeprecationWarning, stacklevel=stacklevel)
        return new

    def names(self, kind: str) -> list[str]:
        """The registered names of a kind, sorted (former names not included)."""
        return sorted(self.entries[kind])

    def entry(self, kind: str, name: str) -> Entry:
        """The :class:`Entry` (with distribution and version) registered under ``name``."""
        self.get(kind, name)
        return self.entries[kind][self.aliases[kind].get(name, name) if name not in self.entries[kind] else name]


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
    """The element type registered under ``name`` (e.g. ``"T6"``); a former name warns and gives the new one."""
    return registry().get("element", name)


def load_kind(name: str):
    """The load kind class registered under ``name`` (e.g. ``"pressure"``); a former name warns."""
    return registry().get("load", name)


def describe_provider(kind: str, obj: Any) -> str:
    """Who provides an element type or load kind, for messages.

    ``obj`` is the registered class (or an instance of a load kind). Returns e.g.
    ``"element type 'QM6' (planar-incompatible-quad 0.1.0)"``; a load object made from a class that
    is not registered is named by its class.
    """
    cls = obj if isinstance(obj, type) else type(obj)
    name = getattr(cls, "name", "") or cls.__dict__.get("kind", "") or cls.__name__
    word = KIND_WORDS[kind]
    try:
        entries = registry().entries[kind]
    except Exception:  # pragma: no cover - discovery never raises, be safe anyway
        entries = {}
    for e in entries.values():
        if e.obj is cls:
            return f"{word} {e.name!r} ({e.distribution} {e.version}, {e.value})"
    return f"{word} {name!r} (class {cls.__module__}.{cls.__qualname__}, not a registered plugin)"


def _builtin(kind: str, obj: Any) -> bool:
    """Whether ``obj`` (a class or an instance) is one of planar's own element types or load kinds."""
    cls = obj if isinstance(obj, type) else type(obj)
    return cls.__module__ == "planar" or cls.__module__.startswith("planar.")


@contextmanager
def plugin_call(kind: str, obj: Any, what: str):
    """Turn an unexpected exception raised inside an element type or load kind into a PluginError.

    planar's own errors (bad user input found by the plugin through the documented helpers) pass
    through unchanged; anything else is reported naming the plugin, its distribution and the step.
    """
    try:
        yield
    except PlanarError as exc:
        # raised by planar's helpers on the plugin's behalf: the message gains the plugin's name and
        # hook, since what it blames (a traction function, a name) may be the plugin's, not the user's
        if not _builtin(kind, obj) and not getattr(exc, "_plugin_named", False) and exc.args \
                and isinstance(exc.args[0], str):
            exc.args = (f"{describe_provider(kind, obj)}, in {what}: {exc.args[0]}",) + exc.args[1:]
            exc._plugin_named = True
        raise
    except (MemoryError, KeyboardInterrupt):
        raise
    except Exception as exc:
        raise PluginError(
            f"{describe_provider(kind, obj)} failed in {what}: {type(exc).__name__}: {exc}; "
            "report it to the plugin's authors, or use another element type or load kind"
        ) from exc


def check_plugin_array(kind: str, obj: Any, what: str, value, shape: tuple) -> np.ndarray:
    """A plugin's returned array as float, refused unless it has ``shape`` and finite values."""
    try:
        arr = np.asarray(value, dtype=float)
    except (TypeError, ValueError) as exc:
        raise PluginError(f"{describe_provider(kind, obj)}: {what} returned something that is not an "
                          f"array of numbers ({exc})") from None
    if arr.shape != tuple(shape):
        raise PluginError(f"{describe_provider(kind, obj)}: {what} returned shape {arr.shape}, "
                          f"expected {tuple(shape)}")
    if not np.all(np.isfinite(arr)):
        raise PluginError(f"{describe_provider(kind, obj)}: {what} returned NaN or infinite values")
    if (kind, what) in _SYMMETRIC and arr.size:
        # a linear-elastic stiffness is symmetric (reciprocity); a lopsided one otherwise reaches the
        # solver and comes back as an out-of-balance answer blamed on the user's units
        scale = np.abs(arr).max(axis=(-2, -1))
        gap = np.abs(arr - np.swapaxes(arr, -1, -2)).max(axis=(-2, -1))
        bad = np.flatnonzero(gap > 1e-8 * np.where(scale > 0, scale, 1.0))
        if bad.size:
            e = int(bad[0])
            raise PluginError(f"{describe_provider(kind, obj)}: {what} returned matrices that are not symmetric "
                              f"({bad.size} of {arr.shape[0]} in the batch; the first, batch element {e}, off by "
                              f"{gap[e]:.3g} against its largest term {scale[e]:.3g}); an elastic stiffness is "
                              "symmetric: check the plugin for a transposed product or a term added on one side "
                              "of the diagonal only")
    return arr


_SYMMETRIC = {("element", "stiffness")}  # hooks whose (e, m, m) answer must be symmetric
