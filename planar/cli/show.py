"""``planar show RESULT.vtu``: a field of a written result drawn as a PNG picture."""
from __future__ import annotations

import argparse
import math
import sys
from pathlib import Path

from ..core.errors import InputError
from ._help import Formatter, wrap

COMMAND = "show"
HELP = "draw a field of a written result file (.vtu) as a PNG picture"


def arguments(p: argparse.ArgumentParser) -> None:
    """Add the options of ``planar show``."""
    p.formatter_class = Formatter
    p.description = wrap(
        "Draw a field of a written result file (.vtu) as a PNG picture: a colour contour on the "
        "deformed shape (the displacement magnification is chosen so that the largest "
        "displacement is about 6 % of the part and is stated on the picture), quadratic "
        "elements drawn with their curved edges, the peak marked.\n\n"
        "Point fields (displacement, ux, uy, sigma_xx, sigma_yy, tau_xy, von_mises, tresca, "
        "sigma_1, sigma_2, ...) are drawn smooth; cell fields (element_von_mises, ...) one "
        "colour per element. Signed fields use a diverging colour map centred on zero.\n\n"
        "A file planar wrote carries a digest of its bytes: one changed or damaged since it was "
        "written is refused (--allow-changed draws it anyway, with a warning); files from other "
        "programs are read as they are. NaN or infinite values are named with their count and "
        "never drawn as a colour.\n\n"
        "Axes and colour bar carry the unit system the file states (planar writes it); --units "
        "overrides it.")
    p.epilog = ("examples:\n  planar show planar-out/splice_strap.vtu\n"
                "  planar show result.vtu --field sigma_xx --png sxx.png --units \"N, mm, MPa\" --mesh\n"
                "  planar show result.vtu --list")
    p.add_argument("result", metavar="RESULT.vtu", help="result file written by planar (or any .vtu)")
    p.add_argument("--field", default="von_mises",
                   help="field to draw (default: von_mises); --list shows what the file holds")
    p.add_argument("--png", metavar="FILE",
                   help="picture to write (default: RESULT-FIELD.png beside the result file)")
    p.add_argument("--units", metavar="TEXT",
                   help="unit system, e.g. \"N, mm, MPa\" or kip-in-ksi, or just the field's unit (MPa); "
                        "default: the system the file states (planar writes it). Checked: an unknown "
                        "name is refused with the list of known systems")
    p.add_argument("--mesh", action="store_true", help="draw the element sides")
    p.add_argument("--undeformed", action="store_true", help="draw on the undeformed shape")
    p.add_argument("--scale", type=float, metavar="FACTOR",
                   help="displacement magnification (default: chosen automatically)")
    p.add_argument("--bands", type=int, metavar="N",
                   help="draw N colour bands (2 to 1000) instead of a smooth field")
    p.add_argument("--list", action="store_true", help="list the fields in the file and stop")
    p.add_argument("--allow-changed", action="store_true",
                   help="draw a file planar wrote even if it changed since (its digest no longer matches); "
                        "a warning says so. Without it such a file is refused")


def run(args: argparse.Namespace) -> int:
    """Draw; planar warnings (a changed file, NaN values in other fields) print in one line each."""
    import warnings

    from ..core.errors import PlanarWarning

    with warnings.catch_warnings(record=True) as caught:
        warnings.simplefilter("always")
        try:
            return _show_file(args)
        finally:
            for w in caught:
                if isinstance(w.message, PlanarWarning):
                    print(f"planar show: warning [{w.message.code}]: {w.message}", file=sys.stderr)
                else:
                    warnings.showwarning(w.message, w.category, w.filename, w.lineno)


def _say_override(args, changed: str) -> None:
    """A note on standard error when --units names a system other than the one the file states."""
    import warnings

    from ..core.units import unit_system
    from ..post.files import file_units, read_result_file

    try:
        asked = unit_system(args.units)
    except InputError:  # one unit (e.g. "MPa"), not a system: nothing to compare
        return
    with warnings.catch_warnings():  # the drawing reads the file again and gives its warnings, once
        warnings.simplefilter("ignore")
        stated = file_units(read_result_file(args.result, changed=changed), args.result)
    if stated is not None and stated.stated and asked.stated and stated.name != asked.name:
        print(f"planar show: note: the file states {stated.label}; the picture is labelled {asked.label} as "
              "--units asks (the numbers are not converted)", file=sys.stderr)


def _points_in(path) -> int:
    """The points of a .vtu file from its head (0 when it does not say), to announce a long drawing."""
    import re

    try:
        with open(path, "rb") as fh:
            head = fh.read(1 << 16)
    except OSError:
        return 0
    m = re.search(rb'NumberOfPoints="(\d+)"', head)
    return int(m.group(1)) if m else 0


def _show_file(args) -> int:
    from ..core.units import figure_units
    from ..post.plots import MAX_LEVELS, plot_vtu, vtu_fields

    changed = "warn" if args.allow_changed else "error"
    if args.bands is not None and not 2 <= args.bands <= MAX_LEVELS:
        raise InputError(f"--bands must be a whole number from 2 to {MAX_LEVELS}, got {args.bands}; "
                         "leave it out for a smooth field")
    if args.scale is not None and not math.isfinite(args.scale):
        raise InputError(f"--scale must be a finite number, got {args.scale:g}")
    if args.list:
        f = vtu_fields(args.result, changed=changed)
        print(f"point fields: {', '.join(f['point']) or '-'}")
        print(f"cell fields:  {', '.join(f['cell']) or '-'}")
        from ..post.files import file_case, file_units, read_result_file

        m = read_result_file(args.result, changed=changed)
        system = file_units(m, args.result)
        print(f"units:        {system.describe() if system is not None else 'not recorded in the file'}")
        case = file_case(m)
        print(f"load case:    {case if case is not None else 'not recorded in the file'}")
        return 0
    png = Path(args.png) if args.png else Path(args.result).with_name(
        f"{Path(args.result).stem}-{args.field}.png")
    if png.suffix.lower() != ".png":
        raise InputError(f"--png needs a file name ending in .png, got {str(png)!r}")
    if args.units:
        figure_units(args.field, args.units)  # checked before the file is read: a system or one known unit
        _say_override(args, changed)
    if args.scale is not None and args.scale < 0:
        raise InputError(f"--scale must not be negative, got {args.scale:g}")
    from ..core.progress import step

    with step(f"drawing {png.name}", 2 * _points_in(args.result)):  # announced for a large file, timed if long
        plot_vtu(args.result, args.field, png=png, units=args.units or None, deformed=not args.undeformed,
                 scale="auto" if args.scale is None else args.scale, mesh_lines=args.mesh, levels=args.bands,
                 changed=changed)
    print(f"wrote {png}")
    return 0
