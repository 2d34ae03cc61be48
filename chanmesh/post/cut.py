"""Sample a result's velocity on the exact cross-section at a station and split it into the
streamwise component and the secondary (in-plane) flow in the section frame.

The sample grid is cell-centred and fitted to the exact outline: ``nu`` columns across the
width, ``nv`` samples up each column between the flat bottom and the (possibly slanted) top,

    x_ij = p + u_i n + (bottom + eta_j h(u_i)) z,   h(u) = top(u) - bottom,

so the midpoint rule integrates over the section with weights h(u_i) du d(eta). Sampling is
VTK's probe filter (pyvista ``sample``), vectorised over all points at once.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field
from typing import Any

import numpy as np

from chanmesh.design.model import Design
from chanmesh.errors import MeshFileError
from chanmesh.geometry.centerline import centerline_of
from chanmesh.post.result_file import ResultField
from chanmesh.geometry.stations import StationFrame

Z = np.array([0.0, 0.0, 1.0])
MIN_VALID = 0.98  # fraction of sample points that must fall inside the result's cells
VORTEX_FLOOR = 0.10  # extrema of psi below this fraction of max |psi| are noise
PEAK_PATCH = 0.2  # the centre is fitted where |psi| is within this fraction of the region's extremum


@dataclass(frozen=True)
class SampleGrid:
    """Cell-centred samples over the exact outline; arrays are (nv, nu) unless noted."""

    u: np.ndarray  # (nu,) m
    eta: np.ndarray  # (nv,) in (0, 1)
    uu: np.ndarray  # m
    vv: np.ndarray  # m
    weights: np.ndarray  # m^2 per sample
    points: np.ndarray  # (nv * nu, 3) m

    @property
    def shape(self) -> tuple[int, int]:
        return len(self.eta), len(self.u)


def sample_grid(frame: StationFrame, nu: int, nv: int | None = None) -> SampleGrid:
    """The grid of ``nu`` x ``nv`` samples (nv default: the section's aspect ratio times nu, >= 8)."""
    o = frame.outline
    width = o.u1 - o.u0
    if nv is None:
        nv = max(8, int(round(nu * (max(o.top0, o.top1) - o.bottom) / width)))
    du, deta = width / nu, 1.0 / nv
    u = o.u0 + (np.arange(nu) + 0.5) * du
    eta = (np.arange(nv) + 0.5) * deta
    h = np.asarray(o.top(u)) - o.bottom
    uu = np.broadcast_to(u, (nv, nu)).copy()
    vv = o.bottom + eta[:, None] * h[None, :]
    weights = np.broadcast_to(h * du * deta, (nv, nu)).copy()
    pts = frame.point + uu.reshape(-1, 1) * frame.normal + vv.reshape(-1, 1) * Z
    return SampleGrid(u, eta, uu, vv, weights, pts)


def probe(result: ResultField, points: np.ndarray, tolerance: float | None = None) -> tuple[np.ndarray, np.ndarray]:
    """Field values at ``points`` (m, 3) and a mask of points found inside a cell."""
    import pyvista as pv

    cloud = pv.PolyData(np.asarray(points, float))
    out = cloud.sample(result.grid, tolerance=tolerance, pass_cell_data=True, pass_point_data=True)
    values = np.asarray(out.point_data[result.name], float).reshape(len(points), -1)
    valid = np.asarray(out.point_data["vtkValidPointMask"]).astype(bool)
    return values, valid


def _bounds_hint(result: ResultField, design: Design) -> str:
    """Compare the result's size with the design's and name the scale factor that would fit."""
    line = centerline_of(design)
    pts = line.points(np.linspace(0.0, line.length, 2001))
    pad = design.section.width
    lo, hi = pts.min(axis=0) - pad, pts.max(axis=0) + pad
    lo[2], hi[2] = -design.section.max_height, design.section.max_height
    b = np.asarray(result.grid.bounds, float).reshape(3, 2)
    rsize = float(np.linalg.norm(b[:, 1] - b[:, 0]))
    dsize = float(np.linalg.norm(hi - lo))
    ratio = dsize / rsize if rsize > 0 else math.inf
    shown = f"result spans {rsize:.4g} (its own units), the design {dsize:.4g} m"
    if math.isfinite(ratio) and ratio > 0 and abs(math.log10(ratio)) > 0.5:
        factor = 10.0 ** round(math.log10(ratio))
        unit = {1e-3: "mm", 1e-6: "um", 1e-2: "cm"}.get(factor, None)
        return f"{shown}: this usually means a unit mismatch; --scale {factor:g}" + (f" (result in {unit})" if unit else "") + " would fit"
    return f"{shown}; check that the result belongs to this design (same origin and orientation as chanmesh's mesh)"


@dataclass
class Cut:
    """A sampled section: grid, velocity components (nv, nu) in m/s, and the figures."""

    frame: StationFrame
    grid: SampleGrid
    velocity: np.ndarray  # (nv, nu, 3) global components
    streamwise: np.ndarray  # along t
    sec_n: np.ndarray  # along n (u direction)
    sec_z: np.ndarray  # along z (v direction)
    psi: np.ndarray  # in-plane stream function, m^2/s
    valid_fraction: float
    figures: dict[str, Any] = field(default_factory=dict)

    @property
    def secondary_speed(self) -> np.ndarray:
        return np.hypot(self.sec_n, self.sec_z)


def stream_function(grid: SampleGrid, a: np.ndarray) -> np.ndarray:
    """psi with a = d psi / dv (and b = -d psi / du), integrated up each column.

    The mean of the integral from the bottom (psi = 0 there) and from the top (psi = 0 there);
    both walls are streamlines of the in-plane flow.
    """
    dv = grid.weights / (grid.u[1] - grid.u[0]) if len(grid.u) > 1 else grid.weights
    flux = a * dv  # a * (h d eta) per sample
    from_bottom = np.cumsum(flux, axis=0) - 0.5 * flux
    from_top = -(np.cumsum(flux[::-1], axis=0)[::-1] - 0.5 * flux)
    return 0.5 * (from_bottom + from_top)


def vortex_centres(grid: SampleGrid, psi: np.ndarray, frame: StationFrame) -> list[dict[str, Any]]:
    """One centre per connected region of one sign of psi: the vertex of a quadratic fitted to
    psi where it is within 20 % of the region's extremum (the extremum itself if that fit is not
    a peak). Fitting over a patch keeps the kinks of a piecewise-linear solution from moving the
    centre or showing up as vortices of their own. Regions weaker than ``VORTEX_FLOOR`` of the
    strongest are left out.

    Looking downstream (u to the right, z up), psi > 0 turns counter-clockwise and psi < 0
    clockwise (a = d psi / dv, b = -d psi / du, so the flow circles a maximum counter-clockwise).
    """
    from scipy.ndimage import label

    peak = float(np.max(np.abs(psi))) if psi.size else 0.0
    if peak == 0.0:
        return []
    o = frame.outline
    out = []
    for sign in (1.0, -1.0):
        regions, count = label(sign * psi > 0)
        for k in range(1, count + 1):
            mask = regions == k
            ext = float(np.max(sign * psi[mask]))
            if ext < VORTEX_FLOOR * peak:
                continue
            u, v = _fit_peak(grid, sign * psi, mask & (sign * psi >= (1.0 - PEAK_PATCH) * ext))
            x = frame.point + u * frame.normal + v * Z
            out.append({
                "u_m": u, "v_m": v, "point_m": x.tolist(), "psi_m2_s": sign * ext,
                "sense": "counter-clockwise" if sign > 0 else "clockwise",
                "strength": ext / peak,
            })
    return sorted(out, key=lambda c: -c["strength"])


def _fit_peak(grid: SampleGrid, f: np.ndarray, patch: np.ndarray) -> tuple[float, float]:
    """(u, v) of the vertex of a least-squares quadratic through f on ``patch`` (f has its maximum there)."""
    uu, vv, ff = grid.uu[patch], grid.vv[patch], f[patch]
    best = int(np.argmax(ff))
    if len(ff) >= 6:
        scale = float(grid.u[-1] - grid.u[0]) or 1.0
        x, y = (uu - uu[best]) / scale, (vv - vv[best]) / scale
        A = np.column_stack([np.ones_like(x), x, y, x * x, x * y, y * y])
        c, *_ = np.linalg.lstsq(A, ff, rcond=None)
        H = np.array([[2 * c[3], c[4]], [c[4], 2 * c[5]]])
        if np.all(np.linalg.eigvalsh(H) < 0):
            dx, dy = np.linalg.solve(H, -c[1:3])
            u, v = uu[best] + dx * scale, vv[best] + dy * scale
            if uu.min() <= u <= uu.max() and vv.min() <= v <= vv.max():
                return float(u), float(v)
    return float(uu[best]), float(vv[best])


def cut(result: ResultField, design: Design, frame: StationFrame, nu: int = 100, nv: int | None = None) -> Cut:
    """Sample ``result`` on the section at ``frame`` and compute the figures of ``section.json``."""
    grid = sample_grid(frame, nu, nv)
    tol = 1e-3 * (frame.outline.u1 - frame.outline.u0)
    values, valid = probe(result, grid.points, tolerance=tol)
    fraction = float(valid.mean())
    if fraction < MIN_VALID:
        where = "none" if not valid.any() else f"only {fraction:.1%}"
        raise MeshFileError(
            f"{result.source}: {where} of the {len(valid)} section points at station {frame.label} lie inside the "
            f"result's cells; {_bounds_hint(result, design)}"
        )
    vel = np.where(valid[:, None], values, 0.0).reshape(*grid.shape, 3)
    w = vel @ frame.tangent
    a = vel @ frame.normal
    b = vel @ Z
    psi = stream_function(grid, a)
    c = Cut(frame, grid, vel, w, a, b, psi, fraction)
    c.figures = figures(c)
    c.figures["vortices"] = vortex_centres(grid, psi, frame)
    return c


def figures(c: Cut) -> dict[str, Any]:
    """Integrals and extremes of the cut (SI), and the centring check."""
    g, f = c.grid, c.frame
    area = float(g.weights.sum())
    q = float(np.sum(c.streamwise * g.weights))
    mean_w = q / area
    sec = c.secondary_speed
    mean_sec = float(np.sum(sec * g.weights) / area)
    o = f.outline
    mid = f.point + 0.5 * (o.u0 + o.u1) * f.normal + 0.5 * (0.5 * (o.top0 + o.top1) + o.bottom) * Z
    centroid = g.points.mean(axis=0)
    centred = g.points - centroid
    normal = np.linalg.svd(centred, full_matrices=False)[2][-1]
    angle = math.atan2(float(np.linalg.norm(np.cross(normal, f.tangent))), abs(float(normal @ f.tangent)))
    return {
        "area_m2": area,
        "area_exact_m2": o.area,
        "flow_rate_m3_s": q,
        "streamwise_mean_m_s": mean_w,
        "streamwise_max_m_s": float(c.streamwise.max()),
        "secondary_max_m_s": float(sec.max()),
        "secondary_mean_m_s": mean_sec,
        "secondary_max_over_streamwise_mean": float(sec.max() / mean_w) if mean_w else None,
        "secondary_mean_over_streamwise_mean": mean_sec / mean_w if mean_w else None,
        "centring": {
            "grid_centroid_to_centreline_point_m": float(np.linalg.norm(centroid - f.point)),
            "grid_centroid_to_outline_middle_m": float(np.linalg.norm(centroid - mid)),
            "plane_normal_to_tangent_rad": angle,
            "note": "the grid's centroid is the mean of the sample points; it equals the centreline point for the "
                    "channel's own section (rectangle or trapezoid: mid-width, mid-height) and the outline's middle "
                    "inside a one-sided chamber",
        },
        "valid_fraction": c.valid_fraction,
    }
