"""Design text shared by the bench scripts: made-up channels of our own, 300 x 60 um."""

from __future__ import annotations


def bench_design_text(name: str, path: str, mesh: str) -> str:
    """TOML of a design in micrometres with the bench section; ``path`` and ``mesh`` are the
    bodies of the [path] and [mesh] tables."""
    return (
        f'name = "{name}"\nunit = "um"\n[section]\nshape = "rectangle"\nwidth = 300\nheight = 60\n'
        f"[path]\n{path.strip()}\n[mesh]\n{mesh.strip()}\n"
    )
