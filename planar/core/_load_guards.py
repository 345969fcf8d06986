"""Guards on a load kind's hooks: the words of its ``names_used()`` checked (:func:`checked_names`), and,
applied by :class:`planar.core.loads.LoadKind` to its subclasses, its text hooks (``describe``,
``describe_plain``, ``short_name``) and a plugin's ``__init__``, so that a failure far from the plugin (in
the report, the model picture, ``add_load``) is a planar error naming the kind and the hook, not a bare
traceback."""
from __future__ import annotations

from typing import Callable

from .errors import InputError, PlanarError, PluginError

__all__ = ["NAME_WORDS", "checked_names"]


#: the words of :meth:`LoadKind.names_used`, and what each names in the mesh
NAME_WORDS = {"edge": "a named edge set", "point": "a named single point", "node set": "a named set of nodes",
              "region": "a named region of cells"}


def checked_names(load) -> list[tuple[str, str]]:
    """A load's :meth:`~LoadKind.names_used` pairs, each word checked against :data:`NAME_WORDS`.

    Raises
    ------
    PluginError
        When the pairs are not (word, name) pairs or a word is not one of NAME_WORDS (a misspelt
        word would otherwise leave its name unchecked).

    Examples
    --------
    >>> from planar.core.loads import Pressure
    >>> checked_names(Pressure("hole", 5.0))
    [('edge', 'hole')]
    """
    from .registry import describe_provider, plugin_call

    with plugin_call("load", load, "names_used"):
        pairs = [tuple(p) for p in (load.names_used() or [])]
    for pair in pairs:
        if len(pair) != 2 or pair[0] not in NAME_WORDS:
            valid = ", ".join(repr(w) for w in NAME_WORDS)
            raise PluginError(f"{describe_provider('load', load)}: names_used() gave {pair!r}; each pair is "
                              f"(word, name) with the word one of {valid}")
    return pairs


_TEXT_HOOKS = ("describe", "describe_plain", "short_name")


def _guarded_text_hook(fn: Callable, hook: str) -> Callable:
    """A load kind's text hook whose failure or non-text answer is a PluginError naming the kind and hook.

    The report, the model picture and the inputs table call these hooks far from the plugin; an
    exception raised inside one (or a None returned) would otherwise surface there as a bare
    traceback or the word "None".
    """
    import functools

    @functools.wraps(fn)
    def guarded(self, *args, **kwargs):
        from .registry import describe_provider, plugin_call

        with plugin_call("load", self, f"{hook}()"):
            text = fn(self, *args, **kwargs)
        if not isinstance(text, str):
            raise PluginError(f"{describe_provider('load', self)}: {hook}() returned {type(text).__name__} "
                              f"{text!r}, not a str; make it return the load in a few words")
        return text

    guarded._planar_guarded = True
    return guarded


def _guarded_init(fn: Callable) -> Callable:
    """A plugin load kind's ``__init__`` whose failure is a planar error naming the kind.

    A TypeError or ValueError (a missing or unknown parameter, a value that is not a number) is an
    InputError about the parameters; anything else is a PluginError about the plugin.
    """
    import functools

    @functools.wraps(fn)
    def guarded(self, *args, **kwargs):
        from .registry import describe_provider

        try:
            fn(self, *args, **kwargs)
        except (PlanarError, MemoryError, KeyboardInterrupt):
            raise
        except (TypeError, ValueError) as exc:
            raise InputError(f"{describe_provider('load', self)}: its parameters were refused: "
                             f"{type(exc).__name__}: {exc}; give the parameters the load kind's documentation "
                             "asks for, with numbers where numbers are expected") from None
        except Exception as exc:
            raise PluginError(f"{describe_provider('load', self)} failed in __init__: {type(exc).__name__}: {exc}; "
                              "report it to the plugin's authors, or use another load kind") from exc

    guarded._planar_guarded = True
    return guarded
