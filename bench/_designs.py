"""Design text shared by the bench scripts: made-up channels of our own, 300 x 60 um."""

from __future__ import annotations


def bench_design_text(name: str, path: str, mesh: str) -> str:
    """TOML of a design in micrometres with the bench section; ``path`` and ``mesh`` are the
    bodies of the [path] and [mesh] tables."""
    return (
        f'name = "{name}"\nunit = "um"\n[section]\nshape = "rectangle"\nwidth = 300\nheight = 60\n'
        f"[path]\n{path.strip()}\n[mesh]\n{mesh.strip()}\n"
    )


def timed_bench_spiral(cells_millions: float, repeats: int) -> tuple[object, float, float, int]:
    """The spiral of ``hex_speed.py`` refined to about ``cells_millions`` million hexahedra:
    (design, scale, best mesh generation time in s over ``repeats`` runs, hexahedra). The best
    of a few: a 0.1 s stage on a shared machine is noisy."""
    import time

    from hex_speed import SPIRAL, scale_for

    from chanmesh.design import loads_design
    from chanmesh.meshing.registry import mesher_for

    design = loads_design(SPIRAL)
    scale = scale_for(cells_millions * 1e6)
    best, n = float("inf"), 0
    for _ in range(repeats):
        t = time.perf_counter()
        mesh = mesher_for(design).mesh(design, scale=scale)
        best = min(best, time.perf_counter() - t)
        n = mesh.n_volume_cells
        del mesh
    return design, scale, best, n
