"""The assembled design numbers (chanmesh.numbers.report.design_numbers)."""

from __future__ import annotations

import dataclasses
import json
import math

import pytest

from chanmesh.design.load import loads_design
from chanmesh.errors import DesignError
from chanmesh.numbers import design_numbers
from chanmesh.numbers.report import CAUTION_BIOSAFETY, CAUTION_NEWTONIAN, CAUTION_PRESSURE

FLUID = 'fluid = "test oil"\ndensity = 1000.0\nviscosity = 0.001\n'


def _design(path: str, flow: str, section: str = "width = 500\nheight = 100"):
    return loads_design(f'name = "t"\nunit = "um"\n[section]\n{section}\n[path]\n{path}\n[flow]\n{flow}\n')


ARC = 'kind = "arc"\nradius = 2000\nangle = 180'


def test_rectangle_section_reynolds_and_dean_by_hand() -> None:
    n = design_numbers(_design(ARC, FLUID + 'rate = "1.5mL/min"\nparticles = ["10um"]'))
    w, h = 500e-6, 100e-6
    d_h = 2 * w * h / (w + h)  # D_h of a rectangle = 4 w h / (2 (w + h))
    assert n["section"]["hydraulic_diameter_m"] == pytest.approx(d_h, rel=1e-12)
    u = 1.5e-6 / 60 / (w * h)  # 0.5 m/s
    assert n["flow"]["mean_velocity_m_s"] == pytest.approx(0.5, rel=1e-12)
    re = 1000 * u * d_h / 1e-3
    assert n["flow"]["reynolds"] == pytest.approx(re, rel=1e-12)
    (st,) = n["dean"]["stations"]
    assert st["dean"] == pytest.approx(re * math.sqrt(d_h / (2 * 2e-3)), rel=1e-12)
    assert st["regime"] == "inside"
    assert "sqrt(D_h / (2 R))" in n["dean"]["definition"]
    json.dumps(n, allow_nan=False)  # plain JSON, no NaN / numpy types


def test_pressure_drop_against_flat_channel_formula() -> None:
    # Bruus (2008), Theoretical Microfluidics (from memory): dp ~ 12 mu L Q / ((1 - 0.63 h/w) h^3 w)
    n = design_numbers(_design(ARC, FLUID + 'rate = "1mL/min"'))
    w, h, q = 500e-6, 100e-6, 1e-6 / 60
    length = math.pi * 2e-3
    ref = 12 * 1e-3 * length * q / ((1 - 0.63 * h / w) * h**3 * w)
    assert n["pressure"]["length_m"] == pytest.approx(length, rel=1e-12)
    assert n["pressure"]["drop_Pa"] == pytest.approx(ref, rel=3e-3)
    assert n["pressure"]["drop_psi"] == pytest.approx(n["pressure"]["drop_Pa"] / 6894.757, rel=1e-6)


def test_velocity_input_gives_the_same_numbers_as_the_rate() -> None:
    by_rate = design_numbers(_design(ARC, FLUID + 'rate = "1.5mL/min"'))
    by_u = design_numbers(_design(ARC, FLUID + 'velocity = "0.5m/s"'))
    assert by_u["flow"]["rate_m3_s"] == pytest.approx(by_rate["flow"]["rate_m3_s"], rel=1e-12)
    assert by_u["pressure"]["drop_Pa"] == pytest.approx(by_rate["pressure"]["drop_Pa"], rel=1e-12)


def test_trapezoid_area_perimeter_and_hydraulic_diameter() -> None:
    n = design_numbers(_design(ARC, FLUID + 'rate = "1mL/min"', 'shape = "trapezoid"\nwidth = 500\nheight_inner = 80\nheight_outer = 120'))
    area = 500 * 100e-12
    perim = (500 + 80 + 120 + math.hypot(500, 40)) * 1e-6  # bottom, two sides, slanted top
    assert n["section"]["area_m2"] == pytest.approx(area, rel=1e-12)
    assert n["section"]["wetted_perimeter_m"] == pytest.approx(perim, rel=1e-12)
    assert n["section"]["hydraulic_diameter_m"] == pytest.approx(4 * area / perim, rel=1e-12)
    assert "trapezoid" in n["definitions"]


def test_chambers_report_expansion_ratio_and_both_reynolds_numbers() -> None:
    path = 'kind = "chambers"\ncount = 2\nchamber_length = 800\nchamber_width = 1500\nthroat_length = 400'
    n = design_numbers(_design(path, FLUID + 'rate = "1.5mL/min"'))
    assert n["dean"] is None
    c = n["chambers"]
    assert c["expansion_ratio"] == pytest.approx(3.0)
    assert c["throat"]["reynolds"] == pytest.approx(n["flow"]["reynolds"], rel=1e-12)
    d_hc = 2 * 1500e-6 * 100e-6 / 1600e-6
    assert c["chamber"]["reynolds"] == pytest.approx(1000 * (0.5 / 3) * d_hc / 1e-3, rel=1e-12)
    assert n["pressure"]["drop_Pa"] > 0


def test_spiral_dean_table_falls_turn_by_turn() -> None:
    n = design_numbers(_design('kind = "spiral"\ninner_radius = 3000\npitch = 700\nturns = 4', 'rate = "1.2mL/min"\ntemperature = 25'))
    de = [st["dean"] for st in n["dean"]["stations"]]
    assert len(de) == 5 and all(a > b for a, b in zip(de, de[1:]))


def test_cautions_and_biosafety() -> None:
    plain = design_numbers(_design(ARC, 'rate = "1mL/min"'))
    assert CAUTION_NEWTONIAN in plain["cautions"] and CAUTION_PRESSURE in plain["cautions"]
    assert CAUTION_BIOSAFETY not in plain["cautions"]
    blood = design_numbers(_design(ARC, 'rate = "1mL/min"\nfluid = "whole blood"\ndensity = 1060.0\nviscosity = 0.0035'))
    assert CAUTION_BIOSAFETY in blood["cautions"]


def test_flow_errors() -> None:
    d = _design(ARC, FLUID)
    with pytest.raises(DesignError, match="flow.rate"):
        design_numbers(d)
    for bad in (0.0, -1e-9):
        with pytest.raises(DesignError, match="flow.rate.*greater than 0"):
            design_numbers(d, dataclasses.replace(d.flow, rate=bad))
    with pytest.raises(DesignError, match="not both"):
        design_numbers(d, dataclasses.replace(d.flow, rate=1e-8, velocity=0.1))
    with pytest.raises(DesignError, match="flow.dean_low"):
        design_numbers(d, dataclasses.replace(d.flow, rate=1e-8, dean_low=40.0))
    with pytest.raises(DesignError, match="channel height"):
        design_numbers(d, dataclasses.replace(d.flow, rate=1e-8, particles=(150e-6,)))
