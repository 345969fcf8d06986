"""The Examples sections of the public docstrings run as written (common practice: tested docs)."""
import doctest
import importlib

import pytest

MODULES = ["planar", "planar.core.model", "planar.core.loads", "planar.geometry.shapes",
           "planar.geometry.plate", "planar.geometry.meshing"]


@pytest.mark.parametrize("name", MODULES)
def test_docstring_examples(name):
    mod = importlib.import_module(name)
    failures, _ = doctest.testmod(mod, optionflags=doctest.ELLIPSIS | doctest.NORMALIZE_WHITESPACE)
    assert failures == 0
