"""The GCI numerics against Celik et al. (2008) Table 1 and manufactured power-law sequences."""

from __future__ import annotations

import math

import numpy as np
import pytest

from chanmesh.errors import StudyError
from chanmesh.post.gci import fit_power_law, gci_quantity, gci_three, gci_two

# Celik, Ghia, Roache, Freitas, Coleman & Raad (2008), J. Fluids Eng. 130(7) 078001, Table 1:
# two-dimensional grids, h = (1/N)^(1/2).
N_A = (18000, 8000, 4500)
N_B = (18000, 4500, 980)


def h2d(cells):
    return [(1.0 / n) ** 0.5 for n in cells]


def test_celik_table1_column1():
    t = gci_three(h2d(N_A), (6.063, 5.972, 5.863))
    # Celik et al. (2008) Table 1, column 1; printed as r21 = 1.5, r32 = 1.333, p = 1.53,
    # phi_ext21 = 6.1685, e_a21 = 1.5 %, e_ext21 = 1.7 %, GCI_fine21 = 2.2 %.
    assert t.r21 == pytest.approx(1.5, abs=5e-4)
    assert t.r32 == pytest.approx(1.333, abs=5e-4)
    assert t.p == pytest.approx(1.53, abs=5e-3)
    assert t.phi_ext21 == pytest.approx(6.1685, abs=5e-5)
    assert 100 * t.e_a21 == pytest.approx(1.5, abs=0.05)
    assert 100 * t.e_ext21 == pytest.approx(1.7, abs=0.05)
    assert 100 * t.gci_fine == pytest.approx(2.2, abs=0.05)
    assert t.s == 1 and t.convergence == "monotonic"


def test_celik_table1_column2():
    t = gci_three(h2d(N_B), (10.7880, 10.7250, 10.6050))
    # Celik et al. (2008) Table 1, column 2: p = 0.75 (given in the issue with the paper reference).
    assert t.p == pytest.approx(0.75, abs=5e-3)
    # Same table, phi_ext21 = 10.8801 and GCI_fine21 = 1.1 % (from memory of Table 1).
    assert t.phi_ext21 == pytest.approx(10.8801, abs=5e-5)
    assert 100 * t.gci_fine == pytest.approx(1.1, abs=0.05)
    assert t.convergence == "monotonic"


def test_celik_table1_column3_oscillatory():
    t = gci_three(h2d(N_B), (6.0042, 5.9624, 6.0909))
    # Celik et al. (2008) Table 1, column 3: oscillatory, s = -1, p = 1.51; r21 = 2 and
    # r32 = (4500 / 980)^(1/2) = 2.143 from the cell counts of the same column.
    assert t.r21 == pytest.approx(2.0, abs=5e-4)
    assert t.r32 == pytest.approx(2.143, abs=5e-4)
    assert t.s == -1
    assert t.p == pytest.approx(1.51, abs=5e-3)
    # an independent implementation of the same fixed-point iteration (oscar-monsalve/GCI on
    # GitHub, tests/test_2d_p_value_oscillatory.py) gets p = 1.50769168965166 for these inputs
    assert t.p == pytest.approx(1.5076917, abs=1e-6)
    # Same table (from memory of Table 1, each checked here by hand from its definition):
    # phi_ext21 = 6.0269; e_a21 = |6.0042 - 5.9624| / 6.0042 = 0.70 %;
    # e_ext21 = |6.0269 - 6.0042| / 6.0269 = 0.38 %; GCI_fine21 = 1.25 e_a21 / (2^1.5077 - 1) = 0.47 %.
    assert t.phi_ext21 == pytest.approx(6.0269, abs=5e-5)
    assert 100 * t.e_a21 == pytest.approx(0.70, abs=5e-3)
    assert 100 * t.e_ext21 == pytest.approx(0.38, abs=5e-3)
    assert 100 * t.gci_fine == pytest.approx(0.47, abs=5e-3)
    assert t.convergence == "oscillatory" and "oscillatory" in t.flags


@pytest.mark.parametrize("p_true", [0.8, 1.0, 2.0, 2.7])
def test_manufactured_three_grids_non_constant_ratio(p_true):
    """phi(h) = phi0 + C h^p exactly (analytic): the fixed-point order and the Richardson value
    must return p and phi0 to 1e-10 even with r21 != r32."""
    phi0, c = 1.7, 0.35
    h = np.array([0.01, 0.0143, 0.0262])
    t = gci_three(h, phi0 + c * (h / h[0]) ** p_true * 0.05)
    assert t.r21 != pytest.approx(t.r32)
    assert abs(t.p - p_true) < 1e-10
    assert abs(t.phi_ext21 - phi0) < 1e-10
    assert abs(t.phi_ext32 - phi0) < 1e-10
    # For an exact power law GCI32 / (r21^p GCI21) = phi1 / phi2 (Roache's asymptotic check).
    assert t.asymptotic_ratio == pytest.approx(t.phi[0] / t.phi[1], rel=1e-9)


def test_manufactured_least_squares_over_five_levels():
    """Five levels of phi0 + C h^p (analytic): every triple and the least-squares fit recover
    p and phi0 to 1e-10."""
    phi0, c, p = -3.2, 4.0, 1.6
    h = np.array([0.5e-6, 0.7e-6, 1.1e-6, 1.5e-6, 2.3e-6])  # metres, as a family would give
    phi = phi0 + c * (h / 1e-6) ** p
    rep = gci_quantity("dp", range(1, 6), h, phi)
    assert len(rep.triples) == 3
    for t in rep.triples:
        assert abs(t.p - p) < 1e-10 and abs(t.phi_ext21 - phi0) < 1e-10
    assert rep.fit is not None
    assert abs(rep.fit.p - p) < 1e-10
    assert abs(rep.fit.phi0 - phi0) < 1e-10
    assert rep.fit.c * (1e-6) ** p == pytest.approx(c, rel=1e-9)


def test_least_squares_with_noise_stays_near_true_order():
    """A noisy power law (invented data, seeded): the fit stays within a band of the true order."""
    rng = np.random.default_rng(4)
    h = np.geomspace(1.0, 4.0, 6)
    phi = 2.0 + 0.3 * h**2 * (1 + 1e-3 * rng.standard_normal(6))
    fit = fit_power_law(h, phi, p_start=1.0)
    assert abs(fit.p - 2.0) < 0.05
    assert fit.rms_residual < 0.3 * 4.0**2 * 1e-3  # no larger than the largest noise amplitude


def test_two_grids_use_safety_factor_three():
    """Roache (1994): two-grid GCI = 3 |e_a| / (r^p - 1) with the assumed (formal) order."""
    t = gci_two((1.0, 2.0), (1.01, 1.04), order=2.0)
    assert t.safety_factor == 3.0
    assert t.gci_fine == pytest.approx(3.0 * (0.03 / 1.01) / 3.0, rel=1e-12)
    assert t.phi_ext21 == pytest.approx(1.0, rel=1e-12)  # 1.01 - 0.03 / 3
    rep = gci_quantity("q", (1, 2), (1.0, 2.0), (1.01, 1.04))
    assert rep.triples == () and rep.two_grid is not None
    assert "three" in rep.notes[0]


def test_zero_differences_are_reported_not_divided():
    t = gci_three((1.0, 2.0, 4.0), (3.25, 3.25, 3.25))
    assert t.convergence == "round-off" and t.gci_fine == 0.0 and t.phi_ext21 == 3.25
    assert math.isnan(t.p)
    t = gci_three((1.0, 2.0, 4.0), (3.25, 3.25, 3.5))
    assert t.convergence == "indeterminate" and math.isnan(t.gci_fine)
    two = gci_two((1.0, 2.0), (5.0, 5.0), order=2.0)
    assert two.convergence == "round-off" and two.gci_fine == 0.0


def test_divergent_sequence_is_flagged():
    # Differences grow on refinement: 0.1 then 0.3 with a constant ratio (Celik's R = 3 > 1).
    t = gci_three((1.0, 2.0, 4.0), (1.0, 1.3, 1.4))
    assert t.convergence == "divergent" and "divergent" in t.flags
    assert math.isnan(t.p) and math.isnan(t.gci_fine)
    # Coarse pair equal, fine pair not: also divergent, without a division by zero.
    t = gci_three((1.0, 2.0, 4.0), (1.0, 1.3, 1.3))
    assert t.convergence == "divergent"


def test_zero_fine_value_gives_absolute_band_only():
    t = gci_three((1.0, 2.0, 4.0), (0.0, 0.1, 0.5))
    assert math.isnan(t.gci_fine) and math.isfinite(t.band_fine) and "zero-fine-value" in t.flags


def test_small_ratio_is_flagged():
    # Celik et al. (2008): refinement ratios should exceed 1.3.
    t = gci_three((1.0, 1.2, 2.0), (1.0, 1.1, 1.6))
    assert "small-ratio" in t.flags


def test_bad_h_and_too_few_levels_raise():
    with pytest.raises(StudyError, match="grow from fine to coarse"):
        gci_three((1.0, 3.0, 2.0), (1.0, 1.1, 1.2))
    with pytest.raises(StudyError, match="at least two levels"):
        gci_quantity("q", (1,), (1.0,), (1.0,))
    with pytest.raises(StudyError, match="--order"):
        gci_two((1.0, 2.0), (1.0, 1.1), order=0.0)
