"""The tetrahedral mesher: OpenCASCADE solid, labelled boundary, graded size field, HXT.

Built in millimetres (see ``gmshlayer.session.MODEL_UNIT``) and scaled to metres on the way
out, so every writer receives SI coordinates.
"""

from __future__ import annotations

from typing import Callable

import gmsh
import numpy as np

from chanmesh.design.model import Design
from chanmesh.gmshlayer.background import install_size_field, size_grid
from chanmesh.sizing import tet_grading
from chanmesh.gmshlayer.labels import label_boundary, split_ends
from chanmesh.gmshlayer.sections import embed_sections, surface_splits
from chanmesh.gmshlayer.session import MODEL_UNIT, gmsh_session
from chanmesh.gmshlayer.solids import build_solid
from chanmesh.meshing.model import Block, ChannelMesh, Group
from chanmesh.meshing.wallcells import count_multi_wall_tets

GMSH_TYPES = {4: "tetra", 2: "triangle", 5: "hexahedron", 3: "quad", 6: "wedge"}

Progress = Callable[[str], None]


def estimate_tet_cells(design: Design, scale: float = 1.0) -> int:
    """Tetrahedra the design is expected to give (within a factor of about 1.5)."""
    return int(size_grid(design, tet_grading(design, scale)).estimate_tets())


def extract_mesh(model_unit: float = MODEL_UNIT) -> ChannelMesh:
    """Read the current gmsh model's physical groups into a ``ChannelMesh`` (metres)."""
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
    return ChannelMesh(points[used], vols, facs, sorted(groups, key=lambda g: g.tag))


def mesh_tet(design: Design, scale: float = 1.0, progress: Progress | None = None) -> ChannelMesh:
    """Mesh ``design`` with graded tetrahedra; ``scale`` > 1 refines every size by that factor."""
    say = progress or (lambda _stage: None)
    grading = tet_grading(design, scale)
    grid = size_grid(design, grading)
    estimate = int(grid.estimate_tets())  # build.check_estimate enforces mesh.max_cells before this
    with gmsh_session(threads=design.mesh.threads):
        say("geometry")
        volume = build_solid(design)
        volume = split_ends(design, volume)
        splits = surface_splits(design, grading.h_wall, grading.h_core_min)
        pieces, sections, cuts = embed_sections(design, volume, splits)
        label_boundary(design, pieces, sections, unnamed=cuts)
        say("meshing")
        install_size_field(grid, MODEL_UNIT)
        gmsh.option.setNumber("Mesh.Algorithm", 6)  # Frontal-Delaunay surfaces
        gmsh.option.setNumber("Mesh.Algorithm3D", 10)  # HXT: ~10x faster than Delaunay here
        gmsh.option.setNumber("Mesh.Optimize", 1)
        gmsh.model.mesh.generate(3)
        mesh = extract_mesh()
    mesh.info.update(
        {
            "mesher": "tetrahedra (gmsh OpenCASCADE + HXT)",
            "gmsh_version": gmsh.__version__,
            "wall_cell": grading.h_wall,
            "core_cell": grading.h_core_min,
            "growth_ratio": grading.ratio,
            "estimated_cells": estimate,
            "surface_pieces": len(splits) + 1,
            "tets_with_two_wall_faces": count_multi_wall_tets(mesh),
        }
    )
    return mesh
