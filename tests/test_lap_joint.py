"""The ``lap-joint`` benchmark: fastener shares of a single lap against the discrete spring-and-bar model.

Reference: M. B. Tate and S. J. Rosenfeld, NACA TN 1051, 1946 (the plates as bars between fasteners, the
fasteners as springs; planar.verify._joint_reference), with Huth's compliance (ASTM STP 927, 1986, from memory).
"""
import numpy as np

from planar.verify import run
from planar.verify.joint_cases import lap_joint_result, reference_shares


def test_lap_joint_case_passes_on_every_element():
    records = run(case_names=["lap-joint"])
    assert {r.element for r in records} == {"T3", "T6", "Q4", "Q8", "Q9"}
    bad = [(r.element, r.quantity, r.computed, r.reference) for r in records if not r.passed]
    assert not bad
    assert all(r.source.strip() for r in records)
    # 3 and 5 fasteners, equal and unequal strips: 3 + 3 + 5 + 5 shares per element
    assert sum("share of fastener" in r.quantity for r in records if r.element == "Q8") == 16


def test_lap_joint_end_fasteners_carry_most_and_the_joint_uses_huths_compliance():
    jr, C = lap_joint_result(5, 2.0, 2.0, "Q4")
    shares = -jr.fasteners.shear[:, 0] / 1000.0
    # Tate and Rosenfeld 1946: the end fasteners of a row carry the most, the middle one the least
    assert shares[0] > shares[1] > shares[2] and shares[4] > shares[3] > shares[2]
    np.testing.assert_allclose([p["compliance"] for p in jr.fasteners.pairs], C, rtol=1e-12)
    # the joint's shares and the bar model's differ in the same sense: the plane strip's own give at each
    # fastener acts as extra compliance, which evens the shares out (ends a little less, middle a little more)
    ref = reference_shares(5, 2.0, 2.0, C)
    assert shares[0] < ref[0] and shares[2] > ref[2]


def test_fastener_flexibility_case_passes():
    # Huth 1986, Swift 1971, Tate and Rosenfeld 1946 (from memory), each against its hand-worked value
    records = run(case_names=["fastener-flexibility"])
    assert len(records) == 10 and all(r.passed for r in records)
    assert all("from memory" in r.source or "common practice" in r.source for r in records)
