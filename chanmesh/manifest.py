"""``manifest.json``: what was built, from what, with which tools, and how it measures up.

The manifest records the resolved design (SI), library versions, cell counts, every physical
group with its measured and analytic size, each output file's SHA-256, a content hash over all
of them, and a design hash that identifies the request (design + formats + options) so that
a sweep can tell a complete, current output from a stale or partial one.
"""

from __future__ import annotations

import hashlib
import json
import platform
from importlib import metadata
from pathlib import Path
from typing import Any

import numpy as np

from chanmesh import __version__
from chanmesh.design.model import Design
from chanmesh.geometry.reference import reference_of
from chanmesh.meshing.measure import group_measures
from chanmesh.meshing.model import ChannelMesh

MANIFEST = "manifest.json"
SCHEMA = "chanmesh-manifest/1"
LIBRARIES = ("gmsh", "numpy", "meshio", "h5py", "scipy")


def library_versions() -> dict[str, str]:
    out = {"chanmesh": __version__, "python": platform.python_version()}
    for lib in LIBRARIES:
        try:
            out[lib] = metadata.version(lib)
        except metadata.PackageNotFoundError:  # pragma: no cover
            out[lib] = "not installed"
    return out


def canonical_json(obj: Any) -> str:
    return json.dumps(obj, sort_keys=True, separators=(",", ":"), default=_plain)


def _plain(obj: Any) -> Any:
    if isinstance(obj, np.generic):
        return obj.item()
    if isinstance(obj, np.ndarray):
        return obj.tolist()
    if isinstance(obj, Path):
        return str(obj)
    raise TypeError(f"{type(obj).__name__} is not JSON-serialisable")


def design_hash(design: Design, request: dict[str, Any]) -> str:
    """Identifies a build request: the resolved design, chanmesh's version and the outputs asked."""
    payload = {"design": design.to_dict(), "request": request, "chanmesh": __version__}
    return hashlib.sha256(canonical_json(payload).encode()).hexdigest()


def file_sha256(path: Path) -> str:
    h = hashlib.sha256()
    with open(path, "rb") as fh:
        for chunk in iter(lambda: fh.read(1 << 20), b""):
            h.update(chunk)
    return h.hexdigest()


def analytic_sizes(design: Design) -> dict[str, float]:
    """Exact size of each named group where one exists (m^2 for surfaces, m^3 for the volume)."""
    ref = reference_of(design)
    out = {"wall": ref.wall_area, "fluid": ref.volume}
    for port, area in ((design.inlets, ref.inlet_area), (design.outlets, ref.outlet_area)):
        split = port.split
        if len(split) > 1 and design.section.shape == "rectangle":
            for name, frac in zip(port.names, split):
                out[name] = frac * area
        elif len(split) <= 1:
            out[port.prefix] = area
    return out


def group_records(design: Design, mesh: ChannelMesh) -> list[dict[str, Any]]:
    measured = group_measures(mesh)
    exact = analytic_sizes(design)
    records = []
    for g in mesh.groups:
        blocks = mesh.volumes if g.dim == 3 else mesh.facets
        count = int(sum(int(np.sum(b.tags == g.tag)) for b in blocks))
        rec: dict[str, Any] = {
            "name": g.name,
            "dim": g.dim,
            "tag": g.tag,
            "entities": count,
            "measured": measured[g.name],
            "unit": "m^3" if g.dim == 3 else "m^2",
        }
        if g.name in exact:
            rec["analytic"] = exact[g.name]
            rec["relative_error"] = measured[g.name] / exact[g.name] - 1.0
        records.append(rec)
    return records


def make_manifest(
    design: Design,
    mesh: ChannelMesh,
    files: list[Path],
    request: dict[str, Any],
    timings: dict[str, float],
    extra: dict[str, Any] | None = None,
    groups: list[dict[str, Any]] | None = None,
    root: Path | None = None,
) -> dict[str, Any]:
    """The manifest for files already written (hashes are read from them). ``groups`` are the
    records of ``group_records`` when the caller has them already (measured once per build).
    File names are relative to ``root`` when given (files in sub-folders, e.g. ``openfoam/0/U``)."""
    ref = reference_of(design)
    entries = [{"name": p.relative_to(root).as_posix() if root else p.name, "bytes": p.stat().st_size,
                "sha256": file_sha256(p)} for p in sorted(files)]
    content = hashlib.sha256("".join(e["name"] + e["sha256"] for e in entries).encode()).hexdigest()
    manifest: dict[str, Any] = {
        "schema": SCHEMA,
        "name": design.name,
        "design_hash": design_hash(design, request),
        "content_hash": content,
        "design": design.to_dict(),
        "request": request,
        "versions": library_versions(),
        "geometry": {
            "centerline_length": ref.centerline_length,
            "volume": ref.volume,
            "section_area": ref.inlet_area,
            "plan_area": ref.plan_area,
        },
        "cells": mesh.cell_counts(),
        "volume_cells": mesh.n_volume_cells,
        "points": len(mesh.points),
        "groups": group_records(design, mesh) if groups is None else groups,
        "mesher": mesh.info,
        "timings_s": timings,
        "files": entries,
    }
    if extra:
        manifest.update(extra)
    return manifest


def read_manifest(folder: Path) -> dict[str, Any] | None:
    """The manifest in ``folder``, or None when there is none or it is unreadable."""
    try:
        return json.loads((Path(folder) / MANIFEST).read_text())
    except (OSError, ValueError):
        return None


def manifest_is_current(folder: Path, expected_hash: str) -> bool:
    """True if ``folder`` holds a complete build for ``expected_hash`` whose files still match:
    every file the manifest lists exists with its recorded size and SHA-256 (a deleted,
    truncated or altered file makes the output stale, so a sweep or family rebuilds it)."""
    m = read_manifest(folder)
    if not m or m.get("design_hash") != expected_hash:
        return False
    files = m.get("files")
    if not isinstance(files, list):
        return False
    for entry in files:
        p = Path(folder) / entry["name"]
        if not p.is_file() or p.stat().st_size != entry["bytes"] or file_sha256(p) != entry["sha256"]:
            return False
    return True
