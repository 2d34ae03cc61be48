"""The build: design in, checked and labelled mesh files plus a manifest out.

    design -> estimate (refuse above max_cells) -> mesh -> check tagging -> manifest hooks
           (quality, numbers; resolution in a second thread) -> measure groups (once)
           -> write formats (XDMF in a thread beside the others) -> report.html -> manifest
           -> rename everything into place (manifest last)

Each arrow is a stage of the ``StageClock``; the manifest's ``timings_s`` holds each stage's
duration and the total (``StageClock.durations``).
"""

from __future__ import annotations

import json
import sys
from concurrent.futures import Future, ThreadPoolExecutor
from dataclasses import dataclass
from pathlib import Path
from typing import Any, Callable

from chanmesh.design.model import Design
from chanmesh.errors import DesignError
from chanmesh.manifest import MANIFEST, canonical_json, group_records, make_manifest
from chanmesh.meshing.faces import forget_face_tables
from chanmesh.meshing.model import ChannelMesh
from chanmesh.meshing.registry import mesher_for
from chanmesh.meshing.verify import check_boundary_tagging
from chanmesh.progress import StageClock
from chanmesh.safeio import StagedOutput
from chanmesh.writers import DEFAULT_FORMATS, WriteOptions, format_named

ManifestHook = Callable[[Design, ChannelMesh], dict[str, Any]]


def _numbers(design: Design, mesh: ChannelMesh) -> dict[str, Any]:
    from chanmesh.numbers import design_numbers
    from chanmesh.numbers.section_flow import section_flow_numbers

    out = design_numbers(design)
    out["section_flow"] = section_flow_numbers(design)  # computed Dean flow beside the correlation
    return out


def _quality(design: Design, mesh: ChannelMesh) -> dict[str, Any]:
    from chanmesh.post.quality import mesh_quality

    return mesh_quality(mesh).as_dict()


def _resolution(design: Design, mesh: ChannelMesh) -> dict[str, Any]:
    from chanmesh.errors import ChanmeshError

    try:
        from chanmesh.resolution import resolution_figure

        return resolution_figure(design, mesh)
    except ChanmeshError as exc:  # e.g. the section flow does not converge at this operating point
        return {"skipped": str(exc)}
    except ImportError as exc:  # the section-flow package (chanmesh.flow) is missing from this install
        return {"skipped": f"section-flow solver not available ({exc})"}


MANIFEST_HOOKS: list[tuple[str, ManifestHook]] = [("quality", _quality), ("numbers", _numbers), ("resolution", _resolution)]
"""Extra manifest sections (name, function): design numbers, mesh quality, the resolution
figure (chanmesh.resolution: the section flow on the mesh's own section grid), ... Each hook
returns a JSON-able dict stored under its name; a hook that raises ``DesignError`` is
recorded as {"skipped": message} instead of failing the build."""


SWITCH_INTERVAL_S = 0.0001
"""How often the interpreter passes the GIL between the build's two threads (Python's default is
0.005 s). Each numpy call of one thread gives the GIL up and must win it back from a thread
running Python code (matplotlib); at the default, those waits added seconds to a 1 M-cell
build (bench/openfoam_write.py); 0.5 ms and 0.1 ms gave 3.45 and 3.27 s (median of four)."""

BACKGROUND_HOOKS = ("resolution",)
"""Hooks run in a second thread while the main thread checks the mesh, computes the quality
figures, measures the groups and writes the formats: the resolution figure (its sparse LU runs
without the GIL) starts as soon as the mesh exists; its stage times only the wait. Every
picture of the report is drawn in the same thread (matplotlib: only there until the report):
before the hooks it imports the report's modules (about 0.4 s) while the main thread meshes;
after them it draws the plan and 3D views (``report_views``; for a large mesh only once the
quality figures exist, ``EARLY_PICTURES_BELOW``), then the quality histograms and the section
pictures (``report_figures``), beside the writers, so the report stage only writes the page."""


EARLY_PICTURES_BELOW = 500_000
"""Cells under which the report's plan and 3D views are drawn right after the background hooks,
beside the quality figures. Above it they wait for the quality figures: drawn beside them,
matplotlib's Python code slowed the quality batches' numpy calls by half. Measured (in-process
builds, three each): arc-bend (150 k hexahedra) 2.50 s early against 2.59 s after;
spiral-sorter (857 k) 4.14 s early against 4.05 s after."""


def _report_modules() -> None:
    import chanmesh.report.html  # noqa: F401  (matplotlib and the report's pictures)


def _views(design: Design, mesh: ChannelMesh) -> tuple[bytes, bytes]:
    from chanmesh.report.html import report_views

    return report_views(design, mesh)


def _figures(design: Design, mesh: ChannelMesh, extra: dict[str, Any], ahead: dict[str, Future]) -> Any:
    """The report's histograms and section pictures, once the quality figures (``extra``) and
    the background hooks (``ahead``, queued before this in the same thread: done) exist."""
    from chanmesh.report.html import report_figures

    return report_figures(design, mesh, {**extra, **{name: f.result() for name, f in ahead.items()}})


def _guarded(hook: ManifestHook, design: Design, mesh: ChannelMesh) -> dict[str, Any]:
    """A hook's section, or {"skipped": message} when it refuses the design."""
    try:
        return hook(design, mesh)
    except DesignError as exc:
        return {"skipped": str(exc)}


def _write_formats(design: Design, mesh: ChannelMesh, chosen: list, folder: Path, options: WriteOptions,
                   clock: StageClock) -> list[Path]:
    """Write every chosen format into ``folder``; the files in the order of ``chosen``.

    A format marked ``beside`` (HDF5: its compression runs without the GIL) is written in a
    thread of its own while this thread writes the others; its stage times only the wait. The
    thread is always joined before this returns or raises, so an interrupt or a failure never
    leaves it writing into a staging folder that is being removed (the wait is bounded by that
    one write: about 0.7 s a million hexahedra)."""
    written: dict[str, list[Path]] = {}
    with ThreadPoolExecutor(max_workers=1, thread_name_prefix="chanmesh-writer") as pool:
        beside = {fmt.name: pool.submit(fmt.write_for, design, mesh, folder, design.name, options)
                  for fmt in chosen if fmt.beside and len(chosen) > 1}
        for fmt in chosen:
            if fmt.name not in beside:
                clock(f"writing {fmt.name}")
                written[fmt.name] = fmt.write_for(design, mesh, folder, design.name, options)
        for name, future in beside.items():
            clock(f"writing {name}")
            written[name] = future.result()
    return [p for fmt in chosen for p in written[fmt.name]]


@dataclass(frozen=True)
class BuildResult:
    folder: Path
    files: list[Path]
    manifest: dict[str, Any]
    mesh: ChannelMesh


def check_estimate(design: Design, scale: float = 1.0) -> int:
    """Refuse a design whose estimated cell count exceeds ``mesh.max_cells`` (before meshing)."""
    estimate = mesher_for(design).estimate(design, scale=scale)
    if estimate > design.mesh.max_cells:
        from chanmesh.meshing.budget import too_many_cells

        raise too_many_cells(design, estimate, scale)
    return estimate


def build_request(formats: tuple[str, ...], options: WriteOptions, scale: float = 1.0) -> dict[str, Any]:
    """What was asked of a build besides the design (hashed into ``design_hash``): formats
    (checked, duplicates dropped), MSH options and the refinement scale."""
    if not formats:
        raise DesignError("--format", "", "names no format; give at least one, e.g. msh,xdmf,vtu")
    chosen = [format_named(f).name for f in dict.fromkeys(formats)]
    request = {"formats": chosen, "msh_version": options.msh_version, "binary": options.binary, "scale": scale}
    if not options.msh_sections:  # only when asked, so that earlier builds keep their design hash
        request["msh_sections"] = False
    return request


def build(
    design: Design,
    out: Path,
    formats: tuple[str, ...] = DEFAULT_FORMATS,
    options: WriteOptions = WriteOptions(),
    scale: float = 1.0,
    clock: StageClock | None = None,
) -> BuildResult:
    """Build ``design`` into folder ``out``; returns the files and the manifest."""
    clock = clock or StageClock(quiet=True)
    request = build_request(formats, options, scale)
    chosen = [format_named(f) for f in dict.fromkeys(formats)]
    for fmt in chosen:
        fmt.check_design(design)
    estimate = check_estimate(design, scale)
    switch = sys.getswitchinterval()
    try:
        sys.setswitchinterval(SWITCH_INTERVAL_S)
        return _build(design, Path(out), chosen, options, scale, clock, request, estimate)
    finally:
        sys.setswitchinterval(switch)


def _build(design: Design, out: Path, chosen: list, options: WriteOptions, scale: float, clock: StageClock,
           request: dict[str, Any], estimate: int) -> BuildResult:
    with StagedOutput(out) as staged:
        pool = ThreadPoolExecutor(max_workers=1, thread_name_prefix="chanmesh-hook")
        try:
            pool.submit(_report_modules)
            mesh = mesher_for(design).mesh(design, scale=scale, progress=clock)
            ahead = {name: pool.submit(_guarded, hook, design, mesh) for name, hook in MANIFEST_HOOKS if name in BACKGROUND_HOOKS}
            early = mesh.n_volume_cells < EARLY_PICTURES_BELOW
            views = pool.submit(_views, design, mesh) if early else None  # plan and 3D views
            clock("checking")
            counts = check_boundary_tagging(mesh)  # makes the face table the quality figures and writers share
            mesh.info["estimated_cells"] = estimate
            mesh.info.update(counts)
            extra = {}
            for name, hook in MANIFEST_HOOKS:
                if name not in ahead:
                    clock(name)
                    extra[name] = _guarded(hook, design, mesh)
            if views is None:  # a large mesh: the views after the quality figures (EARLY_PICTURES_BELOW)
                views = pool.submit(_views, design, mesh)
            figures = pool.submit(_figures, design, mesh, dict(extra), ahead)  # histograms and section pictures
        finally:
            pool.shutdown(wait=False)  # the thread ends with its tasks; nothing waits for it on an interrupt
        if not any(fmt.reads_face_table for fmt in chosen):
            forget_face_tables(mesh)  # made by the check, shared with the quality figures: done
        clock("measuring")
        groups = group_records(design, mesh)
        files = _write_formats(design, mesh, chosen, staged.stage, options, clock)
        forget_face_tables(mesh)  # kept for the polyMesh writer, if chosen
        for name, _hook in MANIFEST_HOOKS:
            if name in ahead:
                clock(name)
                extra[name] = ahead[name].result()
        clock("report")
        from chanmesh.report import write_report
        from chanmesh.report.html import ReportPictures

        draft = make_manifest(design, mesh, [], request, clock.durations(), extra, groups)  # no file hashes yet
        pictures = ReportPictures(*views.result(), *figures.result())
        files.append(write_report(staged.stage, design, mesh, draft, files, pictures))
        clock("manifest")
        manifest = make_manifest(design, mesh, files, request, clock.durations(), extra, groups, root=staged.stage)
        (staged.stage / MANIFEST).write_text(json.dumps(json.loads(canonical_json(manifest)), indent=2) + "\n")
        final = staged.commit(MANIFEST)
    clock("done")
    return BuildResult(Path(out), final, manifest, mesh)
