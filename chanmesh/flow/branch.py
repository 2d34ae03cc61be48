"""The four-cell branch of a bent rectangular duct's flow, reached round the limit points of the
symmetric solutions (dimensionless).

Above a Dean number a square duct's fully developed flow has symmetric four-cell states (two
extra small cells at the outer wall) beside the two-cell flow; Winters (1987, J. Fluid Mech.
180, abstract) finds the symmetric two- and four-cell flows in two distinct ranges of the axial
pressure gradient, connected through limit points, and all but the two-cell flow unstable.
Continuation that only moves the flow rate forward stops at the first limit point. Here the
symmetric branch is followed by pseudo-arclength continuation (the flow rate is an unknown and
the step is measured along the path), in the mirror-symmetric subspace
(``discrete.mirror_basis``): up to the limit point, back down to the second one, where the extra
cells appear, and up again. Each time the path crosses the flow rate asked for, the state there
is solved for exactly and its cells counted; the first with four is the answer.
"""

from __future__ import annotations

import math
from typing import Callable, Iterator

import numpy as np
from scipy.sparse import bmat, csr_matrix, diags

from chanmesh.errors import ChanmeshError
from chanmesh.flow import equations as eq
from chanmesh.flow.discrete import Discrete
from chanmesh.flow.newton import Counts, Diverged, Point, newton

MAX_STEPS = 200
"""Arclength steps before giving up."""
FIRST_STEP = 0.01
MAX_STEP = 0.5
MIN_STEP = 1e-7
"""Arclength step bounds, in units of the target's flow rate (and state, gradient norms)."""
MAX_CORRECTOR = 8
FLOW_LIMIT = 4.0
"""The path is abandoned past this multiple of the flow rate asked for."""


class FourCellNotFound(ChanmeshError):
    """The symmetric branch did not reach a four-cell state at the flow rate asked for;
    ``folds``: flow rates (fractions of the one asked for) of the limit points passed."""

    def __init__(self, message: str, folds: list[float] | None = None) -> None:
        super().__init__(message)
        self.folds = folds or []


def path(d: Discrete, kappa: float, start: Point, counts: Counts,
         scales: tuple[float, float, float]) -> Iterator[tuple[Point, Point]]:
    """Pseudo-arclength continuation in the flow rate from the solution ``start``, in the
    direction of increasing flow. Yields (previous, new) points after each step; ends after
    ``MAX_STEPS`` or when the step falls below ``MIN_STEP``. ``scales`` = (state norm, G, flow
    rate) make the arclength dimensionless."""
    from scipy.sparse.linalg import splu

    load = eq.streamwise_load(d.tables)
    m = d.restrict(load)
    k = len(m)
    scale = np.concatenate([np.full(k, scales[0]), [scales[1], scales[2]]])
    border = csr_matrix(np.append(m, [0.0, -1.0])[None, :])  # d(m.x - q)/d(x, G, q)

    def unpack(y: np.ndarray) -> Point:
        v = y * scale
        return Point(d.extend(v[:k]), float(v[k]), float(v[k + 1]))

    def factor(y: np.ndarray, tangent: np.ndarray):  # noqa: ANN202
        jac = d.jacobian(kappa, unpack(y).x)
        top = bmat([[jac, csr_matrix(-m[:, None]), csr_matrix((k, 1))]])
        mat = bmat([[top], [border], [csr_matrix((tangent / scale)[None, :])]])
        counts.factorisations += 1
        try:
            return splu((mat @ diags(scale)).tocsc(), diag_pivot_thresh=0.01)
        except RuntimeError:
            raise Diverged from None

    def next_tangent(y: np.ndarray, previous: np.ndarray) -> np.ndarray:
        rhs = np.zeros(k + 2)
        rhs[-1] = 1.0
        t = factor(y, previous).solve(rhs)
        return t / np.linalg.norm(t)

    def correct(y0: np.ndarray, t: np.ndarray, ds: float) -> tuple[np.ndarray, int]:
        y = y0 + ds * t
        previous = math.inf
        for it in range(1, MAX_CORRECTOR + 1):
            counts.newton += 1
            p = unpack(y)
            res = np.concatenate([d.restrict(eq.residual(d.tables, kappa, p.x, p.g)),
                                  [load @ p.x - p.q], [t @ (y - y0) - ds]])
            step = factor(y, t).solve(-res)
            if not np.all(np.isfinite(step)):
                raise Diverged
            y = y + step
            size = float(np.max(np.abs(step)))
            if size < 1e-10 * max(1.0, float(np.max(np.abs(y)))):
                return y, it
            if it >= 3 and size > 0.5 * previous:
                raise Diverged
            previous = size
        raise Diverged

    y = np.concatenate([d.restrict_coords(start.x), [start.g, start.q]]) / scale
    t = np.zeros(k + 2)
    t[-1] = 1.0  # start toward larger flow
    t = next_tangent(y, t)
    ds = FIRST_STEP
    for _ in range(MAX_STEPS):
        try:
            y_new, its = correct(y, t, ds)
        except Diverged:
            counts.halvings += 1
            ds *= 0.5
            if ds < MIN_STEP:
                return
            continue
        counts.steps += 1
        yield unpack(y), unpack(y_new)
        t = next_tangent(y_new, t)
        y = y_new
        ds = min(ds * 1.5, MAX_STEP) if its <= 3 else (ds * 0.7 if its >= 6 else ds)


def four_cell(d: Discrete, kappa: float, q: float, start: Point, cells: Callable[[np.ndarray], int],
              counts: Counts) -> tuple[Point, dict[str, float | int]]:
    """The first four-cell state at flow rate ``q`` on the symmetric branch through ``start`` (a
    solution at a lower flow rate, on ``d`` reduced to its mirror-symmetric subspace).
    ``cells(x)`` counts vortex cells. Returns the point and the flow rates (as fractions of
    ``q``) of the limit points passed; raises ``FourCellNotFound``."""
    load = eq.streamwise_load(d.tables)
    ratio = q / start.q
    scales = (max(float(np.linalg.norm(d.restrict_coords(start.x))) * ratio, 1e-30), abs(start.g) * ratio, q)
    folds: list[float] = []
    going_up = True
    for a, b in path(d, kappa, start, counts, scales):
        if (b.q > a.q) != going_up:  # the flow rate turned back: a limit point between a and b
            going_up = not going_up
            folds.append(max(a.q, b.q) / q if not going_up else min(a.q, b.q) / q)
        if (a.q - q) * (b.q - q) < 0.0:  # crossed the flow rate asked for
            s = (q - a.q) / (b.q - a.q)
            try:
                point = newton(d, kappa, q, a.x + s * (b.x - a.x), a.g + s * (b.g - a.g), load, counts, patient=True)
            except Diverged:
                continue
            if cells(point.x) == 4:
                return point, {"limit_points_flow_ratio": folds}
        if b.q > FLOW_LIMIT * q or b.q < 0.0:
            break
    raise FourCellNotFound("no four-cell state on the symmetric branch", folds)
