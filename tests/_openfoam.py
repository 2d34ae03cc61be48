"""Shared by the OpenFOAM tests: read a written case back with foamlib (an independent parser
of OpenFOAM's file format), face geometry, and running the real OpenFOAM tools when present.

Designs here are small invented channels (no real device).
"""

from __future__ import annotations

import os
import re
import shutil
import subprocess
from dataclasses import dataclass
from pathlib import Path

import numpy as np
import pytest

OPENFOAM_ENV = {**os.environ, "WM_PROJECT_DIR": os.environ.get("WM_PROJECT_DIR", "/usr/share/openfoam")}
HAVE_OPENFOAM = all(shutil.which(t) for t in ("simpleFoam", "checkMesh"))
needs_openfoam = pytest.mark.skipif(not HAVE_OPENFOAM, reason="OpenFOAM (simpleFoam, checkMesh) is not on PATH; "
                                    ".ci/run installs Debian's openfoam when run as root")


def arc_case_text(name: str, cells: str = "hex", mesh: str = "", outlets: str = "", flow: str = 'rate = "50uL/min"',
                  section: str = "width = 200\nheight = 80") -> str:
    """A 90-degree arc of radius 600 um, 200 x 80 um, with a [flow] table (invented)."""
    text = (f'name = "{name}"\nunit = "um"\n[section]\n{section}\n[path]\nkind = "arc"\nradius = 600\nangle = 90\n'
            f'[mesh]\ncells = "{cells}"\n{mesh}\n')
    if outlets:
        text += f"[outlets]\n{outlets}\n"
    if flow:
        text += f"[flow]\n{flow}\n"
    return text


@dataclass
class Case:
    points: np.ndarray
    offsets: np.ndarray
    nodes: np.ndarray
    owner: np.ndarray
    neighbour: np.ndarray
    boundary: list
    zones: list

    @property
    def n_cells(self) -> int:
        return int(max(self.owner.max(), self.neighbour.max() if len(self.neighbour) else 0)) + 1

    def face(self, i: int) -> np.ndarray:
        return self.nodes[self.offsets[i]:self.offsets[i + 1]]

    def area_vectors(self) -> np.ndarray:
        """Face area vectors by the fan of triangles about the face's node mean (OpenFOAM's
        own construction for a polygon), m^2."""
        return self._fan()[0]

    def centres(self) -> np.ndarray:
        return self._fan()[1]

    def _fan(self) -> tuple[np.ndarray, np.ndarray]:
        sizes = np.diff(self.offsets)
        n = len(sizes)
        S = np.zeros((n, 3))
        C = np.zeros((n, 3))
        for k in np.unique(sizes):
            sel = np.flatnonzero(sizes == k)
            idx = self.offsets[sel][:, None] + np.arange(k)[None, :]
            p = self.points[self.nodes[idx]]  # (m, k, 3)
            mid = p.mean(axis=1)
            s_tot = np.zeros((len(sel), 3))
            c_acc = np.zeros((len(sel), 3))
            a_acc = np.zeros(len(sel))
            for r in range(k):
                a, b = p[:, r], p[:, (r + 1) % k]
                s = 0.5 * np.cross(b - a, mid - a)
                s_tot += s
                mag = np.linalg.norm(s, axis=1)
                c_acc += mag[:, None] * (a + b + mid) / 3.0
                a_acc += mag
            S[sel] = s_tot
            C[sel] = c_acc / a_acc[:, None]
        return S, C


def read_case(case: Path) -> Case:
    from foamlib import FoamFile

    poly = Path(case) / "constant" / "polyMesh"
    offsets, nodes = FoamFile(poly / "faces")[None]
    zones = FoamFile(poly / "faceZones")[None] if (poly / "faceZones").exists() else []
    return Case(np.asarray(FoamFile(poly / "points")[None], float), np.asarray(offsets, np.int64),
                np.asarray(nodes, np.int64), np.asarray(FoamFile(poly / "owner")[None], np.int64),
                np.asarray(FoamFile(poly / "neighbour")[None], np.int64), FoamFile(poly / "boundary")[None], zones)


def run_tool(args: list[str], case: Path, timeout: float = 240) -> str:
    proc = subprocess.run(args + ["-case", str(case)], env=OPENFOAM_ENV, capture_output=True, text=True, timeout=timeout)
    out = proc.stdout + proc.stderr
    assert proc.returncode == 0, out[-3000:]
    return out


def last_value(case: Path, function: str) -> float:
    """The last value a surfaceFieldValue function object wrote."""
    dat = next((Path(case) / "postProcessing" / function / "0").glob("*.dat"))
    rows = [line.split() for line in dat.read_text().splitlines() if line.strip() and not line.startswith("#")]
    return float(rows[-1][-1])


def converged_iterations(log: str) -> int | None:
    m = re.search(r"SIMPLE solution converged in (\d+) iterations", log)
    return int(m.group(1)) if m else None
