"""Feasibility checks run before any gmsh call; each failure is a ``DesignError``.

Each rule names the key, the value (in the design's own unit) and the allowed range.
"""

from __future__ import annotations

import math
import re

from chanmesh.design.model import (
    ArcPath,
    ArcPiece,
    ChambersPath,
    Design,
    LinePiece,
    SegmentsPath,
    SerpentinePath,
    SpiralPath,
    StraightPath,
)
from chanmesh.errors import DesignError, Shown
from chanmesh.sizing import first_cell

MIN_WALL = 0.05
"""Smallest solid wall between neighbouring channel runs, as a fraction of the width
(common practice, no source: bonding needs some land between channels)."""

NAME_PATTERN = re.compile(r"[A-Za-z0-9][A-Za-z0-9._-]{0,79}")  # used with fullmatch: no trailing newline
MESHERS = ("tet", "hex")
MAX_WALL_RATIO = 3.0
"""Largest ``wall_ratio`` (common practice, no source: stronger stretching spoils the accuracy
of most finite-volume schemes)."""


def _fmt(design: Design, metres: float) -> str:
    value = metres / design.scale
    return Shown(f"{value:.6g} {design.unit}")


def _positive(design: Design, key: str, metres: float) -> None:
    if not metres > 0:
        raise DesignError(key, _fmt(design, metres), "must be greater than 0")


def check_design(design: Design) -> None:
    """Raise ``DesignError`` for the first rule the design breaks."""
    if not NAME_PATTERN.fullmatch(design.name) or ".." in design.name:
        raise DesignError(
            "name",
            design.name,
            "must be 1-80 letters, digits, '.', '_' or '-', start with a letter or digit and hold no "
            "path separators or '..' (it names the output files)",
        )
    _check_section(design)
    _check_path(design)
    _check_outlets(design)
    _check_mesh(design)
    _check_fabrication(design)


def _check_section(design: Design) -> None:
    sec = design.section
    _positive(design, "section.width", sec.width)
    if sec.shape == "rectangle":
        _positive(design, "section.height", sec.height_inner)
    else:
        _positive(design, "section.height_inner", sec.height_inner)
        _positive(design, "section.height_outer", sec.height_outer)
        if isinstance(design.path, ChambersPath):
            raise DesignError("section.shape", "trapezoid", "the chambers family takes shape = 'rectangle' only")


def _check_path(design: Design) -> None:
    path = design.path
    w = design.section.width
    for k in ("inlet_length", "outlet_length"):
        v = getattr(path, k)
        if v < 0:
            raise DesignError(f"path.{k}", _fmt(design, v), "must be 0 or more")
    if isinstance(path, ArcPath):
        _bend_radius(design, "path.radius", path.radius)
        if not 0 < path.angle < 360:
            raise DesignError("path.angle", Shown(f"{path.angle:g} deg"), "must lie in (0, 360) degrees: a full ring has no inlet or outlet")
    elif isinstance(path, SpiralPath):
        _bend_radius(design, "path.inner_radius", path.inner_radius)
        _positive(design, "path.pitch", path.pitch)
        need = w * (1 + MIN_WALL)
        if path.pitch < need:
            raise DesignError(
                "path.pitch",
                _fmt(design, path.pitch),
                f"must be at least the width plus a wall of {MIN_WALL:.0%} of it ({_fmt(design, need)}) "
                "so that neighbouring turns do not touch",
            )
        if not 0 < path.turns <= 50:
            raise DesignError("path.turns", Shown(f"{path.turns:g}"), "must lie in (0, 50]")
    elif isinstance(path, SerpentinePath):
        _bend_radius(design, "path.radius", path.radius)
        need = 0.5 * w * (1 + MIN_WALL)
        if path.radius < need:
            raise DesignError(
                "path.radius",
                _fmt(design, path.radius),
                f"must be at least {_fmt(design, need)} (half the width plus a wall of {MIN_WALL:.0%} of "
                "the width) so that neighbouring straight runs do not touch",
            )
        _positive(design, "path.straight", path.straight)
        if not 1 <= path.periods <= 200:
            raise DesignError("path.periods", path.periods, "must be a whole number from 1 to 200")
    elif isinstance(path, StraightPath):
        _positive(design, "path.length", path.length)
    elif isinstance(path, SegmentsPath):
        _check_pieces(design, path)
    elif isinstance(path, ChambersPath):
        if not 1 <= path.count <= 500:
            raise DesignError("path.count", path.count, "must be a whole number from 1 to 500")
        _positive(design, "path.chamber_length", path.chamber_length)
        _positive(design, "path.throat_length", path.throat_length)
        if not path.chamber_width > w:
            raise DesignError(
                "path.chamber_width",
                _fmt(design, path.chamber_width),
                f"must be wider than the channel (section.width = {_fmt(design, w)})",
            )


CLEARANCE_SLACK = 0.01
"""The sampled clearance test of ``segments`` paths passes runs down to 1 % under the required
distance (sampling and the slight tilt of neighbouring spiral turns; common practice, no source)."""


def _check_pieces(design: Design, path: SegmentsPath) -> None:
    """Each piece by the family rules it shares (bend radius, spiral pitch), then the whole
    path: no run may come closer to another than the width plus a wall of MIN_WALL, or cross it."""
    w = design.section.width
    for i, piece in enumerate(path.segments):
        key = f"path.segments[{i}]"
        if isinstance(piece, LinePiece):
            _positive(design, f"{key}.line", piece.length)
        elif isinstance(piece, ArcPiece):
            _bend_radius(design, f"{key}.arc", piece.radius)
            if not 0 < abs(piece.angle) < 360:
                raise DesignError(f"{key}.angle", Shown(f"{piece.angle:g} deg"),
                                  "must be non-zero and lie in (-360, 360) degrees (> 0 turns left, < 0 right)")
        else:
            _bend_radius(design, f"{key}.spiral", piece.radius)
            need = w * (1 + MIN_WALL)
            if not piece.pitch >= need:
                raise DesignError(f"{key}.pitch", _fmt(design, piece.pitch),
                                  f"must be at least the width plus a wall of {MIN_WALL:.0%} of it ({_fmt(design, need)}) "
                                  "so that neighbouring turns do not touch")
            if not 0 < abs(piece.turns) <= 50:
                raise DesignError(f"{key}.turns", Shown(f"{piece.turns:g}"), "must be non-zero and lie in [-50, 50] (> 0 turns left)")
    _check_clearance(design, path)


def _check_clearance(design: Design, path: SegmentsPath) -> None:
    from chanmesh.geometry.centerline import centerline_of
    from chanmesh.geometry.clearance import close_runs

    w = design.section.width
    need = w * (1 + MIN_WALL)
    line = centerline_of(design)
    hit = close_runs(line, need * (1 - CLEARANCE_SLACK), w / 8)
    if hit is None:
        return
    lead = 1 if path.inlet_length > 0 else 0

    def name(seg: int) -> str:
        k = seg - lead
        if k < 0:
            return "path.inlet_length"
        if k >= len(path.segments):
            return "path.outlet_length"
        return f"path.segments[{k}]"

    first, second = name(hit.segment1), name(hit.segment2)
    gap = Shown(f"{hit.distance / design.scale:.3g} {design.unit}")
    raise DesignError(
        second,
        Shown(f"(a run at {hit.s2 / design.scale:.6g} {design.unit} along the path)"),
        f"comes within {gap} (centre to centre) of {'itself' if first == second else first} "
        f"at {hit.s1 / design.scale:.6g} {design.unit}; runs must stay at least {_fmt(design, need)} apart "
        f"(the width plus a wall of {MIN_WALL:.0%} of it) and must not cross: lengthen the straights, "
        "open the bends or turn the other way",
    )


def _bend_radius(design: Design, key: str, radius: float) -> None:
    w2 = 0.5 * design.section.width
    if not radius > w2:
        raise DesignError(
            key,
            _fmt(design, radius),
            f"must be greater than half the section width ({_fmt(design, w2)}); it is short by "
            f"{_fmt(design, w2 - radius)}, and the inner wall would fold over itself",
        )


def _check_outlets(design: Design) -> None:
    for key, split in (("inlets.split", design.inlets.split), ("outlets.split", design.outlets.split)):
        _check_split(key, split)


def _check_split(key: str, split: tuple[float, ...]) -> None:
    if not split:
        return
    if len(split) > 20:
        raise DesignError(key, list(split), "may have at most 20 fractions")
    for i, f in enumerate(split):
        if not f > 0:
            raise DesignError(f"{key}[{i}]", f, "must be greater than 0")
    if abs(sum(split) - 1.0) > 1e-9:
        raise DesignError(key, list(split), f"fractions must sum to 1 (they sum to {sum(split):.6g})")


def _check_mesh(design: Design) -> None:
    m = design.mesh
    if m.cells not in MESHERS:
        raise DesignError("mesh.cells", m.cells, f"must be one of {', '.join(repr(c) for c in MESHERS)}")
    if not 2 <= m.cells_across <= 2000:
        raise DesignError("mesh.cells_across", m.cells_across, "must be a whole number from 2 to 2000")
    if not 1.0 <= m.wall_ratio <= MAX_WALL_RATIO:
        raise DesignError("mesh.wall_ratio", m.wall_ratio, "must lie in [1, 3] (1 = uniform cells)")
    if m.first_cell is not None:
        _positive(design, "mesh.first_cell", m.first_cell)
        if m.first_cell * m.cells_across > design.section.width * (1 + 1e-12):
            raise DesignError(
                "mesh.first_cell",
                _fmt(design, m.first_cell),
                f"must be at most section.width / cells_across = {_fmt(design, design.section.width / m.cells_across)}",
            )
        smallest = first_cell(design.section.width, m.cells_across, MAX_WALL_RATIO)
        if m.first_cell < smallest * (1 - 1e-9):
            raise DesignError(
                "mesh.first_cell",
                _fmt(design, m.first_cell),
                f"must be at least {_fmt(design, smallest)} for cells_across = {m.cells_across}: a smaller wall cell "
                f"needs a growth ratio above wall_ratio's limit of {MAX_WALL_RATIO:g}; raise first_cell or cells_across",
            )
    if m.cells_high is not None and not 1 <= m.cells_high <= 2000:
        raise DesignError("mesh.cells_high", m.cells_high, "must be a whole number from 1 to 2000")
    if m.cells_along is not None and not 1 <= m.cells_along <= 10_000_000:
        raise DesignError("mesh.cells_along", m.cells_along, "must be a whole number from 1 to 10000000")
    if not 0.1 <= m.along_aspect <= 100 or not math.isfinite(m.along_aspect):
        raise DesignError("mesh.along_aspect", m.along_aspect, "must lie in [0.1, 100]")
    if not 1 <= m.max_cells <= 2_000_000_000:
        raise DesignError("mesh.max_cells", m.max_cells, "must be a whole number from 1 to 2000000000")
    if not 1 <= m.threads <= 256:
        raise DesignError("mesh.threads", m.threads, "must be a whole number from 1 to 256")


DXF_UNITS = ("um", "mm")


def _check_fabrication(design: Design) -> None:
    fab = design.fabrication
    _positive(design, "fabrication.mould_margin", fab.mould_margin)
    _positive(design, "fabrication.base_thickness", fab.base_thickness)
    if fab.port_diameter < 0:
        raise DesignError("fabrication.port_diameter", _fmt(design, fab.port_diameter), "must be 0 (no punch circles) or more")
    if fab.dxf_unit not in DXF_UNITS:
        raise DesignError("fabrication.dxf_unit", fab.dxf_unit, f"must be one of {', '.join(repr(u) for u in DXF_UNITS)}")
