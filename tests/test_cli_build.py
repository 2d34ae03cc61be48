"""The command line as a user meets it: starters, builds, progress, and one-line errors."""

from __future__ import annotations

import dataclasses
import json
import subprocess
import sys
from pathlib import Path

import numpy as np
import pytest

from chanmesh.build import build
from chanmesh.cli import main
from chanmesh.cli.cmd_new import starter_text
from chanmesh.design import load_design, loads_design
from chanmesh.geometry.reference import reference_of

ROOT = Path(__file__).resolve().parents[1]
TEMPLATES = sorted((ROOT / "templates").glob("*.toml"))


@pytest.mark.parametrize("family", ["arc", "spiral", "serpentine", "chambers", "straight", "segments"])
def test_starters_load_and_document_every_table(family):
    text = starter_text(family)
    d = loads_design(text)
    assert d.path.kind == family
    for table in ("[section]", "[path]", "[outlets]", "[mesh]", "[flow]"):
        assert table in text


def test_new_then_build_writes_the_default_formats(tmp_path, capsys):
    design = tmp_path / "s.toml"
    assert main(["new", "arc"]) == 0
    text = capsys.readouterr().out.replace("# cells_high = 14 ", "cells_high = 3 ")  # coarse, to keep the test small
    assert "\ncells_high = 3 " in text
    design.write_text(text)
    out = tmp_path / "out"
    assert main(["build", str(design), "--out", str(out)]) == 0
    captured = capsys.readouterr()
    for stage in ("nodes", "cells", "writing", "report"):  # the hexahedral mesher's stages (the default)
        assert stage in captured.err
    assert "resolution (at" in captured.out  # the resolution figure's summary line
    names = {p.name for p in out.iterdir()}
    assert {"my-bend.msh", "my-bend.xdmf", "my-bend.h5", "my-bend.vtu", "manifest.json"} <= names
    manifest = json.loads((out / "manifest.json").read_text())
    assert manifest["design"]["path"]["radius"] == pytest.approx(2e-3)
    assert {g["name"] for g in manifest["groups"]} == {"inlet", "outlet", "wall", "fluid"}
    assert manifest["versions"]["gmsh"]
    # what was written, read by general tools: every listed file has the recorded size and
    # SHA-256 (hashlib), the MSH's physical groups arrive by name in meshio, and the VTU's
    # cells hold the volume the manifest reports (VTK through pyvista)
    import hashlib

    import meshio
    import pyvista as pv

    for entry in manifest["files"]:
        data = (out / entry["name"]).read_bytes()
        assert len(data) == entry["bytes"] and hashlib.sha256(data).hexdigest() == entry["sha256"]
    assert set(meshio.read(out / "my-bend.msh").field_data) >= {"inlet", "outlet", "wall", "fluid"}
    grid = pv.read(out / "my-bend.vtu")
    cells3d = np.isin(np.asarray(grid.celltypes), [pv.CellType.TETRA, pv.CellType.HEXAHEDRON])
    volume = grid.extract_cells(np.flatnonzero(cells3d)).compute_cell_sizes(
        length=False, area=False, volume=True).cell_data["Volume"].sum()
    fluid = next(g for g in manifest["groups"] if g["name"] == "fluid")
    assert volume == pytest.approx(fluid["measured"], rel=1e-9, abs=0)


def test_quiet_prints_nothing(write_design, tmp_path, capsys):
    assert main(["build", str(write_design("arc")), "--out", str(tmp_path / "o"), "--quiet", "--format", "msh"]) == 0
    captured = capsys.readouterr()
    assert captured.out == "" and captured.err == ""


def test_bad_design_gives_one_line_and_exit_2(write_design, tmp_path):
    bad = write_design("arc", path={"radius": 50})
    proc = subprocess.run([sys.executable, "-m", "chanmesh", "build", str(bad), "--out", str(tmp_path / "o")],
                          capture_output=True, text=True)
    assert proc.returncode == 2
    assert "Traceback" not in proc.stderr
    assert proc.stderr.strip().count("\n") == 0
    assert "path.radius = 50 um" in proc.stderr
    assert not (tmp_path / "o").exists()


def test_unknown_format_and_missing_file(write_design, tmp_path, capsys):
    assert main(["build", str(write_design("arc")), "--format", "msh,xyz", "--out", str(tmp_path / "o")]) == 2
    assert "--format = 'xyz'" in capsys.readouterr().err
    assert main(["build", str(tmp_path / "nope.toml")]) == 2
    assert "does not exist" in capsys.readouterr().err


def test_max_cells_is_enforced_before_meshing(write_design, tmp_path, capsys):
    d = write_design("spiral", mesh={"cells_across": 40, "max_cells": 1000})
    assert main(["build", str(d), "--out", str(tmp_path / "o"), "--quiet"]) == 2
    err = capsys.readouterr().err
    assert "mesh.max_cells = 1000" in err and "estimated at" in err


def test_unwritable_output_folder(write_design, tmp_path, capsys):
    blocker = tmp_path / "file"
    blocker.write_text("not a folder")
    assert main(["build", str(write_design("arc")), "--out", str(blocker), "--quiet"]) == 2
    assert "is a file, not a folder" in capsys.readouterr().err


# gmsh's tetrahedra follow the exact OCC surfaces (measured up to 1.25e-4, serpentine-mixer at
# 4 cells across; 3e-4 allowed); straight-sided hexahedra chord each
# bend at >= 1 cell per 5 degrees, keeping sin(d)/d of its volume: 1 - sin(5 deg)/(5 deg) = 1.3e-3
TEMPLATE_VOLUME_TOL = {"tet": 3e-4, "hex": 1.5e-3}


@pytest.mark.parametrize("template", TEMPLATES, ids=lambda p: p.stem)
def test_each_template_builds(template, tmp_path):
    """Templates are built at a coarse resolution here to keep the suite fast."""
    d = load_design(template)
    coarse = dataclasses.replace(d, mesh=dataclasses.replace(d.mesh, cells_across=4, wall_ratio=1.0))
    r = build(coarse, tmp_path, formats=("vtu",))
    fluid = next(g for g in r.manifest["groups"] if g["name"] == "fluid")
    assert fluid["measured"] == pytest.approx(reference_of(d).volume, rel=TEMPLATE_VOLUME_TOL[d.mesh.cells], abs=0)
    assert "invented scenario" in template.read_text().lower()
