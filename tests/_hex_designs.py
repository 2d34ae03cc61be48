"""Small designs for the hexahedral-mesher tests (an invented scenario: made-up channels)."""

from __future__ import annotations

from chanmesh.design import Design, loads_design

PATHS = {
    "arc": 'kind = "arc"\nradius = 400\nangle = 90',
    "spiral": 'kind = "spiral"\ninner_radius = 600\npitch = 300\nturns = 1.5',
    "serpentine": 'kind = "serpentine"\nradius = 250\nstraight = 600\nperiods = 2\ninlet_length = 150',
    "chambers": (
        'kind = "chambers"\ncount = 2\nchamber_length = 400\nchamber_width = 500\nthroat_length = 300\n'
        "inlet_length = 100\noutlet_length = 100"
    ),
    "chambers_one_sided": (
        'kind = "chambers"\ncount = 3\nchamber_length = 300\nchamber_width = 450\nthroat_length = 200\none_sided = true'
    ),
}
RECTANGLE = 'shape = "rectangle"\nwidth = 200\nheight = 60'
TRAPEZOID = 'shape = "trapezoid"\nwidth = 200\nheight_inner = 50\nheight_outer = 80'


def hex_design(path: str, section: str = RECTANGLE, mesh: str = "", outlets: str = "", cells: str = "hex") -> Design:
    """A design in micrometres; ``mesh`` adds lines to [mesh] (cells_across 8 unless given)."""
    across = "" if "cells_across" in mesh else "cells_across = 8\n"
    text = (
        f'name = "hex-test"\nunit = "um"\n[section]\n{section}\n[path]\n{PATHS[path]}\n'
        f'[mesh]\ncells = "{cells}"\n{across}{mesh}\n'
    )
    if outlets:
        text += f"[outlets]\n{outlets}\n"
    return loads_design(text)
