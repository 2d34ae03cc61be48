"""The tetrahedral mesher runs in a child process: a time limit and Ctrl-C stop it even inside
gmsh (issue 15 item 4), errors come back with their type, and meshes come back whole.

Exit status 130 for SIGINT: POSIX shell convention (IEEE Std 1003.1, 2.8.2), as in
test_cli_startup.py.
"""

from __future__ import annotations

import os
import pickle
import signal
import subprocess
import sys
import time
from pathlib import Path

import numpy as np
import pytest
from conftest import small_design

import chanmesh.meshing.tet_process as tp
from chanmesh.errors import MISSING, DesignError, MeshingError
from chanmesh.meshing.tet import mesh_tet

ROOT = Path(__file__).resolve().parents[1]

# The reproduction of issue 15 item 4 (gmsh busy for minutes before this fix's child process):
# a thin, steeply graded tetrahedral arc.
STUCK = (
    'name = "stuck"\nunit = "um"\n[section]\nwidth = 30\nheight = 12\n'
    '[path]\nkind = "arc"\nradius = 300\nangle = 180\ninlet_length = 90\noutlet_length = 90\n'
    '[mesh]\ncells = "tet"\ncells_across = 6\nfirst_cell = 1.5\nmax_cells = 2000000\n'
)
"""The thin arc that once hung inside gmsh (with the height now resolved too its estimate is
347 k tetrahedra, so max_cells is raised; the test interrupts it long before it finishes)."""


def test_child_mesh_equals_the_in_process_mesh():
    d = small_design("arc")
    a, b = tp.mesh_tet_isolated(d), mesh_tet(d)
    assert np.array_equal(a.points, b.points)
    assert [(x.type, x.cells.tolist(), x.tags.tolist()) for x in a.volumes + a.facets] == \
           [(x.type, x.cells.tolist(), x.tags.tolist()) for x in b.volumes + b.facets]


def test_a_program_read_from_standard_input_meshes_tetrahedra():
    # multiprocessing's children rerun the parent's main file by path; '<stdin>' has none, so
    # the mesher runs in-process there instead of failing with "stopped unexpectedly"
    script = (
        "from tests.conftest import small_design\n"
        "from chanmesh.meshing.tet_process import can_use_child, mesh_tet_isolated\n"
        "print(can_use_child(), mesh_tet_isolated(small_design('arc')).n_volume_cells)\n"
    )
    r = subprocess.run([sys.executable, "-"], input=script, capture_output=True, text=True, timeout=300,
                       cwd=ROOT, env={**os.environ, "PYTHONPATH": str(ROOT)})
    assert r.returncode == 0, r.stderr[-2000:]
    used_child, cells = r.stdout.split()
    assert used_child == "False" and int(cells) == mesh_tet(small_design("arc")).n_volume_cells


def test_time_limit_ends_the_build_with_one_line(monkeypatch):
    monkeypatch.setattr(tp, "BASE_S", 1.0)
    monkeypatch.setattr(tp, "FLOOR_RATE", 1e12)
    t = time.monotonic()
    with pytest.raises(MeshingError, match=r"did not finish within 1 s") as info:
        tp.mesh_tet_isolated(small_design("spiral", mesh={"cells_across": 8}))
    assert time.monotonic() - t < 1.0 + 5 * tp.POLL_S + 5.0  # killed, not waited for
    assert "\n" not in str(info.value)


def test_time_limit_grows_with_the_estimate():
    assert tp.time_limit_s(0) == tp.BASE_S
    assert tp.time_limit_s(1_000_000) == tp.BASE_S + 1_000_000 / tp.FLOOR_RATE


def test_design_errors_cross_the_process_boundary_intact():
    e = pickle.loads(pickle.dumps(DesignError("path.radius", MISSING, "required")))
    assert type(e) is DesignError and e.value is MISSING and str(e) == "path.radius (missing): required"


def test_sigint_inside_gmsh_exits_130_within_seconds(tmp_path):
    design = tmp_path / "stuck.toml"
    design.write_text(STUCK)
    env = {**os.environ, "PYTHONPATH": str(ROOT)}
    proc = subprocess.Popen([sys.executable, "-m", "chanmesh", "build", str(design), "--out", str(tmp_path / "o")],
                            env=env, stdout=subprocess.PIPE, stderr=subprocess.PIPE, text=True)
    deadline = time.monotonic() + 120
    err = ""
    while time.monotonic() < deadline:  # wait until gmsh is meshing (the progress line says so)
        line = proc.stderr.readline()
        err += line
        if "meshing" in line or not line:
            break
    time.sleep(2.0)  # now inside gmsh.model.mesh.generate (its 2D stage alone takes longer)
    sent = time.monotonic()
    proc.send_signal(signal.SIGINT)
    out, rest = proc.communicate(timeout=60)
    assert time.monotonic() - sent < 10.0
    assert proc.returncode == 130, err + rest
    assert "Traceback" not in rest and rest.strip().count("\n") == 0 and "interrupted" in rest
    assert not (tmp_path / "o" / "manifest.json").exists()
