"""``planar demo``: a complete stress check on the built-in splice strap (see :mod:`planar.demo`)."""
from __future__ import annotations

import argparse

from ..demo import format_summary, run_demo
from ..paths import DEFAULT_OUT
from ..post.scope import CAUTION
from ._help import Formatter, wrap

COMMAND = "demo"
HELP = "run a complete stress check on a built-in splice strap and write result, figures and report"


def arguments(p: argparse.ArgumentParser) -> None:
    """Add the options of ``planar demo``."""
    p.formatter_class = Formatter
    p.description = wrap(
        "Run a complete stress check on a built-in part: a fictional aluminium splice strap, "
        "200 x 50 x 3 mm, with an open 20 mm bolt hole, pulled with 6 kN (units N, mm, MPa).\n\n"
        "Steps: mesh with quadratic triangles (gmsh), solve, recover the stresses at the hole edge "
        "by superconvergent patch recovery, repeat on a family of finer meshes to show convergence "
        "(Richardson extrapolation and grid convergence index), compare the net-section stress "
        "concentration factor Kt with the handbook curve, work out the margin of safety against "
        "an allowable with a factor of safety, and estimate the discretisation error.\n\n"
        "Writes into the output folder: the result for any VTK viewer (.vtu, quadratic cells, "
        "displacement and stress fields), PNG figures, and a self-contained HTML report; prints a "
        "summary table. Needs no input files and no network.")
    p.epilog = "examples:\n  planar demo\n  planar demo --out /tmp/strap-check\n\n" + wrap(CAUTION)
    p.add_argument("--out", metavar="DIR", default=DEFAULT_OUT,
                   help=f"folder for the result files, figures and report, created if missing "
                        f"(default: ./{DEFAULT_OUT}); files of the same names that an earlier demo did "
                        "not write (your own report.html, say) are never replaced: the demo stops")
    p.add_argument("--verbose", action="store_true",
                   help="report each step on stderr even when it is not a terminal")


def run(args: argparse.Namespace) -> int:
    """Run the demo and print its summary table."""
    outcome = run_demo(args.out, verbose=True if args.verbose else None)
    print(format_summary(outcome))
    return 0
