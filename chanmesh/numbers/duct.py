"""Fully developed laminar flow in a rectangular duct: friction, peak velocity, pressure drop,
entrance length. Aspect ratio ``alpha`` = short side / long side, in (0, 1].

Sketch of the duct used by the series (h the short side, w the long side):

    +-------------- w --------------+
    |                               | h      u(y, z) solves  mu (u_yy + u_zz) = dp/dx,
    +-------------------------------+        u = 0 on the four walls
"""

from __future__ import annotations

import math

import numpy as np

_SHAH_LONDON = (1.0, -1.3553, 1.9467, -1.7012, 0.9564, -0.2537)
"""Coefficients of f Re = 24 (1 - 1.3553 a + 1.9467 a^2 - 1.7012 a^3 + 0.9564 a^4 - 0.2537 a^5),
Shah & London (1978), Laminar Flow Forced Convection in Ducts, eq. for rectangular ducts."""

_ODD = np.arange(1, 2 * 200, 2, dtype=float)  # n = 1, 3, 5, ...; 200 terms reach 1e-12 easily


def _check_alpha(alpha: float) -> None:
    if not 0.0 < alpha <= 1.0:
        raise ValueError(f"aspect ratio = {alpha!r}, but it must lie in (0, 1] (short side / long side)")


def aspect_ratio(width: float, height: float) -> float:
    """Short side over long side of a width x height rectangle."""
    return min(width, height) / max(width, height)


def fanning_fre_polynomial(alpha: float) -> float:
    """Fanning friction factor times Reynolds number (based on D_h), Shah & London polynomial."""
    _check_alpha(alpha)
    return 24.0 * sum(c * alpha**k for k, c in enumerate(_SHAH_LONDON))


def _tanh_sum(alpha: float) -> float:
    """S = 1 - (192 alpha / pi^5) sum_{n odd} tanh(n pi / (2 alpha)) / n^5."""
    return 1.0 - 192.0 * alpha / math.pi**5 * float(np.sum(np.tanh(_ODD * math.pi / (2.0 * alpha)) / _ODD**5))


def fanning_fre_series(alpha: float) -> float:
    """Exact f Re of the rectangular duct from the Fourier-series solution.

    With Q = h^3 w dp/dx / (12 mu) * S (White, Viscous Fluid Flow, rectangular duct; also
    Shah & London 1978) and D_h = 2 h / (1 + alpha): f Re = 24 / ((1 + alpha)^2 S).
    """
    _check_alpha(alpha)
    return 24.0 / ((1.0 + alpha) ** 2 * _tanh_sum(alpha))


def max_over_mean(alpha: float) -> float:
    """u_max / u_mean of the rectangular duct (Fourier series; 1.5 for plates, ~2.096 for a square).

    u(0, h/2) = (4 h^2 G / (pi^3 mu)) sum_{n odd} (-1)^((n-1)/2) / n^3 (1 - 1 / cosh(n pi / (2 alpha)))
    and u_mean = h^2 G S / (12 mu), with G = -dp/dx (same series as ``fanning_fre_series``).
    """
    _check_alpha(alpha)
    sign = np.where(((_ODD - 1) / 2) % 2 == 0, 1.0, -1.0)
    # 1/cosh overflows harmlessly to 0 for thin ducts
    with np.errstate(over="ignore"):
        sech = 1.0 / np.cosh(_ODD * math.pi / (2.0 * alpha))
    peak = 4.0 / math.pi**3 * float(np.sum(sign / _ODD**3 * (1.0 - sech)))
    return peak * 12.0 / _tanh_sum(alpha)


def pressure_drop(fanning_fre: float, viscosity: float, velocity: float, length: float, hydraulic_diameter: float) -> float:
    """Pa over ``length`` m: dp = 2 (f Re) mu U L / D_h^2 with the Fanning f Re.

    From dp A = tau_w P L and tau_w = f rho U^2 / 2; the same as (f_D Re) mu U L / (2 D_h^2)
    with the Darcy f_D = 4 f. A circular pipe (f Re = 16) gives Hagen-Poiseuille 32 mu U L / D^2.
    """
    return 2.0 * fanning_fre * viscosity * velocity * length / hydraulic_diameter**2


def entrance_length(reynolds: float, hydraulic_diameter: float) -> float:
    """Hydrodynamic entrance length, m: L_e / D_h = 0.60 / (1 + 0.035 Re) + 0.056 Re.

    Chen (1973) for a circular tube, applied with D_h (from memory); it keeps a finite length
    of order D_h at the low Reynolds numbers of microchannels where L_e = 0.05 Re D_h does not.
    """
    return hydraulic_diameter * (0.60 / (1.0 + 0.035 * reynolds) + 0.056 * reynolds)


def velocity_over_mean(y: np.ndarray, z: np.ndarray, width: float, height: float) -> np.ndarray:
    """Fully developed axial velocity over its mean, u(y, z) / U, in a width x height rectangle
    centred at y = z = 0 (y across the width, z across the height; m); 0 on the walls.

    The Fourier series of White, Viscous Fluid Flow (2006), eq. 3-48, for -a <= y' <= a,
    -b <= z' <= b with a the shorter half side:
    u = 16 a^2 G / (mu pi^3) sum_{n odd} (-1)^((n-1)/2) [1 - cosh(n pi z' / 2a) / cosh(n pi b / 2a)]
    cos(n pi y' / 2a) / n^3, divided by the mean a^2 G S / (3 mu) (S as in ``fanning_fre_series``).
    """
    y = np.asarray(y, dtype=float)
    z = np.asarray(z, dtype=float)
    if width <= height:  # y' along the shorter side
        a, b, ys, zs = width / 2.0, height / 2.0, y, z
    else:
        a, b, ys, zs = height / 2.0, width / 2.0, z, y
    alpha = a / b
    k = _ODD[:, None] * math.pi / (2.0 * a)
    zabs = np.minimum(np.abs(zs), b).ravel()[None, :]
    # cosh(k z) / cosh(k b) without overflow: exp(k (|z| - b)) (1 + e^{-2 k |z|}) / (1 + e^{-2 k b})
    ratio = np.exp(k * (zabs - b)) * (1.0 + np.exp(-2.0 * k * zabs)) / (1.0 + np.exp(-2.0 * k * b))
    sign = np.where(((_ODD - 1) / 2) % 2 == 0, 1.0, -1.0)[:, None]
    terms = sign / _ODD[:, None] ** 3 * (1.0 - ratio) * np.cos(k * ys.ravel()[None, :])
    u = 48.0 / (math.pi**3 * _tanh_sum(alpha)) * terms.sum(axis=0)
    return np.clip(u, 0.0, None).reshape(np.broadcast(y, z).shape)
