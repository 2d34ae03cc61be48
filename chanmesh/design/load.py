"""Read a TOML design file into a ``Design``: types checked, lengths converted to metres.

The file is parsed as data only (``tomllib``); nothing in it is executed. Every problem is a
``DesignError`` naming the key: unknown keys get the closest known key suggested, wrong types
say which type was expected. Ranges and feasibility are checked afterwards by
``chanmesh.design.checks.check_design``.
"""

from __future__ import annotations

import difflib
import math
import sys
from dataclasses import dataclass
from pathlib import Path as FsPath
from typing import Any, Callable

from chanmesh.design.model import (
    PATH_KINDS,
    ArcPiece,
    LinePiece,
    Piece,
    SpiralPiece,
    Design,
    Fabrication,
    FlowSpec,
    Inlets,
    MeshSpec,
    Outlets,
    Section,
)
from chanmesh.errors import MISSING, DesignError
from chanmesh.units import finite_length, length_unit, parse_flow_rate, parse_length, parse_temperature, parse_velocity

if sys.version_info >= (3, 11):
    import tomllib
else:  # pragma: no cover
    import tomli as tomllib


@dataclass(frozen=True)
class Key:
    """One design-file key: how to read it and whether it is required."""

    read: Callable[[str, Any, float], Any]
    required: bool = False
    default: Any = None


MAX_LIST = 1000
"""Longest list a design key takes (sections, split fractions, particle sizes): each section is
a surface in the mesh, so thousands would be a slip, and a bound keeps refusals fast."""


# --- readers: (full key, raw value, metres per design unit) -> value ---------------------------


def _number(key: str, raw: Any) -> float:
    if isinstance(raw, bool) or not isinstance(raw, (int, float)):
        raise DesignError(key, raw, f"must be a number, not {type(raw).__name__}")
    if not math.isfinite(raw):
        raise DesignError(key, raw, "must be a finite number")
    return float(raw)


def read_length(key: str, raw: Any, scale: float) -> float:
    """A length in design units (a plain number) or with its own unit (``'1.5mm'``)."""
    if isinstance(raw, str):
        return parse_length(key, raw)
    return finite_length(key, raw, _number(key, raw) / round(1.0 / scale))


def read_float(key: str, raw: Any, scale: float) -> float:
    return _number(key, raw)


def read_int(key: str, raw: Any, scale: float) -> int:
    if isinstance(raw, bool) or not isinstance(raw, int):
        if isinstance(raw, float) and raw.is_integer():
            return int(raw)
        raise DesignError(key, raw, f"must be a whole number, not {type(raw).__name__}")
    return raw


def read_bool(key: str, raw: Any, scale: float) -> bool:
    if not isinstance(raw, bool):
        raise DesignError(key, raw, "must be true or false")
    return raw


def read_str(key: str, raw: Any, scale: float) -> str:
    if not isinstance(raw, str):
        raise DesignError(key, raw, f"must be a text string, not {type(raw).__name__}")
    return raw


def read_float_list(key: str, raw: Any, scale: float) -> tuple[float, ...]:
    if not isinstance(raw, list):
        raise DesignError(key, raw, "must be a list of numbers, e.g. [0.3, 0.7]")
    if len(raw) > MAX_LIST:
        raise DesignError(key, f"({len(raw):,} values)", f"may list at most {MAX_LIST} values")
    return tuple(_number(f"{key}[{i}]", v) for i, v in enumerate(raw))


def read_length_list(key: str, raw: Any, scale: float) -> tuple[float, ...]:
    if not isinstance(raw, list):
        raise DesignError(key, raw, "must be a list of lengths, e.g. [7, 15] or ['7um', '15um']")
    if len(raw) > MAX_LIST:
        raise DesignError(key, f"({len(raw):,} values)", f"may list at most {MAX_LIST} values")
    return tuple(read_length(f"{key}[{i}]", v, scale) for i, v in enumerate(raw))


def read_station_list(key: str, raw: Any, scale: float) -> tuple[Any, ...]:
    """Stations stay as written (fraction, ``'12.5mm'``, ``'90deg'``, ``'turn=2.25'``)."""
    if not isinstance(raw, list):
        raise DesignError(key, raw, "must be a list of stations, e.g. [0.25, 0.5, '90deg']")
    if len(raw) > MAX_LIST:
        raise DesignError(key, f"({len(raw):,} stations)", f"may list at most {MAX_LIST} stations")
    for i, v in enumerate(raw):
        if isinstance(v, bool) or not isinstance(v, (int, float, str)):
            raise DesignError(f"{key}[{i}]", v, "must be a fraction, a length with unit, or an angle")
    return tuple(raw)


PIECE_KEYS: dict[str, tuple[str, ...]] = {"line": (), "arc": ("angle",), "spiral": ("pitch", "turns")}
"""Each piece of a ``segments`` path: its kind key (the length or radius) and the keys it needs."""
MAX_PIECES = 1000


def read_pieces(key: str, raw: Any, scale: float) -> tuple[Piece, ...]:
    """``[{ line = L }, { arc = R, angle = A }, { spiral = r0, pitch = p, turns = n }, ...]``."""
    example = "e.g. [{ line = 1000 }, { arc = 500, angle = 180 }, { arc = 300, angle = -180 }]"
    if not isinstance(raw, list) or not raw:
        raise DesignError(key, raw, f"must be a non-empty list of pieces, {example}")
    if len(raw) > MAX_PIECES:
        raise DesignError(key, f"{len(raw)} pieces", f"may have at most {MAX_PIECES} pieces")
    out: list[Piece] = []
    for i, item in enumerate(raw):
        where = f"{key}[{i}]"
        if not isinstance(item, dict):
            raise DesignError(where, item, f"must be a table such as {{ line = 1000 }} or {{ arc = 500, angle = 90 }}")
        kinds = [k for k in PIECE_KEYS if k in item]
        if len(kinds) != 1:
            raise DesignError(where, item, "must hold exactly one of 'line' (a length), 'arc' (a radius, with 'angle') "
                              "or 'spiral' (a start radius, with 'pitch' and 'turns')")
        kind = kinds[0]
        allowed = [kind, *PIECE_KEYS[kind]]
        for k in item:
            if k not in allowed:
                raise _unknown(f"{where}.{k}", allowed)
        for k in PIECE_KEYS[kind]:
            if k not in item:
                raise DesignError(f"{where}.{k}", MISSING, f"is required for an {kind!r} piece")
        size = read_length(f"{where}.{kind}", item[kind], scale)
        if kind == "line":
            out.append(LinePiece(size))
        elif kind == "arc":
            out.append(ArcPiece(size, _number(f"{where}.angle", item["angle"])))
        else:
            out.append(SpiralPiece(size, read_length(f"{where}.pitch", item["pitch"], scale),
                                   _number(f"{where}.turns", item["turns"])))
    return tuple(out)


def _rate(key: str, raw: Any, scale: float) -> float:
    return parse_flow_rate(key, raw)


def _velocity(key: str, raw: Any, scale: float) -> float:
    return parse_velocity(key, raw)


def _temperature(key: str, raw: Any, scale: float) -> float:
    if isinstance(raw, (int, float)) and not isinstance(raw, bool):
        return float(raw) + 273.15  # plain numbers are degrees Celsius
    return parse_temperature(key, raw)


# --- the schema ---------------------------------------------------------------------------------

SECTION_KEYS: dict[str, Key] = {
    "shape": Key(read_str, default="rectangle"),
    "width": Key(read_length, required=True),
    "height": Key(read_length),
    "height_inner": Key(read_length),
    "height_outer": Key(read_length),
}

LEAD_KEYS: dict[str, Key] = {
    "inlet_length": Key(read_length, default=0.0),
    "outlet_length": Key(read_length, default=0.0),
}

PATH_KEYS: dict[str, dict[str, Key]] = {
    "arc": {"radius": Key(read_length, required=True), "angle": Key(read_float, required=True)},
    "spiral": {
        "inner_radius": Key(read_length, required=True),
        "pitch": Key(read_length, required=True),
        "turns": Key(read_float, required=True),
    },
    "serpentine": {
        "radius": Key(read_length, required=True),
        "straight": Key(read_length, required=True),
        "periods": Key(read_int, required=True),
    },
    "straight": {"length": Key(read_length, required=True)},
    "segments": {"segments": Key(read_pieces, required=True)},
    "chambers": {
        "count": Key(read_int, required=True),
        "chamber_length": Key(read_length, required=True),
        "chamber_width": Key(read_length, required=True),
        "throat_length": Key(read_length, required=True),
        "one_sided": Key(read_bool, default=False),
    },
}

OUTLET_KEYS: dict[str, Key] = {"split": Key(read_float_list, default=())}

MESH_KEYS: dict[str, Key] = {
    "cells": Key(read_str, default="hex"),
    "cells_across": Key(read_int),
    "wall_ratio": Key(read_float, default=1.2),
    "first_cell": Key(read_length),
    "cells_high": Key(read_int),
    "cells_along": Key(read_int),
    "along_aspect": Key(read_float, default=6.0),
    "max_cells": Key(read_int, default=5_000_000),
    "sections": Key(read_station_list, default=()),
    "threads": Key(read_int, default=1),
}

FLOW_KEYS: dict[str, Key] = {
    "rate": Key(_rate),
    "velocity": Key(_velocity),
    "fluid": Key(read_str, default="water"),
    "temperature": Key(_temperature, default=298.15),
    "density": Key(read_float),
    "viscosity": Key(read_float),
    "particles": Key(read_length_list, default=()),
    "lift_coefficient": Key(read_float, default=0.5),
    "dean_low": Key(read_float, default=1.0),
    "dean_high": Key(read_float, default=30.0),
    "focus_ratio": Key(read_float),
    "biological": Key(read_bool),
}

FABRICATION_KEYS: dict[str, Key] = {
    "mould_margin": Key(read_length, default=Fabrication.mould_margin),
    "base_thickness": Key(read_length, default=Fabrication.base_thickness),
    "dxf_unit": Key(read_str, default=Fabrication.dxf_unit),
    "port_diameter": Key(read_length, default=Fabrication.port_diameter),
}

TOP_KEYS = ("name", "unit", "section", "path", "inlets", "outlets", "mesh", "flow", "fabrication")


def _unknown(key: str, known: list[str]) -> DesignError:
    guess = difflib.get_close_matches(key.rsplit(".", 1)[-1], known, n=1, cutoff=0.5)
    hint = f"; did you mean {guess[0]!r}?" if guess else ""
    return DesignError(key, "(unknown key)", f"is not a design key here; known keys: {', '.join(known)}{hint}")


def _table(raw: Any, where: str) -> dict[str, Any]:
    if raw is None:
        return {}
    if not isinstance(raw, dict):
        raise DesignError(where, raw, f"must be a table [{where}]")
    return raw


def read_table(raw: dict[str, Any], where: str, keys: dict[str, Key], scale: float) -> dict[str, Any]:
    """Read one TOML table against its schema; unknown keys are errors, defaults filled in."""
    for k in raw:
        if k not in keys:
            raise _unknown(f"{where}.{k}", list(keys))
    out: dict[str, Any] = {}
    for k, spec in keys.items():
        full = f"{where}.{k}"
        if k in raw:
            out[k] = spec.read(full, raw[k], scale)
        elif spec.required:
            raise DesignError(full, MISSING, "is required")
        else:
            out[k] = spec.default
    return out


def design_from_dict(data: dict[str, Any], check: bool = True) -> Design:
    """Build and check a ``Design`` from parsed TOML data. With ``check=False`` only the schema
    (keys, types, units) is enforced, not feasibility: what a sweep checks before any variant
    runs, since an infeasible variant is a result but a misspelt key is a bad option."""
    from chanmesh.design.checks import check_design

    for k in data:
        if k not in TOP_KEYS:
            raise _unknown(k, list(TOP_KEYS))
    unit = data.get("unit", "um")
    scale = length_unit("unit", unit)
    name = data.get("name", MISSING)
    if name is MISSING:
        raise DesignError("name", MISSING, "is required: a short name for the outputs, e.g. 'my-spiral'")
    name = read_str("name", name, scale)

    section = _section(read_table(_required_table(data, "section"), "section", SECTION_KEYS, scale))

    path_raw = _required_table(data, "path")
    kind = path_raw.get("kind", MISSING)
    if kind not in PATH_KINDS:
        raise DesignError("path.kind", kind, f"must be one of {', '.join(repr(k) for k in PATH_KINDS)}")
    fields = read_table({k: v for k, v in path_raw.items() if k != "kind"}, "path", {**PATH_KEYS[kind], **LEAD_KEYS}, scale)
    path = PATH_KINDS[kind](**fields)

    inlets = Inlets(**read_table(_table(data.get("inlets"), "inlets"), "inlets", OUTLET_KEYS, scale))
    outlets = Outlets(**read_table(_table(data.get("outlets"), "outlets"), "outlets", OUTLET_KEYS, scale))
    mesh = MeshSpec(**read_table(_table(data.get("mesh"), "mesh"), "mesh", MESH_KEYS, scale))
    flow = FlowSpec(**read_table(_table(data.get("flow"), "flow"), "flow", FLOW_KEYS, scale))
    fab = Fabrication(**read_table(_table(data.get("fabrication"), "fabrication"), "fabrication", FABRICATION_KEYS, scale))
    design = Design(name=name, section=section, path=path, outlets=outlets, inlets=inlets, mesh=mesh, flow=flow, fabrication=fab, unit=unit)
    if check:
        check_design(design)
    return design


def _required_table(data: dict[str, Any], where: str) -> dict[str, Any]:
    if where not in data:
        raise DesignError(f"[{where}]", MISSING, f"the design needs a [{where}] table")
    return _table(data[where], where)


def _section(sec: dict[str, Any]) -> Section:
    shape = sec["shape"]
    if shape == "rectangle":
        for k in ("height_inner", "height_outer"):
            if sec[k] is not None:
                raise DesignError(f"section.{k}", sec[k], "applies to shape = 'trapezoid' only; a rectangle takes 'height'")
        if sec["height"] is None:
            raise DesignError("section.height", MISSING, "is required for shape = 'rectangle'")
        h = sec["height"]
        return Section("rectangle", sec["width"], h, h)
    if shape == "trapezoid":
        if sec["height"] is not None:
            raise DesignError("section.height", sec["height"], "a trapezoid takes 'height_inner' and 'height_outer' instead")
        for k in ("height_inner", "height_outer"):
            if sec[k] is None:
                raise DesignError(f"section.{k}", MISSING, "is required for shape = 'trapezoid'")
        return Section("trapezoid", sec["width"], sec["height_inner"], sec["height_outer"])
    raise DesignError("section.shape", shape, "must be 'rectangle' or 'trapezoid'")


MAX_DESIGN_BYTES = 1_000_000
"""Largest design file read (a design is a few hundred bytes; a megabyte holds thousands of
stations). Checked before parsing, so a huge file is refused at once."""


def parse_design_text(text: str, source: str = "<design>") -> dict[str, Any]:
    """Parse design text (TOML) into plain data, unchecked (a sweep varies this dict)."""
    if len(text) > MAX_DESIGN_BYTES:
        raise DesignError(source, f"({len(text):,} characters)", f"is too large for a design file (at most {MAX_DESIGN_BYTES:,})")
    try:
        return tomllib.loads(text)
    except tomllib.TOMLDecodeError as exc:
        raise DesignError(source, "(not TOML)", f"is not a valid TOML design file: {exc}") from None
    except RecursionError:  # tomllib parses nested arrays recursively
        raise DesignError(source, "(nested too deeply)", "is not a usable design file: arrays or tables nested too deeply") from None


def read_design_data(path: str | FsPath) -> dict[str, Any]:
    """Read a design file from disk into plain data, unchecked."""
    p = FsPath(path)
    if p.is_dir():
        raise DesignError("design file", str(p), "is a folder, not a design file")
    try:
        with open(p, "rb") as fh:
            raw = fh.read(MAX_DESIGN_BYTES + 1)  # bounded: a device or a huge file cannot stall us
    except FileNotFoundError:
        raise DesignError("design file", str(p), "does not exist") from None
    except OSError as exc:
        raise DesignError("design file", str(p), f"cannot be read ({exc.strerror})") from None
    if len(raw) > MAX_DESIGN_BYTES:
        raise DesignError("design file", str(p), f"is larger than {MAX_DESIGN_BYTES:,} bytes; a design file is a short TOML text")
    try:
        text = raw.decode("utf-8")
    except UnicodeDecodeError:
        raise DesignError("design file", str(p), "is not a UTF-8 text file (expected a TOML design)") from None
    return parse_design_text(text, source=str(p))


def loads_design(text: str, source: str = "<design>") -> Design:
    """Parse design text (TOML)."""
    return design_from_dict(parse_design_text(text, source))


def load_design(path: str | FsPath) -> Design:
    """Read a design file from disk."""
    return design_from_dict(read_design_data(path))
