"""The section-flow solve against a 3D solve of our own far into a long arc.

Design (invented for this bench): 300 x 100 um rectangle, arc R = 1.5 mm turning 200 degrees,
water at 25 C, uniform inlet 0.5 m/s (Re ~ 84, De ~ 19). chanmesh builds the hexahedral mesh
(ASCII MSH 2.2), OpenFOAM v1912 runs it (gmshToFoam, laminar simpleFoam, SIMPLEC, linearUpwind),
foamToVTK writes the result, ``chanmesh cut`` reads the section at 180 degrees, and the figures
are compared with ``solve_section_flow`` at the same radius and flow rate.

    PYTHONPATH=. python bench/dean_vs_3d.py [--cells-across 24] [--cells-high 10] [--iterations 600]

Needs OpenFOAM (Debian ``openfoam``) on PATH and WM_PROJECT_DIR=/usr/share/openfoam.
"""

from __future__ import annotations

import argparse
import json
import os
import shutil
import subprocess
import sys
import time
from pathlib import Path

DESIGN = """# Bench design, invented: a long bend to let the Dean flow develop.
name = "dean3d"
unit = "um"
[section]
width = 300
height = 100
[path]
kind = "arc"
radius = 1500
angle = 200
[mesh]
cells = "hex"
cells_across = {nx}
cells_high = {nz}
wall_ratio = 1.1
along_aspect = 2.5
max_cells = 200000
[flow]
velocity = "0.5m/s"
"""

CONTROL = """FoamFile {{ version 2.0; format ascii; class dictionary; object controlDict; }}
application simpleFoam; startFrom startTime; startTime 0; stopAt endTime; endTime {n};
deltaT 1; writeControl timeStep; writeInterval {n}; writeFormat ascii; writePrecision 10;
writeCompression off; timeFormat general; timePrecision 6; runTimeModifiable false;
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
solvers { p { solver GAMG; smoother GaussSeidel; tolerance 1e-9; relTol 0.05; }
          U { solver smoothSolver; smoother symGaussSeidel; tolerance 1e-10; relTol 0.1; } }
SIMPLE { consistent yes; nNonOrthogonalCorrectors 0;
         residualControl { p 1e-7; U 1e-8; } }
relaxationFactors { equations { U 0.9; } fields { p 1.0; } }
"""
U_FIELD = """FoamFile {{ version 2.0; format ascii; class volVectorField; object U; }}
dimensions [0 1 -1 0 0 0 0]; internalField uniform (0 0 0);
boundaryField {{ inlet {{ type fixedValue; value uniform (0 {u} 0); }}
                outlet {{ type zeroGradient; }} wall {{ type noSlip; }} }}
"""
P_FIELD = """FoamFile { version 2.0; format ascii; class volScalarField; object p; }
dimensions [0 2 -2 0 0 0 0]; internalField uniform 0;
boundaryField { inlet { type zeroGradient; } outlet { type fixedValue; value uniform 0; } wall { type zeroGradient; } }
"""


def run(cmd: list[str], case: Path, log: str) -> float:
    t = time.perf_counter()
    env = {**os.environ, "WM_PROJECT_DIR": "/usr/share/openfoam"}
    with open(case / log, "w") as fh:
        subprocess.run(cmd + ["-case", str(case)], check=True, stdout=fh, stderr=subprocess.STDOUT, env=env)
    return time.perf_counter() - t


def main() -> None:
    from chanmesh.build import build
    from chanmesh.design.load import loads_design
    from chanmesh.flow import default_grid, solve_section_flow
    from chanmesh.geometry.section import section_shape_of
    from chanmesh.numbers.fluid import fluid_of
    from chanmesh.writers import WriteOptions

    ap = argparse.ArgumentParser()
    ap.add_argument("--cells-across", type=int, default=24)
    ap.add_argument("--cells-high", type=int, default=10)
    ap.add_argument("--iterations", type=int, default=600)
    ap.add_argument("--work", type=Path, default=Path("out/bench-dean3d"))
    ap.add_argument("--reuse", action="store_true", help="compare an existing run in --work again")
    args = ap.parse_args()
    work = args.work
    text = DESIGN.format(nx=args.cells_across, nz=args.cells_high)
    design = loads_design(text)
    case = work / "case"
    if args.reuse:
        compare(design, work, case, args, None, 0.0, 0.0)
        return
    shutil.rmtree(work, ignore_errors=True)
    work.mkdir(parents=True)
    (work / "dean3d.toml").write_text(text)
    result = build(design, work / "mesh", formats=("msh",), options=WriteOptions(msh_version="2.2"))
    cells = result.manifest.get("cells") or result.manifest.get("cell_counts")
    for sub in ("system", "constant", "0"):
        (case / sub).mkdir(parents=True)
    (case / "system/controlDict").write_text(CONTROL.format(n=args.iterations))
    (case / "system/fvSchemes").write_text(SCHEMES)
    (case / "system/fvSolution").write_text(SOLUTION)
    fluid = fluid_of(design.flow)
    (case / "constant/transportProperties").write_text(
        "FoamFile { version 2.0; format ascii; class dictionary; object transportProperties; }\n"
        f"transportModel Newtonian; nu [0 2 -1 0 0 0 0] {fluid.viscosity / fluid.density:.9g};\n")
    (case / "constant/turbulenceProperties").write_text(
        "FoamFile { version 2.0; format ascii; class dictionary; object turbulenceProperties; }\nsimulationType laminar;\n")
    (case / "0/U").write_text(U_FIELD.format(u=design.flow.velocity))
    (case / "0/p").write_text(P_FIELD)
    msh = next((work / "mesh").glob("*.msh"))
    t_mesh = run(["gmshToFoam", str(msh.resolve())], case, "log.gmshToFoam")
    # patches from gmshToFoam are 'patch'; the wall must be a wall for noSlip
    boundary = case / "constant/polyMesh/boundary"
    b = boundary.read_text()
    i = b.index("wall")
    boundary.write_text(b[:i] + b[i:].replace("type            patch", "type            wall", 1))
    t_solve = run(["simpleFoam"], case, "log.simpleFoam")
    run(["foamToVTK", "-latestTime", "-noFaceZones"], case, "log.foamToVTK")
    compare(design, work, case, args, cells, t_mesh, t_solve)


def compare(design, work: Path, case: Path, args: argparse.Namespace, cells, t_mesh: float, t_solve: float) -> None:  # type: ignore[no-untyped-def]
    from chanmesh.flow import default_grid, solve_section_flow
    from chanmesh.geometry.section import section_shape_of
    from chanmesh.numbers.fluid import fluid_of

    fluid = fluid_of(design.flow)
    vtu = next((case / "VTK").rglob("internal.vtu"))
    cut_dir = work / "cut"
    subprocess.run([sys.executable, "-m", "chanmesh", "cut", str(vtu), "--design", str(work / "dean3d.toml"), "--at", "180deg",
                    "--field", "U", "--out", str(cut_dir)], check=True, env={**os.environ, "PYTHONPATH": os.getcwd()})
    fig = json.loads((cut_dir / "section.json").read_text())
    fig = fig.get("figures", fig)
    shape = section_shape_of(design)
    q = design.flow.velocity * shape.area  # type: ignore[operator]
    ref = solve_section_flow(shape, design.path.radius, fluid.density, fluid.viscosity, q)  # type: ignore[attr-defined]
    fine = solve_section_flow(shape, design.path.radius, fluid.density, fluid.viscosity, q,  # type: ignore[attr-defined]
                              grid=default_grid(shape, 40, 16), estimate_error=False)
    same = solve_section_flow(shape, design.path.radius, fluid.density, fluid.viscosity, q,  # type: ignore[attr-defined]
                              grid=default_grid(shape, args.cells_across, args.cells_high, ratio=1.1), discretisation="grid",
                              estimate_error=False)
    iters = sum(1 for line in (case / "log.simpleFoam").read_text().splitlines() if line.startswith("Time ="))
    print(f"3D: {cells} cells, gmshToFoam {t_mesh:.1f} s, simpleFoam {iters} iterations {t_solve:.1f} s")
    rows = [
        ("flow rate at 180 deg (mL/min)", fig.get("flow_rate_m3_s", 0) * 6e7, q * 6e7, fine.flow_rate * 6e7),
        ("secondary max (mm/s)", fig["secondary_max_m_s"] * 1e3, ref.secondary_max * 1e3, fine.secondary_max * 1e3),
        ("secondary mean (mm/s)", fig["secondary_mean_m_s"] * 1e3, ref.secondary_mean * 1e3, fine.secondary_mean * 1e3),
        ("streamwise max (m/s)", fig["streamwise_max_m_s"], ref.max_streamwise, fine.max_streamwise),
    ]
    print(f"{'quantity':<32} {'3D FV':>10} {'dean 20x10':>10} {'dean 40x16':>10} {'3D/fine':>8}")
    for name, a, b, c in rows:
        print(f"{name:<32} {a:>10.4g} {b:>10.4g} {c:>10.4g} {a / c:>8.3f}")
    print(f"MINI on the mesh's own {args.cells_across}x{args.cells_high} section grid: secondary max "
          f"{same.secondary_max * 1e3:.4g} mm/s, mean {same.secondary_mean * 1e3:.4g} mm/s")
    for v in fig.get("vortices", [])[:4]:
        print(f"  3D vortex u = {v['u_m'] * 1e6:+.1f} um, z = {v['z_m'] * 1e6:+.1f} um, {v['sense']}")
    for v in fine.vortices:
        print(f"  dean vortex u = {v['centre_u_m'] * 1e6:+.1f} um, z = {v['centre_z_m'] * 1e6:+.1f} um, {v['sense']}")
    print(f"De = {fine.dean:.3g}, Re = {fine.reynolds:.3g}")


if __name__ == "__main__":
    main()
