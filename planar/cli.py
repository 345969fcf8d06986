"""The ``planar`` command line.

Sub-commands register themselves in ``COMMANDS`` with a function that adds their arguments and one
that runs them. Errors a user can cause are printed in one or two lines without a traceback.
"""
from __future__ import annotations

import argparse
import sys
from typing import Callable

from .core.errors import PlanarError

__all__ = ["main", "command"]

COMMANDS: dict[str, tuple[str, Callable[[argparse.ArgumentParser], None], Callable[[argparse.Namespace], int]]] = {}


def command(name: str, help: str):
    """Register a sub-command: decorate ``run(args) -> exit code``; its ``.arguments`` adds options."""

    def deco(run):
        def add_arguments(p):
            adder = getattr(run, "arguments", None)
            if adder is not None:
                adder(p)

        COMMANDS[name] = (help, add_arguments, run)
        return run

    return deco


def _verify_args(p: argparse.ArgumentParser) -> None:
    p.add_argument("--json", metavar="PATH", help="also write the records as JSON to PATH")
    p.add_argument("--element", metavar="NAME",
                   help="run the element cases (patch test, energy rate, cantilever, Cook) for one "
                        "registered element type, built-in or plugin")
    p.add_argument("--case", metavar="NAME", action="append",
                   help="run only this benchmark case (repeatable)")
    p.add_argument("--quiet", action="store_true", help="print only the summary line")


@command("verify", "run the published benchmark suite and compare with the references")
def _verify(args) -> int:
    from .post.files import atomic_write_text
    from .verify import format_table, records_to_json, run

    progress = None if args.quiet or not sys.stderr.isatty() else (lambda s: print(s, file=sys.stderr))
    records = run(element=args.element, case_names=args.case, progress=progress)
    if not args.quiet:
        print(format_table(records))
    if args.json:
        atomic_write_text(args.json, records_to_json(records))
    failed = [r for r in records if not r.passed]
    print(f"\n{len(records) - len(failed)} of {len(records)} checks passed"
          + (f"; failed: {', '.join(sorted({f'{r.case}[{r.element}]' for r in failed}))}" if failed else ""))
    return 0 if not failed else 1


_verify.arguments = _verify_args


def build_parser() -> argparse.ArgumentParser:
    from . import __version__

    parser = argparse.ArgumentParser(
        prog="planar",
        description="Stress checks of flat parts under in-plane loads (2D linear elasticity, "
                    "plane stress or plane strain). Units are yours and must be consistent, "
                    "e.g. N, mm, MPa.",
        epilog="Results are linear-elastic and static: no buckling, fatigue, fracture or plasticity "
               "check. They need review by a qualified engineer under the applicable codes.",
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
    """Import the modules that add sub-commands (each registers itself with @command)."""
    import importlib

    for mod in ("planar.commands", "planar.demo", "planar.studies"):
        try:
            importlib.import_module(mod)
        except ModuleNotFoundError as exc:
            if exc.name != mod:
                raise


if __name__ == "__main__":  # pragma: no cover
    sys.exit(main())
