"""``chanmesh family DESIGN --levels 3 --ratio 1.5``: a refined mesh family for a convergence
study (``level-1`` finest ... ``level-N`` = the design as written) and its ``family.json``."""

from __future__ import annotations

import argparse
import sys
from pathlib import Path

from chanmesh.cli.cmd_build import add_format_arguments, write_options
from chanmesh.family_limits import MAX_LEVELS, RATIO_RANGE
from chanmesh.cli.argtypes import finite_float, whole_number

NAME = "family"
HELP = "build a family of systematically refined meshes (level-1 finest) and family.json for a GCI study"
ORDER = 55


def add_arguments(p: argparse.ArgumentParser) -> None:
    p.add_argument("design", type=Path, help="design file (TOML); it becomes the coarsest level")
    p.add_argument("--levels", type=whole_number, default=3, help=f"number of meshes, 2 to {MAX_LEVELS} (default 3)")
    p.add_argument("--ratio", type=finite_float, default=1.5,
                   help=f"refinement factor between neighbouring levels, {RATIO_RANGE[0]} to {RATIO_RANGE[1]} (default 1.5)")
    p.add_argument("--out", type=Path, default=None, help="output folder (default: out/<name>-family)")
    add_format_arguments(p)


def run(args: argparse.Namespace) -> int:
    from chanmesh.design import load_design
    from chanmesh.family import build_family

    design = load_design(args.design)
    out = args.out or Path("out") / f"{design.name}-family"
    result = build_family(design, out, args.levels, args.ratio, args.format, write_options(args), quiet=args.quiet)
    for w in result.record["warnings"]:
        print(f"chanmesh family: warning: {w}", file=sys.stderr)
    if not args.quiet:
        print(f"{design.name}: {len(result.record['levels'])} levels -> {result.folder / 'family.json'}")
        for row in result.record["levels"]:
            r = row["ratio_to_next"]
            shown = f"  ratio to next {r:.3f} (asked {row['ratio_to_next_requested']:g})" if r else ""
            print(f"  {row['path']:<8} {row['cells']:>10,} cells  h = {row['h']:.4e} m  scale {row['scale']:.4g}{shown}")
    return 0
