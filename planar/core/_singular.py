"""The failure every stiffness solver back end reports for a matrix it cannot factorize.

Kept apart from :mod:`planar.core.solvers` so that the back ends in their own modules
(:mod:`planar.core._pardiso`) raise the same error with the same words.
"""
from __future__ import annotations

from .errors import SolverError

_SINGULAR = (
    "the stiffness matrix could not be factorized: it is singular or not positive definite to working "
    "precision, either because part of the model can move without straining (a mechanism: a region "
    "joined by a single node, missing supports, zero-energy modes of a reduced integration rule) or "
    "because it is too ill-conditioned for double precision (an extreme stiffness contrast, a very "
    "slender part, units far off)"
)


def _numerical(message: str) -> SolverError:
    """A SolverError from the numbers of the matrix (not from the set-up), which planar.solve diagnoses."""
    err = SolverError(message)
    err.numerical = True
    return err
