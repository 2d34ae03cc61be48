"""The tetrahedral mesher: OpenCASCADE solid, labelled boundary, graded size field, HXT.

Built in millimetres (see ``gmshlayer.session.MODEL_UNIT``) and scaled to metres on the way
out, so every writer receives SI coordinates. A long channel is meshed in parts
(``gmshlayer.partition``): ``mesh_tet_part`` meshes one, ``tet_merge.merge_parts`` joins them;
``mesh_tet`` runs the parts in turn in this process, ``tet_process`` runs them side by side.
"""

from __future__ import annotations

from collections.abc import Sequence
from typing import Callable

import gmsh
import numpy as np

from chanmesh.design.model import Design
from chanmesh.gmshlayer.background import install_size_field, size_grid
from chanmesh.sizing import tet_grading
from chanmesh.gmshlayer.labels import label_boundary, split_ends
from chanmesh.gmshlayer.partition import mesh_seams_then_part, own_pieces, part_seams, parts_for
from chanmesh.gmshlayer.sections import embed_sections, surface_splits
from chanmesh.gmshlayer.session import MODEL_UNIT, gmsh_session
from chanmesh.gmshlayer.solids import build_solid
from chanmesh.meshing.model import Block, ChannelMesh, Group
from chanmesh.meshing.tet_merge import Seam, SeamMismatch, TetPart, merge_parts
from chanmesh.meshing.wallcells import count_multi_wall_tets

GMSH_TYPES = {4: "tetra", 2: "triangle", 5: "hexahedron", 3: "quad", 6: "wedge"}

Progress = Callable[[str], None]
RunParts = Callable[[Design, float, Sequence[float], int, "Progress | None"], Sequence[TetPart]]


def estimate_tet_cells(design: Design, scale: float = 1.0) -> int:
    """Tetrahedra the design is expected to give (within a factor of about 1.5)."""
    return int(size_grid(design, tet_grading(design, scale)).estimate_tets())


def _extract(model_unit: float) -> tuple[ChannelMesh, np.ndarray]:
    """The current gmsh model's physical groups as a ``ChannelMesh`` (metres), and the table
    from gmsh node tag to row of its points (-1: not used)."""
    node_tags, coords, _ = gmsh.model.mesh.getNodes()
    order = np.argsort(node_tags)
    node_tags = node_tags[order]
    points = coords.reshape(-1, 3)[order] * model_unit
    # node tag -> row of ``points`` by one gather (gmsh numbers nodes 1..n; a table of the
    # largest tag's size), instead of a binary search per corner
    row_of = np.full(int(node_tags[-1]) + 1 if len(node_tags) else 1, -1, np.int64)
    row_of[node_tags] = np.arange(len(node_tags))
    groups: list[Group] = []
    blocks: dict[tuple[int, str], list[tuple[np.ndarray, int]]] = {}
    for dim, tag in gmsh.model.getPhysicalGroups():
        name = gmsh.model.getPhysicalName(dim, tag)
        groups.append(Group(name, dim, tag))
        for ent in gmsh.model.getEntitiesForPhysicalGroup(dim, tag):
            types, _, conn = gmsh.model.mesh.getElements(dim, int(ent))
            for t, c in zip(types, conn):
                kind = GMSH_TYPES[int(t)]
                k = {"tetra": 4, "triangle": 3, "hexahedron": 8, "quad": 4, "wedge": 6}[kind]
                idx = row_of[c].reshape(-1, k)
                blocks.setdefault((dim, kind), []).append((idx, tag))
    vols, facs = [], []
    for (dim, kind), parts in sorted(blocks.items()):
        cells = np.concatenate([p for p, _ in parts])
        tags = np.concatenate([np.full(len(p), t) for p, t in parts])
        (vols if dim == 3 else facs).append(Block(kind, cells, tags))
    # keep only nodes used by some cell, numbered in order
    mask = np.zeros(len(points), bool)
    for b in vols + facs:
        mask[b.cells.ravel()] = True
    used = np.flatnonzero(mask)  # ascending, as np.unique gave, without its sort of every corner
    remap = np.full(len(points), -1, np.int64)
    remap[used] = np.arange(len(used))
    for b in vols + facs:
        b.cells = remap[b.cells]
    tag_row = np.where(row_of >= 0, remap[np.maximum(row_of, 0)], -1)
    return ChannelMesh(points[used], vols, facs, sorted(groups, key=lambda g: g.tag)), tag_row


def _seam(faces: Sequence[int], tag_row: np.ndarray) -> Seam:
    """The meshed seam ``faces`` (gmsh surface tags) as rows of the extracted mesh."""
    nodes, triangles = [], []
    for f in faces:
        nodes.append(gmsh.model.mesh.getNodes(2, int(f), includeBoundary=True)[0])
        for t, c in zip(*gmsh.model.mesh.getElements(2, int(f))[::2]):
            if GMSH_TYPES[int(t)] != "triangle":
                raise SeamMismatch(f"seam face {f} carries {GMSH_TYPES[int(t)]} elements")
            triangles.append(c.reshape(-1, 3))
    rows = tag_row[np.unique(np.concatenate(nodes).astype(np.int64))]
    tri = tag_row[np.concatenate(triangles).astype(np.int64)] if triangles else np.empty((0, 3), np.int64)
    if (rows < 0).any() or (tri < 0).any():
        raise SeamMismatch("a seam node is used by no tetrahedron")
    return Seam(rows, tri)


def tet_splits(design: Design, scale: float = 1.0) -> list[float]:
    """Arc lengths (m) of the unnamed cuts of ``design``'s solid (``sections.surface_splits``)."""
    grading = tet_grading(design, scale)
    return surface_splits(design, grading.h_wall, grading.h_core_min)


def mesh_tet_part(design: Design, scale: float, splits: Sequence[float], part: int, parts: int,
                  progress: Progress | None = None) -> TetPart:
    """Part ``part`` (from 0) of ``parts`` of ``design``'s tetrahedral mesh, with the cuts
    ``splits`` (``tet_splits``; ``parts`` from ``partition.parts_for``)."""
    say = progress or (lambda _stage: None)
    grading = tet_grading(design, scale)
    grid = size_grid(design, grading)
    with gmsh_session(threads=design.mesh.threads):
        say("geometry")
        volume = build_solid(design)
        volume = split_ends(design, volume)
        pieces, sections, cuts = embed_sections(design, volume, splits)
        lo, hi = part_seams(len(splits), part, parts)
        groups = label_boundary(design, pieces, sections, unnamed=[f for faces in cuts for f in faces])
        seams = [f for k in (lo, hi) if k is not None for f in cuts[k]]
        mine = own_pieces(pieces, seams, groups[design.inlets.names[0]][0], part) if parts > 1 else pieces
        say("meshing")
        install_size_field(grid, MODEL_UNIT)
        gmsh.option.setNumber("Mesh.Algorithm", 6)  # Frontal-Delaunay surfaces
        gmsh.option.setNumber("Mesh.Algorithm3D", 10)  # HXT: ~10x faster than Delaunay here
        gmsh.option.setNumber("Mesh.Optimize", 1)
        if parts > 1:
            mesh_seams_then_part(seams, mine)
        else:
            gmsh.model.mesh.generate(3)
        mesh, tag_row = _extract(MODEL_UNIT)
        joins = {}
        if lo is not None:
            joins[part - 1] = _seam(cuts[lo], tag_row)
        if hi is not None:
            joins[part] = _seam(cuts[hi], tag_row)
    mesh.info.update(
        {
            "mesher": "tetrahedra (gmsh OpenCASCADE + HXT)",
            "gmsh_version": gmsh.__version__,
            "wall_cell": grading.h_wall,
            "core_cell": grading.h_core_min,
            "growth_ratio": grading.ratio,
            "estimated_cells": int(grid.estimate_tets()),  # build.check_estimate enforced mesh.max_cells before
        }
    )
    return TetPart(mesh, joins, pieces=len(mine))


def _run_here(design: Design, scale: float, splits: Sequence[float], parts: int,
              progress: Progress | None) -> list[TetPart]:
    """Every part in turn, in this process."""
    return [mesh_tet_part(design, scale, splits, p, parts, progress if p == 0 else None) for p in range(parts)]


def mesh_tet(design: Design, scale: float = 1.0, progress: Progress | None = None,
             run_parts: RunParts | None = None) -> ChannelMesh:
    """Mesh ``design`` with graded tetrahedra; ``scale`` > 1 refines every size by that factor.

    ``run_parts(design, scale, splits, parts, progress)`` meshes the parts (default: in turn,
    here); if their seams do not match, the channel is meshed again in one part.
    """
    run = run_parts or _run_here
    splits = tet_splits(design, scale)
    parts = parts_for(splits)
    try:
        done = run(design, scale, splits, parts, progress)
        mesh = merge_parts(done)
    except SeamMismatch:
        parts = 1
        done = run(design, scale, splits, 1, progress)
        mesh = merge_parts(done)
    mesh.info = {
        **done[0].mesh.info,
        "surface_pieces": sum(p.pieces for p in done),
        "mesh_parts": parts,
        "tets_with_two_wall_faces": count_multi_wall_tets(mesh),
    }
    return mesh
