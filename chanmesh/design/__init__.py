"""The design: what the user asks for, as frozen dataclasses in SI units."""

from chanmesh.design.model import (
    ArcPath,
    ChambersPath,
    Design,
    Fabrication,
    FlowSpec,
    MeshSpec,
    Inlets,
    Outlets,
    Path,
    Section,
    SegmentsPath,
    SerpentinePath,
    SpiralPath,
    StraightPath,
)
from chanmesh.design.load import design_from_dict, load_design, loads_design

__all__ = [
    "ArcPath",
    "ChambersPath",
    "Design",
    "Fabrication",
    "FlowSpec",
    "MeshSpec",
    "Inlets",
    "Outlets",
    "Path",
    "Section",
    "SegmentsPath",
    "SerpentinePath",
    "SpiralPath",
    "StraightPath",
    "design_from_dict",
    "load_design",
    "loads_design",
]
