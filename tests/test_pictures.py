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
    assert g["load-value:traction:right"].get_text() == "60 MPa"
    assert g["load-value:point-force:(60, 25)"].get_text() == "500 N"
    ax = fig.axes[0]
    assert ax.get_xlabel() == "x [mm]" and ax.get_ylabel() == "y [mm]" and ax.get_aspect() == 1.0
    assert "units: N, mm, MPa" in g["units"].get_text()
    # and on the rendered image: each symbol's own colour is painted where its artist says it is
    fig.canvas.draw()
    image = np.asarray(fig.canvas.buffer_rgba())[..., :3].astype(int)

    def painted(xy, colour, r=6):
        px, py = ax.transData.transform(xy)
        row, col = int(round(image.shape[0] - py)), int(round(px))
        patch = image[max(row - r, 0):row + r + 1, max(col - r, 0):col + r + 1]
        rgb = np.array([int(colour[k:k + 2], 16) for k in (1, 3, 5)])
        return bool((np.abs(patch - rgb).sum(axis=-1) < 60).any())

    from planar.post import picture

    assert painted((-35.0, 0.0), picture._PIN)                                      # the pin's ring and cross
    assert painted(fixed.get_segments()[0].mean(axis=0), picture._SUPPORT)          # a hatching stroke
    assert painted((roller.get_xdata()[3], roller.get_ydata()[3]), picture._SUPPORT)  # a roller
    tip = np.asarray(load.X)[0] + 0.5 * np.asarray(load.U)[0], np.asarray(load.Y)[0]
    assert painted(tip, picture._LOAD)                                              # a traction arrow
    assert not painted((0.0, 0.0), picture._LOAD) and not painted((0.0, 0.0), picture._PIN)  # the bare plate


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


# ------------------------------------------------------------------------------------------ result pictures
A, SIGMA = 5.0, 100.0   # hole radius [mm], remote tension [MPa]


@pytest.fixture(scope="module")
def kirsch():
    """A quarter of a 100 x 100 mm plate with a 10 mm hole, pulled along x by 100 MPa (symmetry on x = 0, y = 0)."""
    from planar.verify.recovery_cases import kirsch_mesh

    m = kirsch_mesh("Q8", 12, a=A, width=10.0)
    L = 10.0 * A
    model = planar.Model(m, planar.Isotropic(E, NU), thickness=1.0, units="N, mm, MPa")
    model.add_support(planar.Symmetry("symmetry_x"))
    model.add_support(planar.Symmetry("symmetry_y"))
    model.add_load(planar.Traction("outer", tx=lambda x, y: np.where(x > L - 1e-9, SIGMA, 0.0)), case="pull")
    return planar.solve(model)["pull"]


def _texts(fig) -> str:
    return "\n".join(t.get_text() for ax in fig.axes for t in ax.texts)


def _label_point(text: str, word: str = "at") -> tuple[float, float]:
    import re

    m = re.search(word + r" \((-?[\d.]+), (-?[\d.]+)\)", text)
    assert m, text
    return float(m.group(1)), float(m.group(2))


def test_peak_label_marker_and_axes_share_the_part_coordinates(kirsch):
    from planar.post.plots import plot_field

    fig = plot_field(kirsch, "von_mises")
    g = _gids(fig)
    ring, label = g["peak-max"], g["peak-max-label"]
    marker = (ring.get_xdata()[0], ring.get_ydata()[0])
    # the label states the point the marker sits on (2 decimals for a 50 mm part)
    assert np.allclose(_label_point(label.get_text()), marker, atol=0.0051)
    assert np.allclose(label.xy, marker)
    # ... which is the node of the largest value, on the part as made (not moved by the displacements)
    v = kirsch.field("von_mises", recovery="spr")
    assert np.allclose(marker, kirsch.mesh.nodes[int(np.argmax(v))], atol=1e-12)
    # the axes hold the undeformed part and the picture says so
    assert fig.axes[0].get_xlim()[1] < 10 * A * 1.03
    assert "contours on the undeformed part (axes, markers, labels in its coordinates)" in _texts(fig)
    # drawn on the deformed shape, the label says where the point is drawn as well as where it is on the part
    fig = plot_field(kirsch, "von_mises", on="deformed", scale=500.0)
    g = _gids(fig)
    ring, text = g["peak-max"], g["peak-max-label"].get_text()
    drawn = np.array([ring.get_xdata()[0], ring.get_ydata()[0]])
    i = int(np.argmax(v))
    assert np.allclose(_label_point(text, "drawn at"), drawn, atol=0.0051)
    assert np.allclose(_label_point(text), kirsch.mesh.nodes[i], atol=0.0051)
    assert np.allclose(drawn, kirsch.mesh.nodes[i] + 500.0 * kirsch.u[i], atol=1e-9)
    with pytest.raises(planar.InputError, match="undeformed"):
        plot_field(kirsch, "von_mises", on="sideways")


def test_undeformed_outline_is_drawn_with_a_deformed_shape(kirsch):
    from planar.post.plots import plot_field

    for on in ("undeformed", "deformed"):
        g = _gids(plot_field(kirsch, "sigma_xx", on=on))
        und, dfm = g["undeformed-outline"], g["deformed-outline"]
        assert len(und.get_segments()) == len(dfm.get_segments()) > 0
        # the undeformed outline holds the part's own corners; the deformed one has moved
        pts = np.concatenate(und.get_segments())
        assert np.isclose(pts[:, 0].max(), 10 * A) and np.isclose(pts[:, 1].max(), 10 * A)
        assert not np.allclose(np.concatenate(dfm.get_segments()), pts)
    g = _gids(plot_field(kirsch, "sigma_xx", scale=None))
    assert "undeformed-outline" in g and "deformed-outline" not in g


def test_automatic_magnification_keeps_the_hole_within_three_per_cent(kirsch):
    import re

    from planar.post.plots import plot_field

    fig = plot_field(kirsch, "von_mises")
    s = float(re.search(r"displacements x ([\d.e+-]+)", _texts(fig)).group(1))
    g = _gids(fig)
    und = g["undeformed-outline"].get_segments()
    dfm = g["deformed-outline"].get_segments()
    on_hole = [k for k, p in enumerate(und) if np.allclose(np.hypot(p[[0, -1], 0], p[[0, -1], 1]), A)]
    hole = np.concatenate([dfm[k] for k in on_hole])
    rx, ry = hole[:, 0].max(), hole[:, 1].max()           # drawn radius along and across the load
    assert abs(rx / A - 1) <= 0.03 + 1e-9 and abs(ry / A - 1) <= 0.03 + 1e-9
    # the drawing is true to scale: the hole grows by 3 sigma d / E along the load and shrinks by
    # sigma d / E across it (Kirsch, 1898, via Timoshenko and Goodier, sec. 35), times the stated factor
    assert (rx / A - 1) / s == pytest.approx(3 * SIGMA / E, rel=0.08)
    assert (ry / A - 1) / s == pytest.approx(-SIGMA / E, rel=0.15)
    assert rx / A - 1 > 0.005                               # and it is still visible (not drawn at x 1)
    # asked for more, the picture draws it and says how far the shapes are out
    assert "distorted by up to" in _texts(plot_field(kirsch, "von_mises", scale=20 * s))


def test_minimum_marked_for_a_signed_field_not_for_von_mises(kirsch):
    from planar.post.plots import plot_field

    g = _gids(plot_field(kirsch, "sigma_yy"))
    assert {"peak-max", "peak-min", "peak-min-label"} <= set(g)
    assert g["peak-max"].get_marker() != g["peak-min"].get_marker()
    text = g["peak-min-label"].get_text()
    v = kirsch.field("sigma_yy", recovery="spr")
    assert text.startswith(f"min {plots_fmt(v.min())} MPa")
    # Kirsch: sigma_yy = sigma_theta = -sigma at the hole's edge on the load axis, (a, 0)
    assert v.min() == pytest.approx(-SIGMA, rel=0.08)
    assert np.allclose(_label_point(text), (A, 0.0), atol=0.6)
    g = _gids(plot_field(kirsch, "von_mises"))
    assert "peak-max" in g and "peak-min" not in g
    assert "peak-min" not in _gids(plot_field(kirsch, "sigma_yy", mark_peak="max"))
    assert "peak-min" in _gids(plot_field(kirsch, "von_mises", mark_peak="both"))
    with pytest.raises(planar.InputError, match="mark_peak"):
        plot_field(kirsch, "sigma_yy", mark_peak="least")


def plots_fmt(v: float) -> str:
    from planar.post import plots

    return plots._fmt(v)


# ------------------------------------------------------------------------------------------ sweep plot
def _table(margins):
    from planar.studies.table import SweepTable

    records = [{"key": str(i), "params": {"width": w}, "status": "done", "outputs": {"peak": 100.0 + w, "margin": m}}
               for i, (w, m) in enumerate(zip((40.0, 50.0, 60.0), margins))]
    return SweepTable("m:f", ["width"], ["peak", "margin"], records)


def test_sweep_plot_units_and_zero_line_on_a_margin_that_changes_sign():
    fig = _table([-0.2, 0.1, 0.4]).plot(units={"width": "mm", "peak": "MPa"})
    ax_peak, ax_margin = fig.axes
    assert ax_peak.get_ylabel() == "peak [MPa]" and ax_margin.get_xlabel() == "width [mm]"
    assert ax_margin.get_ylabel() == "margin"                # a margin is a pure number
    zero = [ln for ln in ax_margin.lines if ln.get_gid() == "zero-line"]
    assert len(zero) == 1 and np.allclose(zero[0].get_ydata(), 0.0)
    assert not [ln for ln in ax_peak.lines if ln.get_gid() == "zero-line"]
    fig = _table([0.1, 0.2, 0.4]).plot()                    # all passing: no zero line to cross
    assert not [ln for ax in fig.axes for ln in ax.lines if ln.get_gid() == "zero-line"]


def test_model_picture_of_a_joint_draws_each_layer_and_its_fasteners():
    mat = planar.Isotropic(E=70e3, nu=0.3)
    a = planar.Model(planar.rectangle_mesh(40.0, 10.0, 8, 2), mat, thickness=2.0, units="N, mm, MPa")
    b = planar.Model(planar.rectangle_mesh(40.0, 10.0, 8, 2, origin=(20.0, 0.0)), mat, thickness=2.0,
                     units="N, mm, MPa")
    a.add_support(planar.Fixed("left"))
    b.add_load(planar.Traction("right", tx=50.0), case="pull")
    joint = planar.Joint({"skin": a, "strap": b})
    joint.add_fasteners(planar.Fasteners([(25.0, 5.0), (35.0, 5.0)], layers=("skin", "strap"), diameter=4.0,
                                         flexibility=2e-5))
    fig = plot_model(joint, fasteners=[(30.0, 2.0)])
    g = _gids(fig)
    assert {"outline:skin", "outline:strap", "layer-name:skin", "support:fixed:left", "load:traction:right"} <= set(g)
    dots = g["fastener"]
    assert sorted(zip(dots.get_xdata(), dots.get_ydata())) == [(25.0, 5.0), (30.0, 2.0), (35.0, 5.0)]
    assert np.allclose(np.asarray(g["load:traction:right"].X), 60.0)   # on the strap's right edge, x = 60
    assert fig.axes[0].get_xlim()[0] < 0.0 < 60.0 < fig.axes[0].get_xlim()[1]


def test_path_plot_marks_max_and_min_of_a_signed_field(kirsch):
    from planar.post.plots import plot_along

    fig = plot_along(kirsch, (A, 0.0), (10 * A, 0.0), "sigma_yy", n_points=91)
    g = _gids(fig)
    low = g["peak-min"]
    # Kirsch: sigma_yy = -sigma at the hole's edge on the load axis, rising towards zero away from it
    assert low.get_xdata()[0] == pytest.approx(0.0, abs=1e-9)
    assert low.get_ydata()[0] == pytest.approx(-SIGMA, rel=0.08)
    assert g["peak-min-label"].get_text().startswith("min -") and "MPa" in g["peak-min-label"].get_text()
    assert g["peak-max"].get_ydata()[0] > low.get_ydata()[0]
    g = _gids(plot_along(kirsch, (0.0, A), (0.0, 10 * A), "von_mises", n_points=31))
    assert "peak-max" in g and "peak-min" not in g


def test_sweep_records_a_peak_in_its_model_units_and_the_plot_labels_it(tmp_path):
    from planar.studies import SafetyMargin, example_strap, sweep

    # the strap carries sigma_xx = load / (width t) = 2000 / (w 2) MPa (common practice): 25 MPa at w = 40 mm,
    # so an allowable of 30 MPa passes at w >= 40 and fails at w = 30 (margin 30 / 33.3 - 1 < 0)
    table = sweep(example_strap, [{"width": w} for w in (30.0, 40.0, 50.0)], workers=0,
                  outputs={"peak": "max:sigma_xx", "MS": SafetyMargin(30.0, 1.0, field="sigma_xx")},
                  store=tmp_path / "store")
    assert table.records[0]["units"] == {"peak": "MPa"}              # a margin is a pure number: no unit
    np.testing.assert_allclose(table.column("peak"), [2000.0 / (w * 2.0) for w in (30.0, 40.0, 50.0)], rtol=1e-9)
    fig = table.plot(units={"width": "mm"})
    assert [ax.get_ylabel() for ax in fig.axes] == ["peak [MPa]", "MS"]
    assert fig.axes[-1].get_xlabel() == "width [mm]"
    assert [ln.get_gid() for ln in fig.axes[1].lines].count("zero-line") == 1
