"""FEniCSx (dolfinx 0.5.2, Debian's python3-dolfinx under /usr/bin/python3) loads chanmesh's
meshes through the recipe of docs/fenicsx.md exactly as written, integrates every group to its
analytic area or volume, and writes a velocity that ``chanmesh cut`` reads with its exact flux.

The analytic figures are Pappus's centroid theorem in its general form (Goodman & Goodman 1969)
through ``chanmesh.geometry.reference``; the velocity is a linear field, reproduced exactly by
P1 Lagrange elements, whose flux through the section is U0 * w * h in closed form (the section
is centred on the station point, so the linear terms integrate to zero).
"""

from __future__ import annotations

import json
import math
import re
import subprocess
from pathlib import Path

import numpy as np
import pytest

from chanmesh.build import build
from chanmesh.cli import main
from chanmesh.geometry.reference import reference_of
from chanmesh.geometry.stations import station_frame
from tests.conftest import design_text, small_design

PYTHON = "/usr/bin/python3"
DOC = Path(__file__).resolve().parents[1] / "docs" / "fenicsx.md"
U0, SHEAR, SPIN = 0.25, 800.0, 300.0  # m/s, 1/s, 1/s


def _dolfinx_missing() -> str | None:
    try:
        r = subprocess.run([PYTHON, "-c", "import dolfinx, gmsh"], capture_output=True, timeout=120)
    except (OSError, subprocess.TimeoutExpired) as exc:
        return f"{PYTHON} cannot run: {exc}"
    if r.returncode == 0:
        return None
    said = (r.stderr.decode(errors="replace").strip().splitlines() or ["no message"])[-1]
    return f"{PYTHON} has no dolfinx/gmsh (Debian: apt-get install python3-dolfinx python3-gmsh): {said}"


MISSING = _dolfinx_missing()
pytestmark = pytest.mark.skipif(MISSING is not None, reason=MISSING or "")

EPILOGUE = '''
# ---- test epilogue (not part of the recipe): the checks the test reads back ----
nn = np.cross(t, [0.0, 0.0, 1.0])
def linear_field(x):
    X = x.T - p
    w = {U0} + {SHEAR} * (X @ nn) - 0.5 * {SHEAR} * X[:, 2]
    a, b = {SPIN} * X[:, 2], -{SPIN} * (X @ nn)
    return (w[:, None] * t + a[:, None] * nn + b[:, None] * np.array([0.0, 0.0, 1.0])).T
V1 = fem.VectorFunctionSpace(mesh, ("Lagrange", 1))
vel = fem.Function(V1, name="velocity")
with io.XDMFFile(MPI.COMM_WORLD, f"{{folder}}/velocity.xdmf", "w") as f:
    f.write_mesh(mesh)
    f.write_function(vel, 0.0)          # a first step at rest: cut must take the last one
    vel.interpolate(linear_field)
    f.write_function(vel, 1.0)
sec = [k for k in tags if k.startswith("section")][0]
area = measured[sec]
plus = fem.assemble_scalar(fem.form(ufl.dot(n("+"), ufl.as_vector(t)) * dS(tags[sec]))) / area
with_n_down = fem.assemble_scalar(fem.form(ufl.dot(vel("+"), n_down) * dS(tags[sec])))
msh_dx = ufl.Measure("dx", domain=msh_mesh, subdomain_data=msh_cell_tags)
msh_ds = ufl.Measure("ds", domain=msh_mesh, subdomain_data=msh_facet_tags)
msh_dS = ufl.Measure("dS", domain=msh_mesh, subdomain_data=msh_facet_tags)
msh_one = fem.Constant(msh_mesh, 1.0)
msh_measured = {{}}
for name, tag in msh_tags.items():
    m = msh_dx(tag) if name == "fluid" else (msh_dS(tag) if name.startswith("section") else msh_ds(tag))
    msh_measured[name] = fem.assemble_scalar(fem.form((msh_one("+") if name.startswith("section") else msh_one) * m))
print("RESULT", json.dumps({{"measured": measured, "msh": msh_measured, "flux": downstream_flux(vel, sec),
                           "flux_n_down": with_n_down, "plus_dot_t": plus}}))
'''


def recipe_script(folder: Path, stem: str, point: np.ndarray, tangent: np.ndarray) -> str:
    """The python blocks of docs/fenicsx.md, in order, pointed at ``folder``/``stem``."""
    blocks = re.findall(r"```python\n(.*?)```", DOC.read_text(encoding="utf-8"), flags=re.S)
    assert len(blocks) >= 5, "docs/fenicsx.md lost its recipe blocks"
    code = "\n".join(blocks)
    subs = [
        (r'^folder, stem = .*$', f"folder, stem = {str(folder)!r}, {stem!r}"),
        (r"^t = np\.array\(.*$", f"t = np.array({tangent.tolist()!r})"),
        (r"^p = np\.array\(.*$", f"p = np.array({point.tolist()!r})"),
    ]
    for pattern, repl in subs:
        code, count = re.subn(pattern, lambda _m, r=repl: r, code, flags=re.M)
        assert count == 1, pattern
    head = "import logging\nlogging.disable(logging.INFO)  # ffcx logs its C compiler calls at INFO\n"
    return head + code + EPILOGUE.format(U0=U0, SHEAR=SHEAR, SPIN=SPIN)


def run_recipe(folder: Path, stem: str, design) -> dict:  # noqa: ANN001
    frame = station_frame(design, 0.5)
    script = folder / "recipe.py"
    script.write_text(recipe_script(folder, stem, frame.point, frame.tangent), encoding="utf-8")
    r = subprocess.run([PYTHON, str(script)], capture_output=True, text=True, timeout=600, cwd=folder)
    assert r.returncode == 0, r.stderr[-3000:]
    line = [s for s in r.stdout.splitlines() if s.startswith("RESULT ")][-1]
    return json.loads(line[len("RESULT "):])


@pytest.mark.parametrize("cells", ["hex", "tet"])
def test_recipe_loads_groups_and_flux(tmp_path, cells, capsys):
    mesh_opts = {"cells": cells, "sections": [0.5]}
    design = small_design("arc", name="fx", mesh=mesh_opts)
    result = build(design, tmp_path, formats=("xdmf", "msh"))
    got = run_recipe(tmp_path, "fx", design)
    ref = reference_of(design)
    # tetrahedra: curved walls on the exact solid (gmsh OCC), measured 1e-5;
    # hexahedra: the bend is drawn as chords, each losing 1 - sin(d)/d of the area under it
    # (inscribed polygon; any geometry handbook), d the turn per cell
    d = math.radians(90.0) / result.mesh.info["cells_along"] if cells == "hex" else 0.0
    tol = 1e-4 if cells == "tet" else 1.0 - math.sin(d) / d + 1e-9
    exact = {"inlet": ref.inlet_area, "outlet": ref.outlet_area, "wall": ref.wall_area,
             "section_1": ref.inlet_area, "fluid": ref.volume}
    for route in ("measured", "msh"):
        assert set(got[route]) == set(exact)
        for name, value in exact.items():
            assert got[route][name] == pytest.approx(value, rel=tol, abs=0), (route, name)
    # the sections and the ports are exact planes of w x h: round-off only
    assert got["measured"]["section_1"] == pytest.approx(ref.inlet_area, rel=1e-9, abs=0)
    q = U0 * ref.inlet_area  # closed form: the linear terms vanish over a section centred on p
    assert got["flux"] == pytest.approx(q, rel=1e-9, abs=0)
    assert got["flux_n_down"] == pytest.approx(q, rel=1e-9, abs=0)
    assert abs(got["plus_dot_t"]) == pytest.approx(1.0, rel=1e-9, abs=0)  # one side throughout, either one


    # chanmesh cut reads dolfinx's time series: the last step by default, --time for another
    design_path = tmp_path / "fx.toml"
    design_path.write_text(design_text("arc", name="fx", mesh=mesh_opts))
    velocity = tmp_path / "velocity.xdmf"
    args = ["cut", str(velocity), "--design", str(design_path), "--at", "0.5"]
    assert main(args + ["--out", str(tmp_path / "cut")]) == 0
    out = capsys.readouterr().out
    assert "field velocity (point data), time 1 (the last of 2)" in out
    data = json.loads((tmp_path / "cut" / "section.json").read_text())
    # the trapezoidal rule is exact for a linear field over the rectangle; VTK's probe inverts
    # the cell mapping iteratively: measured -6.7e-9 (hexahedra), -1.8e-9 (tetrahedra)
    assert data["figures"]["flow_rate_m3_s"] == pytest.approx(q, rel=2e-8, abs=0)
    assert main(args + ["--time", "0", "--out", str(tmp_path / "cut0")]) == 0
    capsys.readouterr()
    data0 = json.loads((tmp_path / "cut0" / "section.json").read_text())
    assert data0["figures"]["flow_rate_m3_s"] == 0.0 and data0["time"] == 0.0
