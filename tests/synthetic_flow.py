"""A synthetic velocity field with a known answer, set at the nodes of a built arc mesh.

Streamwise: the fully developed rectangular-duct profile along the local tangent (Fourier
series, White F.M., Viscous Fluid Flow, 3rd ed. 2006, eq. 3-48 and 3-49 for the duct
-b <= y <= b, -a <= z <= a):

    w(u, v) = (16 a^2 G / (mu pi^3)) sum_{i odd} (-1)^((i-1)/2) [1 - cosh(i pi u / 2a) / cosh(i pi b / 2a)]
              cos(i pi v / 2a) / i^3,
    Q = (4 b a^3 G / (3 mu)) [1 - (192 a / (pi^5 b)) sum_{i odd} tanh(i pi b / 2a) / i^5],

with a = H/2 (half height, along z = v), b = W/2 (half width, along n = u).
Secondary: two counter-rotating cells stacked in z, from the stream function

    psi(xi, zeta) = A sin(pi xi^1.5) sin(2 pi zeta),  xi = (u + W/2) / W,  zeta = (v + H/2) / H,
    (a_n, b_z) = (d psi / dv, -d psi / du),

whose extrema (vortex centres) lie at xi = 0.5^(2/3) = 0.630, zeta = 1/4 and 3/4; with A < 0
the lower cell turns clockwise and the upper counter-clockwise looking downstream, the sense of
Dean vortices in a left-turning bend (flow outward at mid-height).
"""

from __future__ import annotations

import math

import numpy as np

ODD = np.arange(1, 400, 2, dtype=float)


def duct_profile(u: np.ndarray, v: np.ndarray, width: float, height: float, g_over_mu: float) -> np.ndarray:
    a, b = 0.5 * height, 0.5 * width
    u = np.asarray(u, float)[..., None]
    v = np.asarray(v, float)[..., None]
    k = ODD * math.pi / (2 * a)
    # cosh(k u) / cosh(k b) without overflow
    ratio = np.exp(k * (np.abs(u) - b)) * (1 + np.exp(-2 * k * np.abs(u))) / (1 + np.exp(-2 * k * b))
    sign = np.where(((ODD - 1) / 2) % 2 == 0, 1.0, -1.0)
    terms = sign * (1.0 - ratio) * np.cos(k * v) / ODD**3
    return 16 * a * a * g_over_mu / math.pi**3 * terms.sum(axis=-1)


def duct_flow_rate(width: float, height: float, g_over_mu: float) -> float:
    a, b = 0.5 * height, 0.5 * width
    s = np.sum(np.tanh(ODD * math.pi * b / (2 * a)) / ODD**5)
    return 4 * b * a**3 * g_over_mu / 3 * (1 - 192 * a / (math.pi**5 * b) * s)


def secondary(u: np.ndarray, v: np.ndarray, width: float, height: float, amp: float) -> tuple[np.ndarray, np.ndarray]:
    xi = np.clip((np.asarray(u) + 0.5 * width) / width, 0.0, 1.0)
    zeta = (np.asarray(v) + 0.5 * height) / height
    an = amp * np.sin(math.pi * xi**1.5) * 2 * math.pi * np.cos(2 * math.pi * zeta) / height
    bz = -amp * np.cos(math.pi * xi**1.5) * math.pi * 1.5 * np.sqrt(xi) * np.sin(2 * math.pi * zeta) / width
    return an, bz


def arc_field(points: np.ndarray, radius: float, width: float, height: float, g_over_mu: float, amp: float) -> np.ndarray:
    """Velocity at ``points`` of a counter-clockwise arc about the origin (no leads)."""
    x, y, z = points.T
    theta = np.arctan2(y, x)
    u = np.hypot(x, y) - radius
    t = np.column_stack([-np.sin(theta), np.cos(theta), np.zeros_like(x)])
    n = np.column_stack([np.cos(theta), np.sin(theta), np.zeros_like(x)])
    w = duct_profile(u, z, width, height, g_over_mu)
    an, bz = secondary(u, z, width, height, amp)
    return w[:, None] * t + an[:, None] * n + bz[:, None] * np.array([0.0, 0.0, 1.0])
