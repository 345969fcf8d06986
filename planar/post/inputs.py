"""The inputs of a model in plain words, with units: what a checker reads instead of Python code.

:func:`describe_support`, :func:`describe_pin`, :func:`describe_load` and :func:`describe_material`
turn each support, pin, load and material into a sentence stating its values with the model's
units (``"edge 'left' clamped: both displacements held (ux = uy = 0)"``, not ``Fixed('left')``).
A support or load kind of a plugin may say itself in plain words with a method
``describe_plain(units) -> str`` (``units`` a :class:`planar.core.units.UnitSystem`); without one,
its ``describe()`` is used as it is. :func:`input_rows` gives the label/value rows of a whole
model: analysis, units, material and thickness of each region, supports, pins, and the loads of
each load case.

Examples
--------
>>> import planar
>>> from planar.post.inputs import describe_load, describe_support
>>> u = planar.core.units.unit_system("N, mm, MPa")
>>> describe_support(planar.Fixed("left"), u)
"edge 'left' clamped: both displacements held (ux = uy = 0)"
>>> describe_load(planar.Traction("right", tx=40.0), u)
"traction on edge 'right': 40 MPa along x"
"""
from __future__ import annotations

import math
from typing import Any

import numpy as np

from ..core.units import UnitSystem, unit_system
from ..core.zones import _WORDS

__all__ = ["describe_support", "describe_pin", "describe_load", "describe_material", "input_rows", "plain",
           "short_name", "plain_names"]


def _u(units: UnitSystem, quantity: str) -> str:
    s = units.unit_of(quantity)
    return f" {s}" if s else ""


def _num(v) -> str:
    return f"{float(v):.6g}"


def _value(v, units: UnitSystem, quantity: str) -> str:
    """A number with its unit, or a function by name."""
    if callable(v):
        name = getattr(v, "__name__", "") or "a function"
        return f"given by {'the function ' + name if name != '<lambda>' else 'a function'} of (x, y)" + \
            (f" [{units.unit_of(quantity)}]" if units.unit_of(quantity) else "")
    return f"{_num(v)}{_u(units, quantity)}"


def _where(where, units: UnitSystem, word: str = "edge") -> str:
    if isinstance(where, str):
        return f"{word} '{where}'"
    x, y = where
    return f"the point ({_num(x)}, {_num(y)}){_u(units, 'length')}"


def _snapped(support, units: UnitSystem) -> str:
    snapped = getattr(support, "snapped", None)
    if snapped is None or isinstance(support.where, str):
        return ""
    i, at, d = snapped
    return (f" (held at node {i}, ({_num(at[0])}, {_num(at[1])}){_u(units, 'length')}, "
            f"{d:.3g}{_u(units, 'length')} from the point given)")


def _direction(d) -> str:
    if isinstance(d, str):
        return {"x": "x", "y": "y"}.get(d.lower(), d)
    dx, dy = (float(c) for c in d)
    n = math.hypot(dx, dy) or 1.0
    return f"the direction ({dx / n:.4g}, {dy / n:.4g})"


def describe_support(support, units: UnitSystem | str | None = None) -> str:
    """One support in plain words, with units (see the module notes)."""
    units = unit_system(units)
    own = getattr(support, "describe_plain", None)
    if callable(own):
        return str(own(units))
    name = type(support).__name__
    where = _where(support.where, units)
    extra = _snapped(support, units)
    if name == "Fixed":
        return f"{where} clamped: both displacements held (ux = uy = 0){extra}"
    if name == "Symmetry":
        return f"{where} a line of symmetry: the displacement normal to it held, free to slide along it{extra}"
    if name == "Roller":
        fixed = support.fixed
        if isinstance(fixed, str) and fixed.lower() == "normal":
            return f"{where} on rollers: the displacement normal to it held, free to slide along it{extra}"
        if isinstance(fixed, str) and fixed.lower() in ("x", "y"):
            other = "y" if fixed.lower() == "x" else "x"
            return f"{where} on rollers: u{fixed.lower()} held (= 0), free to move along {other}{extra}"
        return f"{where} on rollers: the displacement along {_direction(fixed)} held, free across it{extra}"
    if name == "Prescribed":
        parts = []
        for comp in ("ux", "uy"):
            v = getattr(support, comp, None)
            parts.append(f"{comp} free" if v is None else f"{comp} = {_value(v, units, 'displacement')} prescribed")
        return f"{where}: {', '.join(parts)}{extra}"
    return str(support.describe())


def describe_pin(pin, units: UnitSystem | str | None = None, mesh=None) -> str:
    """One pin in plain words: its edge, tie, point, what it holds, its prescribed motion."""
    units = unit_system(units)
    own = getattr(pin, "describe_plain", None)
    if callable(own):
        return str(own(units))
    tie = {"rigid": "tied rigidly to edge '{e}' (the edge moves with the pin as a rigid body)",
           "spreading": "tied to edge '{e}' by a spreading tie (its force spread over the edge; the hole may "
                        "ovalise)",
           "contact": "bearing on edge '{e}' where it touches (contact: compression only, frictionless)"
           }.get(pin.tie, "tied to edge '{e}'").format(e=pin.edge)
    if pin.tie == "contact":
        radius = getattr(pin, "radius", None)
        tie += (f", pin radius {_num(radius)}{_u(units, 'length')}" if radius is not None else
                f", radial clearance {_num(getattr(pin, 'clearance', 0.0))}{_u(units, 'length')}")
    at = pin.at
    if at is None and mesh is not None:
        try:
            at = tuple(float(c) for c in pin.point(mesh))
        except Exception:  # noqa: BLE001 - the point is extra information
            at = None
    if at is not None:
        scale = 1.0
        if mesh is not None:
            x0, y0, x1, y1 = mesh.bounding_box()
            scale = max(x1 - x0, y1 - y0, 1e-300)
        at = tuple(0.0 if abs(c) < 1e-9 * scale else c for c in at)  # round-off of a fitted centre reads 0
    point = f" about ({_num(at[0])}, {_num(at[1])}){_u(units, 'length')}" if at is not None else ""
    hold = pin.hold
    if hold is None:
        held = "free to translate"
    elif hold == "both":
        held = "held in x and y"
    elif hold in ("x", "y"):
        held = f"held along {hold}, free along {'y' if hold == 'x' else 'x'}"
    else:
        held = f"held along {_direction(hold)}, free across it"
    rot = "rotation held" if pin.rotation == "held" else "free to turn"
    move = getattr(pin, "move", (0.0, 0.0, 0.0))
    moved = ""
    if any(abs(v) > 0 for v in move):
        moved = (f"; moved by ux = {_num(move[0])}{_u(units, 'length')}, uy = {_num(move[1])}{_u(units, 'length')}, "
                 f"rotation {_num(move[2])} rad")
    return f"pin '{pin.name}' {tie}{point}; {held}; {rot}{moved}"


def describe_load(load, units: UnitSystem | str | None = None) -> str:
    """One load in plain words, with units (a plugin's load: its ``describe_plain`` or ``describe()``)."""
    units = unit_system(units)
    own = getattr(load, "describe_plain", None)
    if callable(own):
        return str(own(units))
    name = type(load).__name__
    if name == "Traction":
        if load.normal is not None or load.tangential is not None:
            parts = []
            if load.normal is not None:
                parts.append(f"{_value(load.normal, units, 'stress')} normal to the edge (positive pulls outward)")
            if load.tangential is not None:
                parts.append(f"{_value(load.tangential, units, 'stress')} along the edge (counter-clockwise "
                             "positive)")
            return f"traction on edge '{load.where}': " + " and ".join(parts)
        parts = [f"{_value(v, units, 'stress')} along {c}" for c, v in (("x", load.tx), ("y", load.ty))
                 if v is not None]
        return f"traction on edge '{load.where}': " + " and ".join(parts)
    if name == "Pressure":
        return f"pressure on edge '{load.where}': {_value(load.p, units, 'pressure')} (positive pushes on the edge)"
    if name == "PointForce":
        return (f"point force at {_where(load.where, units, 'point')}: fx = {_value(load.fx, units, 'force')}, "
                f"fy = {_value(load.fy, units, 'force')}")
    if name == "BodyForce":
        per_volume = f"{units.force}/{units.length}^3" if units.stated else ""
        u = f" {per_volume}" if per_volume else ""
        comps = ", ".join(f"{c} = {('given by a function of (x, y)' if callable(v) else _num(v) + u)}"
                          for c, v in (("bx", load.bx), ("by", load.by)))
        return f"body force per unit volume: {comps}, " + \
            (f"in region '{load.region}'" if load.region is not None else "in the whole plate")
    if name == "Gravity":
        where = ("in the regions " + ", ".join(f"'{r}'" for r in load.regions)) if load.regions else \
            "in every region with a density"
        if getattr(load, "direction", None) is not None:
            g = f"standard gravity along {_direction(load.direction)}"
        else:
            g = f"acceleration gx = {_num(load.gx)}, gy = {_num(load.gy)}" + \
                (f" {units.unit_of('acceleration')}" if units.stated else "")
        return f"weight: {g}, times each material's density, {where}"
    if name == "TemperatureChange":
        if isinstance(load.dT, np.ndarray):
            dT = f"given at each node ({load.dT.min():.4g} to {load.dT.max():.4g} degrees)"
        elif callable(load.dT):
            dT = "given by a function of (x, y), in degrees"
        else:
            dT = f"{_num(load.dT)} degrees"
        where = f"in region '{load.region}'" if load.region is not None else "in the whole plate"
        return f"temperature change from the stress-free state: {dT} {where} (expansion alpha per degree)"
    if name == "PinLoad":
        return (f"load on pin '{load.pin}': fx = {_num(load.fx)}{_u(units, 'force')}, fy = {_num(load.fy)}"
                f"{_u(units, 'force')}, moment {_num(load.moment)}{_u(units, 'moment')} (counter-clockwise positive)")
    text = str(load.describe())
    kind = getattr(load, "name", "") or name
    return text if kind in text else f"{kind}: {text}"


def describe_material(material, units: UnitSystem | str | None = None) -> str:
    """A material's constants with units (moduli in the stress unit, density in the density unit)."""
    units = unit_system(units)
    own = getattr(material, "describe_plain", None)
    if callable(own):
        return str(own(units))
    s = _u(units, "stress")
    name = getattr(material, "name", "") or type(material).__name__.lower()
    if type(material).__name__ == "Isotropic":
        parts = [f"E = {_num(material.E)}{s}", f"nu = {_num(material.nu)}"]
        if material.alpha:
            parts.append(f"alpha = {material.alpha:.4g} per degree")
        if material.density:
            parts.append(f"density = {material.density:.4g}{_u(units, 'density')}")
        return (f"{name} (isotropic): " if name != "isotropic" else "isotropic: ") + ", ".join(parts)
    if type(material).__name__ == "Orthotropic":
        parts = [f"E1 = {_num(material.E1)}{s}", f"E2 = {_num(material.E2)}{s}", f"nu12 = {_num(material.nu12)}",
                 f"G12 = {_num(material.G12)}{s}", f"axis 1 at {_num(material.angle)} deg from x"]
        if material.E3 is not None:
            parts.append(f"E3 = {_num(material.E3)}{s}")
        if material.density:
            parts.append(f"density = {material.density:.4g}{_u(units, 'density')}")
        return (f"{name} (orthotropic): " if name != "orthotropic" else "orthotropic: ") + ", ".join(parts)
    d = getattr(material, "describe", None)
    return str(d()) if callable(d) else type(material).__name__


_ANALYSIS = {"plane stress": "plane stress (a thin plate: no stress through the thickness)",
             "plane strain": "plane strain (a long body: no strain through the thickness)"}


def input_rows(model, case: str | None = None) -> list[tuple[str, str]]:
    """Label/value rows of a model's inputs in plain words with units (see the module notes).

    Parameters
    ----------
    model : Model
    case : str, optional
        The load case the report checks; its loads come first and are marked.
    """
    units = model.unit_system
    rows: list[tuple[str, str]] = [("analysis", _ANALYSIS.get(model.analysis, model.analysis)),
                                   ("units", units.describe())]
    length = _u(units, "length")
    for region in model.mesh.region_names():
        sec = model.section(region)
        rows.append((f"material, region '{region}'", describe_material(sec.material, units)))
        rows.append((f"thickness, region '{region}'", f"{_num(sec.thickness)}{length}"))
    for k, s in enumerate(model.supports, 1):
        rows.append((f"support {k}", describe_support(s, units)))
    if not model.supports:
        rows.append(("supports", "none"))
    joined = getattr(model, "joint_pins", None) or {}
    for k, p in enumerate(getattr(model, "pins", []) or [], 1):
        text = describe_pin(p, units, model.mesh)
        if p.name in joined:
            text += f"; carries fastener {joined[p.name][1]} of group '{joined[p.name][0]}' (its springs to the " \
                    "other layers)"
        rows.append((f"pin {k}", text))
    for fz in getattr(model, "joint_fasteners", None) or []:
        rows.append((f"fasteners '{fz.name}'", _describe_fasteners(fz, model, units)))
    names = list(model.cases)
    if case in names:
        names.remove(case)
        names.insert(0, case)
    rows.append(("load cases", ", ".join(f"'{c}'" + (" (this report)" if c == case else "") for c in names)
                 or "none"))
    for c in names:
        loads = model.cases[c]
        if not loads:
            rows.append((f"loads, case '{c}'", "none applied to this layer: it is loaded through its fasteners"
                         if getattr(model, "joint_fasteners", None) else
                         "none (driven by the supports' prescribed motions)" if _moved(model) else "none"))
        for k, load in enumerate(loads, 1):
            rows.append((f"load {k}, case '{c}'", describe_load(load, units)))
    return rows


def _moved(model) -> bool:
    """Whether a support or a pin of the model prescribes a motion other than zero."""
    for s in model.supports:
        for a in ("ux", "uy"):
            v = getattr(s, a, None)
            if callable(v) or (v is not None and v != 0):
                return True
    return any(any(abs(v) > 0 for v in getattr(p, "move", (0.0, 0.0, 0.0)) or ())
               for p in getattr(model, "pins", []) or [])


def _describe_fasteners(fz, model, units: UnitSystem) -> str:
    """A group of fasteners of a joint in plain words, seen from one of its layers."""
    length = _u(units, "length")
    try:
        k = len(fz.points())
    except Exception:  # noqa: BLE001 - named points need the joint; the count is extra information
        k = len(fz.names or [])
    flex = (f"flexibility by {fz.flexibility!r} (fastener E = {_num(fz.modulus)}{_u(units, 'stress')})"
            if isinstance(fz.flexibility, str) else
            f"compliance {_num(fz.flexibility)}{length}/{units.force} per shear plane" if units.stated else
            f"compliance {_num(fz.flexibility)} (length/force) per shear plane")
    name = getattr(model, "joint_layer", None)
    tie = (f"{fz.tie} ties at holes {', '.join(repr(e) for e in fz.holes[name])}" if name in fz.holes else
           "spread over the nodes within d/2 of each point (no hole modelled)")
    return (f"{k} {fz.kind}(s), d = {_num(fz.diameter)}{length}, {fz.shear} shear, joining layers "
            f"{', '.join(repr(x) for x in fz.layers)}; {flex}; in this layer: {tie}")


def plain(thing: Any, units: UnitSystem | str | None = None, mesh=None) -> str:
    """Any support, pin, load or material in plain words (dispatch on what it is)."""
    from ..core.loads import LoadKind
    from ..core.pins import Pin
    from ..core.supports import Support

    if isinstance(thing, Support):
        return describe_support(thing, units)
    if isinstance(thing, Pin):
        return describe_pin(thing, units, mesh)
    if isinstance(thing, LoadKind):
        return describe_load(thing, units)
    return describe_material(thing, units)


def short_name(thing, units: UnitSystem | str | None = None) -> str:
    """A few plain words naming a support, pin or load (``"clamp on edge 'left'"``), for running text."""
    units = unit_system(units)
    own = getattr(thing, "short_name", None)
    if callable(own):
        return str(own())
    name = type(thing).__name__
    where = getattr(thing, "where", None)
    at = _where(where, units) if where is not None and not (name == "PointForce" and isinstance(where, str)) \
        else (f"point '{where}'" if where is not None else "")
    word = {**_WORDS, "Traction": "traction", "Pressure": "pressure"}.get(name)  # the words of zones.plain_name
    if word:
        return f"{word} {'at' if name == 'PointForce' else 'on'} {at}"
    if name == "Pin":
        return f"pin '{thing.name}'"
    if name == "PinLoad":
        return f"load on pin '{thing.pin}'"
    kind = getattr(thing, "name", "") or name
    return f"{kind} load" + (f" on {at}" if at else "")


def plain_names(model) -> dict[str, str]:
    """Python spellings of the model's supports, pins and loads (their repr and describe()) -> :func:`short_name`.

    Longest first, so a caller replacing them in running text replaces the longer spelling first.
    """
    units = model.unit_system
    things = list(model.supports) + list(getattr(model, "pins", []) or []) + \
        [load for loads in model.cases.values() for load in loads]
    loads = {id(load) for loads in model.cases.values() for load in loads}
    out: dict[str, str] = {}
    for t in things:
        short = short_name(t, units)
        # a plugin's load without describe_plain is shown in the inputs by its describe(): that text, values and
        # all, stays as it is there (replacing it by the short name would lose the values)
        shown = describe_load(t, units) if id(t) in loads else None
        for text in (repr(t), str(t.describe()) if callable(getattr(t, "describe", None)) else ""):
            if shown and text and text in shown:
                continue
            if text and "(" in text and text.endswith(")") and text != short:
                out.setdefault(text, short)
                if type(t).__name__ == "Pin":  # "the pin Pin('hole', ...)" reads "the pin 'hole'"
                    out.setdefault(f"pin {text}", short)
    return dict(sorted(out.items(), key=lambda kv: -len(kv[0])))
