"""The ``planar`` command line: the top layer, which may import all of planar and is imported by none of it.

Each sub-command is one module of this package (``planar/cli/demo.py``, ``planar/cli/sweep.py``, ...)
that defines ``COMMAND`` (its name), ``HELP`` (one line), ``arguments(parser)`` (adds its options) and
``run(args) -> exit code``. The modules are found with :func:`pkgutil.iter_modules` in name order, so
adding a command is adding a module; modules whose name starts with ``_`` are helpers. Errors a user
can cause are printed in one or two lines without a traceback.
"""
from __future__ import annotations

import argparse
import sys
from typing import Callable

from ..core.errors import PlanarError

__all__ = ["main", "command"]

COMMANDS: dict[str, tuple[str, Callable[[argparse.ArgumentParser], None], Callable[[argparse.Namespace], int]]] = {}


def command(name: str, help: str):
    """Register a sub-command from outside this package: decorate ``run(args) -> exit code``.

    The function's ``.arguments``, if set, adds the options. The commands of planar itself are the
    modules of this package instead.
    """

    def deco(run):
        def add_arguments(p):
            adder = getattr(run, "arguments", None)
            if adder is not None:
                adder(p)

        COMMANDS[name] = (help, add_arguments, run)
        return run

    return deco


def build_parser() -> argparse.ArgumentParser:
    from .. import __version__
    from ..post.scope import CAUTION

    parser = argparse.ArgumentParser(
        prog="planar",
        description="Stress checks of flat parts under in-plane loads (2D linear elasticity, "
                    "plane stress or plane strain). Units are yours and must be consistent, "
                    "e.g. N, mm, MPa.",
        epilog=CAUTION,
    )
    parser.add_argument("--version", action="version", version=f"planar {__version__}")
    sub = parser.add_subparsers(dest="command", metavar="COMMAND")
    for name, (help_, add, run) in COMMANDS.items():
        p = sub.add_parser(name, help=help_, description=help_[:1].upper() + help_[1:] + ".")
        add(p)
        p.set_defaults(_run=run)
    return parser


def main(argv: list[str] | None = None) -> int:
    """Entry point of the ``planar`` command."""
    _load_commands()
    parser = build_parser()
    args = parser.parse_args(argv)
    if not getattr(args, "_run", None):
        parser.print_help()
        return 2
    try:
        code = args._run(args)
    except PlanarError as exc:
        print(f"planar {args.command}: error: {exc}", file=sys.stderr)
        return 2
    except KeyboardInterrupt:
        print(f"planar {args.command}: interrupted", file=sys.stderr)
        return 130
    except MemoryError:
        print(f"planar {args.command}: error: ran out of memory; close other programs, coarsen the mesh "
              "away from the stress raisers, use a symmetry model, or solver='amg'", file=sys.stderr)
        return 2
    return int(code or 0)


def _load_commands() -> None:
    """Register the command modules of this package (each defines ``COMMAND``, ``HELP``, ``arguments``, ``run``).

    Found with :func:`pkgutil.iter_modules` in name order; no hand-kept list. A command already in
    :data:`COMMANDS` (one registered with :func:`command`) is kept.
    """
    import importlib
    import pkgutil

    for info in sorted(pkgutil.iter_modules(__path__), key=lambda i: i.name):
        if info.name.startswith("_"):
            continue
        mod = importlib.import_module(f"{__name__}.{info.name}")
        name = getattr(mod, "COMMAND", None)
        if name and name not in COMMANDS:
            COMMANDS[name] = (mod.HELP, getattr(mod, "arguments", lambda p: None), mod.run)


if __name__ == "__main__":  # pragma: no cover
    sys.exit(main())
