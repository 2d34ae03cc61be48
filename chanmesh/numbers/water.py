"""Liquid water from the IAPWS formulations, in numpy alone: density from IAPWS-95 (IAPWS
R6-95(2018); Wagner & Pruss 2002), viscosity from IAPWS 2008 (IAPWS R12-08; Huber et al. 2009).
SI throughout (K, Pa, kg/m^3, Pa s).

Why not a library: the ``iapws`` package (the reference these functions are tested against, to
about 1e-12) imports scipy.optimize at its top, which alone takes longer than `chanmesh numbers`
may take to start (issue 14). The equations are few: the residual Helmholtz function of R6-95
(Table 2 coefficients, Table 5 derivatives) solved for density with Newton's method, the
saturation (Maxwell) condition near the boiling point, and the viscosity of R12-08 (Eqs. 10-21).
"""

from __future__ import annotations

import math

import numpy as np

from chanmesh.errors import ChanmeshError

TC = 647.096  # K, critical temperature (R6-95 Eq. 1; R12-08 Table 1)
RHOC = 322.0  # kg/m^3, critical density (R6-95 Eq. 2)
PC = 22.064e6  # Pa, critical pressure (R12-08 Table 1)
R = 461.51805  # J/(kg K), specific gas constant of IAPWS-95 (R6-95 Eq. 3)

# IAPWS-95 residual part, R6-95 Table 2: terms 1-7 polynomial, 8-51 exponential, 52-54 Gaussian,
# 55-56 non-analytic.
_N1 = np.array([0.12533547935523e-1, 0.78957634722828e1, -0.87803203303561e1, 0.31802509345418,
                -0.26145533859358, -0.78199751687981e-2, 0.88089493102134e-2])
_D1 = np.array([1, 1, 1, 2, 2, 3, 4], dtype=float)
_T1 = np.array([-0.5, 0.875, 1.0, 0.5, 0.75, 0.375, 1.0])

_N2 = np.array([
    -0.66856572307965, 0.20433810950965, -0.66212605039687e-4, -0.19232721156002,
    -0.25709043003438, 0.16074868486251, -0.40092828925807e-1, 0.39343422603254e-6,
    -0.75941377088144e-5, 0.56250979351888e-3, -0.15608652257135e-4, 0.11537996422951e-8,
    0.36582165144204e-6, -0.13251180074668e-11, -0.62639586912454e-9, -0.10793600908932,
    0.17611491008752e-1, 0.22132295167546, -0.40247669763528, 0.58083399985759,
    0.49969146990806e-2, -0.31358700712549e-1, -0.74315929710341, 0.47807329915480,
    0.20527940895948e-1, -0.13636435110343, 0.14180634400617e-1, 0.83326504880713e-2,
    -0.29052336009585e-1, 0.38615085574206e-1, -0.20393486513704e-1, -0.16554050063734e-2,
    0.19955571979541e-2, 0.15870308324157e-3, -0.16388568342530e-4, 0.43613615723811e-1,
    0.34994005463765e-1, -0.76788197844621e-1, 0.22446277332006e-1, -0.62689710414685e-4,
    -0.55711118565645e-9, -0.19905718354408, 0.31777497330738, -0.11841182425981])
_C2 = np.array([1] * 15 + [2] * 20 + [3] * 4 + [4] + [6] * 4, dtype=float)
_D2 = np.array([1, 1, 1, 2, 2, 3, 4, 4, 5, 7, 9, 10, 11, 13, 15, 1, 2, 2, 2, 3, 4, 4, 4, 5, 6, 6,
                7, 9, 9, 9, 9, 9, 10, 10, 12, 3, 4, 4, 5, 14, 3, 6, 6, 6], dtype=float)
_T2 = np.array([4, 6, 12, 1, 5, 4, 2, 13, 9, 3, 4, 11, 4, 13, 1, 7, 1, 9, 10, 10, 3, 7, 10, 10, 6,
                10, 10, 1, 2, 3, 4, 8, 6, 9, 8, 16, 22, 23, 23, 10, 50, 44, 46, 50], dtype=float)

_N3 = np.array([-0.31306260323435e2, 0.31546140237781e2, -0.25213154341695e4])
_D3 = np.array([3.0, 3.0, 3.0])
_T3 = np.array([0.0, 1.0, 4.0])
_ALPHA3 = np.array([20.0, 20.0, 20.0])
_BETA3 = np.array([150.0, 150.0, 250.0])
_GAMMA3 = np.array([1.21, 1.21, 1.25])
_EPS3 = np.array([1.0, 1.0, 1.0])

_N4 = np.array([-0.14874640856724, 0.31806110878444])
_A4 = np.array([3.5, 3.5])
_B4 = np.array([0.85, 0.95])
_BB4 = np.array([0.2, 0.2])
_C4 = np.array([28.0, 32.0])
_DD4 = np.array([700.0, 800.0])
_AA4 = np.array([0.32, 0.32])
_BETA4 = np.array([0.3, 0.3])


def residual(delta: float, tau: float) -> tuple[float, float, float]:
    """IAPWS-95 residual Helmholtz function phi^r and its first and second delta derivatives at
    reduced density ``delta`` = rho/322 kg/m^3 and inverse reduced temperature ``tau`` =
    647.096 K/T (R6-95 Eq. 6.6, Table 5); all dimensionless."""
    d, t = delta, tau
    poly = _N1 * d**_D1 * t**_T1
    phi = poly.sum()
    phi_d = (poly * _D1).sum() / d
    phi_dd = (poly * _D1 * (_D1 - 1)).sum() / d**2

    dc = d**_C2
    ex = _N2 * d**_D2 * t**_T2 * np.exp(-dc)
    phi += ex.sum()
    phi_d += (ex * (_D2 - _C2 * dc)).sum() / d
    phi_dd += (ex * ((_D2 - _C2 * dc) * (_D2 - 1 - _C2 * dc) - _C2**2 * dc)).sum() / d**2

    de = d - _EPS3
    ga = _N3 * d**_D3 * t**_T3 * np.exp(-_ALPHA3 * de**2 - _BETA3 * (t - _GAMMA3) ** 2)
    phi += ga.sum()
    phi_d += (ga * (_D3 / d - 2 * _ALPHA3 * de)).sum()
    phi_dd += (ga * (-2 * _ALPHA3 + 4 * _ALPHA3**2 * de**2 - 4 * _D3 * _ALPHA3 * de / d
                     + _D3 * (_D3 - 1) / d**2)).sum()

    # non-analytic terms: n Delta^b delta psi (Table 5); their delta derivatives divide by
    # delta - 1 (nan at exactly the critical density, which liquid water and its vapour never reach)
    q = (d - 1.0) ** 2
    e = 0.5 / _BETA4
    theta = (1.0 - t) + _AA4 * q**e
    big = theta**2 + _BB4 * q**_A4
    psi = np.exp(-_C4 * q - _DD4 * (t - 1.0) ** 2)
    psi_d = -2.0 * _C4 * (d - 1.0) * psi
    psi_dd = (2.0 * _C4 * q - 1.0) * 2.0 * _C4 * psi
    big_d = (d - 1.0) * (_AA4 * theta * 2.0 / _BETA4 * q ** (e - 1.0) + 2.0 * _BB4 * _A4 * q ** (_A4 - 1.0))
    big_dd = big_d / (d - 1.0) + q * (4.0 * _BB4 * _A4 * (_A4 - 1.0) * q ** (_A4 - 2.0)
                                      + 2.0 * (_AA4 / _BETA4) ** 2 * q ** (2.0 * e - 2.0)
                                      + _AA4 * theta * 4.0 / _BETA4 * (e - 1.0) * q ** (e - 2.0))
    big_b = big**_B4
    big_b_d = _B4 * big ** (_B4 - 1.0) * big_d
    big_b_dd = _B4 * (big ** (_B4 - 1.0) * big_dd + (_B4 - 1.0) * big ** (_B4 - 2.0) * big_d**2)
    phi += (_N4 * big_b * d * psi).sum()
    phi_d += (_N4 * (big_b * (psi + d * psi_d) + big_b_d * d * psi)).sum()
    phi_dd += (_N4 * (big_b * (2.0 * psi_d + d * psi_dd) + 2.0 * big_b_d * (psi + d * psi_d)
                      + big_b_dd * d * psi)).sum()
    return float(phi), float(phi_d), float(phi_dd)


def pressure(rho: float, temperature: float) -> float:
    """IAPWS-95 pressure (Pa) at density ``rho`` kg/m^3 and ``temperature`` K (R6-95 Table 3)."""
    delta = rho / RHOC
    return rho * R * temperature * (1.0 + delta * residual(delta, TC / temperature)[1])


def drho_dp(rho: float, temperature: float) -> float:
    """(d rho / d p) at constant temperature, kg/(m^3 Pa), from IAPWS-95 (R6-95 Table 3)."""
    delta = rho / RHOC
    _, phi_d, phi_dd = residual(delta, TC / temperature)
    return 1.0 / (R * temperature * (1.0 + 2.0 * delta * phi_d + delta**2 * phi_dd))


def _converged(step: float, value: float) -> bool:
    """Newton converges quadratically here (each relative error about the square of the last
    one, measured), so after a step below 1e-10 of the value only round-off (about 1e-15)
    remains; a tighter test could wait on round-off forever."""
    return abs(step) <= 1e-10 * abs(value)


def liquid_density(temperature: float, p: float, guess: float = 1000.0) -> float:
    """Density (kg/m^3) of the liquid root of the IAPWS-95 pressure equation at ``temperature``
    K and ``p`` Pa: Newton's method on p(rho) from ``guess`` (a liquid density), which converges
    in a few steps because p rises steeply and smoothly with rho in the liquid."""
    rho = guess
    for _ in range(50):
        step = (pressure(rho, temperature) - p) * drho_dp(rho, temperature)
        rho -= step
        if _converged(step, rho):
            return rho
    raise ChanmeshError(f"IAPWS-95: no liquid density found at {temperature:g} K and {p:g} Pa")


def saturation(temperature: float, guess: tuple[float, float] = (958.0, 0.6)) -> tuple[float, float, float]:
    """(saturated liquid density kg/m^3, vapour density kg/m^3, vapour pressure Pa) of IAPWS-95
    at ``temperature`` K: equal pressure and equal Gibbs energy in both phases (the Maxwell
    criterion, R6-95 section 6.3), solved with Newton's method in (delta_liquid, delta_vapour)
    from the ``guess`` densities (kg/m^3; the default suits the normal boiling point)."""
    tau = TC / temperature
    dl, dv = guess[0] / RHOC, guess[1] / RHOC

    def parts(delta: float) -> tuple[float, float, float, float]:
        phi, phi_d, phi_dd = residual(delta, tau)
        j = delta * (1.0 + delta * phi_d)  # p / (rho_c R T)
        k = delta * phi_d + phi + math.log(delta)  # g / (R T) less its ideal-gas part in T
        return j, k, 1.0 + 2.0 * delta * phi_d + delta**2 * phi_dd, 2.0 * phi_d + delta * phi_dd + 1.0 / delta

    for _ in range(50):
        jl, kl, jl_d, kl_d = parts(dl)
        jv, kv, jv_d, kv_d = parts(dv)
        f1, f2 = jl - jv, kl - kv
        det = -jl_d * kv_d + jv_d * kl_d
        step_l = (-f1 * kv_d + jv_d * f2) / det
        step_v = (jl_d * f2 - kl_d * f1) / det
        dl, dv = dl - step_l, dv - step_v
        if _converged(step_l, dl) and _converged(step_v, dv):
            # the pressure from the vapour side: the liquid's rounds off with its steep p(rho)
            return dl * RHOC, dv * RHOC, pressure(dv * RHOC, temperature)
    raise ChanmeshError(f"IAPWS-95: no saturation state found at {temperature:g} K")


BOILING_CHECK_FROM = 372.0
"""K: from here up, water at 1 atm is checked against the saturation pressure (at 372 K the
vapour pressure of IAPWS-95 is 97.3 kPa, well under one atmosphere; tests/test_numbers_water.py)."""


def liquid_water(temperature: float, p: float = 101_325.0) -> tuple[float, float]:
    """(density kg/m^3, viscosity Pa s) of liquid water at ``temperature`` K and ``p`` Pa, for
    273.15 K to 373.15 K near atmospheric pressure. Where the vapour pressure exceeds ``p``
    (above the boiling point, 373.124 K at 1 atm) the saturated liquid is used instead."""
    rho = None
    if temperature >= BOILING_CHECK_FROM:
        rho_sat, _, p_sat = saturation(temperature)
        if p_sat > p:
            rho = rho_sat
    if rho is None:
        rho = liquid_density(temperature, p)
    return rho, viscosity(rho, temperature)


def viscosity(rho: float, temperature: float) -> float:
    """IAPWS 2008 viscosity (Pa s) at density ``rho`` kg/m^3 and ``temperature`` K (R12-08 Eqs.
    10-21): dilute-gas part mu0, residual part mu1 and critical enhancement mu2 (1 unless near
    the critical point), with the compressibilities of IAPWS-95 as the release prescribes."""
    tr, dr = temperature / TC, rho / RHOC
    mu0 = 100.0 * math.sqrt(tr) / sum(h / tr**i for i, h in enumerate(_H0))
    mu1 = math.exp(dr * float(np.sum((1.0 / tr - 1.0) ** _I1 * _H1 * (dr - 1.0) ** _J1)))
    return mu0 * mu1 * _critical_enhancement(rho, temperature) * 1e-6


_H0 = (1.67752, 2.20462, 0.6366564, -0.241605)  # R12-08 Table 1
_I1 = np.array([0, 1, 2, 3, 0, 1, 2, 3, 5, 0, 1, 2, 3, 4, 0, 1, 0, 3, 4, 3, 5], dtype=float)
_J1 = np.array([0, 0, 0, 0, 1, 1, 1, 1, 1, 2, 2, 2, 2, 2, 3, 3, 4, 4, 5, 6, 6], dtype=float)
_H1 = np.array([0.520094, 0.850895e-1, -0.108374e1, -0.289555, 0.222531, 0.999115, 0.188797e1,
                0.126613e1, 0.120573, -0.281378, -0.906851, -0.772479, -0.489837, -0.257040,
                0.161913, 0.257399, -0.325372e-1, 0.698452e-1, 0.872102e-2, -0.435673e-2,
                -0.593264e-3])  # R12-08 Table 2


def _critical_enhancement(rho: float, temperature: float) -> float:
    """mu2 of R12-08 Eqs. 14-21 (constants of its Table 3): exactly 1 where the symmetrized
    compressibility difference Delta chi is not positive, as in liquid water at 1 atm."""
    tr, dr = temperature / TC, rho / RHOC
    # Eq. 21: reduced compressibilities at T and at the reference T_R = 1.5 T_c, same density
    delta_chi = PC * dr**2 * (drho_dp(rho, temperature) / rho - drho_dp(rho, 1.5 * TC) / rho * 1.5 / tr)
    if delta_chi <= 0.0:
        return 1.0
    qc, qd = 1.0 / 1.9, 1.0 / 1.1  # nm^-1 times the correlation length xi (nm)
    x = 0.13 * (delta_chi / 0.06) ** (0.63 / 1.239)  # Eq. 20: xi in nm
    if x <= 0.3817016416:  # Eq. 15
        y = qc / 5.0 * x * (qd * x) ** 5 * (1.0 - qc * x + (qc * x) ** 2 - 765.0 / 504.0 * (qd * x) ** 2)
    else:  # Eqs. 16-19
        psi_d = math.acos((1.0 + qd**2 * x**2) ** -0.5)
        w = abs((qc * x - 1.0) / (qc * x + 1.0)) ** 0.5 * math.tan(psi_d / 2.0)
        lw = math.log((1.0 + w) / (1.0 - w)) if qc * x > 1.0 else 2.0 * math.atan(abs(w))
        y = (math.sin(3.0 * psi_d) / 12.0 - math.sin(2.0 * psi_d) / (4.0 * qc * x)
             + (1.0 - 1.25 * (qc * x) ** 2) / (qc * x) ** 2 * math.sin(psi_d)
             - ((1.0 - 1.5 * (qc * x) ** 2) * psi_d - abs((qc * x) ** 2 - 1.0) ** 1.5 * lw) / (qc * x) ** 3)
    return math.exp(0.068 * y)  # Eq. 14
