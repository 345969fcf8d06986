"""Old keyword spellings kept for one release, with a DeprecationWarning.

The public API names the stress recovery ``recovery=`` and a field ``field=`` everywhere;
``method=`` and ``name=`` were the older spellings in some functions.

Examples
--------
>>> import warnings
>>> @renamed_keywords(method="recovery")
... def f(*, recovery="spr"):
...     return recovery
>>> with warnings.catch_warnings(record=True) as caught:
...     warnings.simplefilter("always")
...     f(method="average"), caught[0].category.__name__
('average', 'DeprecationWarning')
"""
from __future__ import annotations

import functools
import inspect
import sys
import types
import warnings
from typing import Callable, TypeVar

from .errors import InputError

__all__ = ["renamed_keywords", "deprecated", "callable_module"]

F = TypeVar("F", bound=Callable)


def deprecated(message: str, stacklevel: int = 3) -> None:
    """Warn that an old spelling is used (a DeprecationWarning pointing at the caller's caller)."""
    warnings.warn(message, DeprecationWarning, stacklevel=stacklevel)


def renamed_keywords(**renames: str) -> Callable[[F], F]:
    """Accept old keyword names for one release: ``old=value`` becomes ``new=value`` with a warning.

    Parameters
    ----------
    **renames : str
        Old keyword name -> new keyword name.

    Raises
    ------
    InputError
        When both the old and the new name are given.
    """
    def wrap(fn: F) -> F:
        @functools.wraps(fn)
        def inner(*args, **kwargs):
            for old, new in renames.items():
                if old in kwargs:
                    if new in kwargs:
                        raise InputError(f"{fn.__name__}() got both {old}= and {new}=; give {new}= only "
                                         f"({old}= is its old name)")
                    deprecated(f"{fn.__name__}(): the keyword {old}= is now {new}=; the old name works for "
                               "one release", stacklevel=3)
                    kwargs[new] = kwargs.pop(old)
            return fn(*args, **kwargs)

        return inner  # type: ignore[return-value]

    return wrap


def callable_module(module_name: str, function: Callable) -> None:
    """Let a module be called as its main function (``planar.post.combine(...)`` is ``combine.combine(...)``).

    A package that exports a function under the name of the module that defines it (``planar.post``
    exports ``combine`` from ``planar.post.combine``) would otherwise have one name meaning two
    things, depending on import order. With this, the name is the module everywhere, and calling it
    calls the function, so ``from planar.post import combine; combine(...)``,
    ``planar.post.combine.combine(...)`` and ``import planar.post.combine as m`` all work.

    Parameters
    ----------
    module_name : str
        ``__name__`` of the module.
    function : callable
        The function a call of the module runs.
    """
    module = sys.modules[module_name]

    class _CallableModule(types.ModuleType):
        __doc__ = module.__doc__

        def __call__(self, *args, **kwargs):
            return function(*args, **kwargs)

    _CallableModule.__call__.__doc__ = function.__doc__
    _CallableModule.__call__.__signature__ = inspect.signature(function)  # type: ignore[attr-defined]
    module.__class__ = _CallableModule
