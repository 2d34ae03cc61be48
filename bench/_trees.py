"""Running one bench script's measurement against another source tree, for before/after ratios
measured in one run (``--root`` of build_overhead.py, bench_report.py and tet_speed.py)."""

from __future__ import annotations

import json
import os
import subprocess
import sys
from pathlib import Path


def child_json(script: str, root: Path, args: list[str]) -> dict:
    """Run ``script`` (a bench script's ``__file__``) with ``args`` in a fresh interpreter that
    imports chanmesh from ``root``, and return the JSON object it prints on its last line."""
    root = Path(root).resolve()
    env = {**os.environ, "PYTHONPATH": str(root)}
    done = subprocess.run([sys.executable, script, *args], capture_output=True, text=True, env=env, cwd=str(root))
    if done.returncode:
        raise SystemExit(f"child failed for {root}:\n{done.stderr}")
    return json.loads(done.stdout.strip().splitlines()[-1])
