"""Water properties and fluid selection of chanmesh.numbers.fluid."""

from __future__ import annotations

import math

import pytest

from chanmesh.design.model import FlowSpec
from chanmesh.errors import DesignError
from chanmesh.numbers.fluid import fluid_of, looks_biological, water


@pytest.mark.parametrize(
    "celsius, rho, mu",
    [
        # values of the iapws package (IAPWS-95 density, IAPWS 2008 viscosity) at 0.101325 MPa,
        # as quoted in issue 5; 20 C also matches handbook tables (998.21 kg/m3, 1.0016 mPa s)
        (20.0, 998.207, 1.00160e-3),
        (37.0, 993.330, 0.691304e-3),
    ],
)
def test_water_matches_iapws_reference_values(celsius: float, rho: float, mu: float) -> None:
    got_rho, got_mu = water(celsius + 273.15)
    assert got_rho == pytest.approx(rho, abs=5e-4)
    assert got_mu == pytest.approx(mu, rel=1e-5)


@pytest.mark.parametrize("celsius", [1.0, 21.0, 37.0, 60.0, 95.0])
def test_water_agrees_with_iapws97_industrial_formulation(celsius: float) -> None:
    # IAPWS-IF97 (a separate formulation in the iapws package) reproduces IAPWS-95 density
    # within about 1e-4 relative and uses the same viscosity correlation in the liquid.
    from iapws import IAPWS97

    ref = IAPWS97(T=celsius + 273.15, P=0.101325)
    rho, mu = water(celsius + 273.15)
    assert rho == pytest.approx(ref.rho, rel=1e-4)
    assert mu == pytest.approx(ref.mu, rel=1e-4)


def test_water_at_21c_between_its_neighbours() -> None:
    """Tabulated water at 1 atm, outside the iapws package: 20 C 998.2 kg/m3, 1.002 mPa s and
    30 C 995.7 kg/m3, 0.797 mPa s (M. Chaplin, "Water structure and science", LSBU data table,
    from IAPWS formulations); 21 C 0.99802 g/cm3 and 25 C 0.99707 g/cm3 (International Critical
    Tables 1928, as tabulated in the Encyclopedia of Environmental Science and Engineering,
    appendix table 2); 25 C 0.890 mPa s (common handbook value, e.g. Engineers Edge)."""
    rho, mu = water(294.15)
    assert 997.07 < rho < 998.2  # between its 25 C and 20 C neighbours
    assert rho == pytest.approx(998.02, abs=0.05)  # ICT at 21 C, 5 digits in g/cm3
    assert 0.890e-3 < mu < 1.002e-3  # between its 25 C and 20 C neighbours
    # viscosity is close to log-linear in temperature over 5 K: ln mu interpolated a fifth of the
    # way from 20 C (1.002) to 25 C (0.890) gives 0.97853 mPa s; the curvature of ln mu over
    # this span is about 1e-3 (compare 30 C), so 0.3 % is allowed
    interpolated = math.exp(math.log(1.002e-3) + 0.2 * (math.log(0.890e-3) - math.log(1.002e-3)))
    assert mu == pytest.approx(interpolated, rel=3e-3)


def test_water_at_100c_is_the_liquid() -> None:
    # saturated liquid at 100 C: 958.35 kg/m3 (IAPWS-95 via iapws; steam tables give 958.4)
    rho, mu = water(373.15)
    assert rho == pytest.approx(958.35, abs=0.05)
    assert 2.7e-4 < mu < 2.9e-4


@pytest.mark.parametrize("celsius", [-5.0, 100.5, 150.0])
def test_water_outside_range_names_key_and_range(celsius: float) -> None:
    with pytest.raises(DesignError) as err:
        water(celsius + 273.15)
    assert "flow.temperature" in str(err.value) and "0 to 100 C" in str(err.value)


def test_explicit_properties_win_and_biological_names_are_spotted() -> None:
    fl = fluid_of(FlowSpec(fluid="whole blood", density=1060.0, viscosity=3.5e-3))
    assert (fl.density, fl.viscosity, fl.biological) == (1060.0, 3.5e-3, True)
    assert looks_biological("Cell suspension") and looks_biological("plasma")
    assert not looks_biological("water") and not looks_biological("glycerol 20%")
    assert fluid_of(FlowSpec(fluid="glycerol", density=1050.0, viscosity=1.7e-3, biological=True)).biological


def test_fluid_errors() -> None:
    with pytest.raises(DesignError, match="flow.fluid"):
        fluid_of(FlowSpec(fluid="oil"))
    with pytest.raises(DesignError, match="flow.viscosity"):
        fluid_of(FlowSpec(fluid="oil", density=900.0))
    with pytest.raises(DesignError, match="flow.density.*greater than 0"):
        fluid_of(FlowSpec(fluid="oil", density=-1.0, viscosity=1e-3))
