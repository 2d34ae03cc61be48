"""``ChannelMesh``: points, volume cells, boundary facets and named groups, in metres.

Both meshers (tetrahedra through gmsh, hexahedra in numpy) produce this, and every writer reads
it, so a new mesher or a new format is one module. Validated on construction, in the manner of
meshio's ``Mesh``: the message states what was found against what was expected.
"""

from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np

from chanmesh.meshing.sweep_grid import SweepGrid

VOLUME_TYPES = {"tetra": 4, "hexahedron": 8, "wedge": 6}
FACET_TYPES = {"triangle": 3, "quad": 4}


@dataclass(frozen=True)
class Group:
    """A physical group: ``dim`` 3 for volumes, 2 for boundary or internal surfaces."""

    name: str
    dim: int
    tag: int


@dataclass
class Block:
    """Cells of one type, (m, k) int64 node indices into ``ChannelMesh.points``, with a group tag each."""

    type: str
    cells: np.ndarray
    tags: np.ndarray


@dataclass
class ChannelMesh:
    points: np.ndarray  # (n, 3) float64, m
    volumes: list[Block]
    facets: list[Block]
    groups: list[Group]
    info: dict = field(default_factory=dict)  # mesher notes (algorithm, sizes), copied into the manifest
    sweep: SweepGrid | None = None  # the hexahedral mesher's grid, when the cells follow one (faster face pairing)

    def __post_init__(self) -> None:
        self.points = np.ascontiguousarray(self.points, dtype=np.float64)
        if self.points.ndim != 2 or self.points.shape[1] != 3:
            raise ValueError(f"points.shape = {self.points.shape}, but (n, 3) is expected")
        n = len(self.points)
        tags = {g.tag for g in self.groups}
        if len(tags) != len(self.groups) or len({g.name for g in self.groups}) != len(self.groups):
            raise ValueError(f"group names and tags must be unique: {self.groups}")
        for kind, blocks, table in (("volume", self.volumes, VOLUME_TYPES), ("facet", self.facets, FACET_TYPES)):
            for b in blocks:
                if b.type not in table:
                    raise ValueError(f"{kind} block type '{b.type}', but one of {sorted(table)} is expected")
                b.cells = np.ascontiguousarray(b.cells, dtype=np.int64)
                b.tags = np.ascontiguousarray(b.tags, dtype=np.int64)
                if b.cells.ndim != 2 or b.cells.shape[1] != table[b.type]:
                    raise ValueError(f"{b.type} cells.shape = {b.cells.shape}, but (m, {table[b.type]}) is expected")
                if len(b.tags) != len(b.cells):
                    raise ValueError(f"len({b.type} tags) = {len(b.tags)}, but len(cells) = {len(b.cells)}")
                if len(b.cells) and (b.cells.min() < 0 or b.cells.max() >= n):
                    raise ValueError(f"{b.type} cells index points outside 0..{n - 1}")
                unknown = set(np.unique(b.tags).tolist()) - tags
                if unknown:
                    raise ValueError(f"{b.type} cells carry tags {sorted(unknown)} that no group has")

    # --- queries ---------------------------------------------------------------------------

    def group(self, name: str) -> Group:
        for g in self.groups:
            if g.name == name:
                return g
        raise KeyError(f"no group '{name}'; groups: {[g.name for g in self.groups]}")

    def cell_counts(self) -> dict[str, int]:
        """Cells per type, volumes and facets."""
        out: dict[str, int] = {}
        for b in self.volumes + self.facets:
            out[b.type] = out.get(b.type, 0) + len(b.cells)
        return out

    @property
    def n_volume_cells(self) -> int:
        return sum(len(b.cells) for b in self.volumes)

    def facets_of(self, name: str) -> list[Block]:
        """Facet blocks restricted to one group."""
        tag = self.group(name).tag
        return [Block(b.type, b.cells[b.tags == tag], b.tags[b.tags == tag]) for b in self.facets]
