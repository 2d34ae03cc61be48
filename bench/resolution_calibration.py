"""Calibrate the resolution figure against real 3D solves: OpenFOAM simpleFoam on chanmesh hex meshes.

Run:  PYTHONPATH=$PWD /work/venv/bin/python bench/resolution_calibration.py [--heights 5 8 12 16 24]
      (WM_PROJECT_DIR=/usr/share/openfoam is set by the script; results cached in out/calibration)

Design (a made-up channel of our own, the operating point of issue 12): a 300 x 100 um
rectangle bent through 180 degrees at R = 1.5 mm, water at 25 C (rho 997.0 kg/m^3,
mu 8.90e-4 Pa s, IAPWS values through chanmesh.numbers.fluid), mean velocity 0.5 m/s
(Re about 84 on D_h = 150 um). Each grid is a chanmesh hex mesh with ``cells_high = n``
core cells over the height, square core cells (``cells_across = 3 n``), the default wall cell
and growth, and 80 cells along the bend (2.25 degrees each, the same for every grid, so the
grids differ only in their section). The inlet gets the flow rate as a uniform velocity
(flowRateInletVelocity), the outlet p = 0, the walls no-slip.

simpleFoam (laminar, SIMPLEC, linearUpwind for convection, linear gradients and
Laplacians: second order) runs until the residuals fall below 1e-6 (p) and 1e-7 (U). The
developed section is read at 157.5 degrees (a node layer: the two cell layers either side
are averaged in their own section frames), and checked against 135 degrees.

For every grid: the 3D solver's error on the secondary (in-plane) maximum and mean speed and
the flow rate through the section, against the Richardson extrapolation of its two finest
grids; and the resolution figure's prediction of those errors (``chanmesh.resolution``: the
section flow on the mesh's own section grid against the converged section flow).
"""

from __future__ import annotations

import argparse
import json
import math
import os
import re
import shutil
import subprocess
import sys
import time
from pathlib import Path

import numpy as np

ROOT = Path(__file__).resolve().parents[1]
sys.path.insert(0, str(ROOT))

WIDTH, HEIGHT, RADIUS, ANGLE = 300e-6, 100e-6, 1.5e-3, 180.0
U_MEAN = 0.5
ALONG = 80
READ_AT, CHECK_AT = 157.5, 135.0  # degrees: node layers 70 and 60 of 80


def design_text(n_high: int) -> str:
    return f"""# calibration grid (made-up channel): {n_high} core cells over the height
name = "calib-{n_high}"
unit = "um"
[section]
width = {WIDTH * 1e6:g}
height = {HEIGHT * 1e6:g}
[path]
kind = "arc"
radius = {RADIUS * 1e6:g}
angle = {ANGLE:g}
[mesh]
cells = "hex"
cells_high = {n_high}
cells_across = {3 * n_high}
cells_along = {ALONG}
[flow]
velocity = "{U_MEAN}m/s"
fluid = "water"
temperature = "25C"
"""


def fluid() -> tuple[float, float]:
    from chanmesh.design import loads_design
    from chanmesh.numbers.fluid import fluid_of

    props = fluid_of(loads_design(design_text(5)).flow)
    return props.density, props.viscosity


CONTROL = """FoamFile {{ version 2.0; format ascii; class dictionary; object controlDict; }}
application simpleFoam; startFrom startTime; startTime 0; stopAt endTime; endTime {end};
deltaT 1; writeControl timeStep; writeInterval {end}; purgeWrite 1; writeFormat binary;
writePrecision 10; writeCompression off; timeFormat general; timePrecision 6; runTimeModifiable false;
"""
SCHEMES = """FoamFile { version 2.0; format ascii; class dictionary; object fvSchemes; }
ddtSchemes { default steadyState; }
gradSchemes { default Gauss linear; }
divSchemes { default none; div(phi,U) bounded Gauss linearUpwind grad(U);
             div((nuEff*dev2(T(grad(U))))) Gauss linear; }
laplacianSchemes { default Gauss linear corrected; }
interpolationSchemes { default linear; }
snGradSchemes { default corrected; }
"""
SOLUTION = """FoamFile { version 2.0; format ascii; class dictionary; object fvSolution; }
solvers {
  p { solver GAMG; smoother GaussSeidel; tolerance 1e-9; relTol 0.05; }
  U { solver smoothSolver; smoother symGaussSeidel; tolerance 1e-10; relTol 0.05; }
}
SIMPLE { nNonOrthogonalCorrectors 0; consistent yes; residualControl { p 1e-6; U 1e-7; } }
relaxationFactors { equations { U 0.9; } fields { p 1; } }
"""
TRANSPORT = """FoamFile {{ version 2.0; format ascii; class dictionary; object transportProperties; }}
transportModel Newtonian; nu {nu:.6e};
"""
TURBULENCE = """FoamFile { version 2.0; format ascii; class dictionary; object turbulenceProperties; }
simulationType laminar;
"""
FIELD_U = """FoamFile {{ version 2.0; format ascii; class volVectorField; object U; }}
dimensions [0 1 -1 0 0 0 0]; internalField uniform (0 0 0);
boundaryField {{
  inlet {{ type flowRateInletVelocity; volumetricFlowRate {q:.9e}; extrapolateProfile no; value uniform (0 0 0); }}
  outlet {{ type zeroGradient; }}
  wall {{ type noSlip; }}
}}
"""
FIELD_P = """FoamFile { version 2.0; format ascii; class volScalarField; object p; }
dimensions [0 2 -2 0 0 0 0]; internalField uniform 0;
boundaryField { inlet { type zeroGradient; } outlet { type fixedValue; value uniform 0; } wall { type zeroGradient; } }
"""


def foam_env() -> dict[str, str]:
    return {**os.environ, "WM_PROJECT_DIR": "/usr/share/openfoam"}


def make_case(n_high: int, folder: Path, nu: float, end: int) -> dict:
    """Mesh with chanmesh (ASCII MSH 2.2), convert with gmshToFoam, write the case dictionaries."""
    from chanmesh.build import build
    from chanmesh.design import loads_design
    from chanmesh.writers import WriteOptions

    design = loads_design(design_text(n_high))
    t0 = time.perf_counter()
    result = build(design, folder / "mesh", formats=("msh",), options=WriteOptions(msh_version="2.2"))
    mesh_time = time.perf_counter() - t0
    case = folder / "case"
    if case.exists():
        shutil.rmtree(case)
    for sub in ("system", "constant", "0"):
        (case / sub).mkdir(parents=True)
    (case / "system/controlDict").write_text(CONTROL.format(end=end))
    (case / "system/fvSchemes").write_text(SCHEMES)
    (case / "system/fvSolution").write_text(SOLUTION)
    (case / "constant/transportProperties").write_text(TRANSPORT.format(nu=nu))
    (case / "constant/turbulenceProperties").write_text(TURBULENCE)
    (case / "0/U").write_text(FIELD_U.format(q=U_MEAN * WIDTH * HEIGHT))
    (case / "0/p").write_text(FIELD_P)
    msh = folder / "mesh" / f"{design.name}.msh"
    subprocess.run(["gmshToFoam", "-case", str(case), str(msh)], check=True, env=foam_env(),
                   stdout=subprocess.DEVNULL, stderr=subprocess.DEVNULL)
    boundary = case / "constant/polyMesh/boundary"
    text = boundary.read_text()
    text = re.sub(r"(wall\s*\{\s*type\s+)patch;", r"\1wall;", text)
    boundary.write_text(text)
    (case / "case.foam").write_text("")
    return {"cells": int(result.manifest["volume_cells"]), "mesh_time_s": mesh_time}


def run_case(case: Path) -> dict:
    t0 = time.perf_counter()
    with open(case / "log.simpleFoam", "w") as log:
        subprocess.run(["simpleFoam", "-case", str(case)], check=True, env=foam_env(), stdout=log, stderr=subprocess.STDOUT)
    text = (case / "log.simpleFoam").read_text()
    steps = re.findall(r"^Time = (\d+)", text, re.M)
    return {"solve_time_s": time.perf_counter() - t0, "iterations": int(steps[-1]) if steps else 0,
            "converged": "reached convergence criteria" in text or "SIMPLE solution converged" in text}


def read_section(case: Path, angle_deg: float) -> dict:
    """Developed-section figures at a node layer: the two cell layers either side, each cell's
    velocity in its own (n, t, z) frame, averaged pairwise at equal (r, z)."""
    import pyvista as pv
    from scipy.spatial import cKDTree

    reader = pv.OpenFOAMReader(str(case / "case.foam"))
    reader.set_active_time_value(reader.time_values[-1])
    reader.cell_to_point_creation = False
    internal = reader.read()["internalMesh"]
    centres = np.asarray(internal.cell_centers().points)
    U = np.asarray(internal.cell_data["U"])
    vol = np.asarray(internal.compute_cell_sizes(length=False, area=False, volume=True).cell_data["Volume"])
    phi = np.degrees(np.arctan2(centres[:, 1], centres[:, 0]))
    dphi = ANGLE / ALONG
    sides = []
    for target in (angle_deg - 0.5 * dphi, angle_deg + 0.5 * dphi):
        pick = np.abs(phi - target) < 0.25 * dphi
        c, u, v, p = centres[pick], U[pick], vol[pick], np.radians(phi[pick])
        r = np.hypot(c[:, 0], c[:, 1])
        n = np.column_stack([np.cos(p), np.sin(p), np.zeros_like(p)])  # outward: away from the centre
        t = np.column_stack([-np.sin(p), np.cos(p), np.zeros_like(p)])
        local = np.column_stack([np.einsum("ij,ij->i", u, n), np.einsum("ij,ij->i", u, t), u[:, 2]])
        area = v / (r * math.radians(dphi))  # Pappus: a swept cell's volume = area x centroid radius x angle
        sides.append((np.column_stack([r, c[:, 2]]), local, area))
    (rz_a, loc_a, area_a), (rz_b, loc_b, _) = sides
    _, match = cKDTree(rz_b).query(rz_a)
    local = 0.5 * (loc_a + loc_b[match])
    speed = np.hypot(local[:, 0], local[:, 2])
    p_kin = np.asarray(internal.cell_data["p"])
    pick = np.abs(phi - angle_deg) < 0.5 * dphi
    return {
        "p_mean": float(np.sum(p_kin[pick] * vol[pick]) / np.sum(vol[pick])),  # kinematic, m^2/s^2
        "flow_rate": float(np.sum(local[:, 1] * area_a)),
        "area": float(np.sum(area_a)),
        "secondary_max": float(speed.max()),
        "secondary_mean": float(np.sum(speed * area_a) / np.sum(area_a)),
        "streamwise_max": float(local[:, 1].max()),
        "cells": int(len(area_a)),
    }


def solve_grids(heights: list[int], out: Path, end: int) -> dict[int, dict]:
    rho, mu = fluid()
    rows = {}
    for n in heights:
        folder = out / f"n{n}"
        cache = folder / "result.json"
        if cache.exists():
            rows[n] = json.loads(cache.read_text())
            continue
        folder.mkdir(parents=True, exist_ok=True)
        row = {"cells_high": n, **make_case(n, folder, mu / rho, end)}
        row.update(run_case(folder / "case"))
        row["section"] = read_section(folder / "case", READ_AT)
        row["check"] = read_section(folder / "case", CHECK_AT)
        row["section"]["dpds"] = rho * (row["check"]["p_mean"] - row["section"]["p_mean"]) / (
            math.radians(READ_AT - CHECK_AT) * RADIUS)
        cache.write_text(json.dumps(row, indent=2))
        print(f"n = {n}: {row['cells']:,} cells, {row['iterations']} iterations, {row['solve_time_s']:.0f} s, "
              f"secondary max {row['section']['secondary_max']:.5f} m/s", flush=True)
        rows[n] = row
    return rows


def richardson(values: list[float], sizes: list[float]) -> tuple[float, float]:
    """Extrapolated value and order from the three finest (Celik et al. 2008, eqs. 3-4, fixed-point
    iteration for the order); two grids: second order assumed."""
    if len(values) >= 3:
        (f1, f2, f3), (h1, h2, h3) = values[-3:][::-1], sizes[-3:][::-1]
        r21, r32 = h2 / h1, h3 / h2
        e21, e32 = f2 - f1, f3 - f2
        if e21 != 0 and e32 != 0 and e32 / e21 > 0:
            p = 2.0
            for _ in range(50):
                s = np.sign(e32 / e21)
                q = math.log((r21**p - s) / (r32**p - s))
                p = abs(math.log(abs(e32 / e21)) + q) / math.log(r21)
            if 0.5 < p < 4:
                return f1 + (f1 - f2) / (r21**p - 1), p
    if len(values) < 2:
        return values[-1], float("nan")
    f1, f2 = values[-1], values[-2]
    r = sizes[-2] / sizes[-1]
    return f1 + (f1 - f2) / (r**2 - 1), 2.0


def figure_rows(rows: dict[int, dict]) -> dict[int, dict]:
    """The resolution figure of each grid (the section flow on its own section grid)."""
    from chanmesh.design import loads_design
    from chanmesh.resolution import resolution_figure

    out = {}
    for n in rows:
        t0, c0 = time.perf_counter(), time.process_time()
        fig = resolution_figure(loads_design(design_text(n)))
        fig["time_s"], fig["cpu_s"] = time.perf_counter() - t0, time.process_time() - c0
        out[n] = fig
    return out


def calibration(rows: dict[int, dict], ref: dict, figs: dict[int, dict]) -> None:
    """Fit FV error = A x m^B on the secondary maximum, m the larger of the figure's secondary
    max and mean errors (least squares in log-log over every grid), check the factor of two
    (also with each grid left out of the fit) and the ranking."""
    from chanmesh.resolution import FV_LAW, predicted_fv_error

    ns = [n for n in rows if n in figs]
    fv = {n: abs(rows[n]["section"]["secondary_max"] / ref["secondary_max"][0] - 1) for n in ns}
    m = {n: max(abs(figs[n]["errors"]["secondary_max"]), abs(figs[n]["errors"]["secondary_mean"])) for n in ns}
    b, ln_a = np.polyfit([math.log(m[n]) for n in ns], [math.log(fv[n]) for n in ns], 1)
    print(f"\nsecondary max: fitted FV = {math.exp(ln_a):.2f} x m^{b:.2f} over cells_high {ns} "
          f"(chanmesh.resolution.FV_LAW uses {FV_LAW['secondary_max']})")
    pred = {n: predicted_fv_error(figs[n]["errors"])["secondary_max"] for n in ns}
    for n in ns:
        rest = [k for k in ns if k != n]
        b1, ln_a1 = np.polyfit([math.log(m[k]) for k in rest], [math.log(fv[k]) for k in rest], 1)
        loo = math.exp(ln_a1) * m[n] ** b1
        print(f"  cells_high {n:>2}: FV {fv[n]:.2%}, predicted {pred[n]:.2%} (ratio {max(pred[n], fv[n]) / min(pred[n], fv[n]):.2f}), "
              f"left out of the fit {loo:.2%} (ratio {max(loo, fv[n]) / min(loo, fv[n]):.2f})")
    print(f"  ranking by FV secondary-max error: {sorted(ns, key=lambda n: fv[n])}; "
          f"by the prediction: {sorted(ns, key=lambda n: pred[n])}")


def main() -> None:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--heights", type=int, nargs="+", default=[5, 8, 12, 16, 24])
    ap.add_argument("--out", type=Path, default=ROOT / "out" / "calibration")
    ap.add_argument("--iterations", type=int, default=4000)
    ap.add_argument("--no-figure", action="store_true", help="only the 3D solves")
    args = ap.parse_args()
    heights = sorted(args.heights)
    rows = solve_grids(heights, args.out, args.iterations)
    keys = ("secondary_max", "secondary_mean", "dpds")
    h = [math.sqrt(rows[n]["section"]["area"] / rows[n]["section"]["cells"]) for n in heights]
    ref = {k: richardson([rows[n]["section"][k] for n in heights], h) for k in keys}
    print("\n3D reference (Richardson, finest grids): " + ", ".join(
        f"{k} {v:.6g} (order {p:.2f})" for k, (v, p) in ref.items()))
    cached = args.out / "figures.json"
    if args.no_figure:
        figs = {}
    elif cached.exists():
        figs = {int(k): v for k, v in json.loads(cached.read_text()).items()}
    else:
        figs = figure_rows(rows)
        cached.write_text(json.dumps(figs, indent=1, default=float))
    print("\n| cells_high | section cells | 3D cells | iterations | solve s | developed (135 vs 157.5 deg) | FV err sec. max | "
          "figure sec. max | FV err sec. mean | figure sec. mean | FV err flow (at fixed dp/ds) | figure flow | figure CPU s |")
    print("|---|---|---|---|---|---|---|---|---|---|---|---|---|")
    for n in heights:
        s = rows[n]["section"]
        dev = abs(rows[n]["check"]["secondary_max"] / s["secondary_max"] - 1)
        err = {k: s[k] / ref[k][0] - 1 for k in keys}
        err["dpds"] = ref["dpds"][0] / s["dpds"] - 1  # the flow-rate error at a fixed pressure gradient
        f = figs.get(n, {})
        fe = {k: f.get("errors", {}).get(k, float("nan")) for k in ("secondary_max", "secondary_mean", "flow_rate")}
        print(f"| {n} | {s['cells']} | {rows[n]['cells']:,} | {rows[n]['iterations']} | {rows[n]['solve_time_s']:.0f} | {dev:.2%} | "
              f"{err['secondary_max']:+.2%} | {fe['secondary_max']:+.2%} | {err['secondary_mean']:+.2%} | "
              f"{fe['secondary_mean']:+.2%} | {err['dpds']:+.2%} | {fe['flow_rate']:+.2%} | {f.get('cpu_s', float('nan')):.2f} |")
    if figs:
        calibration(rows, ref, figs)
    (args.out / "table.json").write_text(json.dumps({"rows": rows, "reference": ref, "figures": figs}, indent=2, default=float))


if __name__ == "__main__":
    main()
