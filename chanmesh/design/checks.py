"""Feasibility checks run before any gmsh call; each failure is a ``DesignError``.

Each rule names the key, the value (in the design's own unit) and the allowed range.
"""

from __future__ import annotations

import math
import re
from typing import TYPE_CHECKING

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

if TYPE_CHECKING:
    from chanmesh.geometry.centerline import Centerline

MIN_WALL = 0.05
"""Smallest solid wall between neighbouring channel runs, as a fraction of the width
(common practice, no source: bonding needs some land between channels)."""

NAME_PATTERN = re.compile(r"[A-Za-z0-9][A-Za-z0-9._-]{0,79}")  # used with fullmatch: no trailing newline
MESHERS = ("tet", "hex")
MAX_WALL_RATIO = 3.0
MIN_FIRST_CELL = 1e-3
"""Smallest first_cell as a fraction of the core cell: 38 wall layers at growth 1.2 (common practice,
no source: a laminar channel needs no finer wall cell than that)."""
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
    _check_small_features(design)
    _check_clearance(design)
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


MIN_FEATURE = 0.01
"""Smallest length chanmesh builds, as a fraction of the section width: every piece of the
centreline (a lead, a bend's arc, a spiral, a straight), a chamber or throat, a chamber's step
beyond the channel wall and each part of a split inlet or outlet. Anything shorter lies near
the geometry kernel's tolerance and meshes into nothing (common practice, no source)."""

MAX_WIDTHS_LONG = 50_000
"""Longest centreline, in section widths (a 10 cm channel 2 um wide); the wall test samples
every width / 8, so a bound keeps it to seconds."""

CLEARANCE_SLACK = 0.01
"""The wall test refuses walls of different runs nearer than MIN_WALL - 1 % of the width
(sampling; common practice, no source). A spiral at its least pitch passes only with an inner
radius of about 0.85 widths or more: its turns are tilted, so near a tight centre its walls
come nearer the next turn than the pitch says (measured with the wall polylines: 3.0 % of the
width left at inner radius 0.5 w, 3.5 % at 0.6 w, 3.9 % at 0.8 w, 4.3 % at w, 4.7 % at 2 w)."""


def run_key(design: Design, line: "Centerline", segment: int) -> str:
    """The design key that makes centreline segment ``segment``: a lead's length, the family's
    extent (``path.angle``, ``path.turns``, ``path.straight`` ...) or ``path.segments[k]``."""
    path = design.path
    if line.kinds[segment] == "lead":
        return "path.inlet_length" if segment == 0 else "path.outlet_length"
    k = segment - (1 if line.kinds[0] == "lead" else 0)
    if isinstance(path, SegmentsPath):
        return f"path.segments[{k}]"
    if isinstance(path, ArcPath):
        return "path.angle"
    if isinstance(path, SpiralPath):
        return "path.turns"
    if isinstance(path, SerpentinePath):
        return "path.straight" if line.kinds[segment] == "straight" else "path.radius"
    if isinstance(path, StraightPath):
        return "path.length"
    return "path.throat_length"


def _shown(design: Design, key: str) -> Shown:
    """The value of ``key`` as the design gives it (lengths in the design's unit)."""
    path = design.path
    if key.startswith("path.segments["):
        k = int(key[len("path.segments["):].split("]")[0])
        piece = path.segments[k]  # type: ignore[union-attr]
        if isinstance(piece, LinePiece):
            return Shown(f"{{line = {piece.length / design.scale:.6g}}}")
        if isinstance(piece, ArcPiece):
            return Shown(f"{{arc = {piece.radius / design.scale:.6g}, angle = {piece.angle:g}}}")
        return Shown(f"{{spiral = {piece.radius / design.scale:.6g}, pitch = {piece.pitch / design.scale:.6g}, turns = {piece.turns:g}}}")
    value = getattr(path, key.split(".", 1)[1])
    if key == "path.angle":
        return Shown(f"{value:g} deg")
    if key == "path.turns":
        return Shown(f"{value:g}")
    return _fmt(design, value)


def _check_small_features(design: Design) -> None:
    """Every piece of the centreline, chamber, throat, chamber step and split part at least
    MIN_FEATURE of the width long (leads may be 0: no lead)."""
    from chanmesh.geometry.centerline import centerline_of

    w = design.section.width
    least = MIN_FEATURE * w * (1 - 1e-9)  # round-off: exactly 1 % passes
    hint = f"at least {_fmt(design, least)} ({MIN_FEATURE:.0%} of the section width)"
    line = centerline_of(design)
    if line.length > MAX_WIDTHS_LONG * w:
        key = run_key(design, line, len(line.segments) - 1 - (1 if line.kinds[-1] == "lead" and len(line.segments) > 1 else 0))
        raise DesignError(key, _shown(design, key), f"makes a centreline {_fmt(design, line.length)} long; it may be at most "
                          f"{MAX_WIDTHS_LONG:,} section widths ({_fmt(design, MAX_WIDTHS_LONG * w)})")
    for i, seg in enumerate(line.segments):
        if seg.length < least:
            key = run_key(design, line, i)
            what = "must be 0 (no lead) or " if line.kinds[i] == "lead" else "makes a piece of channel "
            extra = "" if line.kinds[i] == "lead" else f"{_fmt(design, seg.length)} long; it must be "
            raise DesignError(key, _shown(design, key), f"{what}{extra}{hint}: shorter pieces lie near the "
                              "geometry kernel's tolerance and mesh into nothing")
    path = design.path
    if isinstance(path, ChambersPath):
        for key in ("path.chamber_length", "path.throat_length"):
            if getattr(path, key.split(".")[1]) < least:
                raise DesignError(key, _shown(design, key), f"must be {hint}")
        step = path.chamber_width - w if path.one_sided else 0.5 * (path.chamber_width - w)
        if step < least:
            need = w + (least if path.one_sided else 2 * least)
            raise DesignError("path.chamber_width", _fmt(design, path.chamber_width),
                              f"must be at least {_fmt(design, need)}: each chamber wall must stand {hint} beyond the channel wall")
    for key, split in (("inlets.split", design.inlets.split), ("outlets.split", design.outlets.split)):
        for i, f in enumerate(split):
            if f < MIN_FEATURE:
                raise DesignError(f"{key}[{i}]", f, f"must be at least {MIN_FEATURE:g}: each part of a split face must "
                                  f"be at least {MIN_FEATURE:.0%} of the section width")


def _check_clearance(design: Design) -> None:
    """The channel must not touch itself: walls of different runs (leads and every piece
    included) at least MIN_WALL of the width apart, the rule the spiral pitch and serpentine
    radius checks apply to their neighbouring runs. Generic: it works on the centreline and
    its sections, whatever family or pieces made them."""
    from chanmesh.geometry.centerline import centerline_of
    from chanmesh.geometry.clearance import wall_contact

    w = design.section.width
    gap = MIN_WALL * w
    line = centerline_of(design)
    hit = wall_contact(line, w, gap - CLEARANCE_SLACK * w)
    if hit is None:
        return
    first, second = run_key(design, line, hit.segment1), run_key(design, line, hit.segment2)
    key, other = (first, second) if first.endswith("_length") and not second.endswith("_length") else (second, first)
    where = f"{hit.s1 / design.scale:.6g} and {hit.s2 / design.scale:.6g} {design.unit} along the centreline"
    touch = "cross" if hit.distance == 0 else f"come within {_fmt(design, hit.distance)} of"
    whose = "its own run" if key == other else f"the run of {other}"
    raise DesignError(
        key, _shown(design, key),
        f"the channel runs into itself: its walls {touch} {whose} (at {where}); walls of different runs must "
        f"stay at least {_fmt(design, gap)} apart ({MIN_WALL:.0%} of the width) and must not cross: shorten the "
        "leads, open the bends or turn the other way",
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
    if m.cells_across is not None and not 1 <= m.cells_across <= 2000:
        raise DesignError("mesh.cells_across", m.cells_across, "must be a whole number from 1 to 2000 (core cells across the width)")
    if m.cells_high is not None and not 1 <= m.cells_high <= 2000:
        raise DesignError("mesh.cells_high", m.cells_high, "must be a whole number from 1 to 2000 (core cells over the height)")
    if not 1.0 <= m.wall_ratio <= MAX_WALL_RATIO:
        raise DesignError("mesh.wall_ratio", m.wall_ratio, "must lie in [1, 3] (1 = uniform cells)")
    if m.first_cell is not None:
        _positive(design, "mesh.first_cell", m.first_cell)
        from chanmesh.sizing import resolution_of

        r = resolution_of(design)
        core = min(design.section.width / r.cells_across, design.section.height / r.cells_high)
        if m.first_cell > core * (1 + 1e-9):
            raise DesignError(
                "mesh.first_cell",
                _fmt(design, m.first_cell),
                f"must be at most the core cell ({_fmt(design, core)} = the smaller of width / cells_across "
                "and height / cells_high): the wall-adjacent cell grows toward the core, never shrinks",
            )
        if m.first_cell < core * MIN_FIRST_CELL:
            raise DesignError(
                "mesh.first_cell",
                _fmt(design, m.first_cell),
                f"must be at least {MIN_FIRST_CELL:g} of the core cell ({_fmt(design, core)}): a smaller wall-adjacent cell "
                "needs dozens of wall layers (raise first_cell, or refine the core with cells_across / cells_high)",
            )
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
