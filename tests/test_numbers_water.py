"""chanmesh.numbers.water (IAPWS-95 density, IAPWS 2008 viscosity in numpy) against the
releases' own check values and against the iapws package, the reference implementation of
both formulations."""

from __future__ import annotations

import numpy as np
import pytest

from chanmesh.numbers.water import BOILING_CHECK_FROM, liquid_water, pressure, residual, saturation, viscosity


def test_residual_helmholtz_matches_the_release_check_values():
    # IAPWS R6-95(2018), Table 6: residual part at T = 500 K, rho = 838.025 kg/m3 (9 digits)
    phi, phi_d, phi_dd = residual(838.025 / 322.0, 647.096 / 500.0)
    assert phi == pytest.approx(-0.342693206e1, abs=5e-9)
    assert phi_d == pytest.approx(-0.364366650, abs=5e-10)
    assert phi_dd == pytest.approx(0.856063701, abs=5e-10)


@pytest.mark.parametrize("temperature, rho, p_mpa", [
    # IAPWS R6-95(2018), Table 7 (single phase; 647 K exercises the non-analytic terms)
    (300.0, 0.9965560e3, 0.992418352e-1),
    (300.0, 0.1005308e4, 0.200022515e2),
    (500.0, 0.4350000, 0.999679423e-1),
    (647.0, 0.3580000e3, 0.220384756e2),
    (900.0, 0.8707690e3, 0.700000006e3),
])
def test_pressure_matches_the_release_single_phase_table(temperature, rho, p_mpa):
    assert pressure(rho, temperature) / 1e6 == pytest.approx(p_mpa, rel=1e-8)


@pytest.mark.parametrize("temperature, guess, p_mpa, rho_l, rho_v", [
    # IAPWS R6-95(2018), Table 8 (saturation from the Maxwell criterion)
    (275.0, (1000.0, 0.005), 0.698451167e-3, 0.999887406e3, 0.550664919e-2),
    (450.0, (890.0, 4.8), 0.932203564, 0.890341250e3, 0.481200360e1),
    (625.0, (570.0, 120.0), 0.169082693e2, 0.567090385e3, 0.118290280e3),
])
def test_saturation_matches_the_release_two_phase_table(temperature, guess, p_mpa, rho_l, rho_v):
    got_l, got_v, got_p = saturation(temperature, guess)
    assert got_p / 1e6 == pytest.approx(p_mpa, rel=1e-8)
    assert got_l == pytest.approx(rho_l, rel=1e-8)
    assert got_v == pytest.approx(rho_v, rel=1e-8)


def test_vapour_pressure_crosses_one_atmosphere_at_the_normal_boiling_point():
    # the normal boiling point of IAPWS-95 is 373.1243 K (iapws.IAPWS95.Tb, the reference
    # implementation); below BOILING_CHECK_FROM the liquid is stable at 1 atm without a check
    from iapws import IAPWS95

    assert saturation(IAPWS95.Tb)[2] == pytest.approx(101_325.0, abs=1.0)  # dp_s/dT = 3.6 kPa/K
    assert saturation(BOILING_CHECK_FROM)[2] < 0.97 * 101_325.0


@pytest.mark.parametrize("temperature, rho, mu_upas", [
    # IAPWS R12-08, Table 4 (mu2 = 1), printed to 6 decimals in uPa s
    (298.15, 998.0, 889.735100),
    (298.15, 1200.0, 1437.649467),
    (373.15, 1000.0, 307.883622),
    (433.15, 1.0, 14.538324),
    (873.15, 600.0, 77.430195),
])
def test_viscosity_matches_the_release_check_values(temperature, rho, mu_upas):
    assert viscosity(rho, temperature) * 1e6 == pytest.approx(mu_upas, abs=5e-7)


@pytest.mark.parametrize("rho, mu_upas", [(122.0, 25.520677), (222.0, 31.337589), (272.0, 36.228143),
                                           (372.0, 45.688204), (422.0, 49.436256)])
def test_critical_enhancement_matches_the_release_near_the_critical_point(rho, mu_upas):
    # IAPWS R12-08, Table 5 at T = 647.35 K, the critical enhancement mu2 included (up to 3.7 %
    # here; its compressibilities from IAPWS-95, as the release prescribes). The table's point at
    # exactly the critical density (322 kg/m3) is left out: the non-analytic terms' delta
    # derivatives are 0/0 there, a state liquid water never reaches.
    assert viscosity(rho, 647.35) * 1e6 == pytest.approx(mu_upas, abs=5e-7)


def test_liquid_water_at_1_atm_agrees_with_the_iapws_package():
    """Every 0.5 C from 0 to 100 C and round the normal boiling point (373.124 K), where the
    saturated liquid takes over: density and viscosity within 1e-12 of iapws.IAPWS95 (the
    reference implementation of IAPWS R6-95 and R12-08; saturated liquid via x = 0)."""
    from iapws import IAPWS95

    temperatures = list(np.linspace(273.15, 373.15, 201)) + [373.12, 373.125, 373.13, 373.14, 373.145]
    for t in temperatures:
        ref = IAPWS95(T=t, P=0.101325)
        if getattr(ref, "phase", "Liquid") != "Liquid":
            ref = IAPWS95(T=t, x=0.0)
        rho, mu = liquid_water(t)
        assert rho == pytest.approx(ref.rho, rel=1e-12), t
        assert mu == pytest.approx(ref.mu, rel=1e-12), t
