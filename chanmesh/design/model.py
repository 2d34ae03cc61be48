"""Frozen dataclasses describing one channel design, every length in metres.

These carry no parsing and no meshing: ``chanmesh.design.load`` builds them from a design
file, and ``chanmesh.design.checks`` decides whether they can be built. Variants are made with
``dataclasses.replace``.
"""

from __future__ import annotations

import dataclasses
from dataclasses import dataclass, field
from typing import Any, ClassVar, Union

from chanmesh.jsondata import finite_json


@dataclass(frozen=True)
class Section:
    """The channel cross-section.

    ``height_inner`` is the height at the side wall nearer the centre of curvature of the
    first bend, ``height_outer`` at the farther one; both equal ``height`` for a rectangle.
    The bottom is flat; the top is straight between the two side walls.
    """

    shape: str  # "rectangle" | "trapezoid"
    width: float
    height_inner: float
    height_outer: float

    @property
    def height(self) -> float:
        """Mean height; the height at the centreline (mid-width)."""
        return 0.5 * (self.height_inner + self.height_outer)

    @property
    def max_height(self) -> float:
        return max(self.height_inner, self.height_outer)

    @property
    def min_height(self) -> float:
        return min(self.height_inner, self.height_outer)


@dataclass(frozen=True)
class _Leads:
    inlet_length: float = 0.0
    outlet_length: float = 0.0


@dataclass(frozen=True)
class ArcPath(_Leads):
    """A circular arc of centreline ``radius`` through ``angle`` degrees, counter-clockwise."""

    kind: ClassVar[str] = "arc"
    radius: float = 0.0
    angle: float = 0.0  # degrees


@dataclass(frozen=True)
class SpiralPath(_Leads):
    """An Archimedean spiral r = inner_radius + pitch * theta / (2 pi), outward, counter-clockwise."""

    kind: ClassVar[str] = "spiral"
    inner_radius: float = 0.0
    pitch: float = 0.0
    turns: float = 0.0


@dataclass(frozen=True)
class SerpentinePath(_Leads):
    """Straight runs joined by U-turns of centreline ``radius`` that alternate in direction.

    One period is: straight, U-turn to the left, straight, U-turn to the right; a final
    straight run closes the path, so the outlet points the same way as the inlet.
    """

    kind: ClassVar[str] = "serpentine"
    radius: float = 0.0
    straight: float = 0.0
    periods: int = 0


@dataclass(frozen=True)
class ChambersPath(_Leads):
    """A straight channel with ``count`` rectangular expansion chambers.

    Along x: throat, chamber, throat, ..., chamber, throat (``count + 1`` throats). A chamber
    spans ``chamber_width`` across, centred on the channel or, with ``one_sided``, extending
    from the channel's right-hand wall to the left only.
    """

    kind: ClassVar[str] = "chambers"
    count: int = 0
    chamber_length: float = 0.0
    chamber_width: float = 0.0
    throat_length: float = 0.0
    one_sided: bool = False


@dataclass(frozen=True)
class StraightPath(_Leads):
    """A straight channel of ``length`` along +x from the origin."""

    kind: ClassVar[str] = "straight"
    length: float = 0.0


@dataclass(frozen=True)
class LinePiece:
    """A straight piece of a ``segments`` path, ``length`` metres (design file: ``{ line = L }``)."""

    kind: ClassVar[str] = "line"
    length: float


@dataclass(frozen=True)
class ArcPiece:
    """A circular piece of centreline ``radius`` through ``angle`` degrees, > 0 turning left
    (counter-clockwise seen from +z), < 0 right (design file: ``{ arc = R, angle = A }``)."""

    kind: ClassVar[str] = "arc"
    radius: float
    angle: float  # degrees, signed


@dataclass(frozen=True)
class SpiralPiece:
    """An outward Archimedean piece r = radius + pitch * theta / (2 pi) about a centre placed so
    that the piece continues the path's tangent; ``turns`` > 0 turns left, < 0 right
    (design file: ``{ spiral = r0, pitch = p, turns = n }``)."""

    kind: ClassVar[str] = "spiral"
    radius: float
    pitch: float
    turns: float  # signed


Piece = Union[LinePiece, ArcPiece, SpiralPiece]
PIECE_KINDS: dict[str, type] = {p.kind: p for p in (LinePiece, ArcPiece, SpiralPiece)}


def piece_to_dict(piece: Piece) -> dict[str, Any]:
    """A piece as written in a design file (SI lengths): ``{"line": L}``, ``{"arc": R, "angle": A}``,
    ``{"spiral": r0, "pitch": p, "turns": n}``."""
    if isinstance(piece, LinePiece):
        return {"line": piece.length}
    if isinstance(piece, ArcPiece):
        return {"arc": piece.radius, "angle": piece.angle}
    return {"spiral": piece.radius, "pitch": piece.pitch, "turns": piece.turns}


@dataclass(frozen=True)
class SegmentsPath(_Leads):
    """A path of pieces joined with a continuous tangent, from the origin heading +x, in z = 0."""

    kind: ClassVar[str] = "segments"
    segments: tuple[Piece, ...] = ()


Path = Union[ArcPath, SpiralPath, SerpentinePath, ChambersPath, StraightPath, SegmentsPath]
PATH_KINDS: dict[str, type] = {
    p.kind: p for p in (ArcPath, SpiralPath, SerpentinePath, ChambersPath, StraightPath, SegmentsPath)
}


@dataclass(frozen=True)
class PortSplit:
    """Split of an end face across the width, from the u = -w/2 wall (the inner wall of
    left-turning bends; the left-hand wall looking downstream) to the u = +w/2 wall."""

    prefix: ClassVar[str] = "port"
    split: tuple[float, ...] = ()

    @property
    def names(self) -> tuple[str, ...]:
        if len(self.split) <= 1:
            return (self.prefix,)
        return tuple(f"{self.prefix}_{i + 1}" for i in range(len(self.split)))


@dataclass(frozen=True)
class Inlets(PortSplit):
    """The inlet face, whole (``inlet``) or split into ``inlet_1 .. inlet_n``."""

    prefix: ClassVar[str] = "inlet"


@dataclass(frozen=True)
class Outlets(PortSplit):
    """The outlet face, whole (``outlet``) or split into ``outlet_1 .. outlet_n``."""

    prefix: ClassVar[str] = "outlet"


@dataclass(frozen=True)
class MeshSpec:
    """How to mesh: mesher, resolution, grading and limits."""

    cells: str = "tet"  # "tet" | "hex"
    cells_across: int = 12
    wall_ratio: float = 1.2
    first_cell: float | None = None  # metres; overrides wall_ratio when given
    cells_high: int | None = None
    cells_along: int | None = None
    along_aspect: float = 2.0
    max_cells: int = 5_000_000
    sections: tuple[Any, ...] = ()
    threads: int = 1  # gmsh threads; 1 gives byte-identical meshes run to run (docs/robustness.md)


@dataclass(frozen=True)
class FlowSpec:
    """Operating point for the design numbers; every field optional."""

    rate: float | None = None  # m^3/s
    velocity: float | None = None  # m/s
    fluid: str = "water"
    temperature: float = 298.15  # K
    density: float | None = None  # kg/m^3
    viscosity: float | None = None  # Pa s
    particles: tuple[float, ...] = ()  # diameters, m
    lift_coefficient: float = 0.5
    dean_low: float = 1.0
    dean_high: float = 30.0
    focus_ratio: float | None = None  # lift / Dean drag also needed to call a particle focusing
    biological: bool | None = None  # None: guessed from the fluid name


@dataclass(frozen=True)
class Fabrication:
    """Options of the fabrication outputs (STEP, STL, mould, DXF); lengths in metres."""

    mould_margin: float = 2e-3  # block edge beyond the channel footprint, each side
    base_thickness: float = 2e-3  # base plate under the channel in the mould
    dxf_unit: str = "um"  # "um" | "mm": drawing unit of the DXF plan
    port_diameter: float = 1e-3  # punch circle at each port in the DXF (0: none)


@dataclass(frozen=True)
class Design:
    """One channel design. ``unit`` records the unit the file was written in (for display)."""

    name: str
    section: Section
    path: Path
    outlets: Outlets = field(default_factory=Outlets)
    inlets: Inlets = field(default_factory=Inlets)
    mesh: MeshSpec = field(default_factory=MeshSpec)
    flow: FlowSpec = field(default_factory=FlowSpec)
    fabrication: Fabrication = field(default_factory=Fabrication)
    unit: str = "um"

    @property
    def scale(self) -> float:
        """Metres per design-file unit."""
        from chanmesh.units import LENGTH_UNITS

        return LENGTH_UNITS[self.unit]

    def to_dict(self) -> dict[str, Any]:
        """The resolved design in SI, as plain data (for manifests and hashing)."""
        out = {
            "name": self.name,
            "unit": self.unit,
            "section": dataclasses.asdict(self.section),
            "path": _path_dict(self.path),
            "inlets": {"split": list(self.inlets.split)},
            "outlets": {"split": list(self.outlets.split)},
            "mesh": {**dataclasses.asdict(self.mesh), "sections": list(self.mesh.sections)},
            "flow": {**dataclasses.asdict(self.flow), "particles": list(self.flow.particles)},
            "fabrication": dataclasses.asdict(self.fabrication),
        }
        return finite_json(out)



def _path_dict(path: Path) -> dict[str, Any]:
    out = {"kind": path.kind, **dataclasses.asdict(path)}
    if isinstance(path, SegmentsPath):
        out["segments"] = [piece_to_dict(p) for p in path.segments]
    return out
