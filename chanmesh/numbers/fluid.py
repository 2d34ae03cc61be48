"""Fluid properties for the design numbers: liquid water from temperature, or any fluid given
by explicit density and viscosity. SI inside (kg/m^3, Pa s, K).

Water follows the IAPWS formulations, evaluated by ``chanmesh.numbers.water`` in numpy alone
(tested against the ``iapws`` package to about 1e-12): IAPWS-95 (Wagner & Pruss 2002) for
density at atmospheric pressure, IAPWS 2008 (Huber et al. 2009) for viscosity. One evaluation
takes about a millisecond, so it is called at run time.
"""

from __future__ import annotations

import re
from dataclasses import dataclass

from chanmesh.design.model import FlowSpec
from chanmesh.errors import DesignError

ATMOSPHERE = 101_325.0  # Pa, the pressure the water properties are evaluated at
WATER_T_MIN = 273.15  # K, 0 C
WATER_T_MAX = 373.15  # K, 100 C

BIOLOGICAL_WORDS = (
    "blood", "plasma", "serum", "cell", "cells", "suspension", "sample", "saliva", "urine", "sputum",
    "bacteria", "bacterial", "culture", "lysate", "tissue", "platelet", "platelets", "virus", "csf",
)
"""Words in a fluid name that mark a biological sample (for the biosafety caution)."""

WATER_NAMES = ("water", "h2o", "di water", "deionized water", "deionised water")


@dataclass(frozen=True)
class Fluid:
    """A Newtonian fluid at one state: density kg/m^3, viscosity Pa s, temperature K."""

    name: str
    density: float
    viscosity: float
    temperature: float
    source: str
    biological: bool

    def to_dict(self) -> dict[str, object]:
        return {
            "name": self.name,
            "density_kg_m3": self.density,
            "viscosity_Pa_s": self.viscosity,
            "temperature_K": self.temperature,
            "source": self.source,
            "biological": self.biological,
        }


def looks_biological(name: str) -> bool:
    """True when the fluid name holds a word of ``BIOLOGICAL_WORDS`` ('whole blood', 'cell suspension')."""
    words = re.findall(r"[a-z0-9]+", name.lower())
    return any(w in BIOLOGICAL_WORDS for w in words)


def water(temperature: float, key: str = "flow.temperature") -> tuple[float, float]:
    """(density kg/m^3, viscosity Pa s) of liquid water at ``temperature`` K and 1 atm.

    Above the normal boiling point (99.97 C) water at 1 atm is vapour, so up to 100 C the
    saturated liquid is used instead (a difference far below the precision needed here).
    """
    if not WATER_T_MIN <= temperature <= WATER_T_MAX:
        raise DesignError(
            key,
            f"{temperature - 273.15:.6g} C",
            "water properties cover 0 to 100 C at atmospheric pressure; for other fluids or "
            "states give flow.density (kg/m^3) and flow.viscosity (Pa s)",
        )
    from chanmesh.numbers.water import liquid_water

    return liquid_water(temperature, ATMOSPHERE)


def fluid_of(flow: FlowSpec) -> Fluid:
    """The fluid of an operating point: explicit properties win, else water from temperature."""
    bio = flow.biological if flow.biological is not None else looks_biological(flow.fluid)
    given = (flow.density is not None, flow.viscosity is not None)
    if any(given) and not all(given):
        missing = "flow.viscosity" if given[0] else "flow.density"
        raise DesignError(missing, None, "give flow.density and flow.viscosity together (kg/m^3 and Pa s)")
    if all(given):
        for key, value in (("flow.density", flow.density), ("flow.viscosity", flow.viscosity)):
            if not value > 0:  # type: ignore[operator]
                raise DesignError(key, value, "must be greater than 0")
        if not 100.0 <= flow.density <= 25_000.0:  # type: ignore[operator]
            raise DesignError("flow.density", flow.density, "must lie in [100, 25000] kg/m^3 (liquids)")
        if not 1e-5 <= flow.viscosity <= 100.0:  # type: ignore[operator]
            raise DesignError("flow.viscosity", flow.viscosity, "must lie in [1e-5, 100] Pa s (1 mPa s = 0.001 Pa s)")
        return Fluid(flow.fluid, float(flow.density), float(flow.viscosity), flow.temperature,  # type: ignore[arg-type]
                     "given density and viscosity", bio)
    if flow.fluid.strip().lower() not in WATER_NAMES:
        raise DesignError(
            "flow.fluid",
            flow.fluid,
            "only water has built-in properties; for any other fluid give flow.density (kg/m^3) "
            "and flow.viscosity (Pa s)",
        )
    rho, mu = water(flow.temperature)
    return Fluid(flow.fluid, rho, mu, flow.temperature,
                 "water at 1 atm: IAPWS-95 density, IAPWS 2008 viscosity", bio)
