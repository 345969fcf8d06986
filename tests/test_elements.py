"""Element shape functions: partition of unity, Kronecker property, derivatives, completeness.

Sources: the isoparametric families T3, T6, Q4, Q8, Q9 (O. C. Zienkiewicz, R. L. Taylor and J. Z.
Zhu, The Finite Element Method: Its Basis and Fundamentals, 6th ed., 2005, chapter 6): every shape
function set sums to one, is 1 at its own node and 0 at the others, and reproduces the complete
polynomial of its degree (common practice).
"""
import numpy as np
import pytest

from planar.core.registry import element_type, registry

ELEMENTS = ["T3", "T6", "Q4", "Q8", "Q9"]


def _points(et, n=7, seed=0):
    rng = np.random.default_rng(seed)
    if et.cell == "triangle":
        p = rng.random((n, 2))
        p = np.where(p.sum(1, keepdims=True) > 1, 1 - p, p)
        return p
    return rng.uniform(-1, 1, (n, 2))


def test_builtins_come_from_entry_points():
    reg = registry()
    for name in ELEMENTS:
        assert reg.entries["element"][name].distribution == "planar"


@pytest.mark.parametrize("name", ELEMENTS)
def test_kronecker_and_partition_of_unity(name):
    et = element_type(name)
    np.testing.assert_allclose(et.shape(et.ref_nodes), np.eye(et.n_nodes), atol=1e-14)
    np.testing.assert_allclose(et.shape(_points(et)).sum(axis=1), 1.0, atol=1e-14)
    np.testing.assert_allclose(et.shape_derivatives(_points(et)).sum(axis=1), 0.0, atol=1e-13)


@pytest.mark.parametrize("name", ELEMENTS)
def test_derivatives_match_finite_differences(name):
    et = element_type(name)
    x = _points(et) * 0.8
    h = 1e-6
    fd = np.stack([(et.shape(x + [h, 0]) - et.shape(x - [h, 0])) / (2 * h),
                   (et.shape(x + [0, h]) - et.shape(x - [0, h])) / (2 * h)], axis=-1)
    np.testing.assert_allclose(et.shape_derivatives(x), fd, atol=1e-8)


@pytest.mark.parametrize("name", ELEMENTS)
def test_reproduces_complete_polynomial(name):
    et = element_type(name)
    x = _points(et)
    N = et.shape(x)
    r = et.ref_nodes
    for a in range(et.degree + 1):
        for b in range(et.degree + 1 - a):
            f_nodes = r[:, 0] ** a * r[:, 1] ** b
            np.testing.assert_allclose(N @ f_nodes, x[:, 0] ** a * x[:, 1] ** b, atol=1e-13)


@pytest.mark.parametrize("name", ELEMENTS)
def test_edges_and_reversal_are_consistent(name):
    et = element_type(name)
    # edge end nodes are corners and consecutive counter-clockwise
    corners = et.corner_count()
    np.testing.assert_array_equal(et.edges[:, 0], np.arange(corners))
    np.testing.assert_array_equal(et.edges[:, 1], (np.arange(corners) + 1) % corners)
    # reversing a counter-clockwise reference cell makes its area negative
    from planar.core.assembly import jacobian
    det, _ = jacobian(et, et.ref_nodes[None], et.default_rule().points)
    det_r, _ = jacobian(et, et.ref_nodes[et.reversed_order][None], et.default_rule().points)
    assert np.all(det > 0) and np.all(det_r < 0)
