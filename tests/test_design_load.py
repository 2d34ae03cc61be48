"""Design files: units, defaults, and one test per bad-input rule (the message is asserted)."""

from __future__ import annotations

import math

import pytest

from chanmesh.design import loads_design
from chanmesh.errors import DesignError
from tests.conftest import design_text, small_design


def test_lengths_are_converted_to_metres_once():
    d = small_design("arc")
    assert d.section.width == 200e-6
    assert d.path.radius == pytest.approx(1e-3, rel=1e-15)
    mm = small_design("arc", unit="mm", section={"width": 0.2, "height": 0.05}, path={"radius": 1.0})
    assert mm.section.width == pytest.approx(d.section.width, rel=1e-15)


def test_a_length_may_carry_its_own_unit():
    d = small_design("arc", path={"radius": "1.5mm"})
    assert d.path.radius == pytest.approx(1.5e-3, rel=1e-15)


def test_defaults_fill_optional_tables():
    d = loads_design('name = "x"\n[section]\nwidth = 100\nheight = 40\n[path]\nkind = "arc"\nradius = 500\nangle = 45\n')
    assert d.mesh.cells == "hex" and d.mesh.cells_across is None and d.mesh.max_cells == 5_000_000
    assert d.outlets.names == ("outlet",)


def _error(text: str) -> DesignError:
    with pytest.raises(DesignError) as info:
        loads_design(text)
    return info.value


@pytest.mark.parametrize(
    "kw, key, words",
    [
        ({"section": {"width": -5, "height": 50}}, "section.width", "greater than 0"),
        ({"section": {"width": 200, "height": 0}}, "section.height", "greater than 0"),
        ({"path": {"radius": 80}}, "path.radius", "half the section width (100 um)"),
        ({"path": {"angle": 360}}, "path.angle", "(0, 360)"),
        ({"path": {"angle": 0}}, "path.angle", "(0, 360)"),
        ({"outlets": {"split": [0.3, 0.6]}}, "outlets.split", "sum to 1"),
        ({"outlets": {"split": [1.2, -0.2]}}, "outlets.split[1]", "greater than 0"),
        ({"mesh": {"cells": "poly"}}, "mesh.cells", "'tet', 'hex'"),
        ({"mesh": {"wall_ratio": 5.0}}, "mesh.wall_ratio", "[1, 3]"),
        ({"mesh": {"cells_across": 0}}, "mesh.cells_across", "from 1 to 2000"),
        ({"name": "../escape"}, "name", "path separators"),
        ({"name": "a/b"}, "name", "path separators"),
    ],
)
def test_each_arc_rule_names_key_value_and_range(kw, key, words):
    err = _error(design_text("arc", **kw))
    assert err.key == key
    assert str(err).startswith(key)
    assert words in str(err)


def test_spiral_pitch_must_leave_a_wall_between_turns():
    err = _error(design_text("spiral", path={"pitch": 205}))
    assert err.key == "path.pitch" and "210 um" in str(err) and "205 um" in str(err)


def test_serpentine_radius_must_separate_neighbouring_runs():
    err = _error(design_text("serpentine", path={"radius": 102}))
    assert err.key == "path.radius" and "105 um" in str(err)


def test_chambers_must_be_wider_than_the_channel_and_rectangular():
    err = _error(design_text("chambers", path={"chamber_width": 150}))
    assert err.key == "path.chamber_width" and "wider than the channel" in str(err)
    err = _error(design_text("chambers", section={"shape": "trapezoid", "width": 200, "height_inner": 40, "height_outer": 60}))
    assert err.key == "section.shape"


def test_unknown_key_suggests_the_closest_known_key():
    err = _error(design_text("arc", path={"raduis": 900}).replace("radius = 1000\n", ""))
    assert err.key == "path.raduis" and "did you mean 'radius'" in str(err)


def test_missing_required_key_and_table():
    err = _error(design_text("arc").replace("radius = 1000\n", ""))
    assert err.key == "path.radius" and "required" in str(err)
    err = _error('name = "x"\n[path]\nkind = "arc"\nradius = 500\nangle = 45\n')
    assert err.key == "[section]"


def test_wrong_types_are_named():
    err = _error(design_text("arc", path={"angle": "ninety"}))
    assert err.key == "path.angle" and "must be a number" in str(err)
    err = _error(design_text("serpentine", path={"periods": 1.5}))
    assert err.key == "path.periods" and "whole number" in str(err)


def test_not_toml_is_a_design_error():
    err = _error("this is = not [ toml")
    assert "not a valid TOML" in str(err)


def test_trapezoid_needs_both_heights():
    err = _error(design_text("arc", section={"shape": "trapezoid", "width": 200, "height_inner": 40}))
    assert err.key == "section.height_outer"


def test_resolved_design_is_plain_data():
    d = small_design("spiral")
    data = d.to_dict()
    assert data["path"]["kind"] == "spiral"
    assert math.isclose(data["path"]["pitch"], 4e-4)
