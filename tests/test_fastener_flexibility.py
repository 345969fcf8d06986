"""Fastener flexibility formulas and the discrete spring-and-bar model of a fastener row.

No worked numerical example of the sources is recalled reliably enough to quote, so each formula is
checked (a) against a hand computation of its expression, term by term, with the intermediate numbers
written out here, and (b) against physical properties any fastener compliance must have.
Hand case (mm, N, MPa): d = 5, t1 = 2, t2 = 3, aluminium plates E1 = E2 = 70,000, titanium fastener
Ef = 110,000.
"""
from __future__ import annotations

import math

import numpy as np
import pytest

from planar.core.errors import InputError, NameNotFoundError
from planar.core.fastener_flexibility import FORMULAS, HUTH_CONSTANTS, fastener_compliance, huth, swift, tate_rosenfeld
from planar.verify._joint_reference import bar_stiffness, lap_joint_loads, plate_loads

HAND = dict(diameter=5.0, t1=2.0, t2=3.0, E1=70e3, E2=70e3, Ef=110e3)


# --- the formulas, by hand -------------------------------------------------------------------------

def test_huth_bolt_single_shear_by_hand():
    # H. Huth, ASTM STP 927, 1986 (from memory): C = ((t1+t2)/2d)^a (b/n) (1/t1E1 + 1/(n t2 E2) + 1/(2 t1 Ef)
    # + 1/(2 n t2 Ef)), bolted metallic a = 2/3, b = 3.0, n = 1.
    # ((2 + 3)/10)^(2/3) = 0.5^(2/3) = 0.629961
    # bracket = 1/140000 + 1/210000 + 1/440000 + 1/660000 = 7.142857e-6 + 4.761905e-6 + 2.272727e-6
    #           + 1.515152e-6 = 1.5692641e-5
    # C = 0.629961 * 3.0 * 1.5692641e-5 = 2.965723e-5 mm/N
    assert fastener_compliance("huth", **HAND) == pytest.approx(2.965723e-5, rel=1e-6)
    assert huth(**HAND, kind="bolt") == pytest.approx(2.965723e-5, rel=1e-6)


def test_huth_rivet_single_shear_by_hand():
    # Huth 1986 (from memory), riveted metallic a = 2/5, b = 2.2: 0.5^0.4 = 0.757858;
    # C = 0.757858 * 2.2 * 1.5692641e-5 = 2.616416e-5 mm/N
    assert fastener_compliance("huth", **HAND, kind="rivet") == pytest.approx(2.616416e-5, rel=1e-6)


def test_huth_double_shear_by_hand():
    # Huth 1986 (from memory), n = 2; t1 = 3 the middle plate, t2 = 2 each outer plate:
    # bracket = 1/(3*70000) + 1/(2*2*70000) + 1/(2*3*110000) + 1/(2*2*2*110000)
    #         = 4.761905e-6 + 3.571429e-6 + 1.515152e-6 + 1.136364e-6 = 1.0984848e-5
    # C = 0.629961 * (3.0 / 2) * 1.0984848e-5 = 1.038003e-5 mm/N per the fastener's whole load
    args = dict(HAND, t1=3.0, t2=2.0)
    c = fastener_compliance("huth", **args, shear="double")
    assert c == pytest.approx(1.038003e-5, rel=1e-6)
    # each of the two springs (one per shear plane, in parallel) is twice as compliant
    assert fastener_compliance("huth", **args, shear="double", per="shear plane") == pytest.approx(2 * c)


def test_swift_by_hand():
    # T. Swift, 1971 (from memory): C = 5/(d Ef) + 0.8 (1/(t1 E1) + 1/(t2 E2))
    # = 5/550000 + 0.8 (1/140000 + 1/210000) = 9.090909e-6 + 0.8 * 1.1904762e-5 = 1.8614719e-5 mm/N
    assert fastener_compliance("swift", **HAND) == pytest.approx(1.8614719e-5, rel=1e-6)
    assert swift(**HAND) == pytest.approx(1.8614719e-5, rel=1e-6)


def test_tate_rosenfeld_by_hand():
    # Tate and Rosenfeld, NACA TN 1051, 1946 (from memory), nu_f = 0.3:
    # bearing   1/220000 + 1/330000 + 1/140000 + 1/210000            = 1.9480519e-5
    # shear     32 * 1.3 * 5 / (9 pi * 110000 * 25)                 = 2.6750891e-6
    # bending   8 (8 + 60 + 90 + 27) / (5 pi * 110000 * 625)         = 1.3704687e-6
    # C = 2.3526077e-5 mm/N
    assert fastener_compliance("tate-rosenfeld", **HAND) == pytest.approx(2.3526077e-5, rel=1e-6)
    assert tate_rosenfeld(**HAND, nu_f=0.3) == pytest.approx(2.3526077e-5, rel=1e-6)


# --- physical properties (common practice: a thicker plate or a larger fastener is stiffer) ---------

@pytest.mark.parametrize("formula", ["huth", "swift", "tate-rosenfeld"])
def test_compliance_falls_with_diameter_and_stiffer_materials(formula):
    c = fastener_compliance(formula, **HAND)
    assert fastener_compliance(formula, **dict(HAND, diameter=6.0)) < c
    assert fastener_compliance(formula, **dict(HAND, Ef=200e3)) < c
    assert fastener_compliance(formula, **dict(HAND, E1=140e3, E2=140e3)) < c
    # compliance scales as 1/E when every modulus scales together (each term is 1/(E x length))
    scaled = dict(HAND, E1=2 * HAND["E1"], E2=2 * HAND["E2"], Ef=2 * HAND["Ef"])
    assert fastener_compliance(formula, **scaled) == pytest.approx(c / 2, rel=1e-12)


@pytest.mark.parametrize("formula", ["huth", "swift", "tate-rosenfeld"])
def test_compliance_grows_with_thinner_plates(formula):
    # thin sheet (t / d <= 1): bearing dominates, and thinner sheet is softer
    c = fastener_compliance(formula, **HAND)
    assert fastener_compliance(formula, **dict(HAND, t1=1.0)) > c
    assert fastener_compliance(formula, **dict(HAND, t1=1.0, t2=1.5)) > c


@pytest.mark.parametrize("formula", ["huth", "swift", "tate-rosenfeld"])
def test_single_shear_is_symmetric_in_the_plates(formula):
    a = fastener_compliance(formula, **dict(HAND, t1=2.0, t2=3.0, E1=70e3, E2=110e3))
    b = fastener_compliance(formula, **dict(HAND, t1=3.0, t2=2.0, E1=110e3, E2=70e3))
    assert a == pytest.approx(b, rel=1e-12)


def test_double_shear_is_stiffer_than_single_for_the_same_plates():
    # Huth 1986: two shear planes share the load (the 1/n factor): the double-shear fastener is stiffer
    assert fastener_compliance("huth", **HAND, shear="double") < fastener_compliance("huth", **HAND)


def test_huth_rivet_constants_and_order():
    # Huth 1986 (from memory): bolted graphite/epoxy b = 4.2 > bolted metallic b = 3.0
    assert HUTH_CONSTANTS["bolt"] == (2 / 3, 3.0) and HUTH_CONSTANTS["rivet"] == (0.4, 2.2)
    assert fastener_compliance("huth", **HAND, kind="composite-bolt") > fastener_compliance("huth", **HAND)


# --- names and inputs ---------------------------------------------------------------------------------

def test_names_and_user_number():
    assert FORMULAS == ("huth", "swift", "tate-rosenfeld", "user")
    assert fastener_compliance(2.5e-5) == 2.5e-5
    assert fastener_compliance(2.5e-5, shear="double", per="shear plane") == 5e-5
    assert fastener_compliance("Tate_Rosenfeld", **HAND) == fastener_compliance("tate-rosenfeld", **HAND)


def test_unknown_formula_lists_the_names():
    with pytest.raises(NameNotFoundError, match="'huth', 'swift', 'tate-rosenfeld'"):
        fastener_compliance("boeing", **HAND)
    with pytest.raises(NameNotFoundError, match="'bolt'"):
        fastener_compliance("huth", **HAND, kind="screw")
    with pytest.raises(NameNotFoundError, match="'double', 'single'"):
        fastener_compliance("huth", **HAND, shear="triple")


@pytest.mark.parametrize("bad", [0.0, -1.0, math.inf, math.nan, "x", None])
def test_inputs_checked(bad):
    with pytest.raises(InputError):
        fastener_compliance("huth", **dict(HAND, t1=bad))
    with pytest.raises((InputError, NameNotFoundError)):  # a word is read as a formula's name
        fastener_compliance(bad)


def test_single_shear_formulas_refuse_double_shear_and_user_needs_a_number():
    for name in ("swift", "tate-rosenfeld"):
        with pytest.raises(InputError, match="single-shear"):
            fastener_compliance(name, **HAND, shear="double")
    with pytest.raises(InputError, match="as a number"):
        fastener_compliance("user", **HAND)
    with pytest.raises(InputError, match="nu_f"):
        fastener_compliance("tate-rosenfeld", **HAND, nu_f=0.7)


# --- the discrete spring-and-bar model (Tate and Rosenfeld, NACA TN 1051, 1946) ----------------------

def _by_displacements(C, kt, kb, P=1.0):
    """The same joint by the stiffness method: top plate nodes 0..n-1 (node 0 tied to ground by a unit
    bar), bottom nodes n..2n-1, load P at the last bottom node; fastener i a spring 1/C_i."""
    n = len(C)
    K = np.zeros((2 * n, 2 * n))

    def spring(a, b, k):
        K[a, a] += k
        K[b, b] += k
        K[a, b] -= k
        K[b, a] -= k

    K[0, 0] += 1.0
    for i in range(n - 1):
        spring(i, i + 1, kt[i])
        spring(n + i, n + i + 1, kb[i])
    for i in range(n):
        spring(i, n + i, 1.0 / C[i])
    f = np.zeros(2 * n)
    f[-1] = P
    u = np.linalg.solve(K, f)
    return (u[n:] - u[:n]) / np.asarray(C)


def test_hand_solved_two_fasteners():
    # by hand: compatibility between the two stations gives F1 / F2 = (C2 + 1/kt) / (C1 + 1/kb);
    # C = 1, kt = 1, kb = 0.5: F1 / F2 = 2 / 3, so F = (0.4, 0.6) P
    assert lap_joint_loads([1.0, 1.0], [1.0], [0.5], load=10.0) == pytest.approx([4.0, 6.0], rel=1e-14)
    # unequal compliances: C = (1, 3), kt = kb = 1: F1 / F2 = (3 + 1) / (1 + 1) = 2
    assert lap_joint_loads([1.0, 3.0], 1.0, 1.0) == pytest.approx([2 / 3, 1 / 3], rel=1e-14)


def test_three_fasteners_closed_form():
    # by hand for equal plates and fasteners, r = C k: F1 = F3 = P (1 + r) / (2 + 3 r), F2 = P r / (2 + 3 r)
    # (r -> 0: rigid fasteners, the end ones take all; r -> inf: equal thirds)
    for r in (0.01, 1.0, 4.3, 100.0):
        F = lap_joint_loads([r] * 3, 1.0, 1.0)
        assert F == pytest.approx([(1 + r) / (2 + 3 * r), r / (2 + 3 * r), (1 + r) / (2 + 3 * r)], rel=1e-12)


@pytest.mark.parametrize("n", [2, 3, 5, 8])
def test_symmetric_joint_symmetric_shares_end_fasteners_most(n):
    C = np.full(n, 0.7)
    F = lap_joint_loads(C, 1.3, 1.3, load=5.0)
    np.testing.assert_allclose(F, F[::-1], rtol=1e-12)
    assert F.sum() == pytest.approx(5.0, rel=1e-14)
    if n >= 3:
        assert F[0] > F[1:-1].max() and F[-1] > F[1:-1].max()
        # inner shares fall towards the middle
        half = F[: (n + 1) // 2]
        assert np.all(np.diff(half) < 0)


def test_one_fastener_takes_all():
    assert lap_joint_loads(2.0, [], [], load=3.0) == pytest.approx([3.0])


def test_unequal_plates_agree_with_stiffness_method_and_stiffer_plate_side_unloads():
    rng = np.random.default_rng(7)
    for n in (3, 5, 6):
        C = rng.uniform(0.5, 2.0, n)
        kt, kb = rng.uniform(0.5, 3.0, n - 1), rng.uniform(0.5, 3.0, n - 1)
        np.testing.assert_allclose(lap_joint_loads(C, kt, kb), _by_displacements(C, kt, kb), rtol=1e-10)
    # a thicker top plate (stiffer) draws the transfer towards the bottom plate's loaded end (fastener n)
    F = lap_joint_loads([1.0] * 3, 4.0, 1.0)
    assert F[-1] > F[0]
    top, bottom = plate_loads(F)
    np.testing.assert_allclose(top + bottom, 1.0)


def test_bar_stiffness_and_checks():
    assert bar_stiffness(70e3, 2.0, 20.0, 20.0) == pytest.approx(140e3)
    with pytest.raises(InputError):
        bar_stiffness(70e3, -2.0, 20.0, 20.0)
    with pytest.raises(InputError):
        lap_joint_loads([1.0, 0.0], 1.0, 1.0)
