"""chanmesh's colours: one per physical group, chosen to stay apart for colour-blind readers.

Colours were picked by us and checked with colorspacious (Machado, Oliveira & Fernandes 2009
colour-vision-deficiency model, severity 100, distances in CAM02-UCS, Luo et al. 2006): every
pair stays at least 13 units apart in normal vision and under simulated protanopia,
deuteranopia and tritanopia (tests/test_preview.py checks it). They differ in lightness as
well as hue, so they also survive greyscale printing better than a rainbow.

    wall    #B9C3CC  pale slate: neutral, so that ports and sections stand out
    inlet   #1D4E89  deep blue
    outlet  #E69A2E  amber
    extra   #9B6FC6 violet, #3AA39A teal, #F4D35E straw, #8C2D2D brick, #5C6B73 slate

Further outlets and sections take the extra colours in turn (past five they repeat, and
the labels tell them apart).
"""

from __future__ import annotations

WALL = "#B9C3CC"
INLET = "#1D4E89"
OUTLET = "#E69A2E"
EXTRA = ("#9B6FC6", "#3AA39A", "#F4D35E", "#8C2D2D", "#5C6B73")
INK = "#1B232A"  # text, outlines and section ticks
SCALE_BAR = "#000000"  # drawn only in the scale bar, so its pixels can be found
PAPER = "#FFFFFF"

PALETTE = (WALL, INLET, OUTLET) + EXTRA


def group_colours(names: list[str]) -> dict[str, str]:
    """A colour for each group name: wall, inlet and the first outlet fixed, others in turn."""
    out: dict[str, str] = {}
    extra = iter(range(10**6))
    for name in names:
        if name == "wall":
            out[name] = WALL
        elif name in ("inlet", "inlet_1"):
            out[name] = INLET
        elif name in ("outlet", "outlet_1"):
            out[name] = OUTLET
        else:
            out[name] = EXTRA[next(extra) % len(EXTRA)]
    return out
