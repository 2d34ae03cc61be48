"""The structured hexahedral mesher: the graded section grid swept along the centreline.

Pure numpy, no loop over cells: nodes are one broadcast of ``p(s) + u n(s) + v z`` and cells
one broadcast of eight index offsets (see ``hexplan`` for where the nodes go). Measured against
gmsh's transfinite/extrude machinery in ``bench/hex_vs_gmsh.py``; this path was kept (figures
in ``docs/hex.md``).

Cell (k, i, j) has corners in VTK/gmsh hexahedron order with x -> i (across, n), y -> k
(along, t) and z -> j (up); (n, t, z) is right-handed, so every volume is positive.
"""

from __future__ import annotations

from typing import Callable

import numpy as np

from chanmesh.design.model import Design
from chanmesh.errors import DesignError
from chanmesh.geometry.centerline import centerline_of
from chanmesh.geometry.section import section_shape_of
from chanmesh.meshing.hexplan import HexPlan, plan_hex
from chanmesh.meshing.hex_sections import tag_section_layers
from chanmesh.meshing.sweep_grid import SweepGrid, grid_cells
from chanmesh.geometry.stations import mesh_station_arc_lengths
from chanmesh.meshing.model import Block, ChannelMesh, Group
from chanmesh.meshing.verify import FACES

Progress = Callable[[str], None]

# local faces of the VTK hexahedron (outward, from verify.FACES) by the grid direction they close
_QUADS = np.array(FACES["hexahedron"][1])
_FACE_DIR = {"j-": 0, "j+": 1, "k-": 2, "i+": 3, "k+": 4, "i-": 5}


def estimate_hex_cells(design: Design, scale: float = 1.0) -> int:
    """Hexahedra the design gives (exact: the grid is known before meshing)."""
    return plan_hex(design, scale).cell_count()


def grid_points(design: Design, plan: HexPlan) -> np.ndarray:
    """All tensor-grid nodes, (nk + 1, ni + 1, nj + 1, 3) float, m."""
    line = centerline_of(design)
    shape = section_shape_of(design)
    c = line.points(plan.s)
    n = line.normals(plan.s)
    top = np.asarray(shape.top(plan.u), dtype=float)
    v = shape.bottom + plan.eta[None, :] * (top - shape.bottom)[:, None]  # (ni + 1, nj + 1)
    pts = np.empty((len(plan.s), len(plan.u), len(plan.eta), 3))
    pts[..., 0] = c[:, None, None, 0] + plan.u[None, :, None] * n[:, None, None, 0]
    pts[..., 1] = c[:, None, None, 1] + plan.u[None, :, None] * n[:, None, None, 1]
    pts[..., 2] = v[None, :, :]
    return pts


def open_sides(columns: np.ndarray) -> dict[str, np.ndarray]:
    """For each side of a cell column ("k-", "k+" along, "i-", "i+" across), the kept columns
    (``columns``, (nk, ni) bool) whose face on that side no kept column covers."""
    pad = np.pad(columns, 1)
    inner = pad[1:-1, 1:-1]
    return {
        "k-": inner & ~pad[:-2, 1:-1], "k+": inner & ~pad[2:, 1:-1],
        "i-": inner & ~pad[1:-1, :-2], "i+": inner & ~pad[1:-1, 2:],
    }


def boundary_quads(grid: SweepGrid) -> dict[str, list[np.ndarray]]:
    """Boundary quads (outward node order, full-grid node numbers) sorted into inlet, outlet
    pieces and wall. Any grid: the mesher's, or a coarser one on a subset of its node lines
    (the report's drawing surface, ``report/grid_surface.py``)."""
    nj = grid.shape[2]
    col = grid.column_mask()
    corner0, offsets = grid.corner0_grid(), grid.node_offsets()
    out: dict[str, list[np.ndarray]] = {"inlet": [], "outlet": [], "wall": []}

    def quads(cols: np.ndarray, j: slice, face: str) -> np.ndarray:
        base = corner0[:, :, j][cols]  # (m, nj') corner-0 indices of the selected cells
        return (base.reshape(-1)[:, None] + offsets[_QUADS[_FACE_DIR[face]]][None, :])

    everything = slice(None)
    for face, cols in open_sides(col).items():
        if face in ("k-", "k+"):
            end = np.zeros_like(cols)
            end[0 if face == "k-" else -1] = True
            out["inlet" if face == "k-" else "outlet"].append(quads(cols & end, everything, face))
            cols = cols & ~end
        out["wall"].append(quads(cols, everything, face))
    out["wall"].append(quads(col, slice(0, 1), "j-"))
    out["wall"].append(quads(col, slice(nj - 1, nj), "j+"))
    return out


def _split_end(plan: HexPlan, outlet: np.ndarray, names: tuple[str, ...], edges_at: tuple[int, ...]) -> list[tuple[str, np.ndarray]]:
    """End-face quads by piece (``edges_at``: bounding node columns): fraction measured from
    u = -w/2, as the tetrahedral labels do."""
    if len(names) == 1:
        return [(names[0], outlet)]
    nj = len(plan.eta) - 1
    ni = len(plan.u) - 1
    i_cell = ((outlet // (nj + 1)) % (ni + 1)).min(axis=1)  # the lower node column of each quad
    edges = np.asarray(edges_at)
    piece = np.searchsorted(edges, i_cell, side="right") - 1
    return [(name, outlet[piece == q]) for q, name in enumerate(names)]


def mesh_hex(design: Design, scale: float = 1.0, progress: Progress | None = None) -> ChannelMesh:
    """Mesh ``design`` with structured, wall-graded hexahedra; ``scale`` > 1 refines."""
    say = progress or (lambda _stage: None)
    plan = plan_hex(design, scale)
    count = plan.cell_count()
    if count > design.mesh.max_cells:
        from chanmesh.meshing.budget import too_many_cells

        raise too_many_cells(design, count, scale)
    say("nodes")
    nk, ni, nj = plan.shape
    grid = SweepGrid(plan.shape, plan.cell_mask())
    points = grid_points(design, plan).reshape(-1, 3)
    say("cells")
    cells = grid_cells(grid)
    faces = boundary_quads(grid)
    pieces = _split_end(plan, np.concatenate(faces["inlet"]), design.inlets.names, plan.inlet_nodes)
    pieces += _split_end(plan, np.concatenate(faces["outlet"]), design.outlets.names, plan.outlet_nodes)
    pieces.append(("wall", np.concatenate(faces["wall"])))
    groups = [Group(name, 2, tag) for tag, (name, _) in enumerate(pieces, start=1)]
    fluid = Group("fluid", 3, len(pieces) + 1)
    quad_cells = np.concatenate([q for _, q in pieces])
    quad_tags = np.concatenate([np.full(len(q), g.tag, np.int64) for g, (_, q) in zip(groups, pieces)])
    if grid.columns is not None:  # drop the nodes of absent side-band cells, keeping the order
        numbers = grid.node_numbers()
        points, quad_cells = points[numbers >= 0], numbers[quad_cells]
    mesh = ChannelMesh(
        points,
        [Block("hexahedron", cells, np.full(len(cells), fluid.tag, np.int64))],
        [Block("quad", quad_cells, quad_tags)],
        groups + [fluid],
    )
    mesh = tag_section_layers(mesh, design, mesh_station_arc_lengths(design))
    mesh.sweep = grid  # lets meshing.faces pair the faces from the indices (after checking them)
    mesh.info.update(
        {
            "mesher": "hexahedra (structured sweep, numpy)",
            "cells_along": nk, "cells_across": ni, "cells_high": nj,
            "wall_cell": float(plan.u[plan.band[0] + 1] - plan.u[plan.band[0]]),
            "wall_cell_high": plan.first_high,
            "growth_ratio": plan.grading.ratio,
            "growth_ratio_high": plan.ratio_high,
            "core_cell": plan.grading.h_core,
            "estimated_cells": count,
        }
    )
    return mesh
