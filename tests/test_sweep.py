"""Sweeps: --vary parsing and combination, and an end-to-end run on a 2-worker LocalCluster
with one infeasible variant, one failing variant, and a sweep killed mid-way and resumed."""

from __future__ import annotations

import os
import signal
import subprocess
import sys
import time
from pathlib import Path

import numpy as np
import pytest

from chanmesh.design.load import design_from_dict, parse_design_text
from chanmesh.errors import DesignError
from design_text import arc_text
from chanmesh.manifest import read_manifest
from chanmesh.safeio import STAGE_PREFIX
from chanmesh.sweep.plan import Variation, apply, combine, parse_vary
from chanmesh.sweep.run import SweepRequest, build_variant, run_sweep, variant_id
from chanmesh.sweep.summary import read_summary
from chanmesh.writers import WriteOptions

ROOT = Path(__file__).resolve().parents[1]

DESIGN = arc_text("sweep-arc", 60, 4, extra='[flow]\nrate = "0.1mL/min"')


def test_range_and_list_values():
    v = parse_vary("path.radius=3000:8000:6")
    # n evenly spaced values including both ends (numpy.linspace as the outside reference)
    assert v.key == "path.radius" and np.allclose(v.values, np.linspace(3000, 8000, 6))
    assert all(isinstance(x, int) for x in v.values)
    assert parse_vary("section.width=300,400.5,1.5mm").values == (300, 400.5, "1.5mm")


@pytest.mark.parametrize("option", ["path.radius", "=1,2", "path.radius=1:2", "path.radius=1:2:0", "path.radius=a:b:3", "p..r=1"])
def test_bad_vary_options_name_the_option(option):
    with pytest.raises(DesignError) as err:
        parse_vary(option)
    assert err.value.key == "--vary" and err.value.value == option


def test_product_zip_and_apply():
    a, b = Variation("path.radius", (1, 2, 3)), Variation("section.width", (10, 20, 30))
    assert len(combine([a, b])) == 9
    assert combine([a, b], paired=True)[1] == {"path.radius": 2, "section.width": 20}
    with pytest.raises(DesignError, match="same length"):
        combine([a, Variation("section.width", (1, 2))], paired=True)
    data = {"path": {"radius": 5}}
    new = apply(data, {"path.radius": 7, "mesh.cells_across": 3})
    assert new == {"path": {"radius": 7}, "mesh": {"cells_across": 3}} and data == {"path": {"radius": 5}}
    with pytest.raises(DesignError, match="not a table"):
        apply({"name": "x"}, {"name.sub": 1})


def _manifests(out: Path) -> dict[str, float]:
    return {p.parent.name: p.stat().st_mtime_ns for p in out.glob("*/manifest.json")}


def test_sweep_killed_midway_then_resumed(tmp_path):
    design_file = tmp_path / "d.toml"
    design_file.write_text(DESIGN)
    data = parse_design_text(DESIGN)
    out = tmp_path / "sweep"
    radii = [50, 800, 1000, 1200, 1400, 1600, 1800, 2000]  # 50 um < w/2: infeasible
    request = SweepRequest(formats=("msh",), options=WriteOptions())
    assignments = combine([Variation("path.radius", tuple(radii))])
    # variant 3 is made to fail: a plain file sits where its output folder must go
    doomed = variant_id(design_from_dict(apply(data, assignments[2])), request)
    out.mkdir()
    (out / doomed).write_text("not a folder")

    cmd = [sys.executable, "-m", "chanmesh", "sweep", str(design_file), "--vary", "path.radius=" + ",".join(map(str, radii)),
           "--workers", "2", "--format", "msh", "--out", str(out), "--quiet"]
    env = {**os.environ, "PYTHONPATH": str(ROOT)}
    proc = subprocess.Popen(cmd, env=env, stdout=subprocess.PIPE, stderr=subprocess.PIPE)
    deadline = time.monotonic() + 240  # a guard against a hang only: a loaded machine needs minutes
    while not _manifests(out) and proc.poll() is None and time.monotonic() < deadline:
        time.sleep(0.02)
    proc.send_signal(signal.SIGTERM)  # the sweep is interrupted after its first complete variant
    proc.wait(timeout=30)
    before = _manifests(out)
    assert 1 <= len(before) < 6, f"kill came too late to test resuming: {len(before)} variants done"

    # the rerun goes to an existing scheduler (the --scheduler path) of 2 one-thread worker processes
    from dask.distributed import LocalCluster

    with LocalCluster(n_workers=2, threads_per_worker=1, processes=True, dashboard_address=None) as cluster:
        result = run_sweep(data, assignments, out, request, scheduler=cluster.scheduler_address)
    rows = {r["variant"]: r for r in result.rows}
    assert rows[1]["status"] == "infeasible" and "path.radius" in rows[1]["message"]
    assert rows[3]["status"] == "failed" and "OutputError" in rows[3]["message"] and doomed in rows[3]["message"]
    resumed = {r["path"] for r in result.rows if r["status"] == "resumed"}
    built = {r["path"] for r in result.rows if r["status"] == "built"}
    assert resumed == set(before)  # completed variants are skipped ...
    assert len(built) == 6 - len(before) and built.isdisjoint(before)  # ... and the rest built
    after = _manifests(out)
    assert all(after[k] == before[k] for k in before)  # untouched
    assert len(after) == 6 and not list(out.rglob(f"{STAGE_PREFIX}*"))
    for r in result.rows:
        if r["status"] in ("built", "resumed"):
            m = read_manifest(out / r["path"])
            assert m["design"]["path"]["radius"] == pytest.approx(r["params"]["path.radius"] * 1e-6)
    summary = read_summary(out)
    assert [s["variant"] for s in summary] == [str(i) for i in range(1, 9)]
    assert summary[1]["path.radius"] == "800" and int(summary[1]["volume_cells"]) > 0
    assert float(summary[1]["reynolds"]) > 0  # design numbers column filled from [flow]


def test_variant_family_is_built_then_resumed(tmp_path):
    data = parse_design_text(arc_text("sweep-arc", 60, 3))
    request = SweepRequest(formats=("msh",), family_levels=2, family_ratio=2.0)
    first = build_variant(1, data, {"path.angle": 30}, str(tmp_path), request)
    assert first["status"] == "built" and [lv["level"] for lv in first["levels"]] == [1, 2]
    assert (tmp_path / first["path"] / "family.json").is_file()
    assert first["levels"][0]["cells"] > first["levels"][1]["cells"]
    again = build_variant(1, data, {"path.angle": 30}, str(tmp_path), request)
    assert again["status"] == "resumed" and again["levels"] == first["levels"]
    # a variant that breaks a design rule is recorded, not raised
    bad = build_variant(2, data, {"path.angle": 400}, str(tmp_path), request)
    assert bad["status"] == "infeasible" and bad["message"].startswith("path.angle")
    # summary.csv: each quality figure in a column of its own, one value per level, as the
    # levels' manifests hold them; blank for the infeasible variant
    from chanmesh.sweep.summary import QUALITY_COLUMNS, read_summary, write_summary

    write_summary([first, bad], tmp_path, ["path.angle"])
    built, refused = read_summary(tmp_path)
    for column in QUALITY_COLUMNS:
        values = [float(v) for v in built[column].split(";")]
        assert values == pytest.approx([lv["quality"][column] for lv in first["levels"]], rel=1e-5, abs=0)
        assert refused[column] == ""


def _damage(path: Path, how: str) -> None:
    if how == "delete":
        path.unlink()
    elif how == "truncate":
        path.write_bytes(path.read_bytes()[: path.stat().st_size // 2])
    else:  # same size, one byte changed: only the SHA-256 tells
        data = bytearray(path.read_bytes())
        data[len(data) // 2] ^= 0xFF
        path.write_bytes(bytes(data))


@pytest.mark.parametrize("how", ["delete", "truncate", "change"])
def test_damaged_finished_variant_is_rebuilt(tmp_path, how):
    """A finished variant is accepted only if every file its manifest lists exists with the
    recorded size and SHA-256 (FIPS 180-4 digest, computed here by hashlib); otherwise resume
    rebuilds it and the files match their manifest again."""
    import hashlib

    data = parse_design_text(arc_text("sweep-arc", 30, 3))
    request = SweepRequest(formats=("msh", "vtu"))
    first = build_variant(1, data, {"path.angle": 30}, str(tmp_path), request)
    folder = tmp_path / first["path"]
    assert build_variant(1, data, {"path.angle": 30}, str(tmp_path), request)["status"] == "resumed"
    _damage(folder / "sweep-arc.vtu", how)
    again = build_variant(1, data, {"path.angle": 30}, str(tmp_path), request)
    assert again["status"] == "built"
    for entry in read_manifest(folder)["files"]:
        p = folder / entry["name"]
        assert p.stat().st_size == entry["bytes"] and hashlib.sha256(p.read_bytes()).hexdigest() == entry["sha256"]


@pytest.mark.parametrize("how", ["delete", "change"])
def test_damaged_family_level_is_rebuilt(tmp_path, how):
    data = parse_design_text(arc_text("sweep-arc", 30, 3))
    request = SweepRequest(formats=("msh",), family_levels=2, family_ratio=2.0)
    first = build_variant(1, data, {}, str(tmp_path), request)
    level = tmp_path / first["path"] / "level-1"
    before = (level / "manifest.json").stat().st_mtime_ns
    _damage(level / "sweep-arc.msh", how)
    again = build_variant(1, data, {}, str(tmp_path), request)
    assert again["status"] == "built"
    assert (level / "manifest.json").stat().st_mtime_ns != before  # the damaged level was rebuilt
    assert build_variant(1, data, {}, str(tmp_path), request)["status"] == "resumed"
