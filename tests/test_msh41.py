"""The numpy MSH 4.1 ASCII writer gives the bytes gmsh's own writer gives for the same
discrete model (gmsh 4.x ``gmsh.write`` is the reference: the MSH format is gmsh's, and the
file must read in gmsh, meshio and OpenFOAM's gmshToFoam exactly as before)."""

from __future__ import annotations

from pathlib import Path

import gmsh
import numpy as np
import pytest

from chanmesh.gmshlayer.discrete import load_discrete
from chanmesh.gmshlayer.session import gmsh_session
from chanmesh.meshing.model import Block, ChannelMesh, Group
from chanmesh.meshing.registry import mesher_for
from chanmesh.writers import WriteOptions
from chanmesh.writers.gmsh_formats import without_sections, write_msh
from chanmesh.writers.msh41 import _int_lines, supports, write_msh41
from tests.conftest import small_design


def _gmsh_bytes(mesh: ChannelMesh, path: Path) -> bytes:
    with gmsh_session(threads=1):
        load_discrete(mesh)
        gmsh.option.setNumber("Mesh.SaveAll", 0)
        gmsh.option.setNumber("Mesh.MshFileVersion", 4.1)
        gmsh.option.setNumber("Mesh.Binary", 0)
        gmsh.write(str(path))
    return path.read_bytes()


CASES = {
    "hex arc, split outlet": ("arc", {"outlets": {"split": [0.3, 0.7]}}),
    "hex arc with sections": ("arc", {"mesh": {"cells": "hex", "sections": [0.25, 0.75]}}),
    "hex chambers": ("chambers", {}),
    "tet arc": ("arc", {"mesh": {"cells": "tet"}}),
}


@pytest.mark.parametrize("case", list(CASES))
def test_same_bytes_as_gmsh(tmp_path, case):
    kind, kw = CASES[case]
    d = small_design(kind, **kw)
    mesh = mesher_for(d).mesh(d, scale=1.0)
    meshes = [mesh] + ([without_sections(mesh)] if "sections" in case else [])
    for k, m in enumerate(meshes):
        assert supports(m)
        write_msh41(m, tmp_path / f"ours{k}.msh")
        assert (tmp_path / f"ours{k}.msh").read_bytes() == _gmsh_bytes(m, tmp_path / f"gmsh{k}.msh")


def test_same_bytes_on_awkward_values(tmp_path):
    """Negative zero, integers, tiny and huge magnitudes, unused nodes, groups listed out of
    dimension order, a group spread over two blocks (wider digit slots: the test below)."""
    rng = np.random.default_rng(1)
    n = 2_012
    points = np.zeros((n, 3))
    hexes = np.array([[0, 1, 2, 3, 4, 5, 6, 7], [n - 8, n - 7, n - 6, n - 5, n - 4, n - 3, n - 2, n - 1]])
    points[:8] = [[-0.0, 0.0, 1e-300], [1, 0, 0], [1, 1, 0], [0, 1, 0], [0, 0, 1], [1.5e300, 0, 1], [1, 1, 1], [1 / 3, 1, 1]]
    points[n - 8:] = rng.normal(size=(8, 3)) * 10.0 ** rng.integers(-12, 12, size=(8, 1))
    quads = np.array([[0, 3, 2, 1], [4, 5, 6, 7], [n - 8, n - 5, n - 6, n - 7]])
    mesh = ChannelMesh(
        points,
        [Block("hexahedron", hexes, np.array([1, 1]))],
        [Block("quad", quads[:2], np.array([7, 3])), Block("quad", quads[2:], np.array([7]))],
        [Group("fluid", 3, 1), Group("wall", 2, 7), Group("inlet", 2, 3)],
    )
    assert supports(mesh)
    write_msh41(mesh, tmp_path / "ours.msh")
    assert (tmp_path / "ours.msh").read_bytes() == _gmsh_bytes(mesh, tmp_path / "gmsh.msh")


def test_integer_lines_match_python_formatting():
    """Digits by table look-up against Python's own str(int), across digit-count boundaries."""
    values = np.array([[0, 9, 10, 99], [100, 999, 1000, 9999], [10_000, 99_999_999, 100_000_000, 2**32 + 5]])
    for end in (b"\n", b" \n"):
        sep = end.decode()
        expected = "".join(" ".join(str(v) for v in row) + sep for row in values.tolist()).encode()
        assert _int_lines(values, end) == expected


def test_other_msh_variants_still_go_through_gmsh(tmp_path):
    """An empty group is left to gmsh (its layout for that case is not reproduced); the file
    still reads back in gmsh with the group's name."""
    d = small_design("arc")
    mesh = mesher_for(d).mesh(d, scale=1.0)
    mesh.groups.append(Group("spare", 2, 99))
    assert not supports(mesh)
    write_msh(mesh, tmp_path, "e", WriteOptions())
    with gmsh_session(threads=1):
        gmsh.merge(str(tmp_path / "e.msh"))
        names = {gmsh.model.getPhysicalName(dim, tag) for dim, tag in gmsh.model.getPhysicalGroups()}
    assert "spare" in names and "wall" in names
