"""Laminar rectangular-duct friction, peak velocity and pressure drop (chanmesh.numbers.duct)."""

from __future__ import annotations

import math

import numpy as np

import pytest

from chanmesh.numbers import duct

# Shah & London (1978), Laminar Flow Forced Convection in Ducts, table of f Re for rectangular ducts
SHAH_LONDON_TABLE = {1.0: 14.227, 0.5: 15.548, 0.25: 18.233, 0.125: 20.585}


@pytest.mark.parametrize("alpha, fre", sorted(SHAH_LONDON_TABLE.items()))
def test_series_matches_shah_london_table(alpha: float, fre: float) -> None:
    assert duct.fanning_fre_series(alpha) == pytest.approx(fre, abs=6e-4)


@pytest.mark.parametrize("alpha", [0.05, 0.125, 0.2, 0.25, 0.4, 0.5, 0.75, 1.0])
def test_polynomial_and_series_agree(alpha: float) -> None:
    # Shah & London give the polynomial as accurate to about 0.05 % against the series
    assert duct.fanning_fre_polynomial(alpha) == pytest.approx(duct.fanning_fre_series(alpha), rel=1e-3)


def test_parallel_plate_limits() -> None:
    # analytic plane Poiseuille flow: f Re = 24, u_max / u_mean = 3/2
    assert duct.fanning_fre_series(1e-4) == pytest.approx(24.0, rel=1e-3)
    assert duct.max_over_mean(1e-4) == pytest.approx(1.5, rel=1e-3)


def test_square_duct_peak_velocity() -> None:
    # u_max / u_mean = 2.0962 for the square duct (Shah & London 1978, from memory)
    assert duct.max_over_mean(1.0) == pytest.approx(2.0962, abs=2e-4)


def test_pressure_drop_is_hagen_poiseuille_for_the_pipe_value() -> None:
    # circular pipe: Fanning f Re = 16 and dp = 32 mu U L / D^2 (Hagen-Poiseuille)
    mu, u, length, d = 1e-3, 0.2, 0.05, 1e-4
    assert duct.pressure_drop(16.0, mu, u, length, d) == pytest.approx(32 * mu * u * length / d**2, rel=1e-12)


def test_pressure_drop_of_a_flat_channel_against_the_approximate_formula() -> None:
    # Bruus (2008), Theoretical Microfluidics, flat rectangular channel (from memory):
    # R_hyd ~ 12 mu L / (1 - 0.63 h / w) / (h^3 w). At h / w = 0.1 the approximation differs from
    # the exact series by 2.7e-5 (below), so 1e-4 is allowed: a 0.01 % slip in the friction
    # factor or the velocity would fail it, where the former 3e-3 let a 0.3 % error through.
    w, h, mu, length, q = 1e-3, 1e-4, 1e-3, 0.02, 1e-9
    d_h = 2 * w * h / (w + h)
    dp = duct.pressure_drop(duct.fanning_fre_series(h / w), mu, q / (w * h), length, d_h)
    ref = 12 * mu * length / ((1 - 0.63 * h / w) * h**3 * w) * q
    assert dp == pytest.approx(ref, rel=1e-4, abs=0)


@pytest.mark.parametrize("ratio", [0.1, 0.25, 0.5, 1.0])
def test_pressure_drop_against_the_exact_series_computed_here(ratio: float) -> None:
    # exact laminar resistance of a rectangular duct, h <= w (Fourier series solution; Bruus 2008
    # eq. for R_hyd of a rectangle, White 2006 eq. 3-48, from memory):
    # R = 12 mu L / (w h^3) / (1 - (192 h / (pi^5 w)) sum_{n odd} tanh(n pi w / (2 h)) / n^5)
    w, mu, length, q = 1e-3, 1e-3, 0.02, 1e-9
    h = ratio * w
    series = sum(math.tanh(n * math.pi * w / (2 * h)) / n**5 for n in range(1, 400, 2))
    exact = 12 * mu * length / (w * h**3) / (1 - 192 * h / (math.pi**5 * w) * series) * q
    d_h = 2 * w * h / (w + h)
    dp = duct.pressure_drop(duct.fanning_fre_series(h / w), mu, q / (w * h), length, d_h)
    assert dp == pytest.approx(exact, rel=1e-8, abs=0)
    if ratio == 0.1:  # the approximation's real error, quoted above
        approx = 12 * mu * length / ((1 - 0.63 * h / w) * h**3 * w) * q
        assert abs(approx / exact - 1) == pytest.approx(2.7e-5, abs=0.1e-5)


def test_entrance_length_correlation_by_hand() -> None:
    # Chen (1973), L_e / D_h = 0.60 / (1 + 0.035 Re) + 0.056 Re (from memory): Re = 100 -> 0.1333 + 5.6
    assert duct.entrance_length(100.0, 1e-4) == pytest.approx(1e-4 * (0.6 / 4.5 + 5.6), rel=1e-12)
    assert duct.entrance_length(0.0, 1e-4) == pytest.approx(0.6e-4)


def test_bad_aspect_ratio_is_a_value_error() -> None:
    with pytest.raises(ValueError, match="aspect ratio"):
        duct.fanning_fre_series(1.5)
    assert math.isclose(duct.aspect_ratio(100e-6, 500e-6), 0.2)


@pytest.mark.parametrize("width,height", [(300e-6, 60e-6), (60e-6, 300e-6), (100e-6, 100e-6)])
def test_developed_profile_over_mean(width, height):
    """``velocity_over_mean`` (White 2006, eq. 3-48): its mean over the section is 1, its peak is
    the centreline u_max / U of the same series (checked above against Shah & London 1978), it
    vanishes on the walls and is symmetric."""
    n = 400
    y = (np.arange(n) + 0.5) / n * width - width / 2
    z = (np.arange(n) + 0.5) / n * height - height / 2
    Y, Z = np.meshgrid(y, z)
    u = duct.velocity_over_mean(Y, Z, width, height)
    assert u.mean() == pytest.approx(1.0, rel=1e-4)  # midpoint rule, O(1/n^2)
    alpha = duct.aspect_ratio(width, height)
    assert float(duct.velocity_over_mean(0.0, 0.0, width, height)) == pytest.approx(duct.max_over_mean(alpha), rel=1e-10)
    assert np.allclose(duct.velocity_over_mean(np.array([-width / 2, width / 2]), 0.0, width, height), 0.0, atol=1e-12)
    assert np.allclose(u, u[::-1, ::-1])


def test_developed_profile_of_a_wide_duct_is_plane_poiseuille():
    """Far from the side walls of a 100:1 duct the profile is plane Poiseuille flow,
    u / U_plates = 1.5 (1 - (2 z / h)^2) (White 2006, sec. 3-3), and the duct mean tends to the
    plates' mean."""
    w, h = 100.0, 1.0
    z = np.linspace(-0.5, 0.5, 11)
    u = duct.velocity_over_mean(0.0 * z, z, w, h)
    plane = 1.5 * (1 - (2 * z) ** 2)
    # the duct's mean is below the plates' by the side-wall layers (about 0.63 h / w, from the series)
    assert np.allclose(u * (1 - 0.63 * h / w), plane, atol=2e-3)
