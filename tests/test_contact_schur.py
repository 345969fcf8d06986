"""Bearing contact through the Schur complement that PARDISO returns with its factorization.

The contact set marks the unknowns its gap map touches (the edge nodes' and the pins' free translations);
PARDISO eliminates them last and returns their dense Schur complement ``S``, so the flexibility is
``W = B_s S^-1 B_s^T`` without a solve. These tests check the factor's Schur figures against the
definition, and the contact answer against the other path (forward solves with the factor, the path of
every back end without a Schur complement) and against K. L. Johnson's closed form.
"""
from __future__ import annotations

import numpy as np
import pytest
import scipy.sparse as sp

import planar
from planar.core import contact as contact_module
from planar.core import solvers as solvers_module
from planar.core.pins import PinLoad
from planar.verify.contact_cases import hertz_half_width, hertz_model, hertz_reference, loaded_hole_model

pytestmark = pytest.mark.skipif("pardiso" not in solvers_module.available_solvers(),
                                reason="the Schur complement path needs MKL PARDISO")


def _spd(n: int, seed: int) -> sp.csc_matrix:
    M = sp.random(n, n, density=0.05, random_state=seed)
    return (M @ M.T + sp.eye(n) * 3.0).tocsc()


def test_schur_complement_and_its_uses_match_the_definition():
    """S = K_ss - K_si K_ii^-1 K_is (the Schur complement; F. Zhang (ed.), The Schur Complement and Its
    Applications, Springer, 2005, ch. 1), and [K^-1]_ss = S^-1 (the same, block inverse); the ordinary
    solve of the same factor is unchanged."""
    n = 200
    K = _spd(n, 5)
    rng = np.random.default_rng(7)
    s = np.sort(rng.choice(n, 23, replace=False))
    i = np.setdiff1d(np.arange(n), s)
    f = solvers_module.factorize(sp.tril(K).tocsc(), "pardiso", schur=s[::-1])  # any order: taken sorted
    Kd = K.toarray()
    S = Kd[np.ix_(s, s)] - Kd[np.ix_(s, i)] @ np.linalg.solve(Kd[np.ix_(i, i)], Kd[np.ix_(i, s)])
    assert np.array_equal(f.schur_unknowns, s)
    assert np.abs(f.schur - S).max() <= 1e-12 * np.abs(S).max()
    b = rng.standard_normal((n, 3))
    x = np.linalg.solve(Kd, b)
    assert np.abs(f.solve(b) - x).max() <= 1e-11 * np.abs(x).max()
    assert np.abs(f.schur_part(b) - x[s]).max() <= 1e-11 * np.abs(x).max()
    Bs = rng.standard_normal((9, s.size))
    Bfull = np.zeros((9, n))
    Bfull[:, s] = Bs
    W = Bfull @ np.linalg.solve(Kd, Bfull.T)
    assert np.abs(f.schur_gram(Bs) - W).max() <= 1e-11 * np.abs(W).max()
    # the forward half of the solve still gives b^T K^-1 b = Z^T Z (K = P^T L L^T P), its Schur block finished
    # by the dense factor of S
    assert np.abs(f.gram(Bfull.T) - W).max() <= 1e-11 * np.abs(W).max()


def test_turned_pairs_give_the_same_flexibility_and_solves():
    """With pairs of unknowns turned to given directions (an edge node's normal and tangent), the Schur
    complement on the normal components alone still gives ``B K^-1 B^T`` for rows ``B`` of normal motions
    (checked against dense solves: ``T`` orthogonal, so ``B K^-1 B^T = (B T) (T^T K T)^-1 (B T)^T``), and the
    solves and the forward half take and return the unknowns as given."""
    n = 200
    K = _spd(n, 5)
    Kd = K.toarray()
    rng = np.random.default_rng(1)
    pick = rng.choice(n, 42, replace=False)
    pairs, extra = pick[:40].reshape(20, 2), pick[40:]
    th = rng.uniform(0.0, 2 * np.pi, 20)
    dirs = np.column_stack([np.cos(th), np.sin(th)])
    f = solvers_module.factorize(sp.tril(K).tocsc(), "pardiso", schur=np.r_[pairs[:, 0], extra],
                                 schur_basis=(pairs, 3.0 * dirs))  # directions need not be unit
    assert f.schur.shape == (22, 22)
    rows = np.r_[np.repeat(np.arange(20), 2), 0, 7]
    cols = np.r_[pairs.ravel(), extra]
    B = sp.csr_matrix((np.r_[dirs.ravel(), -0.7, 0.4], (rows, cols)), shape=(20, n))
    W = B @ np.linalg.solve(Kd, B.T.toarray())
    Bs = f.schur_rows(B)
    assert Bs is not None and Bs.shape == (20, 22)
    assert np.abs(f.schur_gram(Bs) - W).max() <= 1e-11 * np.abs(W).max()
    b = rng.standard_normal((n, 3))
    x = np.linalg.solve(Kd, b)
    assert np.abs(f.solve(b) - x).max() <= 1e-11 * np.abs(x).max()
    assert np.abs(Bs @ f.schur_part(b) - B @ x).max() <= 1e-11 * np.abs(B @ x).max()
    assert np.abs(f.gram(B.T.toarray()) - W).max() <= 1e-11 * np.abs(W).max()
    # a row across a turned pair (the tangent) touches an unknown left out of the Schur complement
    across = sp.csr_matrix((np.r_[-dirs[0, 1], dirs[0, 0]], ([0, 0], pairs[0])), shape=(1, n))
    assert f.schur_rows(across) is None


def test_without_marks_or_with_too_many_the_factor_has_no_schur_complement():
    """Marks are honoured for at most half the unknowns; a factor without them solves as before."""
    n = 60
    K = _spd(n, 2)
    b = np.arange(n, dtype=float)
    x = np.linalg.solve(K.toarray(), b)
    for marks in (None, np.arange(n)):
        f = solvers_module.factorize(sp.tril(K).tocsc(), "pardiso", schur=marks)
        assert f.schur is None
        assert np.abs(f.solve(b) - x).max() <= 1e-11 * np.abs(x).max()


def _solve(model, monkeypatch, schur: bool, solver: str = "pardiso"):
    used = []
    real = contact_module.ContactSet._schur_rows

    def spy(self, fac):
        out = real(self, fac)
        used.append(out is not None)
        return out

    monkeypatch.setattr(contact_module, "SCHUR_MAX", contact_module.SCHUR_MAX if schur else 0)
    monkeypatch.setattr(contact_module.ContactSet, "_schur_rows", spy)
    res = planar.solve(model, solver=solver, verbose=False)
    assert used == [schur]
    return res


def _same_contact(a, b):
    for case in a:
        sa, sb = a[case].contact_states["pin"], b[case].contact_states["pin"]
        assert sa.iterations == sb.iterations
        assert np.array_equal(sa.pressure > 0, sb.pressure > 0)
        assert sa.arc_start_deg == pytest.approx(sb.arc_start_deg, abs=1e-9)
        assert sa.arc_end_deg == pytest.approx(sb.arc_end_deg, abs=1e-9)
        scale = float(np.abs(sb.pressure).max())
        assert np.abs(sa.pressure - sb.pressure).max() <= 1e-8 * scale
        assert np.abs(sa.gap - sb.gap).max() <= 1e-9 * max(float(np.abs(sb.gap).max()), sb.clearance)
        ua, ub = a[case].u, b[case].u
        assert np.abs(ua - ub).max() <= 1e-9 * np.abs(ub).max()


def test_schur_path_gives_the_contact_of_the_forward_solve_path(monkeypatch):
    """The plate pulled by a free pin in its clearance hole, two load cases: the Schur complement path and
    the forward-solve path (the same factor without the marks; and CHOLMOD's, which has none) agree to
    round-off, and the pin's contact force balances its load (statics) in both."""
    model = loaded_hole_model(0.005, n_around=64, n_radial=16, a=5.0, load=2000.0)
    model.add_load(PinLoad("pin", fx=1000.0, fy=300.0), case="pull up")
    schur = _solve(model, monkeypatch, True)
    forward = _solve(model, monkeypatch, False)
    _same_contact(schur, forward)
    if "cholmod" in solvers_module.available_solvers():
        _same_contact(schur, _solve(model, monkeypatch, False, "cholmod"))
    for case, load in (("pull", (2000.0, 0.0)), ("pull up", (1000.0, 300.0))):
        f = schur[case].contact_states["pin"].force  # on the part: the pin's load passed on
        assert f == pytest.approx(load, abs=1e-9 * 2000.0)


def test_schur_path_meets_hertz_and_matches_the_forward_path(monkeypatch):
    """A rigid pin pressed into a block, plane strain: half-width and peak pressure within 3 % of
    K. L. Johnson, Contact Mechanics, 1985, sec. 5.2 (a^2 = 4 P R / (pi E*), p0 = 2 P / (pi a)), through
    the Schur complement, and the same answer as the forward-solve path to round-off."""
    model, P, _ = hertz_model("plane strain", element="Q4")
    schur = _solve(model, monkeypatch, True)
    _same_contact(schur, _solve(model, monkeypatch, False))
    r = schur["press"]
    st = r.contact_states["pin"]
    st.positions = r.mesh.nodes[st.nodes]
    a_ref, p0_ref = hertz_reference(P, 10.0, 210e3, 0.3, "plane strain")
    assert hertz_half_width(st) == pytest.approx(a_ref, rel=0.03)
    assert st.peak_pressure == pytest.approx(p0_ref, rel=0.03)
