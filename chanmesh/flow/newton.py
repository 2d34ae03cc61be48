"""Bordered Newton iteration and flow-rate continuation for the section flow (dimensionless).

The unknowns are the state x (velocities and pressure of ``equations``) and the driving gradient
G; the flow-rate condition  m . x = q  (m: the streamwise load) is the extra equation. Each
Newton step solves  J dx - m dG = -F,  m . (x + dx) = q  by one sparse LU of J and two
back-substitutions. What keeps the number of factorisations small (issue 12, measured in
bench/dean_speed.py):

* a step that does not shrink the update is a divergence, reported after a few iterations
  rather than after ``MAX_NEWTON`` (from rest at a high Dean number Newton wanders);
* the first step from rest (the Stokes flow) solves J's streamwise block alone: at rest nothing
  else couples to it, and the flow-rate load only drives it (``_stokes_direction``);
* once the update is small the factor is kept (chord steps: back-substitutions only) while each
  update shrinks by at least ``CHORD_RATE``;
* continuation predicts each new point along the tangent dx/dq = J^-1 m / (m . J^-1 m), which
  the last factor gives for one back-substitution (it is the second solve of every step), and
  lengthens the step after a quick convergence;
* on a mesh's own section grid (``discretisation="grid"``, the resolution figure) each
  factorisation (``factorise``) orders J by minimum degree on J + J^T in SuperLU's symmetric
  mode: on a 72 x 28-node grid (18,977 unknowns) 3.7x less fill and 3.8x less time than the
  column ordering (COLAMD), checked by the residual of its first solve, with COLAMD and partial
  pivoting as the fallback. The reference (P2-P1) Jacobians keep COLAMD: their pressure rows
  have no diagonal, and in symmetric mode `chanmesh numbers`' Dean solve (2,453 unknowns)
  took 0.36 s instead of 0.12 s.
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from typing import Any, Callable

import numpy as np

from chanmesh.errors import ChanmeshError
from chanmesh.flow import equations as eq
from chanmesh.flow.discrete import Discrete, solve_free

MAX_NEWTON = 25
NEWTON_TOL = 1e-10  # relative size of the last Newton update
MAX_HALVINGS = 14
CHORD_BELOW = 1e-2
"""Relative update below which the Jacobian's factor is reused (chord steps). At 1e-2 rather than
1e-3, ``numbers``' Dean solve on the six templates (third updates 2e-3 to 5e-3) takes two or three
chord steps instead of a third factorisation; the converged figures move by 2e-11 at most."""
CHORD_RATE = 0.1
"""A chord step must shrink the update at least this much, else the next step refactors."""
SLOW = 0.5
"""From the third iteration on, a full Newton update larger than this fraction of the previous
one counts as divergence (Newton converging shrinks it far faster; from rest the first two
updates are both about 1)."""
STALL = 5
"""Halvings in a row after which tangent continuation gives up for ``by_jumps``."""
QUICK = 4
"""A continuation point that converged within this many iterations doubles the next step."""


class FlowNotConverged(ChanmeshError):
    """Newton failed even with continuation; the message names the flow and Dean number reached."""


class Diverged(Exception):
    """One Newton solve failed (the caller shortens the continuation step)."""


@dataclass
class Point:
    """A converged state ``x`` with gradient ``g`` at flow rate ``q``, and the tangent
    (``dx``, ``dg``) = d(x, G)/dq there (None when unknown); ``iterations`` Newton took."""

    x: np.ndarray
    g: float
    q: float
    dx: np.ndarray | None = None
    dg: float | None = None
    iterations: int = 0

    def predict(self, q: float) -> tuple[np.ndarray, float]:
        """First guess at flow rate ``q``: along the tangent, else the state scaled by q / self.q."""
        if self.dx is not None and self.dg is not None:
            return self.x + (q - self.q) * self.dx, self.g + (q - self.q) * self.dg
        scale = q / self.q if self.q > 0 else 1.0
        return self.x * scale, self.g * scale


@dataclass
class Counts:
    steps: int = 0
    newton: int = 0
    factorisations: int = 0
    halvings: int = 0
    jumped: bool = False

    def as_dict(self) -> dict[str, int | bool]:
        return {"continuation_steps": self.steps, "newton_iterations": self.newton,
                "factorisations": self.factorisations, "step_halvings": self.halvings,
                "restarted_by_jumps": self.jumped}


SYMMETRIC_CHECK = 1e-9
"""Largest relative residual |J y - b| / |b| accepted from the symmetric-mode factor's first
solve; above it (a tiny pivot taken on the diagonal) J is factored again with COLAMD."""


def factorise(mat: Any, rhs: np.ndarray, symmetric: bool = False) -> tuple[Any, np.ndarray]:
    """Sparse LU of the Jacobian ``mat`` (CSC) and the solution of ``mat y = rhs``.

    ``symmetric``: symmetric mode first (minimum degree on J + J^T, diagonal pivots down to
    1e-3 of the column's largest); if its solve leaves a residual above ``SYMMETRIC_CHECK`` of
    ``rhs``, and otherwise, SuperLU's default column ordering with partial pivoting (threshold
    0.01). Raises ``RuntimeError`` when J is exactly singular."""
    from scipy.sparse.linalg import splu

    if symmetric:
        try:
            lu = splu(mat, permc_spec="MMD_AT_PLUS_A", diag_pivot_thresh=0.001, options={"SymmetricMode": True})
            y = lu.solve(rhs)
            scale = float(np.max(np.abs(rhs))) or 1.0
            if np.all(np.isfinite(y)) and float(np.max(np.abs(mat @ y - rhs))) <= SYMMETRIC_CHECK * scale:
                return lu, y
        except RuntimeError:  # singular in this ordering: the column ordering decides
            pass
    lu = splu(mat, diag_pivot_thresh=0.01)
    return lu, lu.solve(rhs)


def newton(d: Discrete, kappa: float, q: float, x: np.ndarray, g: float, load: np.ndarray, counts: Counts,
           patient: bool = False) -> Point:
    """Bordered Newton (with chord steps near convergence) for (x, G) at flow rate ``q``;
    raises ``Diverged``. ``counts`` is updated with iterations and factorisations.
    ``patient``: do not give up early (up to ``MAX_NEWTON`` iterations, for long jumps)."""
    m = d.restrict(load)
    lu = None
    y2 = np.zeros(len(m))
    prev = math.inf
    chord = False
    for it in range(1, MAX_NEWTON + 1):
        counts.newton += 1
        if it == 1 and g == 0.0 and d.reduced is None and not np.any(x):  # at rest: the residual is 0
            y1, y2 = np.zeros(len(m)), _stokes_direction(d, kappa, load)
        else:
            res = eq.residual(d.tables, kappa, x, g)
            if not chord:
                mat = d.jacobian(kappa, x)
                counts.factorisations += 1
                try:
                    lu, y2 = factorise(mat, m, symmetric=d.kind == "grid")
                except RuntimeError:  # exactly singular
                    raise Diverged from None
            assert lu is not None
            y1 = lu.solve(-d.restrict(res))
        dg = (q - load @ x - m @ y1) / (m @ y2)
        step = y1 + dg * y2
        if not (np.all(np.isfinite(step)) and math.isfinite(dg)):
            raise Diverged
        x = x + d.extend(step)
        g += float(dg)
        size = float(np.max(np.abs(step))) / max(1.0, float(np.max(np.abs(x))))
        if not math.isfinite(size) or size > 1e6:
            raise Diverged
        if size < NEWTON_TOL:
            dgdq = 1.0 / float(m @ y2)
            dx = d.extend(dgdq * y2)
            return Point(x, g, q, dx, dgdq, it)
        if chord:
            chord = size < CHORD_RATE * prev  # a slow chord step: refactor next time
        else:
            if not patient and it >= 3 and size > SLOW * prev:  # Newton is not closing in: give up early
                raise Diverged
            chord = lu is not None and size < CHORD_BELOW
        prev = size
    raise Diverged


def _stokes_direction(d: Discrete, kappa: float, load: np.ndarray) -> np.ndarray:
    """J^-1 m at rest on the unknowns solved for: J's streamwise block alone (the Stokes flow
    per unit G; u_n, u_z and p are 0), without factoring the whole Jacobian."""
    nv = d.tables.nv
    full = np.zeros(d.size)
    full[nv:2 * nv] = solve_free(eq.streamwise_at_rest(d.tables, kappa), load[nv:2 * nv], d.scalar_free)
    return d.restrict(full)


def continuation(d: Discrete, kappa: float, q_target: float, start: Point, counts: Counts,
                 describe: Callable[[float, float], str], tangent: bool = True) -> Point:
    """From the solution ``start`` to flow rate ``q_target``.

    ``tangent``: predict along the tangent, halve the step after a failure, double it after a
    quick convergence; give up (``FlowNotConverged``) after ``STALL`` halvings in a row (a fold of
    the branch followed: on a grid not exactly symmetric about mid-height the symmetry-breaking
    bifurcation of a square duct's two-cell flow, Winters 1987, becomes one). Else the state
    scaled by the flow-rate ratio, doubling the step after every success, patient Newton."""
    load = eq.streamwise_load(d.tables)
    done = start if tangent else Point(start.x, start.g, start.q)
    dq = q_target - start.q
    in_a_row = 0
    while True:
        q_try = q_target if abs(dq) >= abs(q_target - done.q) else done.q + dq  # either direction
        x, g = done.predict(q_try)
        try:
            point = newton(d, kappa, q_try, x, g, load, counts, patient=not tangent)
        except Diverged:
            counts.halvings += 1
            in_a_row += 1
            if counts.halvings > MAX_HALVINGS or (tangent and in_a_row > STALL):
                raise FlowNotConverged(describe(done.q, q_target)) from None
            dq = 0.5 * (q_try - done.q)
            continue
        counts.steps += 1
        in_a_row = 0
        quick = point.iterations <= QUICK or not tangent
        dq = (q_try - done.q) * (2.0 if quick else 1.0)  # longer after a quick one
        done = point if tangent else Point(point.x, point.g, point.q)
        if q_try == q_target:
            return point


def by_jumps(d: Discrete, kappa: float, q_target: float, start: Point, counts: Counts,
             describe: Callable[[float, float], str]) -> Point:
    """The fallback when tangent continuation stalls: patient Newton from ``start`` (or from rest
    at the target, else at 1/64 of it) and long jumps with the scaled state as first guess
    (the solver's first method; it can step over a fold that the tangent cannot pass)."""
    counts.jumped = True
    counts.halvings = 0
    load = eq.streamwise_load(d.tables)
    if start.q <= 0:
        try:
            return newton(d, kappa, q_target, start.x, start.g, load, counts, patient=True)
        except Diverged:
            try:
                start = newton(d, kappa, q_target / 64.0, start.x, start.g, load, counts, patient=True)
            except Diverged:
                raise FlowNotConverged(describe(0.0, q_target)) from None
    return continuation(d, kappa, q_target, start, counts, describe, tangent=False)
