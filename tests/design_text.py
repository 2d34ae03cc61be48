"""Design-file text shared by the tests: a small arc, 200 x 50 um (an invented demo design)."""

from __future__ import annotations


def arc_text(name: str, angle: float = 45, cells_across: int | str = 4, cells: str = "tet", extra: str = "") -> str:
    """TOML of an arc of radius 1000 um; ``extra`` lines go into [mesh] (or start a new table)."""
    return (
        f'name = "{name}"\nunit = "um"\n[section]\nwidth = 200\nheight = 50\n'
        f'[path]\nkind = "arc"\nradius = 1000\nangle = {angle}\n'
        f'[mesh]\ncells = "{cells}"\ncells_across = {cells_across}\n{extra}\n'
    )
