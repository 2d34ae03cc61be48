"""Bad sweep options end in one line and exit 2 before any variant runs (issue reproductions)."""

from __future__ import annotations

import sys
import time
from pathlib import Path

import pytest

from chanmesh.cli import main

if sys.version_info >= (3, 11):
    import tomllib
else:  # pragma: no cover
    import tomli as tomllib

ROOT = Path(__file__).resolve().parents[1]


def _one_line(capsys) -> str:  # noqa: ANN001
    err = capsys.readouterr().err.strip()
    assert "Traceback" not in err and err.count("\n") == 0, err
    return err


@pytest.mark.parametrize("vary,names", [
    ("path.radiux=300,400", ["path.radiux", "did you mean 'radius'"]),  # a typo
    ("foo.bar=1,2", ["foo", "known keys"]),  # no such table
    ("path.radius=abc,def", ["path.radius", "'abc'"]),  # not a length
])
def test_unknown_keys_and_unreadable_values_are_bad_options(write_design, tmp_path, capsys, vary, names):
    design = write_design("arc")
    code = main(["sweep", str(design), "--vary", vary, "--out", str(tmp_path / "sw")])
    line = _one_line(capsys)
    assert code == 2 and all(n in line for n in names), line
    assert not (tmp_path / "sw").exists()  # refused before any variant or folder


def test_an_unreachable_scheduler_is_refused_within_seconds(write_design, tmp_path, capsys):
    design = write_design("arc")
    start = time.monotonic()
    code = main(["sweep", str(design), "--vary", "path.radius=900,1000", "--scheduler", "tcp://127.0.0.1:1",
                 "--out", str(tmp_path / "sw")])
    line = _one_line(capsys)
    assert code == 2 and "--scheduler" in line and "tcp://127.0.0.1:1" in line
    assert time.monotonic() - start < 30  # the timeout is 5 s; the old client waited 30 s, then a traceback


def test_the_plain_install_brings_the_sweep_scheduler():
    # the README's first command installs only the main dependencies: sweep must work after it
    deps = tomllib.loads((ROOT / "pyproject.toml").read_text())["project"]["dependencies"]
    assert any(d.replace(" ", "").startswith("dask[distributed]") for d in deps)
