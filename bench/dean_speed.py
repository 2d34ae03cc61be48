"""Solve time of one section-flow station at the default grid, against a straight-duct Poisson
solve on the same grid in the same run (the ratio is what carries across machines).

    PYTHONPATH=. python bench/dean_speed.py [--repeats 3]

Target: one station at the default grid in <= 2 s here. Cases: the 300 x 100 um arc of issue 12's
finding (R = 1.5 mm, water, 0.5 m/s, De ~ 19), a trapezoid spiral station and a square duct at
De = 100 (sqrt(D_h / R) convention 141). Each time is the best of ``--repeats``.
"""

from __future__ import annotations

import argparse
import time

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
]


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


def main() -> None:
    ap = argparse.ArgumentParser()
    ap.add_argument("--repeats", type=int, default=3)
    args = ap.parse_args()
    print(f"{'case':<46} {'grid':>8} {'De':>6} {'Newton':>6} {'solve s':>8} {'+error s':>8} {'Poisson s':>9} {'ratio':>6}")
    for name, shape, radius, u in CASES:
        q = u * shape.area
        t_solve, f = best(lambda: solve_section_flow(shape, radius, RHO, MU, q, estimate_error=False), args.repeats)
        t_err, _ = best(lambda: solve_section_flow(shape, radius, RHO, MU, q), 1)
        t_pois = poisson_time(shape, args.repeats)
        g = f.grid  # type: ignore[attr-defined]
        print(f"{name:<46} {g['cells_across']:>3}x{g['cells_high']:<4} {f.dean:>6.1f} "  # type: ignore[attr-defined]
              f"{f.solver['newton_iterations']:>6} {t_solve:>8.2f} {t_err:>8.2f} {t_pois:>9.3f} {t_solve / t_pois:>6.1f}")  # type: ignore[attr-defined]
    print("ratio = section-flow solve / straight Poisson solve on the same grid (same run); "
          "'+error s' includes the Richardson grid")
    print(f"numpy {np.__version__}")


if __name__ == "__main__":
    main()
