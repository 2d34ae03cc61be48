"""Dean stations, regime bands and particle forces (chanmesh.numbers.regime, .particles)."""

from __future__ import annotations

import math

import numpy as np
import pytest

from chanmesh.design.load import loads_design
from chanmesh.errors import DesignError
from chanmesh.numbers import particles, regime

SECTION = "[section]\nwidth = 500\nheight = 100\n"


def _design(path: str, flow: str = 'rate = "1mL/min"'):
    return loads_design(f'name = "t"\nunit = "um"\n{SECTION}[path]\n{path}\n[flow]\n{flow}\n')


def test_dean_number_at_a_known_radius() -> None:
    # De = Re (D / (2 R))^(1/2): the Dean number as defined for curved pipes (Dean 1928; the form
    # with the diameter as in the review of Berger, Talbot & Yao 1983, from memory; it is the
    # definition of the "Dean number" article of Wikipedia, checked), D the hydraulic diameter
    # for other sections. By hand: Re 50, D_h 200 um, R 5 mm -> sqrt(0.02) = 0.14142136,
    # De = 7.0710678
    assert regime.dean_number(50.0, 200e-6, 5e-3) == pytest.approx(7.0710678, rel=1e-8)
    # the other convention, Re (D_h / R)^(1/2) = 10.0, is a factor sqrt(2) away and must not match
    assert regime.dean_number(50.0, 200e-6, 5e-3) != pytest.approx(10.0, rel=0.1)


def test_spiral_dean_numbers_use_the_radius_of_curvature() -> None:
    """The Dean numbers the design report gives at a spiral's stations, against a hand
    computation: Re = rho U D_h / mu with U = Q / (w h) and D_h = 2 w h / (w + h); the radius of
    curvature of the Archimedean spiral r = r0 + c theta from the polar-curve curvature
    kappa = (r^2 + 2 r'^2 - r r'') / (r^2 + r'^2)^(3/2) (any calculus text), r' = c, r'' = 0;
    De = Re (D_h / (2 R_c))^(1/2) (Dean 1928, as above). Using the distance from the centre r
    instead of R_c would move De by about c^2 / (4 r^2) = 5.7e-4 at the first station."""
    from chanmesh.numbers.report import design_numbers

    d = _design('kind = "spiral"\ninner_radius = 2000\npitch = 600\nturns = 3.5',
                'rate = "1mL/min"\nfluid = "test oil"\ndensity = 1000\nviscosity = 0.001')
    rows = design_numbers(d)["dean"]["stations"]
    w, h, q = 500e-6, 100e-6, 1e-6 / 60
    d_h = 2 * w * h / (w + h)
    re = 1000.0 * (q / (w * h)) * d_h / 1e-3  # 55.5556
    assert re == pytest.approx(55.5556, rel=1e-6)
    c = 600e-6 / (2 * math.pi)
    assert [row["turn"] for row in rows] == [0.0, 1.0, 2.0, 3.0, 3.5]
    for row in rows:
        r = 2000e-6 + 600e-6 * row["turn"]
        r_c = (r * r + c * c) ** 1.5 / (r * r + 2 * c * c)
        assert row["curvature_radius_m"] == pytest.approx(r_c, rel=1e-12, abs=0)
        assert row["dean"] == pytest.approx(re * math.sqrt(d_h / (2 * r_c)), rel=1e-9, abs=0)
    # station 0 by hand: c = 95.4930 um, R_c = 4.00912e-6^1.5 / 4.01824e-6 = 1.99771 mm,
    # De = 55.5556 * sqrt(166.667e-6 / 3.99543e-3) = 55.5556 * 0.204241 = 11.3467
    assert rows[0]["dean"] == pytest.approx(11.3467, rel=1e-5)


def test_dean_velocity_correlation_by_hand() -> None:
    # Ookawara et al. (2004), U_Dean = 1.8e-4 De^1.63: De = 10 -> 1.8e-4 * 42.658 = 7.678e-3 m/s
    assert regime.dean_velocity(10.0) == pytest.approx(7.6784e-3, rel=1e-4)


def test_regime_bands() -> None:
    # bands are common practice, no source; they only need to sort De into three classes
    assert [regime.regime(d, 1.0, 30.0) for d in (0.3, 1.0, 12.0, 30.0, 45.0)] == [
        "below", "inside", "inside", "inside", "above"]


def test_arc_station_uses_the_bend_radius() -> None:
    d = _design('kind = "arc"\nradius = 2000\nangle = 180\ninlet_length = 500')
    (st,) = regime.stations_of(d)
    assert st.curvature_radius == pytest.approx(2e-3, rel=1e-12)
    assert st.s == pytest.approx(500e-6 + 0.5 * math.pi * 2e-3, rel=1e-12)


def test_spiral_stations_at_whole_turns_and_dean_falls() -> None:
    d = _design('kind = "spiral"\ninner_radius = 2000\npitch = 600\nturns = 3.5')
    sts = regime.stations_of(d)
    assert [st.turn for st in sts] == [0.0, 1.0, 2.0, 3.0, 3.5]
    # r = r0 + pitch * turn; 1/kappa of an Archimedean spiral is slightly smaller than r
    assert [st.radius for st in sts] == pytest.approx([2e-3 + 600e-6 * t for t in (0, 1, 2, 3, 3.5)], rel=1e-12)
    c = 600e-6 / (2 * math.pi)
    for st in sts:
        r = st.radius
        assert st.curvature_radius == pytest.approx((r * r + c * c) ** 1.5 / (r * r + 2 * c * c), rel=1e-9)
        assert st.curvature_radius == pytest.approx(r * (1 - c * c / (2 * r * r)), rel=1e-5)  # series in c / r
    de = [regime.dean_number(60.0, 166.7e-6, st.curvature_radius) for st in sts]
    assert np.all(np.diff(de) < 0)


def test_serpentine_lists_every_u_turn_with_alternating_sides() -> None:
    d = _design('kind = "serpentine"\nradius = 800\nstraight = 3000\nperiods = 3')
    sts = regime.stations_of(d)
    assert len(sts) == 6
    assert [st.side for st in sts] == ["left", "right"] * 3
    assert all(st.curvature_radius == pytest.approx(800e-6, rel=1e-12) for st in sts)
    assert np.all(np.diff([st.s for st in sts]) > 0)


def test_chambers_have_no_dean_station() -> None:
    d = _design('kind = "chambers"\ncount = 3\nchamber_length = 800\nchamber_width = 1500\nthroat_length = 400')
    assert regime.stations_of(d) == ()


def test_lift_and_drag_for_one_hand_computed_case() -> None:
    # rho 1000 kg/m3, U_max 0.5 m/s, a 10 um, D_h 100 um, f_L 0.5:
    # F_L = 0.5 * 1000 * 0.25 * 1e-20 / 1e-8 = 1.25e-10 N (Di Carlo 2009 scaling)
    assert particles.inertial_lift(0.5, 1000.0, 0.5, 10e-6, 100e-6) == pytest.approx(1.25e-10, rel=1e-12)
    # mu 1e-3 Pa s, U_Dean(De = 10) = 7.6784e-3 m/s: F_D = 3 pi 1e-3 * 7.6784e-3 * 1e-5 = 7.2366e-10 N (Stokes)
    u_dean = regime.dean_velocity(10.0)
    assert particles.dean_drag(1e-3, u_dean, 10e-6) == pytest.approx(7.2366e-10, rel=1e-4)
    row = particles.particle_numbers(
        10e-6, density=1000.0, viscosity=1e-3, max_velocity=0.5, hydraulic_diameter=100e-6,
        lift_coefficient=0.5, focus_ratio=None, dean_velocities=[("bend", u_dean)])
    assert row["confinement"] == pytest.approx(0.1)
    assert row["stations"][0]["lift_over_drag"] == pytest.approx(1.25 / 7.2366, rel=1e-4)
    assert row["expected_to_focus"] is True  # a / D_h = 0.1 >= 0.07 (Di Carlo 2009)
    strict = particles.particle_numbers(
        10e-6, density=1000.0, viscosity=1e-3, max_velocity=0.5, hydraulic_diameter=100e-6,
        lift_coefficient=0.5, focus_ratio=1.0, dean_velocities=[("bend", u_dean)])
    assert strict["expected_to_focus"] is False  # ratio 0.17 < 1


def test_small_particles_do_not_meet_confinement() -> None:
    row = particles.particle_numbers(
        5e-6, density=1000.0, viscosity=1e-3, max_velocity=0.5, hydraulic_diameter=100e-6,
        lift_coefficient=0.5, focus_ratio=None, dean_velocities=[])
    assert row["confinement"] == pytest.approx(0.05) and row["expected_to_focus"] is False


def test_particle_larger_than_channel_height() -> None:
    with pytest.raises(DesignError, match=r"flow.particles\[1\].*smaller than the channel height \(100 um\)"):
        particles.check_particles((7e-6, 120e-6), 100e-6)
