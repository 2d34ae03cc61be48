"""``chanmesh quality MESH``: print the quality figures of a mesh file."""

from __future__ import annotations

import argparse
import json

from chanmesh.terms import count_phrase

NAME = "quality"
HELP = "print the quality figures (scaled Jacobian, aspect ratio, non-orthogonality, wall-adjacent cell) of a mesh file"
ORDER = 40


def add_arguments(parser: argparse.ArgumentParser) -> None:
    parser.add_argument("mesh", metavar="MESH", help="mesh file: .msh (2.2 or 4.1), .xdmf, .vtu, or any format meshio reads")
    parser.add_argument("--json", action="store_true", help="print the figures as JSON")


def run(args: argparse.Namespace) -> int:
    from chanmesh.post.quality import mesh_quality
    from chanmesh.post.readmesh import read_mesh_file

    mesh = read_mesh_file(args.mesh)
    q = mesh_quality(mesh)
    if args.json:
        print(json.dumps(q.as_dict(), indent=2))
        return 0
    counts = count_phrase(mesh.cell_counts())
    print(f"{args.mesh}: {counts}")
    print(f"  scaled Jacobian      min {q.scaled_jacobian_min:.4f}   mean {q.scaled_jacobian_mean:.4f}   (1 ideal, <= 0 inverted)")
    print(f"  aspect ratio         max {q.aspect_ratio_max:.3g}   (longest / shortest edge of a cell)")
    print(f"  non-orthogonality    max {q.non_orthogonality_max:.2f} deg   (face normal vs. line joining cell centres)")
    print(
        f"  wall-adjacent cell   min {q.wall_cell_min:.4g}   mean {q.wall_cell_mean:.4g}   max {q.wall_cell_max:.4g}"
        f"   (file units; measured on the {q.wall_source} faces)"
    )
    return 0
