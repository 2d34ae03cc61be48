"""Seconds from launch to exit of the light commands (issue 14: each under 0.5 s).

Run:  PYTHONPATH=$PWD python bench/cli_startup.py [--root OTHER_TREE ...] [--repeats 5]

Times ``python -m chanmesh --help``, ``new spiral`` and ``numbers`` on the spiral template at a
flow (with its default section-flow solve, and without it: ``--no-section-flow``), best of ``--repeats`` (the machine is shared: the minimum is the cost), for each source
tree given (default: this one), plus a bare ``python -c pass`` as the interpreter's own floor.
"""

from __future__ import annotations

import argparse
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


def best(cmd: list[str], root: Path, repeats: int) -> float:
    env = {**os.environ, "PYTHONPATH": str(root)}
    times = []
    for _ in range(repeats):
        t = time.perf_counter()
        subprocess.run(cmd, env=env, cwd=str(root), stdout=subprocess.DEVNULL, stderr=subprocess.DEVNULL, check=True)
        times.append(time.perf_counter() - t)
    return min(times)


def main() -> None:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--root", action="append", type=Path, help="source tree whose chanmesh to time (repeatable)")
    ap.add_argument("--repeats", type=int, default=5)
    args = ap.parse_args()
    roots = [r.resolve() for r in (args.root or [HERE.parent])]
    floor = best([sys.executable, "-c", "pass"], HERE.parent, args.repeats)
    print(f"python -c pass: {floor:.3f} s")
    print(f"{'tree':<28} " + " ".join(f"{name:>16}" for name in COMMANDS))
    for root in roots:
        row = [best([sys.executable, "-m", "chanmesh", *cmd], root, args.repeats) for cmd in COMMANDS.values()]
        # (cwd = root: ``python -m`` puts the working folder first on sys.path, ahead of PYTHONPATH)
        print(f"{str(root)[-28:]:<28} " + " ".join(f"{t:>14.3f} s" for t in row))
    print("target (issue 14): each under 0.5 s")


if __name__ == "__main__":
    main()
