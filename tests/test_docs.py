"""The Examples sections of every docstring in planar run as written (common practice: tested docs).

The modules are found by walking the package, so a new or moved module is picked up without a
hand-kept list. Only ``__main__`` modules are left out: importing one starts the command line (its
behaviour is tested in ``test_cli_front.py``).
"""
import doctest
import importlib
import pkgutil
import warnings

import pytest

import planar

#: left out of the walk, with the reason
NOT_IMPORTED = {"__main__": "importing it runs the command line"}


def _modules() -> list[str]:
    names = ["planar"]
    for info in pkgutil.walk_packages(planar.__path__, "planar.", onerror=lambda name: names.append(name)):
        if info.name.rsplit(".", 1)[-1] not in NOT_IMPORTED:
            names.append(info.name)
    return sorted(set(names))


MODULES = _modules()


def test_the_walk_finds_the_package():
    # the core, the geometry and post layers are all there (a walk that silently found nothing
    # would make the test below vacuous)
    assert {"planar", "planar.core.model", "planar.geometry.shapes"} <= set(MODULES)
    assert len(MODULES) >= 30


@pytest.mark.parametrize("name", MODULES)
def test_docstring_examples(name, tmp_path, monkeypatch):
    monkeypatch.chdir(tmp_path)  # examples that write files write them here
    with warnings.catch_warnings():  # old module paths kept for one release warn on import
        warnings.simplefilter("ignore", DeprecationWarning)
        mod = importlib.import_module(name)
    result = doctest.testmod(mod, optionflags=doctest.ELLIPSIS | doctest.NORMALIZE_WHITESPACE, report=True)
    assert result.failed == 0, f"{result.failed} of {result.attempted} docstring examples in {name} failed"
