"""The OpenFOAM case writer without OpenFOAM: the polyMesh read back with foamlib (an independent
parser of the format) must satisfy OpenFOAM's mesh description (OpenFOAM User Guide, section
"Mesh description": owner < neighbour, internal faces first in upper-triangular order, boundary
faces grouped per patch, normals out of the owner), describe closed cells whose volumes add up
to the mesh volume VTK measures (divergence theorem), and carry the groups as patches and zones.
"""

from __future__ import annotations

import json
import subprocess
import sys

import numpy as np
import pytest
import pyvista as pv

from chanmesh.build import build
from chanmesh.cli import main
from chanmesh.design import loads_design
from tests._openfoam import arc_case_text, read_case

CASES = {
    "hex": arc_case_text("of-hex", "hex", 'cells_across = 6\ncells_along = 12\nsections = ["45deg"]',
                         outlets="split = [0.4, 0.6]"),
    "tet": arc_case_text("of-tet", "tet", 'cells_across = 4\nsections = ["30deg", "60deg"]'),
    "trapezoid": arc_case_text("of-trap", "hex", "cells_across = 4\ncells_along = 8",
                               section="shape = \"trapezoid\"\nwidth = 200\nheight_inner = 60\nheight_outer = 90"),
}


@pytest.fixture(scope="module", params=sorted(CASES))
def built(request, tmp_path_factory):
    design = loads_design(CASES[request.param])
    out = tmp_path_factory.mktemp(request.param)
    result = build(design, out, formats=("openfoam",))
    return request.param, design, result, read_case(out / "openfoam")


def _cell_sums(case, S, C):
    """Per cell: sum of outward area vectors and the divergence-theorem volume (1/3) sum x_f . S_f."""
    n = case.n_cells
    nf, ni = len(case.owner), len(case.neighbour)
    closure = np.zeros((n, 3))
    vol = np.zeros(n)
    xs = np.einsum("ij,ij->i", C, S)
    for d in range(3):
        closure[:, d] = np.bincount(case.owner, S[:, d], n) - np.bincount(case.neighbour, S[:ni, d], n)
    vol = (np.bincount(case.owner, xs, n) - np.bincount(case.neighbour, xs[:ni], n)) / 3.0
    assert nf == len(case.offsets) - 1
    return closure, vol


def test_ordering_and_addressing(built):
    kind, _, result, case = built
    ni = len(case.neighbour)
    # owner < neighbour; upper-triangular: by owner, then neighbour (OpenFOAM User Guide)
    assert np.all(case.owner[:ni] < case.neighbour)
    key = case.owner[:ni] * case.n_cells + case.neighbour
    assert np.all(np.diff(key) > 0)
    # every face distinct; each internal face joins two cells, each boundary face one
    sorted_faces = {tuple(sorted(case.face(i).tolist())) for i in range(len(case.owner))}
    assert len(sorted_faces) == len(case.owner)
    assert case.n_cells == result.mesh.n_volume_cells
    # every point used (checkMesh counts unused points as an error)
    assert np.all(np.bincount(case.nodes, minlength=len(case.points)) > 0)


def test_cells_are_closed_and_volumes_match_vtk(built):
    """Closed cells: the outward area vectors of each cell sum to zero. Volume: the divergence
    theorem V = (1/3) sum x_f . S_f per cell, each positive, totalling VTK's cell volumes of the
    same mesh (pyvista's compute_cell_sizes)."""
    kind, _, result, case = built
    S, C = case.area_vectors(), case.centres()
    closure, vol = _cell_sums(case, S, C)
    scale = np.abs(S).max()
    assert np.abs(closure).max() < 1e-9 * scale
    assert vol.min() > 0
    m = result.mesh
    cells = np.concatenate([np.column_stack([np.full(len(b.cells), b.cells.shape[1]), b.cells]).ravel() for b in m.volumes])
    types = np.concatenate([np.full(len(b.cells), {"tetra": pv.CellType.TETRA, "hexahedron": pv.CellType.HEXAHEDRON,
                                                     "wedge": pv.CellType.WEDGE}[b.type]) for b in m.volumes])
    vtk_volume = pv.UnstructuredGrid(cells, types, m.points).compute_cell_sizes(length=False, area=False)["Volume"].sum()
    assert vol.sum() == pytest.approx(vtk_volume, rel=1e-9)


def test_boundary_faces_point_out_of_their_owner(built):
    kind, _, _, case = built
    S, C = case.area_vectors(), case.centres()
    ni = len(case.neighbour)
    centre = np.zeros((case.n_cells, 3))
    n = case.n_cells
    for d in range(3):  # cell centre estimate: mean of its face centres
        centre[:, d] = (np.bincount(case.owner, C[:, d], n) + np.bincount(case.neighbour, C[:ni, d], n))
    faces_per_cell = np.bincount(case.owner, minlength=n) + np.bincount(case.neighbour, minlength=n)
    centre /= faces_per_cell[:, None]
    outward = np.einsum("ij,ij->i", C - centre[case.owner], S)
    assert np.all(outward > 0)


def test_patches_and_zones(built):
    kind, design, result, case = built
    names = [name for name, _ in case.boundary]
    groups = [g.name for g in result.mesh.groups if g.dim == 2 and not g.name.startswith("section_")]
    assert names == groups
    ni = len(case.neighbour)
    start = ni
    S = case.area_vectors()
    for name, entry in case.boundary:
        assert entry["startFace"] == start  # contiguous, in order, after the internal faces
        start += entry["nFaces"]
        assert entry["type"] == ("wall" if name == "wall" else "patch")
        # patch area = the group's measured area in the manifest
        area = np.linalg.norm(S[entry["startFace"]:entry["startFace"] + entry["nFaces"]], axis=1).sum()
        measured = next(g["measured"] for g in result.manifest["groups"] if g["name"] == name)
        assert area == pytest.approx(measured, rel=1e-9)
    assert start == len(case.owner)
    inlet = next(e for n, e in case.boundary if n == "inlet")
    if design.section.shape == "rectangle":  # exact rectangle: w x h
        a = np.linalg.norm(S[inlet["startFace"]:inlet["startFace"] + inlet["nFaces"]], axis=1).sum()
        assert a == pytest.approx(200e-6 * 80e-6, rel=1e-12)
    # zones: internal faces only, zone normal (flipMap applied) downstream, area = the section's
    from chanmesh.geometry.centerline import centerline_of
    from chanmesh.geometry.stations import mesh_station_arc_lengths

    stations = mesh_station_arc_lengths(design)
    assert [z for z, _ in case.zones] == [f"section_{k + 1}" for k in range(len(stations))]
    tangents = centerline_of(design).tangents(np.asarray(stations))
    for (name, zone), t in zip(case.zones, tangents):
        labels = np.asarray(zone["faceLabels"])
        flip = np.asarray(zone["flipMap"], bool)
        assert np.all(labels < ni)
        normal = S[labels] * np.where(flip, -1.0, 1.0)[:, None]
        assert np.all(normal @ t > 0)
        measured = next(g["measured"] for g in result.manifest["groups"] if g["name"] == name)
        assert np.linalg.norm(S[labels], axis=1).sum() == pytest.approx(measured, rel=1e-9)


def test_case_files_and_inlet_rate(built):
    """0/U carries exactly the design's rate through the inlet; the .foam marker exists; the
    manifest lists the case files by their path in the output folder."""
    from foamlib import FoamFile

    kind, design, result, case = built
    folder = result.folder / "openfoam"
    assert (folder / f"{design.name}.foam").is_file()
    names = {f["name"] for f in result.manifest["files"]}
    assert {"openfoam/constant/polyMesh/faces", "openfoam/0/U", "openfoam/system/controlDict"} <= names
    u = FoamFile(folder / "0" / "U")["boundaryField"]["inlet"]
    rate = 50e-9 / 60.0
    inlet = next(e for n, e in case.boundary if n == "inlet")
    S = case.area_vectors()[inlet["startFace"]:inlet["startFace"] + inlet["nFaces"]]
    if design.section.shape == "rectangle":
        assert u["type"] == "fixedValue"
        values = np.asarray(u["value"], float)
        assert -np.einsum("ij,ij->i", values, S).sum() == pytest.approx(rate, rel=1e-12)
        # fully developed profile (White 2006, eq. 3-48) at the face centres, one scale factor
        # for all faces (the exact discrete rate); the factor is the mean velocity up to the
        # midpoint-rule error of the coarse grid
        from chanmesh.numbers.duct import velocity_over_mean

        centres = case.centres()[inlet["startFace"]:inlet["startFace"] + inlet["nFaces"]]
        shape = velocity_over_mean(centres[:, 0] - 600e-6, centres[:, 2], 200e-6, 80e-6)
        scale = np.linalg.norm(values, axis=1) / shape
        assert np.ptp(scale) < 1e-9 * scale.max()
        assert scale[0] == pytest.approx(rate / (200e-6 * 80e-6), rel=0.25)
    else:
        assert u["type"] == "flowRateInletVelocity"
        assert u["volumetricFlowRate"] == pytest.approx(rate, rel=1e-12)
    nu = FoamFile(folder / "constant" / "transportProperties")["nu"]
    # water at 25 C: nu = mu / rho = 0.8900e-3 / 997.05 (IAPWS, through numbers/fluid.py)
    assert float(nu.value) == pytest.approx(0.89e-3 / 997.05, rel=2e-3)


def test_a_design_without_flow_is_refused_before_meshing(tmp_path):
    d = tmp_path / "d.toml"
    d.write_text(arc_case_text("noflow", "hex", "cells_across = 4", flow=""))
    proc = subprocess.run([sys.executable, "-m", "chanmesh", "build", str(d), "--format", "openfoam", "--out",
                           str(tmp_path / "o"), "--quiet"], capture_output=True, text=True, timeout=120)
    assert proc.returncode == 2
    lines = proc.stderr.strip().splitlines()
    assert len(lines) == 1 and "flow.rate" in lines[0] and "[flow]" in lines[0]
    assert not (tmp_path / "o" / "openfoam").exists()


def test_rebuild_replaces_the_case_folder(tmp_path, capsys):
    d = tmp_path / "d.toml"
    d.write_text(arc_case_text("again", "hex", "cells_across = 4\ncells_along = 6"))
    out = tmp_path / "o"
    for _ in range(2):
        assert main(["build", str(d), "--format", "openfoam", "--out", str(out), "--quiet"]) == 0
    manifest = json.loads((out / "manifest.json").read_text())
    for entry in manifest["files"]:
        assert (out / entry["name"]).stat().st_size == entry["bytes"]
    assert not [p for p in out.iterdir() if p.name.startswith(".")]


def test_a_users_own_openfoam_folder_is_not_replaced(tmp_path, capsys):
    """Only a case folder the previous build listed in its manifest is replaced; a folder of the
    same name that chanmesh did not write stops the build with one line (exit 2)."""
    d = tmp_path / "d.toml"
    d.write_text(arc_case_text("mine", "hex", "cells_across = 4\ncells_along = 6"))
    out = tmp_path / "o"
    (out / "openfoam").mkdir(parents=True)
    (out / "openfoam" / "notes.txt").write_text("mine")
    assert main(["build", str(d), "--format", "openfoam", "--out", str(out), "--quiet"]) == 2
    assert "in the way" in capsys.readouterr().err
    assert (out / "openfoam" / "notes.txt").read_text() == "mine"
