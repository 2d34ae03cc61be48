"""Data safety of the staged output folder and single-file writes (issue 15, items 12-14):
a failed commit keeps the previous complete output, files of an earlier build that the new
manifest does not list are removed (never a user's own files), a commit killed half-way is
undone on the next run, and every output gets the mode a plain write gives (the umask)."""

from __future__ import annotations

import errno
import json
import os
import stat
from pathlib import Path

import pytest

import chanmesh.safeio as safeio
from chanmesh.errors import OutputError
from chanmesh.safeio import BACKUP_PREFIX, STAGE_PREFIX, StagedOutput, atomic_write_bytes, atomic_write_text


def commit(folder: Path, files: dict[str, str], manifest: str = "manifest.json") -> list[Path]:
    """A staged output of ``files`` plus a manifest listing them (as a build writes it)."""
    with StagedOutput(folder) as staged:
        for name, text in files.items():
            (staged.stage / name).write_text(text)
        listing = {"files": [{"name": n} for n in sorted(files)]}
        (staged.stage / manifest).write_text(json.dumps(listing))
        return staged.commit(manifest)


def state(folder: Path) -> dict[str, str]:
    return {p.name: p.read_text() for p in folder.iterdir() if p.is_file()}


def test_rename_failure_keeps_the_previous_output(tmp_path, monkeypatch):
    out = tmp_path / "o"
    commit(out, {"a.msh": "old a", "b.vtu": "old b"})
    before = state(out)
    real = os.replace
    for fail_at in range(1, 8):  # fail at every rename of the commit in turn
        calls = []

        def failing(src, dst, fail_at=fail_at):
            calls.append(dst)
            if len(calls) == fail_at:
                raise OSError(errno.EIO, "Input/output error")
            return real(src, dst)

        monkeypatch.setattr(safeio.os, "replace", failing)
        try:
            commit(out, {"a.msh": "new a", "b.vtu": "new b", "c.xdmf": "new c"})
        except OutputError as exc:
            assert "previous output was kept" in str(exc)
            monkeypatch.undo()
            assert state(out) == before, fail_at
        else:
            monkeypatch.undo()
            break
        assert not [p for p in out.iterdir() if p.name.startswith((STAGE_PREFIX, BACKUP_PREFIX))]


def test_a_final_name_that_is_a_folder(tmp_path):
    # the reproduction: one final name is taken by a folder, so its rename fails
    out = tmp_path / "o"
    commit(out, {"a.msh": "old a"})
    (out / "b.vtu").mkdir()
    (out / "b.vtu" / "keep").write_text("x")
    with pytest.raises(OutputError):
        commit(out, {"a.msh": "new a", "b.vtu": "new b"})
    assert state(out) == {"a.msh": "old a", "manifest.json": json.dumps({"files": [{"name": "a.msh"}]})}
    assert (out / "b.vtu" / "keep").read_text() == "x"


def test_interrupt_during_commit_keeps_the_previous_output(tmp_path, monkeypatch):
    out = tmp_path / "o"
    commit(out, {"a.msh": "old a", "b.vtu": "old b"})
    before = state(out)
    real, calls = os.replace, []

    def interrupted(src, dst):
        calls.append(dst)
        if len(calls) == 4:
            raise KeyboardInterrupt
        return real(src, dst)

    monkeypatch.setattr(safeio.os, "replace", interrupted)
    with pytest.raises(KeyboardInterrupt):
        commit(out, {"a.msh": "new a", "b.vtu": "new b"})
    monkeypatch.undo()
    assert state(out) == before


def test_stale_files_of_an_earlier_build_are_removed_but_not_user_files(tmp_path):
    out = tmp_path / "o"
    commit(out, {"d.msh": "A", "d.vtu": "A"})
    (out / "notes.txt").write_text("mine")
    commit(out, {"d.xdmf": "B", "d.h5": "B"})
    assert sorted(state(out)) == ["d.h5", "d.xdmf", "manifest.json", "notes.txt"]
    assert (out / "notes.txt").read_text() == "mine"


def test_a_commit_killed_half_way_is_undone_next_time(tmp_path):
    out = tmp_path / "o"
    commit(out, {"a.msh": "old a"})
    before = state(out)
    # what a process killed (SIGKILL) after moving the old output aside leaves behind
    backup = out / f"{BACKUP_PREFIX}killed"
    backup.mkdir()
    os.replace(out / "manifest.json", backup / "manifest.json")
    os.replace(out / "a.msh", backup / "a.msh")
    (out / "a.msh").write_text("new a, never listed")
    with StagedOutput(out):
        pass
    assert state(out) == before and not backup.exists()


@pytest.mark.parametrize("umask", [0o022, 0o027, 0o002])
def test_outputs_get_the_mode_of_a_plain_write(tmp_path, umask):
    old = os.umask(umask)
    try:
        with open(tmp_path / "plain", "w") as fh:  # the reference: what open() gives
            fh.write("x")
        expected = stat.S_IMODE((tmp_path / "plain").stat().st_mode)
        atomic_write_text(tmp_path / "summary.csv", "a,b\n")
        atomic_write_bytes(tmp_path / "d.plan.png", b"\x89PNG")
        paths = commit(tmp_path / "o", {"d.msh": "x"})
    finally:
        os.umask(old)
    for p in [tmp_path / "summary.csv", tmp_path / "d.plan.png", *paths]:
        assert stat.S_IMODE(p.stat().st_mode) == expected, p


def test_rewriting_a_file_keeps_its_mode(tmp_path):
    target = tmp_path / "family.json"
    target.write_text("{}")
    target.chmod(0o640)
    atomic_write_text(target, '{"a": 1}')
    assert stat.S_IMODE(target.stat().st_mode) == 0o640


def test_build_in_other_formats_replaces_the_earlier_files(tmp_path):
    # the reproduction: formats A into a folder, then formats B under the same name
    import tomllib

    from chanmesh.build import build
    from chanmesh.design.load import design_from_dict
    from chanmesh.manifest import read_manifest
    from design_text import arc_text

    design = design_from_dict(tomllib.loads(arc_text("stale", 30, 3)))
    out = tmp_path / "o"
    build(design, out, formats=("msh", "vtu"))
    build(design, out, formats=("xdmf",))
    listed = {e["name"] for e in read_manifest(out)["files"]}
    on_disk = {p.name for p in out.iterdir()}
    assert on_disk == listed | {"manifest.json"}
    assert not (out / "stale.msh").exists() and not (out / "stale.vtu").exists()
