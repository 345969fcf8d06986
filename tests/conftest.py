"""What the test files share: the test folder on the import path (for ``_models`` and the other
helper modules), the hypothesis profiles, and fixtures for the shared models.

- ``from _models import strip_model, solved_strip, stepped_strip`` works in every test file (no
  ``sys.path`` insert of its own); the same builders are the fixtures ``strip_model`` and
  ``solved_strip``.
- Hypothesis profiles ``"fast"`` (the default run) and ``"slow"`` (``pytest -m slow``): both
  derandomized, without a deadline and without an example database, so every run checks the same
  cases; a test picks its example count on top (``@settings(FAST, max_examples=...)``).
"""
from __future__ import annotations

import sys
from pathlib import Path

import pytest

HERE = Path(__file__).resolve().parent
if str(HERE) not in sys.path:
    sys.path.insert(0, str(HERE))

import _models  # noqa: E402  (needs the line above)

try:
    from hypothesis import HealthCheck, settings
except ImportError:  # hypothesis is a test extra; only the robustness tests need it
    settings = None
else:
    _COMMON = dict(deadline=None, derandomize=True, database=None, print_blob=False,
                   suppress_health_check=[HealthCheck.too_slow, HealthCheck.data_too_large,
                                          HealthCheck.filter_too_much])
    settings.register_profile("fast", max_examples=40, **_COMMON)
    settings.register_profile("slow", max_examples=100, **_COMMON)


@pytest.fixture
def strip_model():
    """:func:`_models.strip_model`: a strip on ``rectangle_mesh`` held at its left end."""
    return _models.strip_model


@pytest.fixture
def solved_strip():
    """:func:`_models.solved_strip`: the result of one case of such a strip."""
    return _models.solved_strip
