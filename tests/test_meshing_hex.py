"""The structured hexahedral mesher: cell validity, volumes, grading, conformity, labels."""

from __future__ import annotations

import math

import numpy as np
import pytest
from _hex_designs import PATHS, TRAPEZOID, hex_design

from chanmesh.errors import DesignError
from chanmesh.geometry.reference import reference_of
from chanmesh.meshing.hex import estimate_hex_cells, mesh_hex
from chanmesh.meshing.measure import cell_volumes, group_measures
from chanmesh.meshing.registry import MESHERS
from chanmesh.meshing.verify import FACES, check_boundary_tagging, face_use_counts
from chanmesh.post.quality import mesh_quality

ALL = sorted(PATHS)


@pytest.mark.parametrize("path", ALL)
def test_every_cell_is_a_positive_hexahedron(path):
    mesh = mesh_hex(hex_design(path))
    assert [b.type for b in mesh.volumes] == ["hexahedron"]
    assert [b.type for b in mesh.facets] == ["quad"]
    vols = cell_volumes(mesh.points, mesh.volumes[0])
    assert vols.min() > 0
    assert mesh.n_volume_cells == estimate_hex_cells(hex_design(path))
    # outward facets: each boundary quad's area vector agrees with the matching cell face taken
    # in the outward order of verify.FACES
    cell_faces = mesh.volumes[0].cells[:, np.array(FACES["hexahedron"][1])].reshape(-1, 4)
    quads = mesh.facets[0].cells
    rows, inverse = np.unique(np.sort(np.concatenate([quads, cell_faces]), axis=1), axis=0, return_inverse=True)
    inverse = inverse.ravel()
    owner = np.full(len(rows), -1)
    owner[inverse[len(quads):]] = np.arange(len(cell_faces))
    match = cell_faces[owner[inverse[: len(quads)]]]
    assert np.all(np.einsum("ij,ij->i", _area(mesh.points, quads), _area(mesh.points, match)) > 0)


def _area(p, q):
    return np.cross(p[q[:, 2]] - p[q[:, 0]], p[q[:, 3]] - p[q[:, 1]])


def test_registry_and_determinism():
    design = hex_design("serpentine")
    a = MESHERS["hex"].mesh(design)
    b = mesh_hex(design)
    assert np.array_equal(a.points, b.points)
    assert np.array_equal(a.volumes[0].cells, b.volumes[0].cells)
    assert np.array_equal(a.facets[0].cells, b.facets[0].cells)
    assert MESHERS["hex"].estimate(design) == a.n_volume_cells


@pytest.mark.parametrize("path", ["chambers", "chambers_one_sided"])
def test_chambers_volume_and_wall_area_exact(path):
    # the chambers solid is a union of boxes, so its mesh is exact: area x height
    # (elementary geometry), compared with chanmesh.geometry.reference
    import hand_reference as hand

    design = hex_design(path)
    ref = reference_of(design)
    got = group_measures(mesh_hex(design))
    assert got["fluid"] == pytest.approx(ref.volume, rel=1e-12, abs=0)
    assert got["wall"] == pytest.approx(ref.wall_area, rel=1e-12, abs=0)
    assert got["inlet"] == pytest.approx(ref.inlet_area, rel=1e-12, abs=0)
    # and by hand, sharing no code with chanmesh (tests/hand_reference.py)
    section = {"width": 200, "height": 60}
    numbers = {"chambers": {"kind": "chambers", "count": 2, "chamber_length": 400, "chamber_width": 500,
                            "throat_length": 300, "inlet_length": 100, "outlet_length": 100},
               "chambers_one_sided": {"kind": "chambers", "count": 3, "chamber_length": 300, "chamber_width": 450,
                                      "throat_length": 200, "one_sided": True}}[path]
    assert got["fluid"] == pytest.approx(hand.volume(section, numbers), rel=1e-12, abs=0)
    assert got["wall"] == pytest.approx(hand.chambers_wall_area(section, numbers), rel=1e-12, abs=0)


@pytest.mark.parametrize("path,section", [("arc", None), ("spiral", TRAPEZOID), ("serpentine", None)])
def test_curved_volume_converges_at_second_order(path, section):
    """Volume against Pappus's theorem in the general form (Goodman & Goodman 1969), via
    chanmesh.geometry.reference. A curved wall drawn as chords of angle d loses a fraction
    d^2 / 6 of the area under it (inscribed polygon, R^2 (d - sin d) / 2 per chord; any
    geometry handbook), so the error must fall as the second power of the cell length: the
    slope of log(error) against log(cells along) is fitted (np.polyfit) and must lie in -2 +/- 0.15."""
    design = hex_design(path, **({"section": section} if section else {}))
    ref = reference_of(design).volume
    counts, errors = [], []
    for scale in (1.0, 2.0, 4.0):
        mesh = mesh_hex(design, scale=scale)
        counts.append(mesh.info["cells_along"])
        errors.append(abs(cell_volumes(mesh.points, mesh.volumes[0]).sum() / ref - 1.0))
    slope = np.polyfit(np.log(counts), np.log(errors), 1)[0]
    assert -2.15 < slope < -1.85, (counts, errors)
    if path == "arc":
        # an annular sector cut into n equal chord cells keeps exactly sin(d) / d of its volume
        d = math.radians(90.0) / np.array(counts)
        assert np.allclose(errors, 1.0 - np.sin(d) / d, rtol=1e-6)


def _widths_across(mesh, design):
    """Cell widths across the channel at the inlet (node layer k = 0, bottom row)."""
    nj = mesh.info["cells_high"]
    ni = mesh.info["cells_across"]
    row = mesh.points[: (ni + 1) * (nj + 1)].reshape(ni + 1, nj + 1, 3)[:, 0, :]
    return np.linalg.norm(np.diff(row, axis=0), axis=1)


def test_first_cell_is_the_requested_height():
    # the requested first_cell is the reference (the design's own demand), to 1 %
    # cells_along = 40: chords of 2.25 deg, so faceting moves the measured height by cos(d/2) - 1 < 1e-3
    design = hex_design("arc", mesh="first_cell = 2.5\ncells_high = 8\ncells_along = 40")
    mesh = mesh_hex(design)
    assert _widths_across(mesh, design)[0] == pytest.approx(2.5e-6, rel=0.01)
    assert _widths_across(mesh, design)[-1] == pytest.approx(2.5e-6, rel=0.01)
    q = mesh_quality(mesh)
    assert q.wall_cell_min == pytest.approx(2.5e-6, rel=0.01)
    assert q.wall_cell_max == pytest.approx(2.5e-6, rel=0.01)


def test_neighbouring_cells_grow_by_the_wall_ratio():
    # a geometric progression by definition: each wall-layer cell is wall_ratio times its
    # wall-side neighbour, up to the core cell (width / cells_across), which it never exceeds
    design = hex_design("arc", mesh="wall_ratio = 1.3\ncells_across = 10\nfirst_cell = 5")
    w = _widths_across(mesh_hex(design), design)
    core = 200e-6 / 10
    grows = np.abs(w[1:] / w[:-1] - 1.3) < 1e-9
    ramp = int(np.argmin(grows)) + 1  # wall-layer cells at the u = -w/2 wall, from first_cell = 5 um
    assert ramp >= 3 and w[0] == pytest.approx(5e-6, rel=1e-9)
    assert np.allclose(w[::-1][:ramp], w[:ramp], rtol=1e-9)  # the same layers at the other wall
    middle = w[ramp:-ramp]  # the core: uniform, the core cell rounded to a whole count
    assert np.allclose(middle, middle[0], rtol=1e-9) and 0.8 * core <= middle[0] <= core * (1 + 1e-9)


def test_scale_refines_counts_first_cell_and_ratio():
    # scale 2 halves every size and takes the square root of the growth ratio, so every count
    # doubles up to the rounding of the wall-layer and core counts (one cell each per wall)
    base = hex_design("arc", mesh="wall_ratio = 1.44\ncells_high = 4")
    m1, m2 = mesh_hex(base), mesh_hex(base, scale=2.0)
    for key in ("cells_across", "cells_high"):
        assert abs(m2.info[key] - 2 * m1.info[key]) <= 3
    assert m2.info["growth_ratio"] == pytest.approx(math.sqrt(1.44), rel=1e-12)
    fixed = hex_design("arc", mesh="first_cell = 4")
    assert mesh_hex(fixed, scale=2.0).info["wall_cell"] == pytest.approx(2e-6, rel=1e-9)


@pytest.mark.parametrize("path", ["serpentine", "chambers", "chambers_one_sided", "spiral"])
def test_mesh_is_conforming(path):
    """No hanging nodes: every face is used by one cell (boundary, and then tagged once) or by
    exactly two; faces counted from the cells must match 6 per hexahedron; every node is used."""
    mesh = mesh_hex(hex_design(path, outlets="split = [0.25, 0.5, 0.25]"))
    counts = check_boundary_tagging(mesh)
    faces, uses = face_use_counts(mesh)[4]
    assert uses.max() == 2
    assert counts["boundary_facets"] + 2 * counts["interior_faces"] == len(FACES["hexahedron"][1]) * mesh.n_volume_cells
    assert len(np.unique(mesh.volumes[0].cells)) == len(mesh.points)
    # a hidden gap would add boundary area: the tagged boundary must equal the exact one
    ref = reference_of(hex_design(path))
    areas = group_measures(mesh)
    tol = 1e-12 if path.startswith("chambers") else 5e-3
    assert areas["wall"] == pytest.approx(ref.wall_area, rel=tol)


def test_split_outlet_on_grid_lines_and_group_order():
    design = hex_design("arc", outlets="split = [0.2, 0.5, 0.3]")
    mesh = mesh_hex(design)
    assert [(g.name, g.dim, g.tag) for g in mesh.groups] == [
        ("inlet", 2, 1), ("outlet_1", 2, 2), ("outlet_2", 2, 3), ("outlet_3", 2, 4), ("wall", 2, 5), ("fluid", 3, 6),
    ]
    areas = group_measures(mesh)
    ref = reference_of(design).outlet_area
    for name, frac in zip(("outlet_1", "outlet_2", "outlet_3"), (0.2, 0.5, 0.3)):
        assert areas[name] == pytest.approx(frac * ref, rel=1e-12)
    # fraction measured from u = -w/2 (the inner wall of the arc), as the tetrahedral labels do
    out1 = mesh.facets_of("outlet_1")[0].cells
    radius = np.hypot(mesh.points[out1, 0], mesh.points[out1, 1])
    assert radius.max() == pytest.approx(400e-6 - 100e-6 + 0.2 * 200e-6, rel=1e-12)


def test_too_many_cells_is_a_design_error():
    design = hex_design("spiral", mesh="max_cells = 1000")
    with pytest.raises(DesignError, match="mesh.max_cells"):
        mesh_hex(design)


def test_chamber_end_walls_get_the_first_cell():
    # along the flow, the cells touching each chamber end wall are first_cell long (the request)
    from chanmesh.meshing.hexplan import plan_hex

    design = hex_design("chambers", mesh="first_cell = 3")
    plan = plan_hex(design)
    path = design.path
    walls = [path.inlet_length + path.throat_length + k * (path.chamber_length + path.throat_length) for k in range(path.count)]
    walls += [w + path.chamber_length for w in walls]
    for x in walls:
        k = int(np.argmin(np.abs(plan.s - x)))
        assert plan.s[k] == pytest.approx(x, abs=1e-12)
        assert plan.s[k + 1] - plan.s[k] == pytest.approx(3e-6, rel=0.01)
        assert plan.s[k] - plan.s[k - 1] == pytest.approx(3e-6, rel=0.01)
