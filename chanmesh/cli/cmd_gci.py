"""``chanmesh gci RESULTS.csv``: discretisation uncertainty of a grid-convergence study.

Prints a table and writes gci.json, gci.csv and one PNG per quantity (see docs/gci.md).
"""

from __future__ import annotations

import argparse
from pathlib import Path

from chanmesh.cli.argtypes import finite_float, whole_number

NAME = "gci"
HELP = "apparent order, Richardson extrapolation and grid convergence index of a results table"
ORDER = 60


def add_arguments(parser: argparse.ArgumentParser) -> None:
    parser.add_argument("results", type=Path, metavar="RESULTS.csv",
                        help="columns: level (1 = finest), cells or h, then one column per quantity")
    parser.add_argument("--family", type=Path, metavar="DIR", help="take h (m) from DIR/family.json, matched by level")
    parser.add_argument("--dim", type=whole_number, choices=(2, 3), default=3,
                        help="dimension for h from cell counts: (V/N)^(1/3) or, with 2, (A/N)^(1/2) (default 3)")
    parser.add_argument("--volume", type=finite_float, metavar="V", help="domain volume in m^3 for h = (V/N)^(1/3)")
    parser.add_argument("--area", type=finite_float, metavar="A", help="domain area in m^2 for h = (A/N)^(1/2) (with --dim 2)")
    parser.add_argument("--order", type=finite_float, default=2.0,
                        help="formal order assumed for a two-grid GCI (default 2, a second-order scheme)")
    parser.add_argument("--out", type=Path, metavar="DIR", help="output folder (default: the --family folder, else out/gci)")


def run(args: argparse.Namespace) -> int:
    from chanmesh.errors import StudyError
    from chanmesh.post.gci import gci_study
    from chanmesh.post.gci_io import format_report, write_report
    from chanmesh.post.gci_table import load_study

    if args.area is not None and args.dim != 2:
        raise StudyError("--area", args.area, "applies to a planar study only: add --dim 2, or give --volume")
    if args.volume is not None and args.dim != 3:
        raise StudyError("--volume", args.volume, "applies to --dim 3 only: give --area for a planar study")
    extent = args.area if args.dim == 2 else args.volume
    table = load_study(args.results, dim=args.dim, extent=extent, family=args.family)
    reports = gci_study(table, order=args.order)
    print(format_report(table, reports), end="")
    # never the CSV's folder by default: in a first session that is the working copy's root
    out = args.out if args.out is not None else (args.family if args.family is not None else Path("out") / "gci")
    for path in write_report(out, table, reports):
        print(f"wrote {path}")
    return 0
