"""Mesh families for grid-convergence studies: one design, N systematically refined builds.

Level 1 is the finest, level N the coarsest, and **the coarsest level is the design as
written**: level k is built with ``scale = ratio^(N-k)``, so a design that meshes quickly
stays the cheapest member and the finer ones follow from it. Both meshers interpret
``scale``: the tetrahedral mesher divides every target size by it; the hexahedral mesher
multiplies the cell counts across, high and along by it (rounded from the design each time,
so the rounding is consistent between levels).

Each level is a complete build (``level-k/``: mesh files + manifest). ``family.json``, written
last and atomically, lists per level the volume cell count, the representative cell size
h = (V / N)^(1/3) with V the exact channel volume (Celik et al. 2008, eq. 1), the refinement
ratio to the next coarser level measured from h and as requested, and the mesh quality
figures when the manifest has them. It is the file ``chanmesh gci --family`` reads.

    out/study/
      level-1/   (finest, scale r^(N-1))  manifest.json, NAME.msh, ...
      ...
      level-N/   (the design as written)
      family.json
"""

from __future__ import annotations

import hashlib
import json
from dataclasses import dataclass
from pathlib import Path
from typing import Any

from chanmesh.build import build, build_request, check_estimate
from chanmesh.design.model import Design
from chanmesh.errors import DesignError
from chanmesh.family_limits import MAX_LEVELS, RATIO_RANGE
from chanmesh.manifest import design_hash, manifest_is_current, read_manifest
from chanmesh.post.gci_table import size_from_cells
from chanmesh.post.quality import summary_figures
from chanmesh.progress import BarClock, ProgressBar
from chanmesh.safeio import atomic_write_text, ensure_folder
from chanmesh.writers import DEFAULT_FORMATS, WriteOptions

FAMILY_FILE = "family.json"
SCHEMA = "chanmesh-family/1"
MIN_RECOMMENDED_RATIO = 1.3
"""Celik et al. (2008), J. Fluids Eng. 130(7) 078001, step 2: the refinement factor
r = h_coarse / h_fine should be greater than 1.3."""


@dataclass(frozen=True)
class FamilyPlan:
    """Levels and scales of a family; ``scales[k - 1]`` belongs to level k (1 = finest)."""

    levels: int
    ratio: float

    @property
    def scales(self) -> tuple[float, ...]:
        return tuple(self.ratio ** (self.levels - k) for k in range(1, self.levels + 1))

    @staticmethod
    def folder(level: int) -> str:
        return f"level-{level}"


@dataclass(frozen=True)
class FamilyResult:
    folder: Path
    record: dict[str, Any]
    built: tuple[int, ...]  # levels meshed in this run (the others were current already)


def plan_family(levels: int, ratio: float) -> FamilyPlan:
    """Check the options and return the plan (``DesignError`` names the option)."""
    if isinstance(levels, bool) or not isinstance(levels, int) or not 2 <= levels <= MAX_LEVELS:
        raise DesignError("--levels", levels, f"must be a whole number from 2 to {MAX_LEVELS} (3 for an observed order)")
    lo, hi = RATIO_RANGE
    if not isinstance(ratio, (int, float)) or not lo <= ratio <= hi:
        raise DesignError("--ratio", ratio, f"must lie in [{lo}, {hi}] (refinement factor between neighbouring levels)")
    return FamilyPlan(levels, float(ratio))


def check_family_estimate(design: Design, plan: FamilyPlan) -> int:
    """The finest level's cell estimate, refused above ``mesh.max_cells`` before any meshing."""
    finest = plan.scales[0]
    try:
        return check_estimate(design, finest)
    except DesignError as exc:
        raise DesignError(
            exc.key,
            exc.value,
            f"the finest level (level-1, scale {finest:.4g} = {plan.ratio:g}^{plan.levels - 1}) is too large: "
            f"{exc.allowed}; or ask for fewer --levels or a smaller --ratio",
        ) from None


def level_hashes(design: Design, plan: FamilyPlan, formats: tuple[str, ...], options: WriteOptions) -> list[str]:
    """The manifest ``design_hash`` each level must carry to count as built."""
    return [design_hash(design, build_request(formats, options, s)) for s in plan.scales]


def family_hash(hashes: list[str]) -> str:
    return hashlib.sha256("".join(hashes).encode()).hexdigest()


def family_is_current(folder: Path, design: Design, plan: FamilyPlan, formats: tuple[str, ...] = DEFAULT_FORMATS,
                      options: WriteOptions = WriteOptions()) -> bool:
    """True if ``folder`` holds a complete family for this request (family.json and every level)."""
    hashes = level_hashes(design, plan, formats, options)
    try:
        data = json.loads((Path(folder) / FAMILY_FILE).read_text())
    except (OSError, ValueError):
        return False
    if not isinstance(data, dict) or data.get("family_hash") != family_hash(hashes):
        return False
    return all(manifest_is_current(Path(folder) / plan.folder(k + 1), h) for k, h in enumerate(hashes))


def family_record(design: Design, plan: FamilyPlan, manifests: list[dict[str, Any]], hashes: list[str]) -> dict[str, Any]:
    """The content of family.json from the level manifests (``manifests[k - 1]`` = level k)."""
    rows: list[dict[str, Any]] = []
    for k, (m, scale) in enumerate(zip(manifests, plan.scales), start=1):
        cells = int(m["volume_cells"])
        row: dict[str, Any] = {
            "level": k,
            "cells": cells,
            "h": size_from_cells(cells, 3, m["geometry"]["volume"]),
            "path": plan.folder(k),
            "scale": scale,
            "cell_types": m["cells"],
            "design_hash": m["design_hash"],
            "content_hash": m["content_hash"],
        }
        if "quality" in m:
            row["quality"] = summary_figures(m["quality"])
        rows.append(row)
    warnings = []
    if plan.ratio < MIN_RECOMMENDED_RATIO:
        warnings.append(f"requested --ratio {plan.ratio:g} is below {MIN_RECOMMENDED_RATIO} (Celik et al. 2008)")
    for fine, coarse in zip(rows, rows[1:]):
        measured = coarse["h"] / fine["h"]
        fine["ratio_to_next"] = measured
        fine["ratio_to_next_requested"] = plan.ratio
        pair = f"{fine['path']} -> {coarse['path']}"
        if fine["content_hash"] == coarse["content_hash"] or fine["cells"] == coarse["cells"]:
            warnings.append(f"{pair}: the two levels came out identical ({fine['cells']:,} cells); raise --ratio")
        elif measured < MIN_RECOMMENDED_RATIO:
            warnings.append(
                f"{pair}: achieved ratio {measured:.3f} (from the cell counts) is below {MIN_RECOMMENDED_RATIO}, "
                "the minimum Celik et al. (2008) recommend"
            )
    rows[-1]["ratio_to_next"] = None
    rows[-1]["ratio_to_next_requested"] = None
    return {
        "schema": SCHEMA,
        "name": design.name,
        "levels_requested": plan.levels,
        "ratio_requested": plan.ratio,
        "base": f"level-{plan.levels} is the design as written; level k uses scale = ratio^({plan.levels} - k)",
        "h_definition": "h = (V / N)^(1/3), V the exact channel volume in m^3, N the volume cells (Celik et al. 2008, eq. 1)",
        "family_hash": family_hash(hashes),
        "levels": rows,
        "warnings": warnings,
    }


def build_family(
    design: Design,
    out: Path,
    levels: int = 3,
    ratio: float = 1.5,
    formats: tuple[str, ...] = DEFAULT_FORMATS,
    options: WriteOptions = WriteOptions(),
    quiet: bool = True,
) -> FamilyResult:
    """Build every level into ``out/level-k`` (coarsest first) and write ``out/family.json``.

    A level whose folder already holds a current manifest is reused, so an interrupted family
    resumes; family.json is replaced only once every level is complete."""
    plan = plan_family(levels, ratio)
    check_family_estimate(design, plan)
    out = ensure_folder(Path(out))
    hashes = level_hashes(design, plan, formats, options)
    bar = ProgressBar(plan.levels, label=f"{design.name} ", quiet=quiet)
    manifests: dict[int, dict[str, Any]] = {}
    built = []
    for k in range(plan.levels, 0, -1):
        folder = out / plan.folder(k)
        scale = plan.scales[k - 1]
        if manifest_is_current(folder, hashes[k - 1]):
            manifests[k] = read_manifest(folder) or {}
            bar.advance(f"{plan.folder(k)}: already built")
            continue
        clock = BarClock(bar, prefix=f"{plan.folder(k)} (scale {scale:.3g}): ")
        manifests[k] = build(design, folder, formats, options, scale=scale, clock=clock).manifest
        built.append(k)
        bar.advance(f"{plan.folder(k)}: {manifests[k]['volume_cells']:,} cells")
    bar.close()
    record = family_record(design, plan, [manifests[k] for k in range(1, plan.levels + 1)], hashes)
    atomic_write_text(out / FAMILY_FILE, json.dumps(record, indent=2) + "\n")
    return FamilyResult(out, record, tuple(sorted(built)))
