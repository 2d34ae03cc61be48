"""OpenFOAM output: write speed of the polyMesh writer, and the race against OpenFOAM's own
block mesher on the same grid, measured in one run.

1. Writer speed: a ~1 M-hex 90-degree arc (64 across x 600 along x 26 high, wall-graded) is
   meshed once in this process; then the face extraction (``poly_mesh``) and the file writes
   (binary, and ASCII for comparison) are timed separately and reported as cells/s.
2. The race (issue: "ahead of the peer"): ``chanmesh build --format openfoam`` of that grid
   against ``blockMesh`` on the same arc as one graded block with arc edges, binary polyMesh,
   each as a fresh process; wall time and peak memory (the child's ru_maxrss from wait4),
   with the ratios chanmesh / blockMesh. The stage durations of the chanmesh build come from
   its manifest. blockMesh needs WM_PROJECT_DIR (set to /usr/share/openfoam when missing).

    PYTHONPATH=. python bench/openfoam_write.py [--across 64 --along 600 --high 26] [--skip-race]
        [--race-repeats N] [--skip-writer-speed]

The channel is a made-up bench design (300 x 60 um, radius 1.5 mm), not a real device.
"""

from __future__ import annotations

import argparse
import json
import os
import resource
import shutil
import subprocess
import sys
import tempfile
import time
from pathlib import Path

from _designs import bench_design_text

WIDTH, HEIGHT, RADIUS, RATIO = 300e-6, 60e-6, 1500e-6, 1.1


def design_text(across: int, along: int, high: int) -> str:
    return bench_design_text(
        "race-arc", 'kind = "arc"\nradius = 1500\nangle = 90',
        f'cells = "hex"\ncells_across = {across}\ncells_high = {high}\ncells_along = {along}\n'
        f"wall_ratio = {RATIO}\nmax_cells = 20000000",
    ) + '[flow]\nrate = "100uL/min"\n'


def block_mesh_dict(across: int, along: int, high: int) -> str:
    """One block: x1 radial (inner to outer wall), x2 along the arc, x3 up; both walls of x1
    and x3 graded with the same cell-to-cell ratio (two half-blocks of multi-grading)."""
    ri, ro, h = RADIUS - WIDTH / 2, RADIUS + WIDTH / 2, HEIGHT / 2
    c = 2 ** -0.5

    def half(n: int) -> float:  # last/first cell size over half the cells at ratio RATIO
        return RATIO ** (n // 2 - 1)

    v = [(ri, 0, -h), (ro, 0, -h), (0, ro, -h), (0, ri, -h), (ri, 0, h), (ro, 0, h), (0, ro, h), (0, ri, h)]
    verts = " ".join(f"({x!r} {y!r} {z!r})" for x, y, z in v)
    ea, eh = half(across), half(high)
    return f"""FoamFile {{ version 2.0; format ascii; class dictionary; object blockMeshDict; }}
scale 1;
vertices ({verts});
edges (
  arc 0 3 ({ri * c!r} {ri * c!r} {-h!r}) arc 1 2 ({ro * c!r} {ro * c!r} {-h!r})
  arc 4 7 ({ri * c!r} {ri * c!r} {h!r}) arc 5 6 ({ro * c!r} {ro * c!r} {h!r})
);
blocks ( hex (0 1 2 3 4 5 6 7) ({across} {along} {high})
  simpleGrading (((0.5 0.5 {ea!r}) (0.5 0.5 {1 / ea!r})) 1 ((0.5 0.5 {eh!r}) (0.5 0.5 {1 / eh!r}))) );
boundary (
  inlet {{ type patch; faces ((0 4 5 1)); }}
  outlet {{ type patch; faces ((3 2 6 7)); }}
  wall {{ type wall; faces ((0 1 2 3) (4 7 6 5) (0 3 7 4) (1 5 6 2)); }}
);
"""


CONTROL = """FoamFile { version 2.0; format ascii; class dictionary; object controlDict; }
application simpleFoam; startFrom startTime; startTime 0; stopAt endTime; endTime 1; deltaT 1;
writeControl timeStep; writeInterval 1; writeFormat binary; writePrecision 10; writeCompression off;
"""


def run_child(args: list[str], env: dict[str, str] | None = None) -> tuple[float, float, float, str]:
    """(wall s, CPU s = user + system, peak resident MB, output) of one child process, from its
    own rusage (CPU time is less disturbed than wall time on a shared machine)."""
    t0 = time.perf_counter()
    proc = subprocess.Popen(args, stdout=subprocess.PIPE, stderr=subprocess.STDOUT, env=env)
    out = proc.stdout.read().decode(errors="replace") if proc.stdout else ""
    _, status, usage = os.wait4(proc.pid, 0)
    wall = time.perf_counter() - t0
    if os.waitstatus_to_exitcode(status) != 0:
        raise SystemExit(f"{args[0]} failed:\n{out[-3000:]}")
    return wall, usage.ru_utime + usage.ru_stime, usage.ru_maxrss / 1024.0, out


def writer_speed(across: int, along: int, high: int, folder: Path) -> dict[str, float]:
    from chanmesh.design import loads_design
    from chanmesh.meshing.registry import mesher_for
    from chanmesh.writers.openfoam import section_directions, write_polymesh
    from chanmesh.writers.openfoam.polymesh import poly_mesh

    design = loads_design(design_text(across, along, high))
    t0 = time.perf_counter()
    mesh = mesher_for(design).mesh(design)
    t1, c1 = time.perf_counter(), time.process_time()
    poly = poly_mesh(mesh, section_directions(design))
    t2, c2 = time.perf_counter(), time.process_time()
    write_polymesh(folder / "binary", poly, binary=True)
    t3, c3 = time.perf_counter(), time.process_time()
    write_polymesh(folder / "ascii", poly, binary=False)
    t4 = time.perf_counter()
    n = mesh.n_volume_cells
    return {"cells": n, "mesh_s": t1 - t0, "faces_s": t2 - t1, "binary_s": t3 - t2, "ascii_s": t4 - t3,
            "faces_cpu": c2 - c1, "binary_cpu": c3 - c2,
            "binary_MB": sum(p.stat().st_size for p in (folder / "binary" / "constant" / "polyMesh").iterdir()) / 1e6,
            "ascii_MB": sum(p.stat().st_size for p in (folder / "ascii" / "constant" / "polyMesh").iterdir()) / 1e6}


def race(a: argparse.Namespace, root: Path) -> None:
    """``chanmesh build --format openfoam`` against ``blockMesh`` on the same counts of cells
    along, across and high (chanmesh's own plan of the design: its wall cells come on top of
    the core counts given), each a fresh child process."""
    from chanmesh.design import loads_design
    from chanmesh.meshing.hexplan import plan_hex

    if not shutil.which("blockMesh"):
        print("blockMesh is not on PATH: race skipped")
        return
    text = design_text(a.across, a.along, a.high)
    along, across, high = plan_hex(loads_design(text)).shape
    env = {**os.environ, "WM_PROJECT_DIR": os.environ.get("WM_PROJECT_DIR", "/usr/share/openfoam")}
    case = root / "blockmesh"
    (case / "system").mkdir(parents=True)  # makes ``root`` too
    (case / "system" / "controlDict").write_text(CONTROL)
    (case / "system" / "blockMeshDict").write_text(block_mesh_dict(across, along, high))
    design = root / "race.toml"
    design.write_text(text)
    out = root / "chanmesh"
    floor = resource.getrusage(resource.RUSAGE_SELF).ru_maxrss / 1024.0
    cm_wall, cm_cpu, cm_mb, _ = run_child([sys.executable, "-m", "chanmesh", "build", str(design), "--format", "openfoam",
                                           "--out", str(out), "--quiet"],
                                          env={**env, "PYTHONPATH": str(Path(__file__).resolve().parents[1])})
    bm_wall, bm_cpu, bm_mb, bm_out = run_child(["blockMesh", "-case", str(case)], env=env)
    bm_cells = next((line.split()[-1] for line in bm_out.splitlines() if "nCells:" in line), "?")
    manifest = json.loads((out / "manifest.json").read_text())
    n = sum(manifest["cells"].get(k, 0) for k in ("hexahedron",))
    print(f"race: {across} across x {along} along x {high} high = {across * along * high:,} cells; chanmesh made "
          f"{n:,} hexahedra, blockMesh reports nCells {bm_cells} (peaks below include this process's "
          f"{floor:.0f} MB at the fork)")
    print(f"  {'':<40} {'wall s':>8} {'CPU s':>8} {'peak MB':>9} {'bytes/cell':>11}")
    print(f"  {'chanmesh build --format openfoam':<40} {cm_wall:8.2f} {cm_cpu:8.2f} {cm_mb:9.0f} {cm_mb * 1e6 / n:11.0f}")
    print(f"  {'blockMesh (binary polyMesh)':<40} {bm_wall:8.2f} {bm_cpu:8.2f} {bm_mb:9.0f} {bm_mb * 1e6 / n:11.0f}")
    print(f"  ratio chanmesh / blockMesh: wall {cm_wall / bm_wall:.2f}, CPU {cm_cpu / bm_cpu:.2f}, "
          f"memory {cm_mb / bm_mb:.2f}")
    print(f"  chanmesh stages (manifest timings_s): {json.dumps(manifest.get('timings_s'))}\n")


def main() -> None:
    ap = argparse.ArgumentParser(description=__doc__.split("\n")[0])
    ap.add_argument("--across", type=int, default=64)
    ap.add_argument("--along", type=int, default=600)
    ap.add_argument("--high", type=int, default=26)
    ap.add_argument("--skip-race", action="store_true")
    ap.add_argument("--race-repeats", type=int, default=1, help="run the race this many times (default 1)")
    ap.add_argument("--skip-writer-speed", action="store_true", help="only the race")
    a = ap.parse_args()
    root = Path(tempfile.mkdtemp(prefix="chanmesh-ofbench-"))
    try:
        for i in range(0 if a.skip_race else a.race_repeats):  # first, while this process is small: a
            race(a, root / f"race{i}")  # child's ru_maxrss starts from its parent's size at the fork
        if a.skip_writer_speed:
            return
        w = writer_speed(a.across, a.along, a.high, root / "speed")
        n = w["cells"]
        print(f"grid {a.across} x {a.along} x {a.high} = {n:,} hexahedra (mesh generation {w['mesh_s']:.2f} s)")
        print(f"  polyMesh faces/owner/neighbour/zones: {w['faces_s']:.2f} s wall, {w['faces_cpu']:.2f} s CPU "
              f"({n / w['faces_s'] / 1e6:.2f} M cells/s wall)")
        print(f"  write binary: {w['binary_s']:.2f} s wall, {w['binary_cpu']:.2f} s CPU, {w['binary_MB']:.0f} MB  "
              f"(faces + write: {n / (w['faces_s'] + w['binary_s']) / 1e6:.2f} M cells/s wall, "
              f"{n / (w['faces_cpu'] + w['binary_cpu']) / 1e6:.2f} M cells/s CPU)")
        print(f"  write ASCII:  {w['ascii_s']:.2f} s, {w['ascii_MB']:.0f} MB  (ASCII / binary time: "
              f"{w['ascii_s'] / w['binary_s']:.1f}x)")
    finally:
        shutil.rmtree(root, ignore_errors=True)


if __name__ == "__main__":
    main()
