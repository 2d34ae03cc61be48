"""Solve time of one section-flow station at the default grid, against a straight-duct Poisson
solve on the same grid in the same run (the ratio is what carries across machines), and against
an earlier version of the solver in the same run.

    PYTHONPATH=. python bench/dean_speed.py [--repeats 3] [--before REV]

Target: one station at the default grid in <= 2 s here. Cases: the 300 x 100 um arc of issue 12's
finding (R = 1.5 mm, water, 0.5 m/s, De ~ 19), a trapezoid spiral station and a square duct at
De ~ 38 and ~ 50 (sqrt(D_h / R) convention 53 and 71). Each time is the best of ``--repeats``.
``--before REV`` also runs the same cases with the package as it was at git revision REV
(exported with ``git archive`` to a temporary folder and run in a child process), and prints
the time ratio and the largest relative change of the results (dp/ds ratio, secondary max and
mean) with the vortex-cell counts, so a speed-up can be seen to change nothing.
"""

from __future__ import annotations

import argparse
import json
import os
import subprocess
import sys
import tempfile
import time
from pathlib import Path
from typing import Any

import numpy as np

from chanmesh.flow import default_grid, solve_section_flow
from chanmesh.flow.discrete import discretise, solve_free
from chanmesh.flow import equations as eq
from chanmesh.geometry.section import SectionShape

RHO, MU = 997.05, 0.890e-3
CASES = [
    ("arc 300x100 um, R 1.5 mm, 0.5 m/s", SectionShape(300e-6, 100e-6, 100e-6), 1.5e-3, 0.5),
    ("trapezoid 200 um, 40/70 um, R 1 mm, 0.4 m/s", SectionShape(200e-6, 40e-6, 70e-6), 1e-3, 0.4),
    ("square 100 um, R 1 mm, 1.5 m/s", SectionShape(100e-6, 100e-6, 100e-6), 1e-3, 1.5),
    ("square 100 um, R 1 mm, 2.0 m/s", SectionShape(100e-6, 100e-6, 100e-6), 1e-3, 2.0),
]
COMPARED = ("dpds_ratio", "secondary_max", "secondary_mean", "max_streamwise")
HERE = Path(__file__).resolve().parent


def best(fn, repeats: int) -> tuple[float, object]:  # type: ignore[no-untyped-def]
    times, out = [], None
    for _ in range(repeats):
        t = time.perf_counter()
        out = fn()
        times.append(time.perf_counter() - t)
    return min(times), out


def poisson_time(shape: SectionShape, repeats: int) -> float:
    grid = default_grid(shape)

    def run() -> float:
        d = discretise(grid, "reference", shape.hydraulic_diameter)
        k, f = eq.poisson.assemble(d.scalar), eq.unit_load.assemble(d.scalar)
        return float(f @ solve_free(k.tocsr(), f, d.scalar_free))

    return best(run, repeats)[0]


def measure(repeats: int) -> list[dict[str, Any]]:
    """Every case: times (solve, with the Richardson grid, Poisson) and the compared results."""
    rows = []
    for name, shape, radius, u in CASES:
        q = u * shape.area
        grid = default_grid(shape)  # given explicitly: a default-grid solve is shared, a repeat would time the cache
        t_solve, f = best(lambda: solve_section_flow(shape, radius, RHO, MU, q, grid, estimate_error=False), repeats)
        t_err, _ = best(lambda: solve_section_flow(shape, radius, RHO, MU, q, grid, estimate_error=True), 1)
        g = f.grid  # type: ignore[attr-defined]
        rows.append({
            "case": name, "grid": f"{g['cells_across']}x{g['cells_high']}", "dean": f.dean,  # type: ignore[attr-defined]
            "newton": f.solver["newton_iterations"], "lu": f.solver.get("factorisations"),  # type: ignore[attr-defined]
            "solve_s": t_solve, "error_s": t_err, "poisson_s": poisson_time(shape, repeats),
            "cells": f.cell_count,  # type: ignore[attr-defined]
            "values": {k: getattr(f, k) for k in COMPARED},
        })
    return rows


def measure_at(rev: str, repeats: int) -> list[dict[str, Any]]:
    """``measure`` run with the package exported from git revision ``rev`` (child process)."""
    root = HERE.parent
    with tempfile.TemporaryDirectory() as tmp:
        archive = subprocess.run(["git", "-C", str(root), "archive", rev, "chanmesh"], check=True,
                                 capture_output=True).stdout
        subprocess.run(["tar", "-x", "-C", tmp], input=archive, check=True)
        env = {**os.environ, "PYTHONPATH": tmp}
        out = subprocess.run([sys.executable, str(Path(__file__).resolve()), "--json", "--repeats", str(repeats)],
                             env=env, check=True, capture_output=True, text=True, cwd=tmp).stdout
    return json.loads(out.strip().splitlines()[-1])


def print_rows(rows: list[dict[str, Any]], label: str) -> None:
    print(f"{label}")
    print(f"{'case':<46} {'grid':>8} {'De':>6} {'Newton':>6} {'LU':>4} {'solve s':>8} {'+error s':>8} "
          f"{'Poisson s':>9} {'ratio':>6} {'cells':>5}")
    for r in rows:
        lu = "-" if r["lu"] is None else r["lu"]
        print(f"{r['case']:<46} {r['grid']:>8} {r['dean']:>6.1f} {r['newton']:>6} {lu:>4} {r['solve_s']:>8.2f} "
              f"{r['error_s']:>8.2f} {r['poisson_s']:>9.3f} {r['solve_s'] / r['poisson_s']:>6.1f} {r['cells']:>5}")


def main() -> None:
    ap = argparse.ArgumentParser()
    ap.add_argument("--repeats", type=int, default=3)
    ap.add_argument("--before", metavar="REV", help="also time the package at this git revision, same run")
    ap.add_argument("--json", action="store_true", help=argparse.SUPPRESS)  # the child of --before
    args = ap.parse_args()
    if args.json:
        print(json.dumps(measure(args.repeats)))
        return
    before = measure_at(args.before, args.repeats) if args.before else None
    now = measure(args.repeats)
    if before is not None:
        print_rows(before, f"before: {args.before}")
    print_rows(now, "now")
    print("ratio = section-flow solve / straight Poisson solve on the same grid (same run); "
          "'+error s' includes the Richardson grid")
    if before is not None:
        print(f"\n{'case':<46} {'speed-up':>8} {'+error':>7} {'max rel. change':>16} {'cells':>7}")
        for b, n in zip(before, now):
            change = max(abs(n["values"][k] - b["values"][k]) / abs(b["values"][k]) for k in COMPARED)
            print(f"{n['case']:<46} {b['solve_s'] / n['solve_s']:>7.1f}x {b['error_s'] / n['error_s']:>6.1f}x "
                  f"{change:>16.1e} {b['cells']:>3}->{n['cells']}")
        print(f"max rel. change: largest |now - before| / |before| over {', '.join(COMPARED)}")
    print(f"numpy {np.__version__}; load average {os.getloadavg()[0]:.1f} on {os.cpu_count()} cores")


if __name__ == "__main__":
    main()
