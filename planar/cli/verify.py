"""``planar verify``: the published benchmark suite against its references."""
from __future__ import annotations

import argparse
import textwrap

COMMAND = "verify"
HELP = "run the published benchmark suite and compare with the references"


def arguments(p: argparse.ArgumentParser) -> None:
    """Add the options of ``planar verify``."""
    p.add_argument("--json", metavar="PATH", help="also write the records as JSON to PATH")
    p.add_argument("--element", metavar="NAME",
                   help="run the element cases (patch test, energy rate, cantilever, Cook) for one "
                        "registered element type, built-in or plugin")
    p.add_argument("--case", metavar="NAME", action="append",
                   help="run only this benchmark case (repeatable)")
    p.add_argument("--quiet", action="store_true", help="print only the summary line")
    p.add_argument("--list", action="store_true", help="list the benchmark cases with what each checks, and run none")


def run(args: argparse.Namespace) -> int:
    """Run the cases; exit code 0 when every check passed, 1 otherwise."""
    from ..core.progress import Progress
    from ..post.files import atomic_write_text
    from ..verify import format_table, records_to_json, run as run_cases

    if args.list:
        return _list_cases()
    progress = Progress(False if args.quiet else None, clock=False)   # on a terminal only
    records = run_cases(element=args.element, case_names=args.case, progress=progress)
    if not args.quiet:
        print(format_table(records))
    if args.json:
        atomic_write_text(args.json, records_to_json(records))
    failed = [r for r in records if not r.passed]
    summary = (f"{len(records) - len(failed)} of {len(records)} checks passed"
               + (f"; failed: {', '.join(sorted({f'{r.case}[{r.element}]' for r in failed}))}" if failed else ""))
    if args.case is None and args.element is None:
        from ..verify import cases

        held = sorted(n for n, c in cases().items() if not c.default)
        if held:
            summary += (f". Not in the full run, their published reference still in doubt: {', '.join(held)} "
                        "(run by name with --case)")
    print("\n" + "\n".join(textwrap.wrap(summary, 120, subsequent_indent="  ")))
    return 0 if not failed else 1


def _list_cases() -> int:
    """Print each case's name, elements and first docstring line (cases out of the full run marked)."""
    from ..verify import cases

    width = max(len(n) for n in cases())
    for name, c in cases().items():
        doc = (c.func.__doc__ or "").strip().splitlines()
        what = doc[0] if doc else ""
        held = "" if c.default else " [not in the full run: run by name with --case]"
        print(f"{name:<{width}}  {', '.join(c.elements) or '-'}: {what}{held}")
    return 0
