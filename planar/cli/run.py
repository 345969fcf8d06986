"""``planar run SCRIPT.py``: a user's script run with the output folder set (see :func:`planar.output_dir`)."""
from __future__ import annotations

import argparse
import os
import runpy
import sys
import traceback
from pathlib import Path

from ..core.errors import InputError, PlanarError
from ..paths import DEFAULT_OUT, OUT_ENV, output_dir
from ._help import Formatter, wrap

COMMAND = "run"
HELP = "run your geometry-and-model script with the output folder set"


def arguments(p: argparse.ArgumentParser) -> None:
    """Add the options of ``planar run``."""
    p.formatter_class = Formatter
    p.description = wrap(
        "Run your own geometry-and-model script (plain Python that uses planar) with the output "
        "folder set.\n\n"
        "Inside the script the folder is available three ways: the global variable OUTPUT_DIR "
        "(a pathlib.Path), the environment variable PLANAR_OUT, and planar.demo.output_dir(). "
        "The script runs as __main__ in the current working directory, with its own folder first "
        "on the import path, as with 'python SCRIPT.py'.\n\n"
        "A planar error in the script (an unknown edge name, a model that can still move, ...) is "
        "printed in two lines with the line of the script that caused it; any other error shows "
        "the script's traceback.")
    p.epilog = ("example script:\n"
                "  import planar\n"
                "  from planar.demo import output_dir\n"
                "  mesh = planar.rectangle_mesh(100.0, 20.0, 20, 4, \"Q8\")\n"
                "  model = planar.Model(mesh, planar.Isotropic(70e3, 0.33), thickness=2.0, units=\"N, mm, MPa\")\n"
                "  model.add_support(planar.Fixed(\"left\"))\n"
                "  model.add_load(planar.Traction(\"right\", tx=50.0), case=\"pull\")\n"
                "  planar.write_vtu(output_dir() / \"strap.vtu\", planar.solve(model)[\"pull\"])\n\n"
                "examples:\n  planar run strap.py\n  planar run strap.py --out results/strap")
    p.add_argument("script", metavar="SCRIPT.py", help="the Python script to run")
    p.add_argument("--out", metavar="DIR", default=DEFAULT_OUT,
                   help=f"output folder handed to the script, created if missing (default: ./{DEFAULT_OUT})")


def _script_frames(tb, script: Path):
    """Traceback entries that belong to the user's script (and what it called)."""
    first = None
    last = None
    while tb is not None:
        if _same_file(tb.tb_frame.f_code.co_filename, script):
            first = first or tb
            last = tb
        tb = tb.tb_next
    return first, last


def _same_file(name, script: Path) -> bool:
    try:
        return name is not None and Path(name).resolve() == script
    except (OSError, TypeError, ValueError):
        return False


def _user_traceback(exc: BaseException, script: Path) -> int:
    """Print the traceback of an error in the user's code from their script's first frame on."""
    first, _ = _script_frames(exc.__traceback__, script)
    if first is None and exc.__traceback__ is not None:  # raised before the script ran a line (e.g. runpy)
        print("".join(traceback.format_exception_only(type(exc), exc)).rstrip(), file=sys.stderr)
    else:
        traceback.print_exception(type(exc), exc, first or exc.__traceback__, file=sys.stderr)
    print(f"planar run: {script.name} stopped with {type(exc).__name__} (traceback above)", file=sys.stderr)
    return 1


def run(args: argparse.Namespace) -> int:
    """Run the script as ``__main__`` with the output folder set; the exit code is the script's."""
    script = Path(args.script)
    if not script.is_file():
        raise InputError(f"script {str(script)!r} does not exist (give the path of a .py file)")
    script = script.resolve()
    out = output_dir(args.out).resolve()
    saved = (os.environ.get(OUT_ENV), list(sys.argv), list(sys.path))
    os.environ[OUT_ENV] = str(out)
    sys.argv = [str(script)]
    sys.path.insert(0, str(script.parent))
    try:
        runpy.run_path(str(script), init_globals={"OUTPUT_DIR": out}, run_name="__main__")
    except SystemExit as exc:
        code = exc.code
        if code is None:
            return 0
        if isinstance(code, int):
            return code
        print(code, file=sys.stderr)
        return 1
    except SyntaxError as exc:
        first, _ = _script_frames(exc.__traceback__, script)
        if first is not None and not _same_file(getattr(exc, "filename", None), script):
            return _user_traceback(exc, script)  # in a module the script imported: from the script on
        # the script could not be compiled: its own file, line and caret, none of planar's frames
        print("".join(traceback.format_exception_only(type(exc), exc)).rstrip(), file=sys.stderr)
        at = f" at line {exc.lineno}" if exc.lineno else ""
        print(f"planar run: {script.name} cannot be compiled ({type(exc).__name__}{at}, above); fix it and "
              "run again", file=sys.stderr)
        return 1
    except PlanarError as exc:
        _, last = _script_frames(exc.__traceback__, script)
        print(f"planar run: error: {exc}", file=sys.stderr)
        if last is not None:
            import linecache

            line = linecache.getline(str(script), last.tb_lineno).strip()
            print(f"  in {script.name}, line {last.tb_lineno}: {line}", file=sys.stderr)
        return 2
    except KeyboardInterrupt:
        raise
    except BaseException as exc:  # the user's own code: show their traceback, from their script on
        return _user_traceback(exc, script)
    finally:
        old_out, sys.argv, sys.path[:] = saved[0], saved[1], saved[2]
        if old_out is None:
            os.environ.pop(OUT_ENV, None)
        else:
            os.environ[OUT_ENV] = old_out
    return 0
