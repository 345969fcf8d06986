"""``planar sweep``: a function run over a grid of parameters in parallel, its outputs tabulated."""
from __future__ import annotations

import argparse
import json
import os
import sys
from pathlib import Path

import numpy as np

from ..core.errors import InputError
from ..studies import parse_output, sweep

COMMAND = "sweep"
HELP = "run a function over a grid of parameters in parallel and tabulate its outputs"


def _parse_value(text: str):
    t = text.strip()
    for conv in (int, float):
        try:
            return conv(t)
        except ValueError:
            pass
    if t.lower() in ("true", "false"):
        return t.lower() == "true"
    return t


def _parse_param(text: str) -> tuple[str, list]:
    """``name=a:b:n`` (n values from a to b), ``name=v1,v2,...`` or ``name=v``."""
    name, sep, spec = text.partition("=")
    name = name.strip()
    if not sep or not name or not spec.strip():
        raise InputError(f"write a parameter as NAME=START:STOP:COUNT, NAME=V1,V2,... or NAME=VALUE; got {text!r}")
    if spec.count(":") == 2 and "," not in spec:
        a, b, n = spec.split(":")
        try:
            a_, b_, n_ = float(a), float(b), int(n)
        except ValueError:
            raise InputError(f"in {text!r}, START and STOP must be numbers and COUNT a whole number") from None
        if n_ < 1:
            raise InputError(f"in {text!r}, COUNT must be at least 1")
        return name, [float(v) for v in np.linspace(a_, b_, n_)]
    return name, [_parse_value(v) for v in spec.split(",") if v.strip() != ""]


def arguments(p: argparse.ArgumentParser) -> None:
    """Add the options of ``planar sweep``."""
    p.add_argument("function", help="the function to sweep, as module:function (importable by the workers, "
                                    "the current folder included) or path/to/file.py:function; "
                                    "it takes the parameters as keyword arguments and returns a Result, "
                                    "planar.solve(model), a Model or a dict of numbers")
    p.add_argument("--param", "-p", action="append", default=[], metavar="NAME=SPEC",
                   help="a swept parameter: NAME=START:STOP:COUNT (evenly spaced), NAME=V1,V2,... or "
                        "NAME=VALUE; several --param give every combination")
    p.add_argument("--points", metavar="FILE.json", help="the points as a JSON list of {name: value} objects "
                                                        "(instead of --param)")
    p.add_argument("--output", "-o", action="append", default=[], metavar="NAME=SPEC",
                   help="an output: NAME=max:FIELD, min:FIELD, absmax:FIELD, at:X,Y:FIELD, kt:FIELD:NOMINAL or "
                        "margin:FIELD:ALLOWABLE[:FS], optionally ending in @average or @spr; a peak, kt or "
                        "margin read on one edge or region adds 'on NAME' (e.g. 'max:von_mises on fillet'), "
                        "and one load case of several 'in CASE' (e.g. 'max:von_mises on fillet in pull'); a "
                        "name may hold spaces ('in pull 2'); quote one holding ' on ', ' in ' or '@'")
    p.add_argument("--out", default="planar-sweep", metavar="DIR",
                   help="folder of the table (sweep.csv, sweep.json, sweep.png) and of the point store "
                        "(DIR/points); default ./planar-sweep")
    p.add_argument("--store", metavar="DIR", help="the point store (default OUT/points); a sweep started "
                                                  "again with the same store computes only missing points")
    p.add_argument("--workers", "-j", type=int, metavar="N",
                   help="local worker processes (default one per CPU; 0: in this process)")
    p.add_argument("--cluster", metavar="ADDRESS",
                   help="run on a Dask cluster, e.g. tcp://127.0.0.1:8786, or local[:N] for a local cluster of N "
                        "worker processes started for this sweep (needs pip install \"planar[cluster]\")")
    p.add_argument("--retries", type=int, default=2, help="tries again for a point whose worker died (default 2)")
    p.add_argument("--retry-failed", action="store_true", help="compute again the points stored as failed")
    p.add_argument("--timeout", type=float, metavar="SECONDS", help="give up after this long (finished points stay stored)")
    p.add_argument("--x", metavar="PARAM", help="parameter on the plot's x axis (default the one that varies)")
    p.add_argument("--no-plot", action="store_true", help="do not draw sweep.png")
    p.add_argument("--verbose", "-v", action="store_true", help="report progress on stderr even when it is not a terminal")


def run(args: argparse.Namespace) -> int:
    """Run the sweep, write sweep.csv, sweep.json and sweep.png; exit code 1 when a point failed."""
    if os.getcwd() not in sys.path and "" not in sys.path:
        sys.path.insert(0, os.getcwd())  # module:function from the current folder, as with python -m
    if args.points and args.param:
        raise InputError("give the points with --param or with --points, not both")
    if args.points:
        try:
            pts = json.loads(Path(args.points).read_text(encoding="utf-8"))
        except FileNotFoundError:
            raise InputError(f"points file {args.points!r} does not exist") from None
        except json.JSONDecodeError as exc:
            raise InputError(f"points file {args.points!r} is not JSON ({exc})") from None
        if not isinstance(pts, list):
            raise InputError(f"points file {args.points!r} must hold a JSON list of objects")
        kw = {"points": pts}
    elif args.param:
        axes, given = {}, {}
        for t in args.param:
            name, values = _parse_param(t)
            if name in axes:  # a second --param of the same name would replace the first without a word
                raise InputError(f"parameter {name!r} is given twice (--param {given[name]} and --param {t}); give "
                                 f"all its values in one: --param {name}=V1,V2,... or {name}=START:STOP:COUNT")
            axes[name], given[name] = values, t
        kw = {"grid": axes}
    else:
        raise InputError("give the parameters to sweep with --param NAME=START:STOP:COUNT (or --points FILE.json)")
    outputs = {}
    for t in args.output:
        name, sep, spec = t.partition("=")
        if not sep:
            spec, name = t, "_".join(t.replace(":", "_").replace("@", "_").replace(",", "_").split())
        if name.strip() in outputs:  # a second output of the same name would replace the first without a word
            raise InputError(f"two outputs are named {name.strip()!r}; give each --output its own NAME=SPEC")
        outputs[name.strip()] = parse_output(spec)
    out = Path(args.out)
    table = sweep(args.function, **kw, outputs=outputs or None, store=args.store or out / "points",
                  workers=args.workers, cluster=args.cluster, retries=args.retries,
                  retry_failed=args.retry_failed, timeout=args.timeout, verbose=args.verbose)
    table.to_csv(out / "sweep.csv")
    table.to_json(out / "sweep.json")
    written = [out / "sweep.csv", out / "sweep.json"]
    if not args.no_plot and table.outputs and len(table) > 1 and len(table.failed) == len(table):
        print("planar sweep: no plot: every point failed (the errors are in the table below)", file=sys.stderr)
    elif not args.no_plot and table.outputs and len(table) > 1:
        try:
            table.plot(out / "sweep.png", x=args.x)
            written.append(out / "sweep.png")
        except InputError as exc:
            print(f"planar sweep: no plot: {exc}", file=sys.stderr)
    print(table.format())
    stale = (f"; {table.stale} stored by another version of the function, computed again" if table.stale else "")
    print(f"\n{len(table)} points ({table.computed} computed, {table.reused} from the store{stale}), "
          f"{len(table.failed)} failed, {table.seconds:.1f} s; wrote {', '.join(map(str, written))}")
    return 0 if not table.failed else 1
