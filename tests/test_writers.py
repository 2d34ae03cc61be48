"""Every writer round-trips through a general reader (meshio, or gmsh for its own formats)
with the group names and tags intact (the habit of meshio's own tests/test_*.py)."""

from __future__ import annotations

import json

import gmsh
import meshio
import numpy as np
import pytest

from chanmesh.build import build
from chanmesh.writers import FORMATS, WriteOptions
from tests.conftest import small_design

NAMES = ["inlet", "outlet_1", "outlet_2", "wall", "fluid"]


@pytest.fixture(scope="module")
def built(tmp_path_factory):
    out = tmp_path_factory.mktemp("fmt")
    d = small_design("arc", outlets={"split": [0.5, 0.5]})
    # every file format; the OpenFOAM case needs [flow] and has its own tests (test_openfoam_*.py)
    return build(d, out, formats=tuple(n for n, f in FORMATS.items() if f.source != "case"))


def _counts_by_tag(mesh: meshio.Mesh, key: str) -> dict[int, int]:
    out: dict[int, int] = {}
    for tags in mesh.cell_data[key]:
        for t, n in zip(*np.unique(tags, return_counts=True)):
            out[int(t)] = out.get(int(t), 0) + int(n)
    return out


def _expected(result) -> dict[int, int]:
    return {g["tag"]: g["entities"] for g in result.manifest["groups"]}


@pytest.mark.parametrize("version", ["4.1", "2.2"])
def test_msh_keeps_names_and_tags(tmp_path, version):
    d = small_design("arc", outlets={"split": [0.5, 0.5]})
    r = build(d, tmp_path, formats=("msh",), options=WriteOptions(msh_version=version))
    m = meshio.read(tmp_path / "t.msh")
    assert {k: int(v[0]) for k, v in m.field_data.items()} == {g["name"]: g["tag"] for g in r.manifest["groups"]}
    assert _counts_by_tag(m, "gmsh:physical") == _expected(r)
    assert np.allclose(m.points.max(axis=0)[2], 25e-6)  # written in metres


def test_xdmf_pair_and_name_map(built):
    folder = built.folder
    cells = meshio.read(folder / "t.xdmf")
    facets = meshio.read(folder / "t_facets.xdmf")
    names = json.loads((folder / "t_groups.json").read_text())
    assert list(names) == NAMES
    merged = {**_counts_by_tag(cells, "group"), **_counts_by_tag(facets, "group")}
    assert merged == _expected(built)
    assert cells.points.shape == facets.points.shape


def test_vtu_carries_groups_and_names(built):
    m = meshio.read(built.folder / "t.vtu")
    assert _counts_by_tag(m, "group") == _expected(built)
    assert {k: int(v[0]) for k, v in m.field_data.items()} == {n: i + 1 for i, n in enumerate(NAMES)}


def test_vtu_reads_in_vtk(built):
    import pyvista as pv

    grid = pv.read(built.folder / "t.vtu")
    fluid = grid.extract_cells(np.flatnonzero(grid.cell_data["group"] == 5))
    # VTK's own cell-size filter (through pyvista) against the manifest's measured volume
    vol = float(fluid.compute_cell_sizes(length=False, area=False)["Volume"].sum())
    assert vol == pytest.approx(next(g["measured"] for g in built.manifest["groups"] if g["name"] == "fluid"), rel=1e-9)


def test_abaqus_element_sets_are_named(built):
    m = meshio.read(built.folder / "t.inp")
    assert set(NAMES) <= set(m.cell_sets)
    sizes = {k: sum(len(a) for a in v) for k, v in m.cell_sets.items() if k in NAMES}
    assert sizes == {g["name"]: g["entities"] for g in built.manifest["groups"]}


def test_medit_references_are_tags(built):
    m = meshio.read(built.folder / "t.mesh")
    assert _counts_by_tag(m, "medit:ref") == _expected(built)


def test_su2_markers_are_named(built):
    text = (built.folder / "t.su2").read_text()
    markers = [line.split("=")[1].strip() for line in text.splitlines() if line.startswith("MARKER_TAG")]
    assert markers == ["inlet", "outlet_1", "outlet_2", "wall"]


@pytest.mark.parametrize("suffix", ["med", "cgns"])
def test_gmsh_formats_read_back_in_gmsh(built, suffix):
    # gmsh reads its own MED/CGNS output; meshio 5.3.5 cannot read gmsh's CGNS
    gmsh.initialize(readConfigFiles=False, interruptible=False)
    try:
        gmsh.option.setNumber("General.Terminal", 0)
        gmsh.open(str(built.folder / f"t.{suffix}"))
        # gmsh element types 4 (4-node tetrahedron) and 5 (8-node hexahedron), gmsh reference manual
        n_cells = sum(len(gmsh.model.mesh.getElementsByType(t)[0]) for t in (4, 5))
    finally:
        gmsh.finalize()
    assert n_cells == next(g["entities"] for g in built.manifest["groups"] if g["name"] == "fluid")


def test_manifest_lists_every_file_with_hash(built):
    listed = {f["name"] for f in built.manifest["files"]}
    on_disk = {p.name for p in built.folder.iterdir() if p.name != "manifest.json"}
    assert listed == on_disk
    assert not [p for p in built.folder.iterdir() if p.name.startswith(".")]  # no staging left


@pytest.fixture(scope="module")
def built_hex(tmp_path_factory):
    out = tmp_path_factory.mktemp("fmt-hex")
    d = small_design("serpentine", mesh={"cells": "hex"}, outlets={"split": [0.5, 0.5]})
    return build(d, out, formats=tuple(name for name, f in FORMATS.items() if f.source == "mesh"))


@pytest.mark.parametrize("suffix, key", [("msh", "gmsh:physical"), ("vtu", "group"), ("mesh", "medit:ref")])
def test_hex_meshes_round_trip_with_their_tags(built_hex, suffix, key):
    m = meshio.read(built_hex.folder / f"t.{suffix}")
    assert _counts_by_tag(m, key) == _expected(built_hex)
    assert sum(len(c.data) for c in m.cells if c.type == "hexahedron") == built_hex.mesh.n_volume_cells


def test_hex_xdmf_pair_and_other_formats_read_back(built_hex):
    folder = built_hex.folder
    cells, facets = meshio.read(folder / "t.xdmf"), meshio.read(folder / "t_facets.xdmf")
    assert {**_counts_by_tag(cells, "group"), **_counts_by_tag(facets, "group")} == _expected(built_hex)
    for suffix in ("inp", "su2", "med"):
        m = meshio.read(folder / f"t.{suffix}")
        assert sum(len(c.data) for c in m.cells if c.type == "hexahedron") == built_hex.mesh.n_volume_cells


def test_any_other_meshio_writer_is_one_flag_away(tmp_path):
    r = build(small_design("arc"), tmp_path, formats=("meshio:vtk", "meshio:tetgen"))
    listed = {f["name"] for f in r.manifest["files"]}
    assert {"t.vtk", "t.ele", "t.node"} <= listed  # companions of a format are listed and hashed
    m = meshio.read(tmp_path / "t.vtk")
    assert _counts_by_tag(m, "group") == _expected(r)


def test_unknown_meshio_writer_lists_the_known_ones(tmp_path):
    from chanmesh.errors import DesignError

    with pytest.raises(DesignError, match="meshio has no writer 'nope'; it has .*vtk"):
        build(small_design("arc"), tmp_path, formats=("meshio:nope",))


def test_hex_facet_xdmf_with_sections_has_one_topology_type(tmp_path):
    """Wall and section quads come as separate blocks; meshio would write them as topology
    "Mixed", which dolfinx 0.5.2 refuses. The writer merges them: one Quadrilateral topology
    (XDMF 3 format specification, xdmf.org "XDMF Model and Format", Topology element)."""
    import xml.etree.ElementTree as ET

    d = small_design("arc", mesh={"cells": "hex", "sections": [0.5]})
    r = build(d, tmp_path, formats=("xdmf",))
    for stem, kind in (("t_facets", "Quadrilateral"), ("t", "Hexahedron")):
        topo = ET.parse(tmp_path / f"{stem}.xdmf").getroot().findall(".//Topology")
        assert [t.get("TopologyType") for t in topo] == [kind]
    facets = meshio.read(tmp_path / "t_facets.xdmf")
    cells = meshio.read(tmp_path / "t.xdmf")
    assert {**_counts_by_tag(cells, "group"), **_counts_by_tag(facets, "group")} == _expected(r)
