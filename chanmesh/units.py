"""Units: design lengths, and quantities written with a unit such as ``1.2mL/min`` or ``25C``.

Everything inside chanmesh is SI (metres, seconds, kilograms, pascals, kelvin). Conversion
happens once, where text from a user is read.
"""

from __future__ import annotations

import math
import re

from chanmesh.errors import DesignError

PER_METRE: dict[str, float] = {"nm": 1e9, "um": 1e6, "µm": 1e6, "mm": 1e3, "cm": 1e2, "m": 1.0}
"""How many of each length unit make a metre. Dividing by these (rather than multiplying by
1e-6) keeps decimal inputs such as 200 um exact to the last digit (0.0002, not 0.00019999...)."""

LENGTH_UNITS: dict[str, float] = {u: 1.0 / PER_METRE[u] for u in ("um", "mm", "m")}
"""Design-file ``unit`` values and their size in metres."""

_FLOW_UNITS: dict[str, float] = {
    # volumetric flow in m^3/s per unit
    "m3/s": 1.0,
    "ml/min": 1e-6 / 60.0,
    "ml/h": 1e-6 / 3600.0,
    "ml/s": 1e-6,
    "ul/min": 1e-9 / 60.0,
    "µl/min": 1e-9 / 60.0,
    "ul/h": 1e-9 / 3600.0,
    "µl/h": 1e-9 / 3600.0,
    "ul/s": 1e-9,
    "µl/s": 1e-9,
    "nl/min": 1e-12 / 60.0,
}

_VELOCITY_UNITS: dict[str, float] = {"m/s": 1.0, "mm/s": 1e-3, "cm/s": 1e-2, "um/s": 1e-6, "µm/s": 1e-6}

_NUMBER_THEN_UNIT = re.compile(r"\s*([-+]?(?:\d+\.?\d*|\.\d+)(?:[eE][-+]?\d+)?)\s*(.*?)\s*", re.DOTALL)

MAX_LENGTH = 10.0
"""Largest length (m) any key or option accepts. A chip is centimetres across; far larger values
are typing slips (``1e400um`` overflows to infinity) and would overflow areas and volumes."""


def length_unit(key: str, unit: object) -> float:
    """Size in metres of a design-file length unit; ``DesignError`` naming ``key`` otherwise."""
    if not isinstance(unit, str) or unit not in LENGTH_UNITS:
        raise DesignError(key, unit, f"must be one of {', '.join(repr(u) for u in LENGTH_UNITS)}")
    return LENGTH_UNITS[unit]


def split_quantity(key: str, text: object) -> tuple[float, str]:
    """Split ``"1.2 mL/min"`` into ``(1.2, "mL/min")``; the unit may be empty."""
    unit = ""
    if isinstance(text, (int, float)) and not isinstance(text, bool):
        number = float(text)
    elif isinstance(text, str) and (match := _NUMBER_THEN_UNIT.fullmatch(text)) is not None:
        number, unit = float(match.group(1)), match.group(2)
    else:
        raise DesignError(key, text, "must be a number followed by a unit, e.g. '1.2mL/min'")
    if not math.isfinite(number):
        raise DesignError(key, text, "must be a finite number (this one overflows to infinity)")
    return number, unit


def to_metres(value: float, unit: str) -> float:
    """A length in ``unit`` (a key of ``PER_METRE``) in metres."""
    return value / PER_METRE[unit]


def _unit_of(key: str, text: object, table: dict[str, float], example: str) -> tuple[float, str]:
    number, unit = split_quantity(key, text)
    unit = unit.replace("μ", "µ")
    match = next((u for u in table if u.lower() == unit.lower()), None)
    if match is None:
        known = ", ".join(sorted({u for u in table if "µ" not in u}))
        raise DesignError(key, text, f"needs a unit, one of {known} (e.g. {example!r})")
    return number, match


def _convert(key: str, text: object, table: dict[str, float], example: str) -> float:
    number, unit = _unit_of(key, text, table, example)
    return number * table[unit]


def parse_length(key: str, text: object) -> float:
    """A length with its unit (``'12.5mm'``) in metres; at most ``MAX_LENGTH`` in size."""
    number, unit = _unit_of(key, text, PER_METRE, "12.5mm")
    return finite_length(key, text, to_metres(number, unit))


def finite_length(key: str, shown: object, metres: float) -> float:
    """``metres`` if it is finite and at most ``MAX_LENGTH`` in size; ``DesignError`` otherwise."""
    if not math.isfinite(metres) or abs(metres) > MAX_LENGTH:
        raise DesignError(key, shown, f"must be a finite length of at most {MAX_LENGTH:g} m")
    return metres


def parse_flow_rate(key: str, text: object) -> float:
    """A volumetric flow rate with its unit (``'1.2mL/min'``) in m³/s."""
    return _convert(key, text, _FLOW_UNITS, "1.2mL/min")


def parse_velocity(key: str, text: object) -> float:
    """A speed with its unit (``'0.3m/s'``) in m/s."""
    return _convert(key, text, _VELOCITY_UNITS, "0.3m/s")


def parse_temperature(key: str, text: object) -> float:
    """A temperature in degrees Celsius (``'25C'``, ``'25 °C'``) or kelvin (``'298.15K'``), in kelvin."""
    number, unit = split_quantity(key, text)
    unit = unit.replace("°", "").strip().upper()
    if unit in ("C", "DEGC"):
        return number + 273.15
    if unit == "K":
        return number
    raise DesignError(key, text, "needs a unit, C or K (e.g. '25C')")
