"""``chanmesh build DESIGN``: mesh a design and write the chosen formats plus a manifest."""

from __future__ import annotations

import argparse
import dataclasses
from pathlib import Path

from typing import TYPE_CHECKING

from chanmesh.terms import count_phrase
from chanmesh.units import parse_length
from chanmesh.writers import DEFAULT_FORMATS, FORMATS, WriteOptions

if TYPE_CHECKING:
    from chanmesh.design import Design

FABRICATION_LENGTHS = ("mould_margin", "base_thickness", "port_diameter")

NAME = "build"
HELP = "mesh a design file and write mesh files and manifest.json"
ORDER = 10


def formats_arg(text: str) -> tuple[str, ...]:
    """``'msh,vtu'`` -> ('msh', 'vtu'); at least one name (an empty list would write no mesh)."""
    names = tuple(f.strip() for f in text.split(",") if f.strip())
    if not names:
        raise argparse.ArgumentTypeError(f"{text!r} names no format; give at least one, e.g. msh,xdmf,vtu")
    return names


def add_arguments(p: argparse.ArgumentParser) -> None:
    p.add_argument("design", type=Path, help="design file (TOML)")
    p.add_argument("--out", type=Path, default=None, help="output folder (default: out/<name>)")
    add_format_arguments(p)


def add_format_arguments(p: argparse.ArgumentParser) -> None:
    """--format, --msh-version, --binary, --quiet: shared by build, family and sweep."""
    p.add_argument(
        "--format",
        type=formats_arg,
        default=DEFAULT_FORMATS,
        help=f"comma-separated formats (default {','.join(DEFAULT_FORMATS)}; any of {','.join(FORMATS)}, or meshio:FMT)",
    )
    p.add_argument("--msh-version", choices=("4.1", "2.2"), default="4.1", help="MSH file version (default 4.1)")
    p.add_argument("--binary", action="store_true", help="binary MSH instead of ASCII")
    p.add_argument("--msh-no-sections", action="store_true",
                   help="leave the internal section_k surfaces out of the MSH (OpenFOAM's gmshToFoam turns them into "
                        "empty patches and warns about each; --format openfoam keeps them as face zones)")
    p.add_argument("--quiet", action="store_true", help="no progress lines")
    fab = p.add_argument_group("fabrication outputs (override the design's [fabrication] table)")
    fab.add_argument("--mould-margin", metavar="LENGTH", help="mould plate beyond the footprint, with unit (e.g. 2mm)")
    fab.add_argument("--base-thickness", metavar="LENGTH", help="mould plate thickness, with unit (e.g. 1.5mm)")
    fab.add_argument("--port-diameter", metavar="LENGTH", help="DXF punch circle diameter, with unit (0mm: none)")
    fab.add_argument("--dxf-unit", choices=("um", "mm"), help="drawing unit of the DXF plan")


def with_fabrication_overrides(design: Design, args: argparse.Namespace) -> Design:
    """The design with any --mould-margin, --base-thickness, --port-diameter, --dxf-unit applied."""
    from chanmesh.design.checks import check_design

    changes: dict[str, object] = {}
    for key in FABRICATION_LENGTHS:
        text = getattr(args, key, None)
        if text is not None:
            changes[key] = parse_length("--" + key.replace("_", "-"), text)
    if getattr(args, "dxf_unit", None):
        changes["dxf_unit"] = args.dxf_unit
    if not changes:
        return design
    design = dataclasses.replace(design, fabrication=dataclasses.replace(design.fabrication, **changes))
    check_design(design)
    return design


def write_options(args: argparse.Namespace) -> WriteOptions:
    return WriteOptions(args.msh_version, args.binary, not getattr(args, "msh_no_sections", False))


def run(args: argparse.Namespace) -> int:
    from chanmesh.build import build
    from chanmesh.design import load_design
    from chanmesh.progress import StageClock

    design = with_fabrication_overrides(load_design(args.design), args)
    out = args.out or Path("out") / design.name
    clock = StageClock(quiet=args.quiet)
    result = build(design, out, formats=args.format, options=write_options(args), clock=clock)
    if not args.quiet:
        m = result.manifest
        counts = count_phrase(m["cells"])
        print(f"{design.name}: {counts} -> {result.folder}")
        for g in m["groups"]:
            err = f"  (analytic {g['relative_error']:+.2e})" if "relative_error" in g else ""
            print(f"  {g['name']:<10} dim {g['dim']}  tag {g['tag']:<3} {g['entities']:>9,} entities  {g['measured']:.6e} {g['unit']}{err}")
    if "resolution" in result.manifest and not args.quiet:  # --quiet: the manifest and report still say it
        from chanmesh.resolution import summary_lines

        for line in summary_lines(result.manifest["resolution"]):
            print(line)
    return 0
