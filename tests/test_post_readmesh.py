"""Reading mesh files back, and the ``chanmesh quality`` command."""

from __future__ import annotations

import json

import pytest
from _hex_designs import hex_design
from _hex_files import write_mesh_file

from chanmesh.cli import main
from chanmesh.errors import MeshFileError
from chanmesh.meshing.hex import mesh_hex
from chanmesh.post.quality import mesh_quality
from chanmesh.post.readmesh import read_mesh_file


@pytest.fixture(scope="module")
def mesh():
    return mesh_hex(hex_design("serpentine", outlets="split = [0.5, 0.5]"))


@pytest.mark.parametrize("suffix", [".msh", ".vtu", ".xdmf"])
def test_round_trip_keeps_the_figures(mesh, tmp_path, suffix):
    back = read_mesh_file(write_mesh_file(mesh, tmp_path / f"m{suffix}"))
    assert back.cell_counts() == mesh.cell_counts()
    a, b = mesh_quality(mesh), mesh_quality(back)
    assert b.scaled_jacobian_min == pytest.approx(a.scaled_jacobian_min, rel=1e-12)
    assert b.non_orthogonality_max == pytest.approx(a.non_orthogonality_max, abs=1e-9)
    # every chanmesh format carries the group names (MSH natively, VTU in its field data,
    # XDMF in the _groups.json beside the _facets.xdmf), so the wall faces are known
    assert [g.name for g in back.groups] == [g.name for g in mesh.groups]
    assert b.wall_cell_min == pytest.approx(a.wall_cell_min, rel=1e-12)


def test_quality_command_prints_figures(mesh, tmp_path, capsys):
    path = write_mesh_file(mesh, tmp_path / "m.msh")
    assert main(["quality", str(path), "--json"]) == 0
    shown = json.loads(capsys.readouterr().out)
    assert shown["cells"] == mesh.n_volume_cells
    assert main(["quality", str(path)]) == 0
    assert "scaled Jacobian" in capsys.readouterr().out


@pytest.mark.parametrize("content", [None, b"not a mesh at all\n"])
def test_bad_files_are_one_line_errors(tmp_path, capsys, content):
    path = tmp_path / "broken.vtu"
    if content is not None:
        path.write_bytes(content)
    with pytest.raises(MeshFileError, match="broken.vtu"):
        read_mesh_file(path)
    assert main(["quality", str(path)]) == 2
    err = capsys.readouterr().err
    assert err.count("\n") == 1 and "broken.vtu" in err and "Traceback" not in err
