"""gmsh threads versus determinism: time and repeatability of the tetrahedral mesher with
``mesh.threads`` = 1 and 2 on one design, measured in the same run.

    PYTHONPATH=. python bench/bench_threads.py [cells_across] [repeats]

Prints, per thread count, the best and median meshing time, the cell counts and how many
distinct meshes the repeats gave, then the 2-thread / 1-thread time ratio.
"""

from __future__ import annotations

import hashlib
import statistics
import sys
import time

from chanmesh.design import loads_design
from chanmesh.meshing.tet import mesh_tet

DESIGN = """
name = "bench-threads"
unit = "um"
[section]
width = 200
height = 50
[path]
kind = "spiral"
inner_radius = 1000
pitch = 400
turns = 1.0
[mesh]
cells_across = {across}
threads = {threads}
max_cells = 20_000_000
"""


def fingerprint(mesh) -> str:
    h = hashlib.sha256(mesh.points.tobytes())
    for b in mesh.volumes:
        h.update(b.cells.tobytes())
    return h.hexdigest()[:12]


def main() -> None:
    across = int(sys.argv[1]) if len(sys.argv) > 1 else 12
    repeats = int(sys.argv[2]) if len(sys.argv) > 2 else 3
    best = {}
    for threads in (1, 2):
        design = loads_design(DESIGN.format(across=across, threads=threads))
        times, counts, prints = [], [], set()
        for _ in range(repeats):
            t0 = time.perf_counter()
            mesh = mesh_tet(design)
            times.append(time.perf_counter() - t0)
            counts.append(mesh.n_volume_cells)
            prints.add(fingerprint(mesh))
        best[threads] = min(times)
        print(f"threads={threads}: best {min(times):.2f} s, median {statistics.median(times):.2f} s, "
              f"cells {counts}, distinct meshes {len(prints)}/{repeats}")
    print(f"time ratio 2 threads / 1 thread (best of {repeats}): {best[2] / best[1]:.2f}")


if __name__ == "__main__":
    main()
