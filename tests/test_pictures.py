"""Pictures that tell the truth: the model picture's symbols, and result pictures in one coordinate system.

The figures are read through their drawn artists (tagged with gids), not by pixels alone. The physics
behind the magnification check is the hole in a plate under tension: its diameter along the load grows
by 3 sigma d / E (G. Kirsch, 1898; S. P. Timoshenko and J. N. Goodier, Theory of Elasticity, 3rd ed.,
1970, sec. 35; from memory), so an honest picture magnifies by at most a few per cent over that.
"""
from __future__ import annotations

import numpy as np
import pytest

import planar
from planar.post.picture import plot_model

E, NU = 70e3, 0.33


def _gids(fig) -> dict[str, object]:
    return {str(a.get_gid()): a for ax in fig.axes for a in ax.get_children() if a.get_gid()}


def _marker_of(artist) -> str:
    """What an artist draws, as a shape: its class and, for a line, its marker, line style and marker size."""
    kind = type(artist).__name__
    if kind == "Line2D":
        return f"Line2D:{artist.get_marker()}:{artist.get_linestyle()}:{artist.get_markersize():g}"
    if kind == "LineCollection":
        return f"LineCollection:{tuple(artist.get_linestyle()[0][1] or ())}"
    return kind


def _model_with_everything():
    """A 120 x 50 mm strap, fixed on the left, on rollers below, pinned in a hole, pulled on the right."""
    from planar.geometry import Circle, Plate, mesh

    plate = Plate.rectangle(120.0, 50.0, centre=(0.0, 0.0)).cut(Circle((-35.0, 0.0), 8.0, name="bolt_hole"))
    m = mesh(plate, size=8.0, element="T3")
    model = planar.Model(m, planar.Isotropic(E, NU), thickness=4.0, units="N, mm, MPa")
    model.add_support(planar.Fixed("left"))
    model.add_support(planar.Roller("bottom", fixed="y"))
    model.add_pin(planar.Pin("bolt_hole", tie="rigid", hold="both"))
    model.add_load(planar.Traction("right", tx=60.0), case="pull")
    model.add_load(planar.PointForce((60.0, 25.0), fy=-500.0), case="pull")
    return model


def test_model_picture_draws_fixed_roller_pin_and_load_as_distinct_tagged_symbols(tmp_path):
    model = _model_with_everything()
    fig = plot_model(model, tmp_path / "model.png", fasteners=[(40.0, 10.0), (40.0, -10.0)])
    assert (tmp_path / "model.png").read_bytes()[:4] == b"\x89PNG"
    g = _gids(fig)
    fixed, roller, pin = g["support:fixed:left"], g["support:roller:bottom"], g["pin:bolt_hole"]
    load, force = g["load:traction:right"], g["load:point-force:(60, 25)"]
    shapes = {_marker_of(a) for a in (fixed, roller, pin, load, force)}
    assert len(shapes) == 5, shapes                                  # five different kinds of mark
    assert roller.get_marker() == "o" and pin.get_marker() == "o"    # both circles, told apart by ...
    assert pin.get_markersize() > 1.5 * roller.get_markersize()      # ... size and the cross at the pin
    assert g["pin-cross:bolt_hole"].get_marker() == "x"
    # the pin sits at the centre of its hole, its tie reaches the hole's edge (radius 8 mm)
    assert np.allclose([pin.get_xdata()[0], pin.get_ydata()[0]], [-35.0, 0.0], atol=1e-6)
    spokes = g["pin-tie:bolt_hole"].get_segments()
    assert np.allclose([np.hypot(*(s[1] - s[0])) for s in spokes], 8.0, rtol=1e-6)
    # hatching of the fixed edge lies outside the part (x <= -60) and the rollers below it (y < -25)
    assert max(s[:, 0].max() for s in fixed.get_segments()) <= -60.0 + 1e-9
    assert roller.get_ydata().max() < -25.0
    # traction arrows: 60 MPa pulling outward (+x) from the right edge, one length for a uniform load
    U = np.asarray(load.U)
    assert np.all(U > 0) and np.allclose(U, U[0]) and np.allclose(np.asarray(load.X), 60.0)
    assert np.allclose(g["fastener"].get_xdata(), 40.0)
    # the legend names every symbol; the units come from the model's system
    legend = [t.get_text() for t in fig.legends[0].get_texts()]
    for word in ("fixed", "roller", "pin", "traction", "point force", "fastener"):
        assert any(t.startswith(word) for t in legend), (word, legend)
    assert any("60 MPa" in t for t in legend)
    assert g["load-value:point-force:(60, 25)"].get_text() == "500 N"
    ax = fig.axes[0]
    assert ax.get_xlabel() == "x [mm]" and ax.get_ylabel() == "y [mm]" and ax.get_aspect() == 1.0
    assert "units: N, mm, MPa" in g["units"].get_text()


def test_model_picture_symmetry_prescribed_gravity_temperature_and_unknown_case():
    m = planar.rectangle_mesh(100.0, 20.0, 10, 2, "Q4")
    model = planar.Model(m, planar.Isotropic(E, NU, density=2.7e-9), thickness=2.0, units="N, mm, MPa")
    model.add_support(planar.Symmetry("left"))
    model.add_support(planar.Prescribed("right", ux=0.05))
    model.add_load(planar.Gravity(direction=(0, -1)), case="weight")
    model.add_load(planar.TemperatureChange(40.0), case="heat")
    model.add_load(planar.Pressure("top", 2.0), case="heat")
    fig = plot_model(model, case="heat")
    g = _gids(fig)
    assert g["support:symmetry:left"].get_linestyle()[0][1]          # dashed (dash-dot), unlike a fixed edge
    assert "support:prescribed:right" in g
    assert "load:gravity:all" not in g                               # the case drawn is 'heat' only
    assert "temperature change dT = 40" in g["notes"].get_text()
    # pressure pushes into the part: the arrow heads end on the top edge (y = 20)
    q = g["load:pressure:top"]
    assert np.all(np.asarray(q.V) < 0) and np.allclose(np.asarray(q.Y) + np.asarray(q.V), 20.0)
    g2 = _gids(plot_model(model, case="weight"))
    assert "load:gravity:all" in g2 and g2["load-letter:gravity"].get_text() == "g"
    with pytest.raises(planar.NameNotFoundError):
        plot_model(model, case="wind")
