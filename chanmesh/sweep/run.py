"""Run a sweep on dask.distributed: one task per variant, each in a worker process.

gmsh is one model per process and not thread-safe, so the default cluster is a
``LocalCluster`` of processes with one thread each; ``scheduler`` connects to an existing one
instead (``tcp://host:8786``; its workers must import this chanmesh). Each task calls the
top-level ``build_variant``, which loads the variant through ``design_from_dict`` (the checks
of a design file), builds it (every gmsh session is initialised and finalised inside the
build) and returns a JSON-able row. A variant whose folder already holds a complete output
for the same hash is skipped, so a killed sweep restarts where it stopped; outputs are staged
and the manifest is renamed into place last, so a partial folder never looks complete.
"""

from __future__ import annotations

import shutil
import time
import traceback
from dataclasses import dataclass, field
from pathlib import Path
from typing import Any

from chanmesh.build import build, build_request
from chanmesh.design.load import design_from_dict
from chanmesh.design.model import Design
from chanmesh.errors import DesignError
from chanmesh.family import build_family, family_hash, family_is_current, level_hashes, plan_family
from chanmesh.manifest import design_hash, manifest_is_current
from chanmesh.progress import ProgressBar
from chanmesh.safeio import STAGE_PREFIX, ensure_folder
from chanmesh.sweep.plan import apply
from chanmesh.sweep.summary import design_figures, write_summary
from chanmesh.writers import DEFAULT_FORMATS, WriteOptions

ID_LENGTH = 12


@dataclass(frozen=True)
class SweepRequest:
    """What every variant is built with (besides its design)."""

    formats: tuple[str, ...] = DEFAULT_FORMATS
    options: WriteOptions = WriteOptions()
    family_levels: int = 0  # 0: one build per variant; >= 2: a mesh family per variant
    family_ratio: float = 1.5


@dataclass
class SweepResult:
    rows: list[dict[str, Any]]
    summary: Path
    counts: dict[str, int] = field(default_factory=dict)


def variant_id(design: Design, request: SweepRequest) -> str:
    """Short hash of the resolved design and the request: the variant's folder name."""
    if request.family_levels:
        plan = plan_family(request.family_levels, request.family_ratio)
        full = family_hash(level_hashes(design, plan, request.formats, request.options))
    else:
        full = design_hash(design, build_request(request.formats, request.options))
    return full[:ID_LENGTH]


def is_complete(folder: Path, design: Design, request: SweepRequest) -> bool:
    """True only if ``folder`` holds a finished output for this request whose every listed file
    exists with its recorded size and SHA-256 (``manifest_is_current``); else it is rebuilt."""
    if request.family_levels:
        plan = plan_family(request.family_levels, request.family_ratio)
        return family_is_current(folder, design, plan, request.formats, request.options)
    return manifest_is_current(folder, design_hash(design, build_request(request.formats, request.options)))


def _clear_stale_stages(folder: Path) -> None:
    """Staging folders left by a killed run (never complete outputs) are removed."""
    if folder.is_dir():
        for stage in folder.rglob(f"{STAGE_PREFIX}*"):
            shutil.rmtree(stage, ignore_errors=True)


def build_variant(index: int, data: dict[str, Any], assignment: dict[str, Any], out: str, request: SweepRequest) -> dict[str, Any]:
    """Load, check and build one variant; never raises: the row says what happened."""
    start = time.perf_counter()
    row: dict[str, Any] = {"variant": index, "params": assignment, "status": "", "message": "", "id": "", "path": ""}
    try:
        design = design_from_dict(apply(data, assignment))
    except DesignError as exc:
        return {**row, "status": "infeasible", "message": str(exc), "time_s": time.perf_counter() - start}
    try:
        vid = variant_id(design, request)
        folder = Path(out) / vid
        row.update(id=vid, path=vid, numbers=design_figures(design))
        if is_complete(folder, design, request):
            row["status"] = "resumed"
        else:
            _clear_stale_stages(folder)
            if request.family_levels:
                rec = build_family(design, folder, request.family_levels, request.family_ratio, request.formats, request.options).record
                row["levels"] = [{"level": r["level"], "cells": r["cells"], "quality": r.get("quality")} for r in rec["levels"]]
            else:
                m = build(design, folder, request.formats, request.options).manifest
                row["levels"] = [{"level": 1, "cells": m["volume_cells"], "quality": m.get("quality")}]
            row["status"] = "built"
    except DesignError as exc:  # e.g. max_cells, refused before meshing
        row.update(status="infeasible", message=str(exc))
    except Exception as exc:  # noqa: BLE001 - one variant's failure must not end the sweep
        last = traceback.extract_tb(exc.__traceback__)[-1] if exc.__traceback__ else None
        where = f" (at {Path(last.filename).name}:{last.lineno})" if last else ""
        row.update(status="failed", message=f"{type(exc).__name__}: {exc}{where}")
    if row["status"] == "resumed":
        row["levels"] = _levels_from_disk(Path(out) / row["path"], request)
    row["time_s"] = time.perf_counter() - start
    return row


def _levels_from_disk(folder: Path, request: SweepRequest) -> list[dict[str, Any]]:
    import json

    if request.family_levels:
        rec = json.loads((folder / "family.json").read_text())
        return [{"level": r["level"], "cells": r["cells"], "quality": r.get("quality")} for r in rec["levels"]]
    m = json.loads((folder / "manifest.json").read_text())
    return [{"level": 1, "cells": m["volume_cells"], "quality": m.get("quality")}]


SCHEDULER_TIMEOUT_S = 5
"""How long ``--scheduler`` waits for the scheduler to answer before the sweep is refused."""


def run_sweep(
    data: dict[str, Any],
    assignments: list[dict[str, Any]],
    out: Path,
    request: SweepRequest = SweepRequest(),
    scheduler: str | None = None,
    workers: int = 2,
    quiet: bool = True,
) -> SweepResult:
    """Build every variant on a dask cluster; writes ``out/summary.csv`` as variants finish."""
    from dask.distributed import Client, LocalCluster, as_completed

    if request.family_levels:
        plan_family(request.family_levels, request.family_ratio)  # option errors before any cluster starts
    if not 1 <= workers <= 1024:
        raise DesignError("--workers", workers, "must be a whole number from 1 to 1024")
    out = ensure_folder(Path(out))
    keys = list(assignments[0]) if assignments else []
    bar = ProgressBar(len(assignments), label="sweep ", quiet=quiet)
    rows: dict[int, dict[str, Any]] = {}
    if scheduler:
        try:
            client, cluster = Client(scheduler, timeout=SCHEDULER_TIMEOUT_S), None
        except (OSError, TimeoutError, ValueError) as exc:
            raise DesignError("--scheduler", scheduler, f"no dask scheduler answered within {SCHEDULER_TIMEOUT_S} s "
                              f"({type(exc).__name__}); start one (dask scheduler) or leave --scheduler out "
                              "for a local cluster") from None
    else:
        cluster = LocalCluster(n_workers=workers, threads_per_worker=1, processes=True, dashboard_address=None)
        client = Client(cluster)
    try:
        futures = [
            client.submit(build_variant, i, data, a, str(out), request, pure=False, key=f"chanmesh-variant-{i}-{time.time_ns()}")
            for i, a in enumerate(assignments, start=1)
        ]
        bar.stage(f"{len(futures)} variants on {len(client.scheduler_info().get('workers', {}))} workers")
        index = {f.key: i for i, f in enumerate(futures, start=1)}
        for fut in as_completed(futures):
            i = index[fut.key]
            try:
                row = fut.result()
            except Exception as exc:  # noqa: BLE001 - a worker died (segfault, memory): record it
                row = {"variant": i, "params": assignments[i - 1], "status": "failed", "id": "", "path": "",
                       "message": f"worker lost: {type(exc).__name__}: {exc}", "time_s": float("nan")}
            rows[i] = row
            write_summary([rows[k] for k in sorted(rows)], out, keys)
            bar.advance(f"variant {i}: {row['status']}")
    finally:
        client.close()
        if cluster is not None:
            cluster.close()
        bar.close()
    ordered = [rows[k] for k in sorted(rows)]
    counts: dict[str, int] = {}
    for r in ordered:
        counts[r["status"]] = counts.get(r["status"], 0) + 1
    return SweepResult(ordered, write_summary(ordered, out, keys), counts)
