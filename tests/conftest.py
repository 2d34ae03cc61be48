"""Shared helpers: small designs written as TOML text, so tests exercise the real loader."""

from __future__ import annotations

import pytest

from chanmesh.design import loads_design

PATHS = {
    "arc": {"kind": "arc", "radius": 1000, "angle": 90},
    "straight": {"kind": "straight", "length": 600},
    "spiral": {"kind": "spiral", "inner_radius": 800, "pitch": 400, "turns": 1.25},
    "serpentine": {"kind": "serpentine", "radius": 250, "straight": 600, "periods": 1},
    "chambers": {
        "kind": "chambers", "count": 2, "chamber_length": 300, "chamber_width": 500, "throat_length": 200,
    },
}


def _toml_value(v: object) -> str:
    if isinstance(v, bool):
        return "true" if v else "false"
    if isinstance(v, str):
        return f'"{v}"'
    if isinstance(v, (list, tuple)):
        return "[" + ", ".join(_toml_value(x) for x in v) + "]"
    return repr(v)


def design_text(kind: str = "arc", name: str = "t", unit: str = "um", section: dict | None = None,
                path: dict | None = None, mesh: dict | None = None, outlets: dict | None = None,
                flow: dict | None = None) -> str:
    """TOML of a small design (a few thousand tetrahedra) with any table overridden."""
    tables = {
        "section": section or {"width": 200, "height": 50},
        "path": {**PATHS[kind], **(path or {})},
        "mesh": {"cells_across": 4, "wall_ratio": 1.1, **(mesh or {})},
    }
    if outlets:
        tables["outlets"] = outlets
    if flow:
        tables["flow"] = flow
    lines = [f'name = "{name}"', f'unit = "{unit}"']
    for table, values in tables.items():
        lines.append(f"[{table}]")
        lines += [f"{k} = {_toml_value(v)}" for k, v in values.items()]
    return "\n".join(lines) + "\n"


def small_design(kind: str = "arc", **kw):  # noqa: ANN201 - returns chanmesh Design
    return loads_design(design_text(kind, **kw))


@pytest.fixture
def write_design(tmp_path):  # noqa: ANN001, ANN201
    """Write a design file and return its path."""
    def _write(kind: str = "arc", filename: str = "d.toml", **kw):  # noqa: ANN202
        p = tmp_path / filename
        p.write_text(design_text(kind, **kw))
        return p
    return _write
