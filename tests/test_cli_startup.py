"""The command line starts light and an interrupt at any moment ends it with one line and 130.

Exit status 128 + signal number for a process ended by a signal is the POSIX shell convention
(IEEE Std 1003.1, "Shell Command Language", 2.8.2 Exit Status for Commands): 130 for SIGINT.
"""

from __future__ import annotations

import ast
import os
import signal
import subprocess
import sys
import time
from pathlib import Path

import pytest

ROOT = Path(__file__).resolve().parents[1]
HEAVY = ("numpy", "scipy", "gmsh", "pyvista", "vtk", "matplotlib", "dask", "distributed", "meshio", "h5py", "iapws")


def _env() -> dict[str, str]:
    return {**os.environ, "PYTHONPATH": str(ROOT)}


def test_parser_and_every_command_module_import_no_heavy_library():
    code = (
        "import sys, chanmesh.cli as c\n"
        "c.build_parser()\n"
        f"print(sorted(m for m in {HEAVY!r} if m in sys.modules))\n"
    )
    out = subprocess.run([sys.executable, "-c", code], env=_env(), capture_output=True, text=True, check=True).stdout
    assert out.strip() == "[]"


def test_new_and_help_import_no_heavy_library():
    code = (
        "import sys, io, contextlib\nfrom chanmesh.cli import main\n"
        "with contextlib.redirect_stdout(io.StringIO()):\n    main(['new', 'arc'])\n"
        f"print(sorted(m for m in {HEAVY!r} if m in sys.modules))\n"
    )
    out = subprocess.run([sys.executable, "-c", code], env=_env(), capture_output=True, text=True, check=True).stdout
    assert out.strip() == "[]"


NUMBERS_NEVER = ("scipy.spatial", "scipy.optimize", "iapws", "gmsh", "pyvista", "vtk", "matplotlib", "dask",
                 "meshio", "h5py")
"""Libraries `chanmesh numbers` does without: the wall-clearance check bins points in numpy
(geometry/clearance.close_pairs), water is IAPWS in numpy (numbers/water.py) and sizing imports
brentq only for a first_cell. Only the section flow (scikit-fem) brings scipy.sparse."""


@pytest.mark.parametrize("section_flow", ["--section-flow", "--no-section-flow"])
def test_numbers_imports_only_what_it_needs(section_flow):
    code = (
        "import sys, io, contextlib\nfrom chanmesh.cli import main\n"
        "with contextlib.redirect_stdout(io.StringIO()):\n"
        f"    assert main(['numbers', {str(ROOT / 'templates' / 'spiral-sorter.toml')!r}, '--flow', '1.2mL/min',"
        f" {section_flow!r}]) == 0\n"
        "print(sorted(m for m in sys.modules if m.split('.')[0] in ('scipy', 'skfem') or m in "
        f"{NUMBERS_NEVER!r}))\n"
    )
    out = subprocess.run([sys.executable, "-c", code], env=_env(), capture_output=True, text=True, check=True).stdout
    loaded = ast.literal_eval(out.strip())  # the list the child printed
    assert not [m for m in loaded if m in NUMBERS_NEVER]
    if section_flow == "--no-section-flow":
        assert loaded == []  # the design numbers alone: numpy and chanmesh, no scipy at all


def _started(proc: subprocess.Popen, seen: list[str]) -> None:
    """Wait until chanmesh's first module has run: ``-X importtime`` reports each import as it
    completes, and chanmesh.interrupt is chanmesh's first (before it, the interrupt is Python's
    own start-up to handle: a loaded machine was seen to take over 0.5 s to get there)."""
    deadline = time.monotonic() + 60
    while time.monotonic() < deadline:
        line = proc.stderr.readline()
        seen.append(line)
        if not line or "chanmesh.interrupt" in line:
            return


@pytest.mark.parametrize("delay", [0.0, 0.1, 0.3, 0.6, 1.2])
def test_sigint_at_any_moment_of_a_build_exits_130_with_one_line(tmp_path, delay):
    design = tmp_path / "d.toml"
    design.write_text(
        'name = "t"\nunit = "um"\n[section]\nwidth = 200\nheight = 50\n'
        '[path]\nkind = "spiral"\ninner_radius = 800\npitch = 400\nturns = 2\n[mesh]\ncells_across = 6\n'
    )
    cmd = [sys.executable, "-X", "importtime", "-m", "chanmesh", "build", str(design), "--out", str(tmp_path / "o"), "--quiet"]
    proc = subprocess.Popen(cmd, env=_env(), stdout=subprocess.PIPE, stderr=subprocess.PIPE, text=True)
    seen: list[str] = []
    _started(proc, seen)
    time.sleep(delay)
    proc.send_signal(signal.SIGINT)
    out, err = proc.communicate(timeout=60)
    if proc.returncode == 0:
        pytest.skip("the build finished before the interrupt")
    err = "".join(line for line in (seen + err.splitlines(keepends=True)) if not line.startswith("import time:"))
    assert proc.returncode == 130, err
    assert "Traceback" not in err
    assert len(err.strip().splitlines()) == 1 and "interrupted" in err
    assert not (tmp_path / "o" / "manifest.json").exists()


def test_an_interrupt_that_surfaces_as_another_exception_is_still_an_interrupt(capsys):
    """A Ctrl-C inside a C extension's import reaches the command as e.g. scipy's
    "ImportError: initialization failed" (seen on a build interrupted 1.15 s in): still exit
    130 and the one line, no traceback. An exception with no Ctrl-C before it is not swallowed."""
    import argparse

    from chanmesh import cli

    def interrupted_import(args):  # noqa: ANN001, ANN202
        try:
            cli._Interrupts.handler(2, None)
        except KeyboardInterrupt:
            raise ImportError("initialization failed") from None

    args = argparse.Namespace(command="build", _run=interrupted_import)
    assert cli._run(None, args) == 130
    assert capsys.readouterr().err.strip() == "chanmesh build: interrupted; no partial output was left under a final name"

    def plain_failure(args):  # noqa: ANN001, ANN202
        raise ImportError("a real one")

    cli._Interrupts.seen = False
    with pytest.raises(ImportError):
        cli._run(None, argparse.Namespace(command="build", _run=plain_failure))


def test_an_interrupt_after_the_command_returned_still_exits_130(capsys, monkeypatch):
    """A Ctrl-C that lands after the command's own clean-up (the output complete) but before
    the command line has restored the start-up handler: exit 130 and the one line, never an
    uncaught KeyboardInterrupt (which makes Python end the process by SIGINT, status -2).
    130: POSIX shell convention (IEEE Std 1003.1, 2.8.2)."""
    from chanmesh import cli

    def finished_then_interrupted(parser, args):  # noqa: ANN001, ANN202
        raise KeyboardInterrupt  # as the handler does when SIGINT arrives at that moment

    monkeypatch.setattr(cli, "_run", finished_then_interrupted)
    assert cli.main(["numbers", "x.toml"]) == 130
    assert capsys.readouterr().err.strip().endswith("interrupted; no partial output was left under a final name")

    def finished_with_an_interrupt_swallowed(parser, args):  # noqa: ANN001, ANN202
        cli._Interrupts.seen = True  # a library caught the KeyboardInterrupt and went on
        return 0

    monkeypatch.setattr(cli, "_run", finished_with_an_interrupt_swallowed)
    assert cli.main(["numbers", "x.toml"]) == 130
