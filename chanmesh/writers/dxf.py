"""``stem.dxf``: the channel's plan for a photomask or a cutter, drawn with ezdxf.

Two layers of our own naming: ``CHANNEL`` holds the plan outline as one closed polyline per
outline (the footprint seen from above, curved walls as short chords, see
``geometry.plan.plan_outline``); ``PORTS`` holds a circle of ``fabrication.port_diameter``
centred on the middle of each inlet and outlet edge, where a punch or drill opens the port.
Coordinates are in the unit ``fabrication.dxf_unit`` ("um" or "mm"), declared in the header
($INSUNITS 13 or 4) so that a reader scales the drawing correctly.
"""

from __future__ import annotations

from pathlib import Path
from typing import TYPE_CHECKING

import ezdxf
import numpy as np

from chanmesh.design.model import Design
from chanmesh.geometry.plan import PlanOutline, plan_outline
from chanmesh.units import PER_METRE

if TYPE_CHECKING:
    from chanmesh.writers import WriteOptions

OUTLINE_LAYER = "CHANNEL"
PORT_LAYER = "PORTS"
INSUNITS = {"um": 13, "mm": 4}  # DXF header codes for micrometres and millimetres
CHORD_SPACING = 1.0 / 32
"""Outline point spacing along curved walls, in section widths (chord sag well below 1 nm
for the bend radii the design checks allow)."""


def port_centres(outline: PlanOutline) -> np.ndarray:
    """Midpoints of the port edges (inlet and outlet), (k, 2) m."""
    p = outline.points
    q = np.roll(p, -1, axis=0)
    return 0.5 * (p + q)[outline.port_edges]


def write_dxf(design: Design, folder: Path, stem: str, options: "WriteOptions") -> list[Path]:
    """Write the plan outline and port circles; returns ``[folder/stem.dxf]``."""
    fab = design.fabrication
    per = PER_METRE[fab.dxf_unit]
    outline = plan_outline(design, spacing=CHORD_SPACING * design.section.width)
    doc = ezdxf.new("R2010", setup=False)
    doc.header["$INSUNITS"] = INSUNITS[fab.dxf_unit]
    doc.header["$MEASUREMENT"] = 1  # metric
    doc.layers.add(OUTLINE_LAYER, color=5)
    doc.layers.add(PORT_LAYER, color=1)
    space = doc.modelspace()
    pts = [(float(x), float(y)) for x, y in outline.points * per]
    space.add_lwpolyline(pts, close=True, dxfattribs={"layer": OUTLINE_LAYER})
    if fab.port_diameter > 0:
        for x, y in port_centres(outline) * per:
            space.add_circle((float(x), float(y)), 0.5 * fab.port_diameter * per, dxfattribs={"layer": PORT_LAYER})
    path = Path(folder) / f"{stem}.dxf"
    doc.saveas(path)
    return [path]
