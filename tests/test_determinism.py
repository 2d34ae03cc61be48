"""Determinism: the same design gives byte-identical mesh files and the same hashes.

gmsh's HXT with 2 threads gives a different mesh on every run (measured: 1766, 1768, 1771
tetrahedra for one design), so ``mesh.threads`` defaults to 1 (see docs/robustness.md). The
HDF5 files carry no creation timestamps: h5py creates datasets with ``track_times=False``
unless asked (h5py 3 ``Dataset`` creation default), which the byte comparison below confirms
for two builds more than a second apart.
"""

from __future__ import annotations

import time

from chanmesh.build import build, build_request
from chanmesh.design import loads_design
from chanmesh.manifest import design_hash, file_sha256
from chanmesh.writers import WriteOptions

DESIGN = """
name = "same"
unit = "um"
[section]
width = 200
height = 60
[path]
kind = "spiral"
inner_radius = 800
pitch = 300
turns = 0.5
[mesh]
cells_across = 4
"""


def test_two_runs_give_identical_files_and_hashes(tmp_path):
    design = loads_design(DESIGN)
    formats = ("msh", "xdmf", "vtu")
    first = build(design, tmp_path / "a", formats)
    time.sleep(1.1)  # a timestamp with one-second resolution would differ
    second = build(design, tmp_path / "b", formats)
    names = sorted(p.name for p in first.files if p.name != "manifest.json")
    assert names == sorted(p.name for p in second.files if p.name != "manifest.json")
    assert any(n.endswith(".h5") for n in names)
    for n in names:
        assert file_sha256(tmp_path / "a" / n) == file_sha256(tmp_path / "b" / n), n
    assert first.manifest["content_hash"] == second.manifest["content_hash"]
    assert first.manifest["design_hash"] == second.manifest["design_hash"]


def test_two_threads_is_recorded_in_the_design_hash(tmp_path):
    one = loads_design(DESIGN)
    two = loads_design(DESIGN + "threads = 2\n")
    assert one.mesh.threads == 1
    req = build_request(("msh",), WriteOptions())
    assert design_hash(one, req) != design_hash(two, req)

