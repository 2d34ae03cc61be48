"""Seconds from launch to exit of the light commands (issue 14: each under 0.5 s).

Run:  PYTHONPATH=$PWD python bench/cli_startup.py [--root OTHER_TREE ...] [--repeats 5]

Times ``python -m chanmesh --help``, ``new spiral`` and ``numbers`` on the spiral template at a
flow (with its default section-flow solve, and without it: ``--no-section-flow``), best of
``--repeats`` (the machine is shared: the minimum is the cost), for each source tree given
(default: this one), plus a bare ``python -c pass`` as the interpreter's own floor. The runs are
interleaved (each repeat runs every command of every tree once, in turn), so a change in the
machine's load during the run falls on all trees alike; the load average at the start and the
end is printed.

Each tree's package is byte-compiled first (``compileall``), as an installed chanmesh is: a
fresh ``git archive`` tree would otherwise compile every module from source in every run (this
environment sets PYTHONDONTWRITEBYTECODE) while a working tree reads its caches.
"""

from __future__ import annotations

import argparse
import math
import os
import subprocess
import sys
import time
from pathlib import Path

HERE = Path(__file__).resolve().parent
COMMANDS = {
    "--help": ["--help"],
    "new spiral": ["new", "spiral"],
    "numbers": ["numbers", str(HERE.parent / "templates" / "spiral-sorter.toml"), "--flow", "1.2mL/min"],
    "numbers -no-sf": ["numbers", str(HERE.parent / "templates" / "spiral-sorter.toml"), "--flow", "1.2mL/min",
                       "--no-section-flow"],
}


def once(cmd: list[str], root: Path) -> float:
    env = {**os.environ, "PYTHONPATH": str(root)}
    t = time.perf_counter()
    subprocess.run(cmd, env=env, cwd=str(root), stdout=subprocess.DEVNULL, stderr=subprocess.DEVNULL, check=True)
    return time.perf_counter() - t


def main() -> None:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--root", action="append", type=Path, help="source tree whose chanmesh to time (repeatable)")
    ap.add_argument("--repeats", type=int, default=5)
    args = ap.parse_args()
    roots = [r.resolve() for r in (args.root or [HERE.parent])]
    for root in roots:
        subprocess.run([sys.executable, "-m", "compileall", "-q", str(root / "chanmesh")], check=True)
    print(f"load average at the start: {os.getloadavg()[0]:.2f}")
    floor = math.inf
    best = {(root, name): math.inf for root in roots for name in COMMANDS}
    for _ in range(args.repeats):  # interleaved: every tree and command once per repeat
        floor = min(floor, once([sys.executable, "-c", "pass"], HERE.parent))
        for name, cmd in COMMANDS.items():
            for root in roots:
                # (cwd = root: ``python -m`` puts the working folder first on sys.path, ahead of PYTHONPATH)
                best[root, name] = min(best[root, name], once([sys.executable, "-m", "chanmesh", *cmd], root))
    print(f"python -c pass: {floor:.3f} s (best of {args.repeats})")
    print(f"{'tree':<28} " + " ".join(f"{name:>16}" for name in COMMANDS))
    for root in roots:
        print(f"{str(root)[-28:]:<28} " + " ".join(f"{best[root, name]:>14.3f} s" for name in COMMANDS))
    print(f"load average at the end: {os.getloadavg()[0]:.2f}")
    print("target (issue 14): each under 0.5 s")


if __name__ == "__main__":
    main()
