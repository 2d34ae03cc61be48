"""Discretisation uncertainty of a grid-convergence study: apparent order, Richardson
extrapolation and the grid convergence index (GCI).

Procedure of Celik, Ghia, Roache, Freitas, Coleman & Raad (2008), "Procedure for estimation and
reporting of uncertainty due to discretization in CFD applications", J. Fluids Eng. 130(7)
078001, eqs. (1)-(10); two-grid GCI with safety factor 3 after Roache (1994), J. Fluids Eng.
116(3) 405-413. Indices follow the paper: 1 = finest, 3 = coarsest, ``r21 = h2 / h1``.

Pure functions, no I/O. Relative errors and GCIs are fractions (0.022 = 2.2 %); ``band``
values are the same uncertainty in the quantity's own unit.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field
from typing import Sequence

import numpy as np
from scipy.optimize import brentq, least_squares

from chanmesh.errors import StudyError

SAFETY_THREE_GRIDS = 1.25
"""Safety factor with an observed order from three or more grids (Celik et al. 2008, eq. 10)."""
SAFETY_TWO_GRIDS = 3.0
"""Safety factor when only two grids exist and the order is assumed (Roache 1994)."""
MIN_RATIO = 1.3
"""Celik et al. (2008) advise refinement ratios above 1.3 so that discretisation error stands
clear of round-off and iteration error."""
ROUND_OFF = 1e-12
"""Differences below this fraction of max |phi| count as zero (common practice, no source)."""

_P_MAX = 50.0  # larger apparent orders overflow r**p and mean nothing physically
_ITERATIONS = 500


@dataclass(frozen=True)
class TripleResult:
    """Celik et al. (2008) quantities for one triple of grids (fine, medium, coarse)."""

    levels: tuple[int, int, int]
    h: tuple[float, float, float]
    phi: tuple[float, float, float]
    r21: float
    r32: float
    eps21: float  # phi2 - phi1
    eps32: float  # phi3 - phi2
    s: int  # sign(eps32 / eps21); -1 = oscillatory, 0 = a difference is zero
    p: float  # apparent order (nan when it cannot be estimated)
    phi_ext21: float
    phi_ext32: float
    e_a21: float
    e_ext21: float
    e_a32: float
    gci_fine: float  # GCI_21 (fine grid)
    gci_medium: float  # GCI_32 (medium grid)
    band_fine: float  # GCI_21 * |phi1|, in the quantity's unit
    asymptotic_ratio: float  # GCI_32 / (r21^p GCI_21); near 1 in the asymptotic range
    convergence: str  # monotonic | oscillatory | divergent | round-off | indeterminate
    flags: tuple[str, ...] = ()
    notes: tuple[str, ...] = ()
    safety_factor: float = SAFETY_THREE_GRIDS


@dataclass(frozen=True)
class TwoGridResult:
    """Two-grid GCI (Roache 1994): order assumed, not observed, so the safety factor is 3."""

    levels: tuple[int, int]
    h: tuple[float, float]
    phi: tuple[float, float]
    r21: float
    eps21: float
    p_assumed: float
    phi_ext21: float
    e_a21: float
    e_ext21: float
    gci_fine: float
    band_fine: float
    convergence: str  # converging | round-off
    flags: tuple[str, ...] = ()
    notes: tuple[str, ...] = ()
    safety_factor: float = SAFETY_TWO_GRIDS


@dataclass(frozen=True)
class FitResult:
    """Least-squares fit phi(h) = phi0 + C h^p over every level (used with four or more)."""

    p: float
    phi0: float
    c: float
    rms_residual: float
    n_levels: int
    notes: tuple[str, ...] = ()


@dataclass(frozen=True)
class QuantityReport:
    """Everything reported for one quantity of interest."""

    name: str
    levels: tuple[int, ...]
    h: tuple[float, ...]
    phi: tuple[float, ...]
    triples: tuple[TripleResult, ...] = ()
    two_grid: TwoGridResult | None = None
    fit: FitResult | None = None
    notes: tuple[str, ...] = field(default_factory=tuple)

    @property
    def headline(self) -> TripleResult | TwoGridResult:
        """The finest triple (or the two-grid result): what a paper would quote."""
        return self.triples[0] if self.triples else self.two_grid  # type: ignore[return-value]


def _rel(num: float, den: float) -> float:
    return abs(num / den) if den != 0.0 else math.nan


def _is_zero(diff: float, scale: float) -> bool:
    return abs(diff) <= ROUND_OFF * scale


def apparent_order(r21: float, r32: float, eps21: float, eps32: float) -> tuple[float, int]:
    """Apparent order p of Celik et al. (2008), eqs. (3a)-(3c), by fixed-point iteration.

    ``p = |ln|eps32/eps21| + q(p)| / ln r21`` with ``q(p) = ln((r21^p - s) / (r32^p - s))`` and
    ``s = sign(eps32/eps21)``. Returns ``(p, iterations)``; falls back to bracketing when the
    iteration does not settle, and returns nan when no order fits.
    """
    s = 1.0 if eps32 / eps21 > 0 else -1.0
    log_ratio = math.log(abs(eps32 / eps21))
    ln21 = math.log(r21)

    def g(p: float) -> float:
        p = min(max(p, 1e-9), _P_MAX)
        q = math.log((r21**p - s) / (r32**p - s))
        return abs(log_ratio + q) / ln21

    p = abs(log_ratio) / ln21  # q = 0: exact for a constant ratio
    for it in range(1, _ITERATIONS + 1):
        new = g(p)
        if abs(new - p) <= 1e-15 * max(1.0, abs(new)):
            return min(new, _P_MAX), it
        p = new
    try:
        return brentq(lambda x: x - g(x), 1e-9, _P_MAX, xtol=1e-15), _ITERATIONS
    except ValueError:
        return math.nan, _ITERATIONS


def gci_three(
    h: Sequence[float], phi: Sequence[float], levels: Sequence[int] = (1, 2, 3)
) -> TripleResult:
    """GCI of three grids, finest first: ``h = (h1, h2, h3)`` with h1 < h2 < h3 (any length
    unit, only ratios matter), ``phi`` the quantity on each grid."""
    h1, h2, h3 = (float(x) for x in h)
    f1, f2, f3 = (float(x) for x in phi)
    if not (0.0 < h1 < h2 < h3):
        raise StudyError("h", (h1, h2, h3), "must be positive and grow from fine to coarse grid")
    r21, r32 = h2 / h1, h3 / h2
    eps21, eps32 = f2 - f1, f3 - f2
    scale = max(abs(f1), abs(f2), abs(f3))
    flags: list[str] = []
    notes: list[str] = []
    if min(r21, r32) < MIN_RATIO:
        flags.append("small-ratio")
        notes.append(f"refinement ratio {min(r21, r32):.3g} < {MIN_RATIO} (Celik et al. 2008 advise > 1.3)")
    e_a21, e_a32 = _rel(eps21, f1), _rel(eps32, f2)
    if f1 == 0.0:
        flags.append("zero-fine-value")
        notes.append("phi1 = 0: relative errors and GCI are undefined; see band_fine (absolute)")
    zero21, zero32 = _is_zero(eps21, scale), _is_zero(eps32, scale)
    nan = math.nan
    base = dict(levels=tuple(int(x) for x in levels), h=(h1, h2, h3), phi=(f1, f2, f3), r21=r21, r32=r32,
                eps21=eps21, eps32=eps32, e_a21=e_a21, e_a32=e_a32)

    def unresolved(convergence: str, s: int, note: str, ext: float = nan, gci: float = nan) -> TripleResult:
        flags.append(convergence)
        notes.append(note)
        e_ext = 0.0 if gci == 0.0 else nan
        return TripleResult(**base, s=s, p=nan, phi_ext21=ext, phi_ext32=ext, e_ext21=e_ext, gci_fine=gci,
                            gci_medium=gci, band_fine=gci * abs(f1) if gci == 0.0 else nan,
                            asymptotic_ratio=nan, convergence=convergence, flags=tuple(flags), notes=tuple(notes))

    if zero21 and zero32:
        return unresolved("round-off", 0, "all three grids agree to round-off: converged, GCI = 0", ext=f1, gci=0.0)
    if zero21:
        return unresolved("indeterminate", 0, "fine and medium grids agree to round-off but the coarse one "
                          "differs: no order can be estimated, GCI not computed")
    s = 1 if eps32 / eps21 > 0 else -1
    if s < 0:
        flags.append("oscillatory")
        notes.append("eps32/eps21 < 0: oscillatory convergence (s = -1)")
    # Differences per unit of ln h must shrink on refinement for any positive order to fit;
    # for a constant ratio this is Celik's R = eps21/eps32 < 1.
    if zero32 or abs(eps21) / math.log(r21) >= abs(eps32) / math.log(r32):
        return unresolved("divergent", s, "differences grow as the grid is refined: divergent, "
                          "no order, extrapolation or GCI")
    p, _ = apparent_order(r21, r32, eps21, eps32)
    if not math.isfinite(p):
        return unresolved("indeterminate", s, "the order iteration found no solution")
    if p >= _P_MAX:
        flags.append("order-capped")
        notes.append(f"apparent order reached the cap {_P_MAX:g}: not meaningful")
    a21, a32 = r21**p, r32**p
    phi_ext21 = (a21 * f1 - f2) / (a21 - 1.0)
    phi_ext32 = (a32 * f2 - f3) / (a32 - 1.0)
    band = SAFETY_THREE_GRIDS * abs(eps21) / (a21 - 1.0)
    gci21 = SAFETY_THREE_GRIDS * e_a21 / (a21 - 1.0)
    gci32 = SAFETY_THREE_GRIDS * e_a32 / (a32 - 1.0)
    ratio = gci32 / (a21 * gci21) if gci21 > 0 else nan
    return TripleResult(**base, s=s, p=p, phi_ext21=phi_ext21, phi_ext32=phi_ext32,
                        e_ext21=_rel(phi_ext21 - f1, phi_ext21), gci_fine=gci21, gci_medium=gci32,
                        band_fine=band, asymptotic_ratio=ratio,
                        convergence="oscillatory" if s < 0 else "monotonic", flags=tuple(flags), notes=tuple(notes))


def gci_two(
    h: Sequence[float], phi: Sequence[float], order: float, levels: Sequence[int] = (1, 2)
) -> TwoGridResult:
    """Two-grid GCI (Roache 1994): ``order`` is the formal order of the scheme, assumed because
    two grids cannot show it; safety factor 3."""
    h1, h2 = (float(x) for x in h)
    f1, f2 = (float(x) for x in phi)
    if not (0.0 < h1 < h2):
        raise StudyError("h", (h1, h2), "must be positive and grow from fine to coarse grid")
    if not (math.isfinite(order) and order > 0):
        raise StudyError("--order", order, "must be a positive number (formal order of the scheme)")
    r21 = h2 / h1
    eps21 = f2 - f1
    a = r21**order
    flags: list[str] = []
    notes = [f"two grids only: order assumed p = {order:g}, safety factor {SAFETY_TWO_GRIDS:g} (Roache 1994)"]
    if r21 < MIN_RATIO:
        flags.append("small-ratio")
        notes.append(f"refinement ratio {r21:.3g} < {MIN_RATIO} (Celik et al. 2008 advise > 1.3)")
    if f1 == 0.0:
        flags.append("zero-fine-value")
        notes.append("phi1 = 0: relative errors and GCI are undefined; see band_fine (absolute)")
    convergence = "converging"
    if _is_zero(eps21, max(abs(f1), abs(f2))):
        convergence = "round-off"
        flags.append("round-off")
        notes.append("both grids agree to round-off: converged, GCI = 0")
        eps21 = 0.0
    phi_ext = f1 + (f1 - f2) / (a - 1.0)
    return TwoGridResult(
        levels=(int(levels[0]), int(levels[1])), h=(h1, h2), phi=(f1, f2), r21=r21, eps21=eps21,
        p_assumed=float(order), phi_ext21=phi_ext, e_a21=_rel(eps21, f1), e_ext21=_rel(phi_ext - f1, phi_ext),
        gci_fine=SAFETY_TWO_GRIDS * _rel(eps21, f1) / (a - 1.0), band_fine=SAFETY_TWO_GRIDS * abs(eps21) / (a - 1.0),
        convergence=convergence, flags=tuple(flags), notes=tuple(notes))


def fit_power_law(h: Sequence[float], phi: Sequence[float], p_start: float) -> FitResult:
    """Least-squares fit of ``phi = phi0 + C h^p`` over all levels (Gauss-Newton with the
    analytic Jacobian; exact data are recovered to round-off). ``h`` is scaled by its smallest
    value inside so that ``C`` stays of the order of the differences."""
    hs = np.asarray(h, dtype=float)
    y = np.asarray(phi, dtype=float)
    h0 = float(hs.min())
    x = hs / h0
    lx = np.log(x)

    def linear_part(p: float) -> np.ndarray:
        return np.linalg.lstsq(np.column_stack([np.ones_like(x), x**p]), y, rcond=None)[0]

    def residual(v: np.ndarray) -> np.ndarray:
        return v[0] + v[1] * x ** v[2] - y

    def jacobian(v: np.ndarray) -> np.ndarray:
        xp = x ** v[2]
        return np.column_stack([np.ones_like(x), xp, v[1] * xp * lx])

    p0 = p_start if math.isfinite(p_start) and p_start > 0 else 1.0
    a0, c0 = linear_part(p0)
    sol = least_squares(residual, [a0, c0, p0], jac=jacobian, method="lm", xtol=1e-15, ftol=1e-15, gtol=1e-15)
    phi0, c_scaled, p = (float(v) for v in sol.x)
    notes: list[str] = []
    if not sol.success:
        notes.append(f"least-squares fit did not converge: {sol.message}")
    if p <= 0:
        notes.append("fitted order is not positive: the levels do not converge")
    rms = float(np.sqrt(np.mean(residual(sol.x) ** 2)))
    c = c_scaled / h0**p if math.isfinite(p) else math.nan
    return FitResult(p=p, phi0=phi0, c=c, rms_residual=rms, n_levels=len(y), notes=tuple(notes))


def gci_quantity(
    name: str, levels: Sequence[int], h: Sequence[float], phi: Sequence[float], order: float = 2.0
) -> QuantityReport:
    """Report for one quantity over all levels (finest first, h increasing): every consecutive
    triple; with two levels the two-grid GCI; with four or more a least-squares order too."""
    n = len(h)
    if n < 2:
        raise StudyError(f"quantity {name!r}", f"{n} level(s)", "a convergence study needs at least two levels")
    lv, hh, ff = tuple(int(v) for v in levels), tuple(float(v) for v in h), tuple(float(v) for v in phi)
    if n == 2:
        return QuantityReport(name, lv, hh, ff, two_grid=gci_two(hh, ff, order, lv),
                              notes=("fewer than three levels: the apparent order cannot be estimated",))
    triples = tuple(gci_three(hh[i:i + 3], ff[i:i + 3], lv[i:i + 3]) for i in range(n - 2))
    fit = None
    if n > 3:
        orders = [t.p for t in triples if math.isfinite(t.p)]
        fit = fit_power_law(hh, ff, float(np.median(orders)) if orders else order)
    return QuantityReport(name, lv, hh, ff, triples=triples, fit=fit)


@dataclass(frozen=True)
class StudyTable:
    """A convergence study: levels (1 = finest), representative size h per level, and the
    values of each quantity of interest. ``h_note`` says where h came from; ``h_unit`` is
    ``"m"`` (family.json, or cell counts with --volume/--area), ``"relative"`` ((1/N)^(1/dim),
    no unit) or ``"as given"`` (the CSV's own h column)."""

    levels: tuple[int, ...]
    h: tuple[float, ...]
    quantities: dict[str, tuple[float, ...]]
    h_note: str = "h"
    h_unit: str = "as given"


def gci_study(table: StudyTable, order: float = 2.0) -> tuple[QuantityReport, ...]:
    """One ``QuantityReport`` per quantity of the table, in column order."""
    return tuple(gci_quantity(name, table.levels, table.h, values, order) for name, values in table.quantities.items())
