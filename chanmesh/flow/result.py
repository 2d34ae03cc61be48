"""What a section-flow solve returns (``SectionFlow``) and how vortex cells are found in it."""

from __future__ import annotations

import math
from dataclasses import dataclass, field
from typing import Any

import numpy as np

DEAN_SOURCE = "De = Re * sqrt(D_h / (2 R)) (chanmesh.numbers.regime.dean_number)"
VORTEX_FLOOR = 1e-3
"""A stream-function extremum counts as a vortex cell only where |psi| exceeds this fraction of
the largest |psi| (discards round-off extrema of an almost still section; no source)."""
PERSISTENCE = 0.01
"""... and only when it stands out of its surroundings by this fraction of the largest |psi|
(merges the flat top of a wide cell, split into two by a coarse grid; no source)."""


@dataclass(frozen=True)
class SectionFlow:
    """Fully developed flow of one section at one flow rate, SI units.

    ``dpds`` is the driving pressure drop per metre of centreline, -dp/ds at r = R (positive);
    ``dpds_straight`` the same for the straight duct at the same flow, on the same grid and
    discretisation. Nodal arrays: ``points`` (k, 2) section-frame (u, z) in m with
    ``triangles`` (t, 3); ``streamwise`` (m/s, along the tangent), ``secondary_u`` (along n),
    ``secondary_z`` and ``stream_function`` (m^2/s; (r/R) u_n = dpsi/dz, (r/R) u_z = -dpsi/du).
    """

    flow_rate: float
    mean_velocity: float
    max_streamwise: float
    u_of_streamwise_max: float
    z_of_streamwise_max: float
    dpds: float
    dpds_straight: float
    dpds_ratio: float
    secondary_max: float
    secondary_mean: float
    vortices: tuple[dict[str, Any], ...]
    reynolds: float
    dean: float | None
    radius: float | None
    hydraulic_diameter: float
    area: float
    density: float
    viscosity: float
    discretisation: str
    grid: dict[str, Any]
    error: dict[str, Any] | None
    solver: dict[str, Any]
    points: np.ndarray = field(repr=False)
    triangles: np.ndarray = field(repr=False)
    streamwise: np.ndarray = field(repr=False)
    secondary_u: np.ndarray = field(repr=False)
    secondary_z: np.ndarray = field(repr=False)
    stream_function: np.ndarray = field(repr=False)
    state: Any = field(default=None, repr=False, compare=False)

    @property
    def secondary_speed(self) -> np.ndarray:
        return np.hypot(self.secondary_u, self.secondary_z)

    @property
    def cell_count(self) -> int:
        return len(self.vortices)

    def as_dict(self, arrays: bool = False) -> dict[str, Any]:
        """JSON-able summary, units in the key names; nodal arrays too when ``arrays``."""
        out: dict[str, Any] = {
            "flow_rate_m3_s": self.flow_rate,
            "flow_rate_mL_min": self.flow_rate * 6e7,
            "mean_velocity_m_s": self.mean_velocity,
            "max_streamwise_m_s": self.max_streamwise,
            "max_over_mean": self.max_streamwise / self.mean_velocity if self.mean_velocity else None,
            "u_of_streamwise_max_m": self.u_of_streamwise_max,
            "z_of_streamwise_max_m": self.z_of_streamwise_max,
            "dpds_Pa_m": self.dpds,
            "dpds_definition": "-dp/ds along the centreline (r = R): the pressure drop per metre of centreline",
            "dpds_straight_Pa_m": self.dpds_straight,
            "dpds_ratio": self.dpds_ratio,
            "secondary_max_m_s": self.secondary_max,
            "secondary_mean_m_s": self.secondary_mean,
            "secondary_mean_definition": "area-weighted mean of the in-plane speed sqrt(u_n^2 + u_z^2)",
            "vortex_cells": len(self.vortices),
            "vortices": [dict(v) for v in self.vortices],
            "vortex_definition": ("interior extrema of the in-plane stream function; sense looking downstream "
                                  "(u to the right, z up); strength |psi| at the centre, m^2/s"),
            "reynolds": self.reynolds,
            "reynolds_definition": "Re = rho U D_h / mu, U the mean velocity",
            "dean": self.dean,
            "dean_definition": DEAN_SOURCE,
            "radius_m": self.radius,
            "radius_definition": ("signed centreline radius of curvature: > 0 centre of curvature on the u < 0 side "
                                  "(left turn), < 0 on the u > 0 side; null = straight duct"),
            "hydraulic_diameter_m": self.hydraulic_diameter,
            "area_m2": self.area,
            "density_kg_m3": self.density,
            "viscosity_Pa_s": self.viscosity,
            "discretisation": self.discretisation,
            "grid": self.grid,
            "estimated_error": self.error,
            "solver": self.solver,
        }
        if arrays:
            out["nodes"] = {
                "u_m": self.points[:, 0].tolist(),
                "z_m": self.points[:, 1].tolist(),
                "streamwise_m_s": self.streamwise.tolist(),
                "secondary_u_m_s": self.secondary_u.tolist(),
                "secondary_z_m_s": self.secondary_z.tolist(),
                "stream_function_m2_s": self.stream_function.tolist(),
            }
        return _json_safe(out)


def _json_safe(obj: Any) -> Any:
    if isinstance(obj, dict):
        return {k: _json_safe(v) for k, v in obj.items()}
    if isinstance(obj, (list, tuple)):
        return [_json_safe(v) for v in obj]
    if isinstance(obj, (bool, str)) or obj is None:
        return obj
    if isinstance(obj, (int, np.integer)):
        return int(obj)
    if isinstance(obj, (float, np.floating)):
        f = float(obj)
        return f if math.isfinite(f) else None
    return obj


def neighbours(triangles: np.ndarray, n: int) -> list[np.ndarray]:
    """Node adjacency (sharing an edge) of a triangle mesh with ``n`` nodes: each node's
    neighbours, ascending (one sort of all edges, no per-node work but the slicing)."""
    t = np.asarray(triangles)
    edges = np.concatenate([t[:, [0, 1]], t[:, [1, 2]], t[:, [2, 0]]])
    edges = np.concatenate([edges, edges[:, ::-1]])
    edges = edges[np.lexsort((edges[:, 1], edges[:, 0]))]
    first = np.ones(len(edges), bool)
    first[1:] = np.any(edges[1:] != edges[:-1], axis=1)  # an inner edge is listed by both its triangles
    edges = edges[first]
    starts = np.searchsorted(edges[:, 0], np.arange(n + 1)).tolist()
    ends = edges[:, 1]
    return [ends[a:b] for a, b in zip(starts[:-1], starts[1:])]


def find_vortices(points: np.ndarray, triangles: np.ndarray, psi: np.ndarray, boundary: np.ndarray,
                  floor: float = 0.0) -> list[dict[str, Any]]:
    """Vortex cells: interior extrema of the stream function ``psi`` that stand out.

    A maximum turns counter-clockwise looking downstream ((r/R) u_n = dpsi/dz: flow toward -u
    above a maximum), a minimum clockwise. An extremum counts when its persistence (how far it
    rises above the saddle joining it to a stronger extremum of the same kind or to the wall)
    exceeds ``PERSISTENCE`` of max |psi|: this merges the flat tops of wide cells on coarse grids
    into one. Centres are refined by a quadratic fit. Sorted by z, top first; none when
    max |psi| <= ``floor`` (m^2/s).
    """
    psi = np.asarray(psi, float)
    top = float(np.max(np.abs(psi))) if len(psi) else 0.0
    if top <= max(floor, 0.0):
        return []
    nb = neighbours(triangles, len(points))
    on_wall = np.zeros(len(points), bool)
    on_wall[boundary] = True
    out = []
    for sign, sense in ((1.0, "counter-clockwise"), (-1.0, "clockwise")):
        for i, pers in _peaks(sign * psi, nb, on_wall):
            if pers <= PERSISTENCE * top or abs(psi[i]) <= VORTEX_FLOOR * top:
                continue
            cu, cz = refine_extremum(points, psi, i, nb)
            out.append({"centre_u_m": cu, "centre_z_m": cz, "sense": sense, "strength_m2_s": abs(float(psi[i])),
                        "psi_m2_s": float(psi[i])})
    out.sort(key=lambda v: -v["centre_z_m"])
    return out


def _peaks(f: np.ndarray, nb: list[np.ndarray], on_wall: np.ndarray) -> list[tuple[int, float]]:
    """Interior maxima of ``f`` with their persistence (0-dimensional, by union-find over the
    superlevel sets); the walls form one component that never dies. (Python lists inside: this
    loop visits every node, and indexing numpy arrays one element at a time is slower.)"""
    values = np.asarray(f, float).tolist()
    near = [a.tolist() for a in nb]
    wall_node = np.asarray(on_wall, bool).tolist()
    parent = list(range(len(values)))  # each component is named by its root, its highest node
    seen = [False] * len(values)

    def root(i: int) -> int:
        while parent[i] != i:
            parent[i] = parent[parent[i]]
            i = parent[i]
        return i

    wall = -1
    out: list[tuple[int, float]] = []
    for i in np.argsort(-np.asarray(f, float), kind="stable").tolist():
        seen[i] = True
        roots = {root(j) for j in near[i] if seen[j]}
        if wall_node[i]:
            roots.add(root(wall) if wall >= 0 else i)
            wall = i if wall < 0 else wall
        if not roots:
            continue  # a new peak: its own component
        if len(roots) == 1:  # joins one component (most nodes): nothing dies
            parent[i] = roots.pop()
            continue
        # the component with the highest peak (or the wall) survives; the others die here
        def height(r: int) -> float:
            return math.inf if wall >= 0 and root(wall) == r else values[r]

        keep = max(roots, key=height)
        for r in roots:
            if r != keep:
                if not (wall >= 0 and root(wall) == r):
                    out.append((r, values[r] - values[i]))
                parent[r] = keep
        parent[i] = keep
    # peaks never merged (no wall reached, e.g. a grid without walls) are ignored
    return out


def refine_extremum(points: np.ndarray, psi: np.ndarray, i: int, nb: list[np.ndarray]) -> tuple[float, float]:
    """Stationary point of a least-squares quadratic through node ``i`` and its two rings."""
    ring = np.unique(np.concatenate([nb[i]] + [nb[j] for j in nb[i]]))
    x = points[ring] - points[i]
    scale = float(np.max(np.abs(x))) or 1.0
    x = x / scale
    a = np.column_stack([np.ones(len(x)), x[:, 0], x[:, 1], x[:, 0] ** 2, x[:, 0] * x[:, 1], x[:, 1] ** 2])
    c, *_ = np.linalg.lstsq(a, psi[ring], rcond=None)
    hess = np.array([[2 * c[3], c[4]], [c[4], 2 * c[5]]])
    try:
        d = np.linalg.solve(hess, -c[1:3])
    except np.linalg.LinAlgError:
        d = np.zeros(2)
    if not np.all(np.isfinite(d)) or np.hypot(*d) > 1.0:  # stay within the rings
        d = np.zeros(2)
    p = points[i] + d * scale
    return float(p[0]), float(p[1])
