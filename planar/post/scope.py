"""What planar's figures are and are not: the scope caution, written once.

Checks (:mod:`planar.post.checks`), reports (:mod:`planar.post.report`), the demo and the command
line all print these texts; change them here only.

Examples
--------
>>> "buckle a thin plate" in CAUTION and "qualified engineer" in CAUTION
True
>>> len(CAUTIONS)
5
"""
from __future__ import annotations

__all__ = ["CAUTION", "CAUTIONS", "SCOPE_NOTE"]

#: the caution that goes with every check, summary and command (one paragraph)
CAUTION = ("Linear-elastic, small-displacement, static result: no buckling, fatigue, fracture or plasticity "
           "check is made, and in-plane compression can buckle a thin plate. It needs review by a qualified "
           "engineer under the applicable design codes, which take precedence.")

#: the same caution point by point, as a stress-check report lists it
CAUTIONS = (
    "The analysis is linear elastic, small displacement and static: stresses above the "
    "proportional limit are not corrected for yielding, and large deflections are not followed.",
    "No buckling, fatigue, fracture or plasticity check has been made.",
    "In-plane compression or shear can buckle a thin plate long before the stresses shown here are "
    "reached; check stability separately wherever compressive or shear stresses appear.",
    "Stresses next to supports and concentrated loads depend on how they were idealised; judge "
    "peaks there with care.",
    "These results need review by a qualified engineer under the applicable codes and standards, "
    "which take precedence over anything in this report.",
)

#: the one-line reminder at the top of a report, pointing to :data:`CAUTIONS`
SCOPE_NOTE = ("Linear-elastic, small-displacement, static analysis; no buckling, fatigue, fracture or plasticity "
              "check. Read the section Cautions and limits before using these figures.")
