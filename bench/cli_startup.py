"""Seconds from launch to exit of the light commands (issue 14: each under 0.5 s).

Run:  PYTHONPATH=$PWD python bench/cli_startup.py [--root OTHER_TREE ...] [--repeats 5] [--compiled]

Times ``python -m chanmesh --help``, ``new spiral`` and ``numbers`` on the spiral template at a
flow (with its default section-flow solve, and without it: ``--no-section-flow``), best of
``--repeats`` (the machine is shared: the minimum is the cost), for each source tree given
(default: this one), plus a bare ``python -c pass`` as the interpreter's own floor. The runs are
interleaved (each repeat runs every command of every tree once, in turn), so a change in the
machine's load during the run falls on all trees alike; the load average at the start and the
end is printed.

``--compiled`` first byte-compiles each tree's package (``compileall``) and lets the children
read the caches, as an installed or once-run chanmesh does; without it the children inherit
the environment, and with PYTHONDONTWRITEBYTECODE set (as on the development machine) every run
compiles chanmesh's own modules from source (about 0.05 s of ``numbers``). The line
"bytecode: ..." says which was measured.
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


def once(cmd: list[str], root: Path, compiled: bool = False) -> float:
    env = {**os.environ, "PYTHONPATH": str(root)}
    if compiled:
        env.pop("PYTHONDONTWRITEBYTECODE", None)
    t = time.perf_counter()
    subprocess.run(cmd, env=env, cwd=str(root), stdout=subprocess.DEVNULL, stderr=subprocess.DEVNULL, check=True)
    return time.perf_counter() - t


def main() -> None:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--root", action="append", type=Path, help="source tree whose chanmesh to time (repeatable)")
    ap.add_argument("--repeats", type=int, default=5)
    ap.add_argument("--compiled", action="store_true", help="byte-compile each tree first and use the caches")
    args = ap.parse_args()
    roots = [r.resolve() for r in (args.root or [HERE.parent])]
    if args.compiled:
        for root in roots:
            subprocess.run([sys.executable, "-m", "compileall", "-q", str(root / "chanmesh")], check=True)
        print("bytecode: each tree compiled first, caches read")
    else:
        fresh = bool(os.environ.get("PYTHONDONTWRITEBYTECODE"))
        print("bytecode: " + ("PYTHONDONTWRITEBYTECODE set, chanmesh compiled from source in every run" if fresh
                              else "written and read as Python does by default"))
    print(f"load average at the start: {os.getloadavg()[0]:.2f}")
    floor = math.inf
    best = {(root, name): math.inf for root in roots for name in COMMANDS}
    for _ in range(args.repeats):  # interleaved: every tree and command once per repeat
        floor = min(floor, once([sys.executable, "-c", "pass"], HERE.parent))
        for name, cmd in COMMANDS.items():
            for root in roots:
                # (cwd = root: ``python -m`` puts the working folder first on sys.path, ahead of PYTHONPATH)
                best[root, name] = min(best[root, name],
                                      once([sys.executable, "-m", "chanmesh", *cmd], root, args.compiled))
    print(f"python -c pass: {floor:.3f} s (best of {args.repeats})")
    print(f"{'tree':<28} " + " ".join(f"{name:>16}" for name in COMMANDS))
    for root in roots:
        print(f"{str(root)[-28:]:<28} " + " ".join(f"{best[root, name]:>14.3f} s" for name in COMMANDS))
    print(f"load average at the end: {os.getloadavg()[0]:.2f}")
    print("target (issue 14): each under 0.5 s")


if __name__ == "__main__":
    main()
