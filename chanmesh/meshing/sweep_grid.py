"""Face pairing of a swept hexahedral mesh from its grid indices, in linear time without hashing.

The hexahedral mesher (``meshing.hex``) numbers its cells (k along, i across, j up) over the
columns (k, i) its mask keeps, j fastest, and its nodes by the same tensor grid (then drops
the nodes of absent columns, keeping the order). Which cell lies across each face therefore
follows from the indices alone: the j faces pair with the cell above or below in the same
column, the k and i faces with the same j in the neighbouring column, if the mask keeps it.

That knowledge is trusted only after proof: ``sweep_partner`` first rebuilds every cell's
eight nodes from the grid and compares them with the mesh's cell array (exact, in batches).
Then two face slots have equal node sets exactly when they are the same grid face (node
numbers are one-to-one with grid nodes), so the pairing is the same as the hash pairing of
``meshing.faces`` gives (tests compare the two), at a tenth of its time.
"""

from __future__ import annotations

from dataclasses import dataclass
from typing import TYPE_CHECKING

import numpy as np

if TYPE_CHECKING:
    from chanmesh.meshing.model import ChannelMesh

BATCH = 1 << 18
"""Cells rebuilt and compared per batch (bounds the temporaries at about 16 MB)."""

# local quads of the VTK hexahedron by the grid direction they close (meshing.faces.FACES order)
J_MINUS, J_PLUS, K_MINUS, I_PLUS, K_PLUS, I_MINUS = range(6)


@dataclass(frozen=True)
class SweepGrid:
    """The tensor grid a swept hexahedral mesh was cut from.

    ``shape`` cells (along, across, high); ``columns`` (along, across) bool, the (k, i)
    columns that hold cells, or None for all of them.
    """

    shape: tuple[int, int, int]
    columns: np.ndarray | None = None

    def column_mask(self) -> np.ndarray:
        nk, ni, _ = self.shape
        return np.ones((nk, ni), bool) if self.columns is None else np.asarray(self.columns, bool)

    def node_offsets(self) -> np.ndarray:
        """Offsets of a cell's eight corners from corner 0 in the full grid's node numbering,
        node (k, i, j) -> (k (ni + 1) + i)(nj + 1) + j, in VTK hexahedron order."""
        _, ni, nj = self.shape
        di, dk = nj + 1, (ni + 1) * (nj + 1)
        return np.array([0, di, dk + di, dk, 1, di + 1, dk + di + 1, dk + 1], dtype=np.int64)

    def corner0_grid(self) -> np.ndarray:
        """Full-grid node number of corner 0 of every cell of the full grid, (nk, ni, nj) int64."""
        nk, ni, nj = self.shape
        k = np.arange(nk, dtype=np.int64)[:, None, None] * ((ni + 1) * (nj + 1))
        i = np.arange(ni, dtype=np.int64)[None, :, None] * (nj + 1)
        return k + i + np.arange(nj, dtype=np.int64)[None, None, :]

    def corner0(self) -> np.ndarray:
        """Full-grid node number of corner 0 of every cell, in cell order (m,) int64."""
        full = self.corner0_grid()
        return full.reshape(-1) if self.columns is None else full[self.column_mask()].reshape(-1)

    def node_numbers(self) -> np.ndarray:
        """Full-grid node number -> mesh node number (-1 for nodes of absent columns)."""
        nk, ni, nj = self.shape
        if self.columns is None:
            return np.arange((nk + 1) * (ni + 1) * (nj + 1), dtype=np.int64)
        used = np.zeros((nk + 1, ni + 1), bool)  # node columns touched by a kept cell column
        m = self.column_mask()
        used[:-1, :-1] |= m
        used[1:, :-1] |= m
        used[:-1, 1:] |= m
        used[1:, 1:] |= m
        used = np.repeat(used.reshape(-1), nj + 1)
        return np.where(used, np.cumsum(used) - 1, -1)


def grid_cells(grid: SweepGrid) -> np.ndarray:
    """The cells (m, 8) of the grid in mesh node numbers: what the mesher writes."""
    full = grid.corner0()[:, None] + grid.node_offsets()[None, :]
    return full if grid.columns is None else grid.node_numbers()[full]


def cells_follow_grid(grid: SweepGrid, cells: np.ndarray) -> bool:
    """True when ``cells`` is exactly the grid's cell array (same cells, corners, order)."""
    nk, ni, nj = grid.shape
    mask = grid.column_mask()
    if cells.shape != (int(mask.sum()) * nj, 8):
        return False
    numbers, offsets, base = grid.node_numbers(), grid.node_offsets(), grid.corner0()
    for lo in range(0, len(cells), BATCH):
        expect = base[lo:lo + BATCH, None] + offsets[None, :]
        if grid.columns is not None:
            expect = numbers[expect]
        if not np.array_equal(expect, cells[lo:lo + BATCH]):
            return False
    return True


def proven_grid(mesh: "ChannelMesh") -> SweepGrid | None:
    """``mesh.sweep`` when the mesh is one block of hexahedra that is exactly the grid's cell
    array, else None. Proved once (``cells_follow_grid``) and kept on the mesh while its cell
    array and grid stay the same objects; the face pairing, the quality figures and the volumes
    then read the grid instead of the cells."""
    grid = mesh.sweep
    if grid is None or len(mesh.volumes) != 1 or mesh.volumes[0].type != "hexahedron":
        return None
    cells = mesh.volumes[0].cells
    hit = mesh.__dict__.get("_proven_grid")
    if hit is None or hit[0] is not cells or hit[1] is not grid:
        hit = (cells, grid, cells_follow_grid(grid, cells))
        mesh.__dict__["_proven_grid"] = hit
    return grid if hit[2] else None


def sweep_partner(grid: SweepGrid, cells: np.ndarray, proven: bool = False) -> np.ndarray | None:
    """Partner slot of every face slot (cell * 6 + local quad), -1 on the boundary, or None
    when ``cells`` is not the grid's cell array (then pair by hashing instead); ``proven``:
    the caller knows it is (``proven_grid``).

    int32 when the slots fit, as ``meshing.faces`` makes them."""
    if not proven and not cells_follow_grid(grid, cells):
        return None
    nk, ni, nj = grid.shape
    mask = grid.column_mask()
    n_cells = int(mask.sum()) * nj
    index = np.int32 if 6 * n_cells < 2**31 else np.int64
    first = np.full((nk, ni), -1, np.int64)  # first cell of each kept column
    first[mask] = np.arange(int(mask.sum()), dtype=np.int64) * nj
    pad = np.full((nk + 2, ni + 2), -1, np.int64)
    pad[1:-1, 1:-1] = first
    across = {  # the column across each side face, -1 where none
        K_MINUS: pad[:-2, 1:-1], K_PLUS: pad[2:, 1:-1], I_MINUS: pad[1:-1, :-2], I_PLUS: pad[1:-1, 2:],
    }
    opposite = {K_MINUS: K_PLUS, K_PLUS: K_MINUS, I_MINUS: I_PLUS, I_PLUS: I_MINUS}
    j = np.arange(nj, dtype=np.int64)
    partner = np.empty((n_cells, 6), index)
    cell = np.arange(n_cells, dtype=np.int64)
    jj = np.tile(j, int(mask.sum()))
    partner[:, J_MINUS] = np.where(jj > 0, (cell - 1) * 6 + J_PLUS, -1)
    partner[:, J_PLUS] = np.where(jj < nj - 1, (cell + 1) * 6 + J_MINUS, -1)
    del cell, jj
    for face, other in across.items():
        col = other[mask]  # (columns,) first cell of the neighbouring column, or -1
        slots = (col[:, None] + j[None, :]) * 6 + opposite[face]
        partner[:, face] = np.where(col[:, None] >= 0, slots, -1).reshape(-1)
    return partner.reshape(-1)
