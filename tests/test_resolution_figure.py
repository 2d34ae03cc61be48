"""The resolution figure (issue 12 items 3-4) and the count of tets with two wall faces.

Sources: the figure's ranking is checked against the converged section flow (P2-P1, its own
Richardson estimate) and its calibration against OpenFOAM simpleFoam in
bench/resolution_calibration.py (bench/RESULTS.md); the wall-face count against a brute-force
loop over every tetrahedron's faces (definition, no source needed). Small made-up designs.
"""

from __future__ import annotations

import json

import numpy as np
import pytest

from chanmesh.cli import main
from chanmesh.design import loads_design


def arc(mesh: str, flow: str = 'velocity = "0.3m/s"', width: float = 150, height: float = 50) -> object:
    return loads_design(
        f'name = "fig"\nunit = "um"\n[section]\nwidth = {width}\nheight = {height}\n'
        f'[path]\nkind = "arc"\nradius = 600\nangle = 20\n[mesh]\n{mesh}\n[flow]\n{flow}\n'
    )


def test_figure_converges_monotonically_and_ranks_grids():
    """Core cells over the height 4, 6, 9: each finer grid has a smaller error on every figure
    (the order a second-order solver ranks them in; bench/RESULTS.md) and the finest is within
    the default limits of the converged section flow."""
    from chanmesh.resolution import resolution_figure

    errors = [resolution_figure(arc(f"cells_high = {n}"))["errors"] for n in (4, 6, 9)]
    for key in ("secondary_max", "secondary_mean", "flow_rate"):
        sizes = [abs(e[key]) for e in errors]
        assert sizes[0] > sizes[1] > sizes[2], (key, sizes)
    assert abs(errors[-1]["flow_rate"]) < 0.01


def test_figure_of_the_built_mesh_is_the_plan_grid_figure():
    """The build's figure uses the mesh's own inlet face: for hexahedra, the same nodes as the
    plan's section grid, so the same numbers."""
    from chanmesh.meshing.hex import mesh_hex
    from chanmesh.resolution import resolution_figure

    d = arc("cells_high = 5\ncells_along = 4")
    on_mesh = resolution_figure(d, mesh_hex(d))
    on_plan = resolution_figure(d)
    assert on_mesh["mesh_grid"]["nodes"] == on_plan["mesh_grid"]["nodes"]
    for key, value in on_plan["errors"].items():
        assert on_mesh["errors"][key] == pytest.approx(value, rel=1e-6, abs=1e-9)


def test_default_operating_point_is_stated():
    from chanmesh.resolution import DEFAULT_REYNOLDS, operating_point

    d = arc("cells_high = 4", flow='fluid = "water"')
    op = operating_point(d)
    assert "Re = 50" in op.source and DEFAULT_REYNOLDS == 50.0
    # Re = rho U D_h / mu with U = Q / A (the definition it is built from)
    from chanmesh.geometry.section import section_shape_of

    shape = section_shape_of(d)
    assert op.density * op.flow_rate / shape.area * shape.hydraulic_diameter / op.viscosity == pytest.approx(50.0, rel=1e-12)


def test_build_reports_the_figure_and_warns_on_a_coarse_mesh(tmp_path, capsys):
    design = tmp_path / "d.toml"
    design.write_text('name = "coarse"\nunit = "um"\n[section]\nwidth = 150\nheight = 50\n[path]\nkind = "arc"\n'
                      'radius = 600\nangle = 20\n[mesh]\ncells_high = 1\ncells_across = 3\nwall_ratio = 1\n'
                      '[flow]\nvelocity = "0.3m/s"\n')
    assert main(["build", str(design), "--out", str(tmp_path / "o"), "--format", "msh"]) == 0
    out = capsys.readouterr().out
    assert "resolution (at" in out and "warning: this mesh misses the developed section flow" in out
    manifest = json.loads((tmp_path / "o" / "manifest.json").read_text())
    record = manifest["resolution"]
    assert record["warning"] is True and record["passes"] is False
    assert set(record["errors"]) == {"secondary_max", "secondary_mean", "flow_rate"}
    assert record["operating_point"]["source"].startswith("flow.velocity")
    report = (tmp_path / "o" / "report.html").read_text()
    assert "Resolution of the section flow" in report and "the section mesh, walls labelled" in report


def test_tetrahedral_meshes_get_the_finite_volume_note_and_hexahedral_do_not():
    # measured in OpenFOAM (docs/resolution.md): on tetrahedra the finite-volume secondary flow is far
    # noisier than the hexahedra the figure was calibrated on, so a tet build says so under the figure
    from chanmesh.resolution import TETRAHEDRA_NOTE, summary_lines

    record = {"errors": {"secondary_max": -0.06, "secondary_mean": -0.1, "flow_rate": -0.015}, "passes": False,
              "warning": False, "dean": 8.2, "operating_point": {"flow_rate_mL_min": 0.2}}
    tet = summary_lines({**record, "mesh_grid": {"cell_kind": "triangle"}})
    hexa = summary_lines({**record, "mesh_grid": {"cell_kind": "quadrilateral"}})
    assert TETRAHEDRA_NOTE in tet and TETRAHEDRA_NOTE not in hexa
    assert tet[0] == hexa[0]


def test_tetrahedral_build_report_carries_the_finite_volume_note(tmp_path):
    design = tmp_path / "d.toml"
    design.write_text('name = "tetnote"\nunit = "um"\n[section]\nwidth = 120\nheight = 40\n[path]\nkind = "arc"\n'
                      'radius = 600\nangle = 30\n[mesh]\ncells = "tet"\ncells_high = 2\ncells_across = 4\n'
                      '[flow]\nvelocity = "0.3m/s"\n')
    assert main(["build", str(design), "--out", str(tmp_path / "o"), "--format", "msh", "--quiet"]) == 0
    report = (tmp_path / "o" / "report.html").read_text()
    assert "come from hexahedra; on tetrahedra a finite-volume solver" in report


def test_tets_with_two_wall_faces_match_a_brute_force_count():
    from chanmesh.meshing.tet import mesh_tet
    from chanmesh.meshing.wallcells import count_multi_wall_tets, wall_faces_per_tet

    d = arc("cells = \"tet\"\ncells_high = 2\ncells_across = 4", width=120, height=40)
    mesh = mesh_tet(d)
    wall = {tuple(sorted(f)) for b in mesh.facets_of("wall") for f in b.cells.tolist()}
    tets = np.concatenate([b.cells for b in mesh.volumes])
    brute = []
    for t in tets.tolist():
        faces = [tuple(sorted((t[a], t[b], t[c]))) for a, b, c in ((0, 1, 2), (0, 1, 3), (0, 2, 3), (1, 2, 3))]
        brute.append(sum(f in wall for f in faces))
    assert np.array_equal(wall_faces_per_tet(mesh), np.array(brute))
    assert count_multi_wall_tets(mesh) == sum(b >= 2 for b in brute) > 0
    assert mesh.info["tets_with_two_wall_faces"] == count_multi_wall_tets(mesh)


def test_preview_writes_the_section_picture(tmp_path):
    from PIL import Image

    design = tmp_path / "d.toml"
    design.write_text('name = "pv"\nunit = "um"\n[section]\nwidth = 150\nheight = 50\n[path]\nkind = "arc"\n'
                      'radius = 600\nangle = 20\n[mesh]\ncells_high = 3\n')
    assert main(["preview", str(design), "--out", str(tmp_path / "p"), "--size", "640x480"]) == 0
    img = np.asarray(Image.open(tmp_path / "p" / "pv.section.png").convert("RGB")).astype(int)
    assert img.shape[1] == 640 and img.std() > 10  # a drawing, not a blank canvas


# OpenFOAM simpleFoam on chanmesh hex meshes of a long arc (300 x 100 um, R 1.5 mm, De ~19),
# run by us (bench/resolution_calibration.py, table in bench/RESULTS.md): per cells_high, the
# figure's secondary-max and secondary-mean errors and the 3D finite-volume solver's error on the
# secondary maximum against its Richardson extrapolation (Celik et al. 2008, eqs. 3-4).
CALIBRATION = {  # cells_high: (figure secondary max, figure secondary mean, FV error secondary max)
    5: (-0.0077, -0.0950, 0.0572),
    8: (-0.0817, -0.0492, 0.0368),
    12: (-0.0455, -0.0250, 0.0156),
    16: (-0.0297, -0.0162, 0.0072),
    24: (-0.0182, -0.0094, 0.0027),
}


def test_calibrated_prediction_is_within_a_factor_of_two_and_ranks_as_the_3d_solver():
    """Issue 12's requirement: predict the FV solver's error on the secondary maximum within a
    factor of two and rank the grids as it does — on every calibrated grid, the 5-cell grid
    (where the maximum alone is right by cancellation) included."""
    from chanmesh.resolution import predicted_fv_error

    predicted = {}
    for n, (e_max, e_mean, fv) in CALIBRATION.items():
        p = predicted_fv_error({"secondary_max": e_max, "secondary_mean": e_mean, "flow_rate": None})
        predicted[n] = p["secondary_max"]
        assert max(p["secondary_max"] / fv, fv / p["secondary_max"]) < 2.0, n
    assert sorted(CALIBRATION, key=lambda n: predicted[n]) == sorted(CALIBRATION, key=lambda n: CALIBRATION[n][2])
    # the 5-cell grid fails the 5 % default limit, as the 3D solver's 5.7 % says it should
    from chanmesh.resolution import LIMITS

    assert predicted[5] > LIMITS["secondary_max"] and predicted[8] < LIMITS["secondary_max"]
