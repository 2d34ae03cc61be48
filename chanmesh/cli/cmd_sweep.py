"""``chanmesh sweep DESIGN --vary KEY=SPEC ...``: build every variant of a design on
dask.distributed, one folder per variant (short hash), resumable, with ``summary.csv``."""

from __future__ import annotations

import argparse
import signal
from pathlib import Path

from chanmesh.cli.cmd_build import add_format_arguments, write_options
from chanmesh.errors import DesignError
from chanmesh.family_limits import MAX_LEVELS
from chanmesh.cli.argtypes import finite_float, whole_number

NAME = "sweep"
HELP = "build every variant of a design (--vary KEY=a:b:n or KEY=v1,v2) on dask; resumable; summary.csv"
ORDER = 70


def add_arguments(p: argparse.ArgumentParser) -> None:
    p.add_argument("design", type=Path, help="design file (TOML); --vary values are in its unit")
    p.add_argument("--vary", action="append", default=[], metavar="KEY=SPEC",
                   help="a design key (list items by index: path.segments[1].arc) and its values: a:b:n (n values from a to b) or v1,v2,... (repeatable)")
    p.add_argument("--zip", action="store_true", help="pair the --vary lists element by element instead of the product")
    p.add_argument("--family", type=whole_number, default=0, metavar="N", help=f"build a mesh family of N levels (2-{MAX_LEVELS}) per variant")
    p.add_argument("--ratio", type=finite_float, default=1.5, help="family refinement ratio (default 1.5)")
    p.add_argument("--scheduler", default=None, metavar="ADDRESS", help="existing dask scheduler, e.g. tcp://host:8786")
    p.add_argument("--workers", type=whole_number, default=2, help="worker processes of the local cluster (default 2)")
    p.add_argument("--out", type=Path, default=None, help="sweep folder (default: out/<name>-sweep)")
    add_format_arguments(p)


def _terminate_as_interrupt(signum: int, frame: object) -> None:
    raise KeyboardInterrupt


def run(args: argparse.Namespace) -> int:
    from chanmesh.design.load import design_from_dict, read_design_data
    from chanmesh.sweep.plan import apply, combine, parse_vary
    from chanmesh.sweep.run import SweepRequest, run_sweep

    data = read_design_data(args.design)
    base = design_from_dict(data)  # the design itself must be valid before it is varied
    if not args.vary:
        raise DesignError("--vary", "(none)", "give at least one --vary KEY=SPEC, e.g. --vary path.radius=3000:8000:6")
    if args.family and not 2 <= args.family <= MAX_LEVELS:
        raise DesignError("--family", args.family, f"must be a whole number from 2 to {MAX_LEVELS}")
    assignments = combine([parse_vary(v) for v in args.vary], paired=args.zip)
    for key in assignments[0]:
        apply(data, {key: assignments[0][key]})  # a key that cannot be set fails here, once
    for assignment in assignments:  # unknown keys and unreadable values are bad options, not variants
        design_from_dict(apply(data, assignment), check=False)
    out = args.out or Path("out") / f"{base.name}-sweep"
    request = SweepRequest(args.format, write_options(args), args.family, args.ratio)
    previous = signal.signal(signal.SIGTERM, _terminate_as_interrupt)  # clean shutdown of the cluster
    try:
        result = run_sweep(data, assignments, out, request, args.scheduler, args.workers, quiet=args.quiet)
    finally:
        signal.signal(signal.SIGTERM, previous)
    shown = ", ".join(f"{n} {s}" for s, n in sorted(result.counts.items()))
    print(f"{base.name}: {len(result.rows)} variants ({shown}) -> {result.summary}")
    return 0
