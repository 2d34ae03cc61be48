"""Every family's mesh against hand-worked geometry (tests/hand_reference.py, which shares no
code with chanmesh): volume, end faces' areas, centres and directions, plan extents.

The mesh is measured from its own node coordinates; cell volumes are computed by VTK (through
pyvista), a general reference library. Tolerances: chambers are unions of boxes, so their
meshes are exact to round-off; curved walls drawn as chords of angle d lose a fraction d^2 / 6
of the area under them (inscribed polygon, R^2 (d - sin d) / 2 per chord, elementary
geometry), and the hexahedral mesher puts at least one cell per 5 degrees of turn, so
(5 deg)^2 / 6 = 1.3e-3 bounds the hexahedral volume error (2e-3 allowed); gmsh's tetrahedra
follow the exact OCC surfaces more closely (measured: 5e-6 to 3e-5 on rectangles, 1.3e-4 and
3.3e-4 where a trapezoid's slanted top is a faceted cone; 6e-4 allowed, still 30x smaller than
a 2 % change of length). Every comparison sets abs=0: pytest.approx's default abs=1e-12 alone
would accept any volume of 1e-11 m^3 within 10 %.
"""

from __future__ import annotations

import math
from functools import lru_cache

import numpy as np
import pytest
import pyvista as pv
from scipy.integrate import quad

import hand_reference as hand
from chanmesh.design import loads_design
from chanmesh.meshing.registry import MESHERS

RECT = {"shape": "rectangle", "width": 200, "height": 50}
TRAP = {"shape": "trapezoid", "width": 200, "height_inner": 40, "height_outer": 70}
CASES = {
    "arc": (RECT, {"kind": "arc", "radius": 600, "angle": 120, "inlet_length": 150, "outlet_length": 250}),
    "arc-trapezoid": (TRAP, {"kind": "arc", "radius": 500, "angle": 200}),
    "spiral": (TRAP, {"kind": "spiral", "inner_radius": 800, "pitch": 400, "turns": 1.25, "outlet_length": 200}),
    "serpentine": (RECT, {"kind": "serpentine", "radius": 250, "straight": 600, "periods": 2,
                          "inlet_length": 150, "outlet_length": 100}),
    "chambers": (RECT, {"kind": "chambers", "count": 2, "chamber_length": 300, "chamber_width": 500,
                        "throat_length": 200, "inlet_length": 100, "outlet_length": 100}),
    "chambers-one-sided": (RECT, {"kind": "chambers", "count": 3, "chamber_length": 250, "chamber_width": 450,
                                  "throat_length": 200, "one_sided": True}),
}
VOLUME_TOL = {"hex": 2e-3, "tet": 6e-4}


def _toml(name: str, section: dict, path: dict, cells: str) -> str:
    def val(v):  # noqa: ANN001, ANN202
        return ("true" if v else "false") if isinstance(v, bool) else (f'"{v}"' if isinstance(v, str) else repr(v))
    lines = [f'name = "{name}"', 'unit = "um"', "[section]"] + [f"{k} = {val(v)}" for k, v in section.items()]
    lines += ["[path]"] + [f"{k} = {val(v)}" for k, v in path.items()]
    lines += ["[mesh]", f'cells = "{cells}"', "cells_across = 4", "wall_ratio = 1.1"]
    return "\n".join(lines) + "\n"


@lru_cache(maxsize=None)
def _mesh(case: str, cells: str):  # noqa: ANN202
    section, path = CASES[case]
    design = loads_design(_toml(case, section, path, cells))
    return MESHERS[cells].mesh(design)


def _grid(mesh) -> pv.UnstructuredGrid:  # noqa: ANN001
    (block,) = mesh.volumes
    kind = {"tetra": pv.CellType.TETRA, "hexahedron": pv.CellType.HEXAHEDRON}[block.type]
    return pv.UnstructuredGrid({kind: block.cells}, mesh.points)


def _face(mesh, prefix: str) -> tuple[float, np.ndarray, np.ndarray]:  # noqa: ANN001
    """Area, area-weighted centroid and unit area vector of every facet in groups named ``prefix*``,
    each facet split into triangles from its first node (planar end faces)."""
    tags = [g.tag for g in mesh.groups if g.dim == 2 and g.name.startswith(prefix)]
    area, moment, vector = 0.0, np.zeros(3), np.zeros(3)
    for b in mesh.facets:
        cells = b.cells[np.isin(b.tags, tags)]
        p = mesh.points
        for j in range(1, cells.shape[1] - 1):
            a, c, d = p[cells[:, 0]], p[cells[:, j]], p[cells[:, j + 1]]
            cross = 0.5 * np.cross(c - a, d - a)
            # orient every triangle alike before summing (facet orientation is not part of the test)
            cross *= np.sign(cross @ cross.sum(axis=0))[:, None]
            ar = np.linalg.norm(cross, axis=1)
            area += ar.sum()
            moment += (ar[:, None] * (a + c + d) / 3).sum(axis=0)
            vector += cross.sum(axis=0)
    return area, moment / area, vector / np.linalg.norm(vector)


@pytest.mark.parametrize("cells", ["hex", "tet"])
@pytest.mark.parametrize("case", sorted(CASES))
def test_volume_is_the_hand_worked_volume(case, cells):
    section, path = CASES[case]
    vols = _grid(_mesh(case, cells)).compute_cell_sizes(length=False, area=False, volume=True).cell_data["Volume"]
    assert vols.min() > 0
    tol = 1e-9 if case.startswith("chambers") else VOLUME_TOL[cells]
    assert vols.sum() == pytest.approx(hand.volume(section, path), rel=tol, abs=0)


@pytest.mark.parametrize("cells", ["hex", "tet"])
@pytest.mark.parametrize("case", sorted(CASES))
def test_end_faces_sit_at_the_hand_worked_ends_facing_along_the_path(case, cells):
    section, path = CASES[case]
    mesh = _mesh(case, cells)
    line = hand.centreline(path)
    w, a, b, area, uc = hand.section_numbers(section)
    for prefix, point, heading in (("inlet", line.start, line.start_heading), ("outlet", line.end, line.end_heading)):
        got_area, centre, normal = _face(mesh, prefix)
        assert got_area == pytest.approx(area, rel=1e-9, abs=0)  # a plane section: exact
        t = np.array([math.cos(heading), math.sin(heading)])
        n = np.array([t[1], -t[0]])  # n = t x z: the section's u direction
        expected = np.array(point) + uc * n
        # exact nodes (hex) or OCC's spline pipe (tet, within ~0.2 um measured): 1 um allowed
        assert centre[:2] == pytest.approx(expected, abs=1e-6), prefix
        assert abs(normal[:2] @ t) == pytest.approx(1.0, abs=1e-6), prefix


@pytest.mark.parametrize("cells", ["hex", "tet"])
@pytest.mark.parametrize("case", ["serpentine", "chambers", "chambers-one-sided"])
def test_plan_extents_are_the_hand_worked_box(case, cells):
    section, path = CASES[case]
    p = _mesh(case, cells).points
    got = (p[:, 0].min(), p[:, 0].max(), p[:, 1].min(), p[:, 1].max())
    # a node lands on each extreme of a hexahedral mesh up to the sagitta of one chord,
    # (R + w/2)(1 - cos(d/2)) <= 0.4 um at d = 5 deg; tetrahedral wall nodes sit on the exact
    # surface, but none need fall on the apex: s^2 / (8 R) ~ 1 um for 50 um edges. 3 um allowed.
    assert got == pytest.approx(hand.plan_box(section, path), abs=3e-6)


@pytest.mark.parametrize("cells", ["hex", "tet"])
@pytest.mark.parametrize("case", ["chambers", "chambers-one-sided"])
def test_chambers_wall_area_by_hand(case, cells):
    section, path = CASES[case]
    mesh = _mesh(case, cells)
    tag = mesh.group("wall").tag
    areas = 0.0
    for b in mesh.facets:
        c = b.cells[b.tags == tag]
        p = mesh.points
        for j in range(1, c.shape[1] - 1):
            areas += 0.5 * np.linalg.norm(np.cross(p[c[:, j]] - p[c[:, 0]], p[c[:, j + 1]] - p[c[:, 0]]), axis=1).sum()
    assert areas == pytest.approx(hand.chambers_wall_area(section, path), rel=1e-9, abs=0)


def test_spiral_closed_form_against_numerical_quadrature():
    # the closed form of hand_reference against scipy's adaptive quadrature of the polar
    # arc-length integrand sqrt(r^2 + (dr/dtheta)^2) (QUADPACK, Piessens et al. 1983)
    r0, pitch, turns = 800e-6, 400e-6, 1.25
    c = pitch / (2 * math.pi)
    numeric, _ = quad(lambda th: math.hypot(r0 + c * th, c), 0.0, 2 * math.pi * turns, epsabs=0, epsrel=1e-13)
    assert hand.spiral_length(r0, pitch, turns) == pytest.approx(numeric, rel=1e-12, abs=0)


def test_serpentine_length_formula_by_hand():
    # (2 periods + 1) straights and 2 periods half circles: 5 x 600 + 4 pi 250 + 150 + 100 um
    line = hand.centreline(CASES["serpentine"][1])
    assert line.length == pytest.approx((3000 + 1000 * math.pi + 250) * 1e-6, rel=1e-15, abs=0)
    assert line.end == pytest.approx((700e-6, 2000e-6), rel=1e-15, abs=0)
