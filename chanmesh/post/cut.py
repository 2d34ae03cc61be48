"""Sample a result's velocity on the exact cross-section at a station and split it into the
streamwise component and the secondary (in-plane) flow in the section frame.

The sample grid is a node grid fitted to the exact outline, with columns on both side walls
and on the mid-width plane and rows on the bottom, the top and mid-height (an even number of
intervals each way), so the places where Dean flow peaks are sampled, not straddled:

    x_ij = p + u_i n + (bottom + eta_j h(u_i)) z,   h(u) = top(u) - bottom,

and the trapezoidal rule integrates over the section with weights h(u_i) du d(eta) (halved on
the walls). Sampling is VTK's probe filter (pyvista ``sample``), vectorised over all points.
Maxima are refined between samples by a parabola through the three samples about the largest,
along each grid direction. The in-plane stream function solves a Poisson problem on the same
grid (bilinear elements, psi = 0 on the walls), so vortex centres are interior extrema only.
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
PSI_FLOOR = 1e-9  # no vortices when max |psi| is below this fraction of (largest speed x width): round-off
REGION_FLOOR = 0.05  # vortex regions: |psi| above this fraction of its largest (round-off on zero lines would join them)
FLOW_TOLERANCE = 0.02  # the section's flow rate against the design's [flow]: warn beyond (common practice, no source)
PEAK_PATCH = 0.2  # the centre is fitted where |psi| is within this fraction of the region's extremum


@dataclass(frozen=True)
class SampleGrid:
    """Node samples over the exact outline, walls included; arrays are (nv + 1, nu + 1) unless noted."""

    u: np.ndarray  # (nu + 1,) m, u[0] and u[-1] on the side walls
    eta: np.ndarray  # (nv + 1,) in [0, 1]
    uu: np.ndarray  # m
    vv: np.ndarray  # m
    weights: np.ndarray  # m^2 per sample (trapezoidal rule)
    points: np.ndarray  # ((nv + 1) * (nu + 1), 3) m

    @property
    def shape(self) -> tuple[int, int]:
        return len(self.eta), len(self.u)


def _even(n: int) -> int:
    return n + (n % 2)


def sample_grid(frame: StationFrame, nu: int, nv: int | None = None) -> SampleGrid:
    """``nu`` intervals across (rounded up to even) and ``nv`` up (default: the section's aspect
    ratio times nu, at least 8, even), so that mid-width and mid-height are sample lines."""
    o = frame.outline
    width = o.u1 - o.u0
    nu = _even(max(2, int(nu)))
    if nv is None:
        nv = max(8, int(round(nu * (max(o.top0, o.top1) - o.bottom) / width)))
    nv = _even(max(2, int(nv)))
    u = o.u0 + width * np.arange(nu + 1) / nu
    u[-1] = o.u1
    eta = np.arange(nv + 1) / nv
    h = np.asarray(o.top(u)) - o.bottom
    uu = np.broadcast_to(u, (nv + 1, nu + 1)).copy()
    vv = o.bottom + eta[:, None] * h[None, :]
    wu = np.full(nu + 1, width / nu)
    wu[[0, -1]] *= 0.5
    we = np.full(nv + 1, 1.0 / nv)
    we[[0, -1]] *= 0.5
    weights = we[:, None] * (wu * h)[None, :]
    pts = frame.point + uu.reshape(-1, 1) * frame.normal + vv.reshape(-1, 1) * Z
    return SampleGrid(u, eta, uu, vv, weights, pts)


def probe(result: ResultField, points: np.ndarray, tolerance: float | None = None) -> tuple[np.ndarray, np.ndarray]:
    """Field values at ``points`` (m, 3) and a mask of points found inside a cell."""
    arrays, valid = probe_arrays(result.grid, points, (result.name,), tolerance)
    return arrays[result.name], valid


def probe_arrays(grid: Any, points: np.ndarray, names: tuple[str, ...],
                 tolerance: float | None = None) -> tuple[dict[str, np.ndarray], np.ndarray]:
    """Arrays ``names`` of ``grid`` at ``points`` (m, 3), each (m, k), from one VTK probe, and
    the mask of points found inside a cell."""
    import pyvista as pv

    cloud = pv.PolyData(np.asarray(points, float))
    out = cloud.sample(grid, tolerance=tolerance, pass_cell_data=True, pass_point_data=True)
    arrays = {n: np.asarray(out.point_data[n], float).reshape(len(points), -1) for n in names}
    return arrays, np.asarray(out.point_data["vtkValidPointMask"]).astype(bool)


def suggested_scale(result_size: float, design_size: float, scale: float) -> float | None:
    """The power-of-ten ``--scale`` (metres per result unit) under which a result of
    ``result_size`` (already multiplied by ``scale``) matches ``design_size``; None if the
    present scale already fits within a factor of about 3."""
    if not (result_size > 0 and math.isfinite(result_size)):
        return None
    ratio = design_size / result_size
    if abs(math.log10(ratio)) <= 0.5:
        return None
    return 10.0 ** round(math.log10(scale * ratio))


def _bounds_hint(result: ResultField, design: Design) -> str:
    """Compare the result's size with the design's and name the absolute scale that would fit
    (relative to the result's own units, so following the advice never loops)."""
    line = centerline_of(design)
    pts = line.points(np.linspace(0.0, line.length, 2001))
    pad = design.section.width
    lo, hi = pts.min(axis=0) - pad, pts.max(axis=0) + pad
    lo[2], hi[2] = -design.section.max_height, design.section.max_height
    b = np.asarray(result.grid.bounds, float).reshape(3, 2)
    rsize = float(np.linalg.norm(b[:, 1] - b[:, 0]))
    dsize = float(np.linalg.norm(hi - lo))
    scale = getattr(result, "scale", 1.0)
    own = rsize / scale
    shown = f"result spans {own:.4g} in its own units, the design {dsize:.4g} m"
    factor = suggested_scale(rsize, dsize, scale)
    if factor is not None:
        unit = {1.0: "m", 1e-3: "mm", 1e-6: "um", 1e-2: "cm"}.get(float(f"{factor:.3g}"))
        fix = "leave --scale out" if unit == "m" else f"--scale {factor:g}"
        return f"{shown}: this usually means a unit mismatch; {fix}" + (f" (result in {unit})" if unit else "") + " would fit"
    return f"{shown}; check that the result belongs to this design (same origin and orientation as chanmesh's mesh)"


def probe_points(grid: SampleGrid, frame: StationFrame, inset: float = 1e-6) -> np.ndarray:
    """The sample points with those on the walls moved ``inset`` (a fraction of the width and
    of the local height) into the section: a point exactly on a boundary face is missed by
    VTK's cell locator about as often as it is found; the value a micro-metre fraction inside
    is the wall value to within the field's gradient times 1e-6 of the section."""
    o = frame.outline
    width = o.u1 - o.u0
    uu = np.clip(grid.uu, o.u0 + inset * width, o.u1 - inset * width)
    eta = np.clip(grid.eta, inset, 1.0 - inset)
    h = np.asarray(o.top(uu[0])) - o.bottom
    vv = o.bottom + eta[:, None] * h[None, :]
    return frame.point + uu.reshape(-1, 1) * frame.normal + vv.reshape(-1, 1) * Z


@dataclass
class Cut:
    """A sampled section: grid, velocity components (nv, nu) in m/s, and the figures."""

    frame: StationFrame
    grid: SampleGrid
    velocity: np.ndarray  # (nv, nu, 3) global components
    streamwise: np.ndarray  # along t
    sec_n: np.ndarray  # along n (u direction)
    sec_z: np.ndarray  # along z (the section's height)
    psi: np.ndarray  # in-plane stream function, m^2/s
    valid_fraction: float
    figures: dict[str, Any] = field(default_factory=dict)

    @property
    def secondary_speed(self) -> np.ndarray:
        return np.hypot(self.sec_n, self.sec_z)


def stream_function(grid: SampleGrid, a: np.ndarray, b: np.ndarray) -> np.ndarray:
    """psi with psi = 0 on the walls and grad psi closest to (-b, a) in the least-squares sense:
    the Poisson problem lap psi = -omega (omega = db/du - da/dv, the in-plane vorticity), weak
    form int grad phi . grad psi = int grad phi . (-b, a), bilinear elements on the sample grid
    (its cells are trapezoids for a trapezoidal section), 2 x 2 Gauss points, scipy sparse."""
    from scipy.sparse import coo_matrix
    from scipy.sparse.linalg import spsolve

    ny, nx = grid.shape
    idx = np.arange(ny * nx).reshape(ny, nx)
    corners = np.stack([idx[:-1, :-1], idx[:-1, 1:], idx[1:, 1:], idx[1:, :-1]], axis=-1).reshape(-1, 4)
    X, Y = grid.uu.ravel()[corners], grid.vv.ravel()[corners]  # (E, 4)
    gx, gy = (-b).ravel()[corners], a.ravel()[corners]
    g = 1.0 / math.sqrt(3.0)
    xi_c, et_c = np.array([-1.0, 1.0, 1.0, -1.0]), np.array([-1.0, -1.0, 1.0, 1.0])
    K = np.zeros((len(corners), 4, 4))
    F = np.zeros((len(corners), 4))
    for xi, et in ((-g, -g), (g, -g), (g, g), (-g, g)):
        N = 0.25 * (1 + xi_c * xi) * (1 + et_c * et)
        dxi, det_ = 0.25 * xi_c * (1 + et_c * et), 0.25 * et_c * (1 + xi_c * xi)
        j11, j12 = X @ dxi, Y @ dxi
        j21, j22 = X @ det_, Y @ det_
        jac = j11 * j22 - j12 * j21
        dNx = (j22[:, None] * dxi - j12[:, None] * det_) / jac[:, None]
        dNy = (-j21[:, None] * dxi + j11[:, None] * det_) / jac[:, None]
        K += jac[:, None, None] * (dNx[:, :, None] * dNx[:, None, :] + dNy[:, :, None] * dNy[:, None, :])
        F += jac[:, None] * (dNx * (gx @ N)[:, None] + dNy * (gy @ N)[:, None])
    n = ny * nx
    rows = np.repeat(corners, 4, axis=1).ravel()
    cols = np.tile(corners, (1, 4)).ravel()
    A = coo_matrix((K.ravel(), (rows, cols)), shape=(n, n)).tocsr()
    rhs = np.bincount(corners.ravel(), F.ravel(), minlength=n)
    inner = idx[1:-1, 1:-1].ravel()
    psi = np.zeros(n)
    if len(inner):
        psi[inner] = spsolve(A[inner][:, inner].tocsc(), rhs[inner])
    return psi.reshape(ny, nx)


def refined_max(grid: SampleGrid, f: np.ndarray) -> tuple[float, float, float]:
    """(value, u, z) of the maximum of ``f`` refined between samples: a parabola through the
    largest sample and its two neighbours along each grid direction (where both exist), the
    two gains added. Unbiased for a peak between samples, exact for a quadratic peak."""
    j, i = np.unravel_index(int(np.argmax(f)), f.shape)
    value = float(f[j, i])
    offset = [0.0, 0.0]
    for axis, k, n in ((0, j, f.shape[0]), (1, i, f.shape[1])):
        if 0 < k < n - 1:
            lo = f[k - 1, i] if axis == 0 else f[j, k - 1]
            hi = f[k + 1, i] if axis == 0 else f[j, k + 1]
            curv = float(lo - 2 * f[j, i] + hi)
            if curv < 0:
                d = 0.5 * float(lo - hi) / curv
                if abs(d) <= 1.0:
                    offset[axis] = d
                    value -= 0.25 * float(lo - hi) * d
    du = float(grid.u[1] - grid.u[0]) if len(grid.u) > 1 else 0.0
    u = float(grid.u[i]) + offset[1] * du
    deta = float(grid.eta[1] - grid.eta[0]) if len(grid.eta) > 1 else 0.0
    eta = float(grid.eta[j]) + offset[0] * deta
    v = float(grid.vv[0, i] + eta * (grid.vv[-1, i] - grid.vv[0, i]))
    return value, u, v


def vortex_centres(grid: SampleGrid, psi: np.ndarray, frame: StationFrame, floor: float = 0.0) -> list[dict[str, Any]]:
    """One centre per connected region of one sign of psi (where |psi| exceeds 5 % of its
    largest, so regions touching only across a zero line stay apart): the vertex of a quadratic fitted to
    psi where it is within 20 % of the region's extremum (the extremum itself if that fit is not
    a peak). psi is zero on the walls (``stream_function``), so every centre is an interior
    extremum; an extremum on a wall row or column is never reported. Fitting over a patch keeps the kinks of a piecewise-linear solution from moving the
    centre or showing up as vortices of their own. Regions weaker than ``VORTEX_FLOOR`` of the
    strongest are left out.

    Looking downstream (u to the right, z up), psi > 0 turns counter-clockwise and psi < 0
    clockwise (a = d psi / dv, b = -d psi / du, so the flow circles a maximum counter-clockwise).
    """
    from scipy.ndimage import label

    peak = float(np.max(np.abs(psi))) if psi.size else 0.0
    if peak <= floor:  # a still section: round-off has no vortices
        return []
    o = frame.outline
    out = []
    for sign in (1.0, -1.0):
        regions, count = label(sign * psi > REGION_FLOOR * peak)
        for k in range(1, count + 1):
            mask = regions == k
            ext = float(np.max(sign * psi[mask]))
            if ext < VORTEX_FLOOR * peak:
                continue
            j, i = np.unravel_index(int(np.argmax(np.where(mask, sign * psi, -np.inf))), psi.shape)
            if j in (0, psi.shape[0] - 1) or i in (0, psi.shape[1] - 1):
                continue
            u, v = _fit_peak(grid, sign * psi, mask & (sign * psi >= (1.0 - PEAK_PATCH) * ext))
            x = frame.point + u * frame.normal + v * Z
            out.append({
                "u_m": u, "z_m": v, "point_m": x.tolist(), "psi_m2_s": sign * ext,
                "sense": "counter-clockwise" if sign > 0 else "clockwise",
                "strength": ext / peak,
            })
    return sorted(out, key=lambda c: -c["strength"])


def _fit_peak(grid: SampleGrid, f: np.ndarray, patch: np.ndarray) -> tuple[float, float]:
    """(u, z) of the vertex of a least-squares quadratic through f on ``patch`` (f has its maximum there)."""
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
    transport = result.association == "cell" and abs(frame.curvature) > 0.0
    names = (result.name, CELL_CENTRE) if transport else (result.name,)
    if transport and CELL_CENTRE not in result.grid.cell_data:
        result.grid.cell_data[CELL_CENTRE] = np.asarray(result.grid.cell_centers().points, float)
    arrays, valid = probe_arrays(result.grid, probe_points(grid, frame), names, tolerance=tol)
    values = arrays[result.name]
    fraction = float(valid.mean())
    if fraction < MIN_VALID:
        where = "none" if not valid.any() else f"only {fraction:.1%}"
        raise MeshFileError(
            f"{result.source}: {where} of the {len(valid)} section points at station {frame.label} lie inside the "
            f"result's cells; {_bounds_hint(result, design)}"
        )
    bad = valid & ~np.isfinite(values).all(axis=1)
    if bad.any():
        raise MeshFileError(
            f"{result.source}: field {result.name} is NaN or infinite at {int(bad.sum())} of the {len(valid)} section "
            f"points at station {frame.label}; the solver diverged there or wrote no solution"
        )
    vel = np.where(valid[:, None], values, 0.0)
    if transport:
        vel = _cell_vectors_to_plane(frame, vel, np.where(valid[:, None], arrays[CELL_CENTRE], frame.point))
    vel = vel.reshape(*grid.shape, 3)
    w = vel @ frame.tangent
    a = vel @ frame.normal
    b = vel @ Z
    psi = stream_function(grid, a, b)
    c = Cut(frame, grid, vel, w, a, b, psi, fraction)
    c.figures = figures(c)
    speed = max(abs(float(c.figures["streamwise_mean_m_s"])), float(np.abs(vel).max()))
    floor = PSI_FLOOR * speed * (frame.outline.u1 - frame.outline.u0)
    c.figures["vortices"] = vortex_centres(grid, psi, frame, floor)
    return c


CELL_CENTRE = "chanmesh_cell_centre"
"""Cell array added to a result's grid so one probe gives each sample point its cell's centre."""


def _cell_vectors_to_plane(frame: StationFrame, vel: np.ndarray, centres: np.ndarray) -> np.ndarray:
    """Cell-data vectors ``vel`` (m, 3), each belonging to the cell centre in ``centres`` (m, 3),
    carried onto the section plane.

    A cell value belongs to the cell's centre, which lies a distance d off the plane; in a bend
    the streamwise direction there is turned by delta = atan(kappa d / (1 + kappa u)) about z. Read
    in the plane's own frame, a purely streamwise cell vector would show a false in-plane part
    of |U| sin(delta) (4 % of the streamwise speed for 5-degree cells). Each vector is
    therefore resolved in its cell centre's frame (t_c, n_c, z) and re-assembled in the plane's
    (t, n, z): the exact parallel transport about the bend's axis for an arc.
    """
    off = centres - frame.point
    d = off @ frame.tangent
    u = off @ frame.normal
    k = frame.curvature
    delta = np.arctan2(k * d, 1.0 + k * u)
    cos, sin = np.cos(delta)[:, None], np.sin(delta)[:, None]
    t, n = frame.tangent[None, :], frame.normal[None, :]
    t_c = t * cos - n * sin
    n_c = n * cos + t * sin
    along = np.sum(vel * t_c, axis=1)[:, None]
    across = np.sum(vel * n_c, axis=1)[:, None]
    up = (vel @ Z)[:, None]
    return along * t + across * n + up * Z[None, :]


def figures(c: Cut) -> dict[str, Any]:
    """Integrals and extremes of the cut (SI), and the centring check."""
    g, f = c.grid, c.frame
    area = float(g.weights.sum())
    q = float(np.sum(c.streamwise * g.weights))
    mean_w = q / area
    sec = c.secondary_speed
    mean_sec = float(np.sum(sec * g.weights) / area)
    w_max, w_u, w_v = refined_max(g, c.streamwise)
    s_max, s_u, s_v = refined_max(g, sec)
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
        "streamwise_max_m_s": w_max,
        "streamwise_max_at_m": [w_u, w_v],
        "secondary_max_m_s": s_max,
        "secondary_max_at_m": [s_u, s_v],
        "secondary_mean_m_s": mean_sec,
        "secondary_max_over_streamwise_mean": s_max / mean_w if mean_w else None,
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


def design_flow_check(design: Design, flow_rate: float) -> dict[str, Any] | None:
    """The section's flow rate against the design's ``[flow]`` (rate, or velocity times the
    channel's section area); None when the design gives no flow."""
    spec = design.flow
    if spec is None or (spec.rate is None and spec.velocity is None):
        return None
    from chanmesh.geometry.section import section_shape_of

    q = spec.rate if spec.rate is not None else float(spec.velocity) * section_shape_of(design).area  # type: ignore[arg-type]
    if not (q and math.isfinite(q)):
        return None
    rel = flow_rate / q - 1.0
    return {"design_m3_s": q, "section_m3_s": flow_rate, "relative_difference": rel,
            "tolerance": FLOW_TOLERANCE, "warning": abs(rel) > FLOW_TOLERANCE}
