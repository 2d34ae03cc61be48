"""End-to-end robustness: generated designs of every family either build a mesh that passes
the invariants or are refused with a ``DesignError`` naming a key; bad files, unwritable
outputs, a full disk or an interrupt mid-write leave no half-written output; names cannot
escape the output folder."""

from __future__ import annotations

import errno
import os
from pathlib import Path

import numpy as np
import pytest
import pyvista as pv
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

import chanmesh.writers.vtu as vtu_writer
import hand_reference as hand
from chanmesh.build import build
from chanmesh.cli import main
from design_text import arc_text
from chanmesh.design.load import TOP_KEYS, design_from_dict
from chanmesh.errors import DesignError, OutputError
from chanmesh.manifest import file_sha256, read_manifest
from chanmesh.safeio import STAGE_PREFIX, atomic_write_text

SETTINGS = settings(max_examples=10, deadline=None, derandomize=True,
                    suppress_health_check=[HealthCheck.too_slow, HealthCheck.function_scoped_fixture])

num = lambda lo, hi: st.floats(lo, hi, allow_nan=False).map(lambda v: round(v, 1))  # noqa: E731


@st.composite
def design_data(draw, kind: str) -> dict:
    """A design of family ``kind``: mostly inside the feasible range, sometimes with one value
    pushed outside it (then a DesignError naming that key is the right answer)."""
    w = draw(num(60, 300))
    shape = draw(st.sampled_from(["rectangle", "rectangle", "trapezoid"]))
    h1, h2 = draw(num(25, 120)), draw(num(25, 120))
    sec = {"shape": shape, "width": w, "height": h1} if shape == "rectangle" else \
        {"shape": shape, "width": w, "height_inner": h1, "height_outer": h2}
    bad = draw(st.sampled_from([False, False, True]))
    if kind == "arc":
        path = {"kind": "arc", "radius": draw(num(0.1 * w, 0.45 * w)) if bad else draw(num(0.8 * w, 10 * w)),
                "angle": draw(num(10, 300)), "inlet_length": draw(num(0, 300))}
    elif kind == "spiral":
        path = {"kind": "spiral", "inner_radius": draw(num(0.8 * w, 6 * w)),
                "pitch": draw(num(0.3 * w, w)) if bad else draw(num(1.1 * w, 3 * w)), "turns": draw(num(0.2, 1.0))}
    elif kind == "serpentine":
        path = {"kind": "serpentine", "radius": draw(num(0.6 * w, 3 * w)), "straight": draw(num(50, 600)),
                "periods": 0 if bad else draw(st.integers(1, 2))}
    else:
        sec = {"shape": "trapezoid", "width": w, "height_inner": h1, "height_outer": h2} if bad else \
            {"shape": "rectangle", "width": w, "height": h1}
        path = {"kind": "chambers", "count": draw(st.integers(1, 2)), "chamber_length": draw(num(80, 500)),
                "chamber_width": draw(num(1.2 * w, 3 * w)), "throat_length": draw(num(50, 300))}
    data = {"name": f"robust-{kind}", "unit": "um", "section": sec, "path": path,
            "mesh": {"cells": "tet", "cells_across": draw(st.sampled_from([3, 4])), "max_cells": 15_000}}
    return data, bad


def section_area(sec: dict) -> float:
    """Rectangle w h, trapezoid w (h_i + h_o) / 2 (plane geometry), in m^2."""
    w = sec["width"] * 1e-6
    if sec["shape"] == "rectangle":
        return w * sec["height"] * 1e-6
    return w * 0.5 * (sec["height_inner"] + sec["height_outer"]) * 1e-6


def check_invariants(data: dict, folder: Path) -> None:
    m = read_manifest(folder)
    groups = {g["name"]: g for g in m["groups"]}
    # inlet and outlet areas equal the section area (planar faces: exact up to round-off)
    area = section_area(data["section"])
    assert groups["inlet"]["measured"] == pytest.approx(area, rel=1e-6)
    outlets = sum(g["measured"] for n, g in groups.items() if n.startswith("outlet"))
    assert outlets == pytest.approx(area, rel=1e-6)
    # measured independently by VTK (pyvista): positive cell volumes summing to the volume worked
    # by hand from the drawn numbers (tests/hand_reference.py: Pappus in the general form,
    # Goodman & Goodman 1969; chambers as boxes), within 1 % on these 3-4-cells-across meshes:
    # the drawn bends reach an inner-wall radius of 0.1 w, which a few tetrahedra facet
    # coarsely (measured up to 3.3e-3 on a serpentine with R = 0.6 w, 3 cells across)
    grid = pv.read(folder / f"{data['name']}.vtu")
    volume_types = [pv.CellType.TETRA, pv.CellType.HEXAHEDRON]  # tetrahedra or (the default) hexahedra
    tets = grid.extract_cells(np.flatnonzero(np.isin(np.asarray(grid.celltypes), volume_types)))
    vols = tets.compute_cell_sizes(length=False, area=False, volume=True).cell_data["Volume"]
    assert np.all(vols > 0)
    assert vols.sum() == pytest.approx(hand.volume(data["section"], data["path"]), rel=1e-2, abs=0)
    # every boundary facet of the volume lies in exactly one surface group: VTK's own
    # boundary extraction must give as many faces, and the same area, as the tagged facets
    surface = tets.extract_surface(algorithm="dataset_surface")
    tagged = [g for g in m["groups"] if g["dim"] == 2 and not g["name"].startswith("section_")]
    assert surface.n_cells == sum(g["entities"] for g in tagged)
    assert surface.area == pytest.approx(sum(g["measured"] for g in tagged), rel=1e-9)


def build_or_refuse(data: dict, bad: bool, out: Path) -> bool:
    """Build ``data``; a design drawn inside the feasible range must build (only the cell limit
    may refuse it), one pushed outside must be refused naming a key. True if it was built."""
    try:
        design = design_from_dict(data)
        build(design, out, formats=("vtu",))
    except DesignError as exc:
        # refused: the message names a key of the design file
        assert exc.key.strip("[]").split(".")[0] in TOP_KEYS, exc
        assert exc.key in str(exc)
        assert bad or exc.key == "mesh.max_cells", f"a valid design was refused: {exc}"
        return False
    check_invariants(data, out)
    return True


@pytest.mark.parametrize("kind", ["arc", "chambers", "serpentine", "spiral"])
def test_generated_designs_build_or_are_refused(kind, tmp_path_factory):
    built = []

    @SETTINGS
    @given(design_data(kind))
    def run(drawn):
        data, bad = drawn
        built.append(build_or_refuse(data, bad, tmp_path_factory.mktemp(kind)))

    run()
    assert sum(built) >= 3, f"only {sum(built)} of {len(built)} generated {kind} designs were built"


# --- files ------------------------------------------------------------------------------------

GOOD = arc_text("files", 30, 3)


@pytest.mark.parametrize("text, expected", [
    ("name = [unclosed", "is not a valid TOML design file"),
    (GOOD.replace("width = 200", "widht = 200"), "section.widht = '(unknown key)'"),
    (GOOD.replace("width = 200", "widht = 200"), "did you mean 'width'?"),
    (GOOD.replace("cells_across = 3", "cells_across = \"many\""), "mesh.cells_across = 'many': must be a whole number"),
    (GOOD.replace("kind = \"arc\"\n", ""), "path.kind (missing)"),
    (GOOD.replace("radius = 1000\n", ""), "path.radius (missing): is required"),
    (GOOD.replace('name = "files"', 'name = "../escape"'), "name = '../escape'"),
    (GOOD.replace('name = "files"', 'name = "sub/dir"'), "path separators"),
])
def test_bad_design_files_give_one_line_and_exit_2(tmp_path, capsys, text, expected):
    f = tmp_path / "d.toml"
    f.write_text(text)
    assert main(["build", str(f), "--out", str(tmp_path / "o")]) == 2
    err = capsys.readouterr().err
    assert expected in err and "Traceback" not in err and len(err.strip().splitlines()) == 1
    assert not (tmp_path / "o").exists() and not (tmp_path / "escape.vtu").exists()


def test_output_folder_that_cannot_be_created(tmp_path, capsys):
    f = tmp_path / "d.toml"
    f.write_text(GOOD)
    (tmp_path / "plain").write_text("a file")
    assert main(["build", str(f), "--out", str(tmp_path / "plain" / "sub")]) == 2
    assert "cannot be created" in capsys.readouterr().err


def _run_as_nobody(argv: list[str]) -> tuple[int, str]:
    """Run ``main(argv)`` in a forked child that has dropped root for uid/gid 65534 (nobody), so
    folder permissions apply as they do for any user; returns (exit code, stderr)."""
    import io
    import sys

    # everything the command imports up to its folder check is imported here, before the fork:
    # the child may not read root's files (the interpreter may live under /root). A build into
    # a folder that cannot be created walks the same path and stops at the same check.
    blocker = Path(argv[1]).parent / "plain"
    blocker.write_text("a file")
    main(argv[:2] + ["--out", str(blocker / "sub")])
    sys.stderr.flush()

    read, write = os.pipe()
    pid = os.fork()
    if pid == 0:  # child
        code, err = 99, ""
        try:
            os.close(read)
            os.setgroups([])
            os.setgid(65534)
            os.setuid(65534)
            sys.stderr = io.StringIO()
            code = main(argv)
            err = sys.stderr.getvalue()
        except BaseException as exc:  # noqa: BLE001 - report anything to the parent
            err = f"child failed: {exc!r}"
        finally:
            os.write(write, f"{code}\n{err}".encode())
            os._exit(0)
    os.close(write)
    with os.fdopen(read) as fh:
        text = fh.read()
    os.waitpid(pid, 0)
    code, _, err = text.partition("\n")
    return int(code), err


def test_output_folder_not_writable(tmp_path, capsys):
    """A folder the user may not write into gives one line and exit 2. Root ignores folder
    permissions, so as root (how CI runs) the build runs in a child that dropped to nobody."""
    import tempfile

    base = Path(tempfile.mkdtemp(prefix="chanmesh-perm-", dir="/tmp"))
    try:
        base.chmod(0o755)
        f = base / "d.toml"
        f.write_text(GOOD)
        f.chmod(0o644)
        locked = base / "locked"
        locked.mkdir(mode=0o500)
        locked.chmod(0o555)  # readable and enterable by anyone, writable by no one but root
        argv = ["build", str(f), "--out", str(locked)]
        if os.geteuid() == 0:
            code, err = _run_as_nobody(argv)
        else:
            code, err = main(argv), capsys.readouterr().err
        assert code == 2, err
        assert "not writable" in err and len(err.strip().splitlines()) == 1
        assert list(locked.iterdir()) == []
    finally:
        (base / "locked").chmod(0o755)
        import shutil

        shutil.rmtree(base, ignore_errors=True)


def _snapshot(folder: Path) -> dict[str, str]:
    return {p.name: file_sha256(p) for p in folder.iterdir() if p.is_file()}


@pytest.mark.parametrize("failure", [OSError(errno.ENOSPC, "No space left on device"), KeyboardInterrupt()])
def test_disk_full_or_interrupt_mid_write_keeps_previous_output(tmp_path, monkeypatch, failure):
    design = design_from_dict(__import__("tomllib").loads(GOOD))
    out = tmp_path / "o"
    build(design, out, formats=("msh", "vtu"))
    before = _snapshot(out)
    real = vtu_writer.write_vtu

    def half_then_fail(mesh, folder, stem, options):
        path = real(mesh, folder, stem, options)[0]
        path.write_bytes(path.read_bytes()[: path.stat().st_size // 2])  # a torn file in the stage
        raise failure

    monkeypatch.setattr(vtu_writer, "write_vtu", half_then_fail)
    finer = design_from_dict({**__import__("tomllib").loads(GOOD), "mesh": {"cells_across": 4}})
    with pytest.raises(OutputError if isinstance(failure, OSError) else KeyboardInterrupt) as err:
        build(finer, out, formats=("msh", "vtu"))
    if isinstance(failure, OSError):
        assert "No space left on device" in str(err.value)
    assert _snapshot(out) == before  # the previous complete output is intact ...
    assert not any(p.name.startswith(STAGE_PREFIX) for p in out.iterdir())  # ... and nothing half-written is left
    assert read_manifest(out)["design"]["mesh"]["cells_across"] == 3


@pytest.mark.parametrize("failing", ["vtu", "xdmf"])
def test_a_failure_beside_the_hdf5_writer_keeps_previous_output(tmp_path, monkeypatch, failing):
    """XDMF is written in a thread of its own beside the other formats (build._write_formats).
    Whichever side fails (here an interrupt in the VTU writer while a slow XDMF write is still
    running, or the XDMF writer itself), the build waits for that thread before it removes its
    staging folder: the previous output is intact, nothing is left half-written, and no writer
    thread runs on."""
    import threading
    import time

    import chanmesh.writers.xdmf as xdmf_writer

    design = design_from_dict(__import__("tomllib").loads(GOOD))
    out = tmp_path / "o"
    formats = ("msh", "xdmf", "vtu")
    build(design, out, formats=formats)
    before = _snapshot(out)
    real = xdmf_writer.write_xdmf

    def slow_xdmf(mesh, folder, stem, options):
        time.sleep(0.5)  # still writing when the other side fails
        if failing == "xdmf":
            raise KeyboardInterrupt
        return real(mesh, folder, stem, options)

    def failing_vtu(mesh, folder, stem, options):
        raise KeyboardInterrupt

    monkeypatch.setattr(xdmf_writer, "write_xdmf", slow_xdmf)
    if failing == "vtu":
        monkeypatch.setattr(vtu_writer, "write_vtu", failing_vtu)
    finer = design_from_dict({**__import__("tomllib").loads(GOOD), "mesh": {"cells_across": 4}})
    with pytest.raises(KeyboardInterrupt):
        build(finer, out, formats=formats)
    assert not [t for t in threading.enumerate() if t.name.startswith("chanmesh-writer")]
    time.sleep(0.2)
    assert _snapshot(out) == before
    assert not any(p.name.startswith(STAGE_PREFIX) for p in out.iterdir())
    assert read_manifest(out)["design"]["mesh"]["cells_across"] == 3


def test_interrupted_atomic_write_leaves_old_file(tmp_path, monkeypatch):
    target = tmp_path / "summary.csv"
    target.write_text("old\n")

    def interrupted(fd):
        raise KeyboardInterrupt

    monkeypatch.setattr(os, "fsync", interrupted)
    with pytest.raises(KeyboardInterrupt):
        atomic_write_text(target, "new\n" * 1000)
    assert target.read_text() == "old\n" and [p.name for p in tmp_path.iterdir()] == ["summary.csv"]


# --- names --------------------------------------------------------------------------------------

@settings(max_examples=200, deadline=None)
@given(st.lists(st.sampled_from(list("ab1._-/\\:~ ") + ["..", "\x00"]), max_size=8).map("".join))
def test_names_cannot_escape_the_output_folder(name):
    data = {**__import__("tomllib").loads(GOOD), "name": name}
    try:
        design = design_from_dict(data)
    except DesignError as exc:
        assert exc.key == "name"
        return
    out = Path("/tmp/chanmesh-out").resolve()
    for suffix in (".msh", ".vtu", "_facets.xdmf", "_groups.json"):
        assert (out / f"{design.name}{suffix}").resolve().parent == out


def test_failed_commit_leaves_the_previous_output_complete(tmp_path, monkeypatch):
    """The rename step itself fails half-way (the second file cannot be moved into place): the
    folder must still hold the previous complete output, every file matching its manifest."""
    import chanmesh.safeio as safeio

    design = design_from_dict(__import__("tomllib").loads(GOOD))
    out = tmp_path / "o"
    build(design, out, formats=("msh", "vtu"))
    before = _snapshot(out)
    real, calls = os.replace, []

    def fail_second(src, dst):
        calls.append(dst)
        if len(calls) == 2:
            raise OSError(errno.EIO, "Input/output error")
        return real(src, dst)

    monkeypatch.setattr(safeio.os, "replace", fail_second)
    finer = design_from_dict({**__import__("tomllib").loads(GOOD), "mesh": {"cells_across": 4}})
    with pytest.raises(OutputError):
        build(finer, out, formats=("msh", "vtu"))
    monkeypatch.undo()
    assert _snapshot(out) == before
    m = read_manifest(out)
    assert m is not None and m["design"]["mesh"]["cells_across"] == 3
    for entry in m["files"]:
        assert file_sha256(out / entry["name"]) == entry["sha256"]


# --- absurd values and crossing leads (issue 15) ---------------------------------------------------

ABSURD = st.sampled_from(["1e400um", "-1e400um", "nan um", "1e-30um", "1e30m", 1e300, -0.0, 1e-12, "0um", "inf mm"])


@st.composite
def absurd_data(draw) -> dict:
    """A valid arc with one key set to an absurd value: refused with a DesignError naming it."""
    data = {"name": "absurd", "unit": "um", "section": {"width": 100, "height": 50},
            "path": {"kind": "arc", "radius": 300, "angle": 90},
            "mesh": {"cells_across": 3, "max_cells": 15_000}, "fabrication": {}}
    table, key = draw(st.sampled_from([
        ("section", "width"), ("section", "height"), ("path", "radius"), ("path", "angle"),
        ("path", "inlet_length"), ("path", "outlet_length"), ("mesh", "first_cell"), ("mesh", "wall_ratio"),
        ("fabrication", "mould_margin"), ("fabrication", "port_diameter"), ("fabrication", "base_thickness"),
    ]))
    data[table][key] = draw(ABSURD)
    return {"data": data, "key": f"{table}.{key}"}


@SETTINGS
@given(absurd_data())
def test_absurd_values_are_refused_with_one_named_key(case):
    try:
        design_from_dict(case["data"])
    except DesignError as exc:
        assert exc.key == case["key"] and exc.key in str(exc)
        return
    # accepted: only where the value is in fact allowed: no lead (0), or a fabrication size, whose
    # lower bounds are not set (they shape only the mould and DXF files)
    assert case["key"].split(".")[1] in ("inlet_length", "outlet_length") or case["key"].startswith("fabrication.")


@st.composite
def crossing_leads(draw) -> dict:
    """Arcs and spirals of 100 x 50 um with leads long enough to reach the channel, often."""
    if draw(st.booleans()):
        path = {"kind": "arc", "radius": draw(num(60, 400)), "angle": draw(num(180, 355)),
                "inlet_length": draw(num(0, 900)), "outlet_length": draw(num(0, 900))}
    else:
        path = {"kind": "spiral", "inner_radius": draw(num(80, 400)), "pitch": draw(num(105, 250)),
                "turns": draw(num(0.6, 2.0)), "inlet_length": draw(num(0, 900))}
    return {"name": "robust-leads", "unit": "um", "section": {"shape": "rectangle", "width": 100, "height": 50}, "path": path,
            "mesh": {"cells_across": 3, "max_cells": 15_000}}


def test_crossing_leads_are_refused_or_build_the_exact_volume(tmp_path_factory):
    """Leads that run into the channel must be refused; a design that is accepted is built and
    its volume measured by VTK must match the analytic one (an overlap loses volume)."""

    @SETTINGS
    @given(crossing_leads())
    def run(data):
        build_or_refuse(data, True, tmp_path_factory.mktemp("leads"))  # refusal allowed; a build is measured

    run()
