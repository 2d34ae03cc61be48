"""Plant known bugs, one at a time, in a copy of chanmesh and run the tests that should catch them.

Each plant is a textual patch (old text -> new text) of one file of the package; the copy is
made from the files git tracks in this checkout, so the checkout itself is never touched. For
each plant the named tests run on the patched copy: "caught" when pytest reports a failing
test, "MISSED" when they all pass, "error" when the patch no longer applies (the code moved)
or pytest could not run. ``--baseline`` first runs every plant's tests on the unpatched copy,
which must pass. Not part of the test suite (it runs the suite's own tests many times).

    python bench/plant_bugs.py                 # every plant
    python bench/plant_bugs.py --only resume   # plants whose name contains 'resume'
"""

from __future__ import annotations

import argparse
import os
import shutil
import subprocess
import sys
import tempfile
import time
from dataclasses import dataclass
from pathlib import Path

ROOT = Path(__file__).resolve().parents[1]


@dataclass(frozen=True)
class Plant:
    name: str
    file: str
    old: str
    new: str
    tests: tuple[str, ...]
    every: bool = False  # replace every occurrence (else exactly one must exist)


PLANTS = [
    # --- the five of issue 17 -------------------------------------------------------------
    Plant("tagging check never raises", "chanmesh/meshing/verify.py",
          "def check_boundary_tagging(mesh: ChannelMesh) -> dict[str, int]:",
          "def check_boundary_tagging(mesh: ChannelMesh) -> dict[str, int]:\n    try:\n        return _checked(mesh)\n"
          "    except MeshCheckError:\n        return {}  # the plant: every failure swallowed\n\n\n"
          "def _checked(mesh: ChannelMesh) -> dict[str, int]:",
          ("tests/test_verify_checker.py",)),
    Plant("serpentine's last straight half as long", "chanmesh/geometry/centerline.py",
          "        out.append(LinePiece(path.straight))", "        out.append(LinePiece(0.5 * path.straight))",
          ("tests/test_hand_references.py",)),
    Plant("hex cells uniform over the height", "chanmesh/meshing/hexplan.py",
          "    eta = grading.nodes_high(H)",
          "    eta = np.linspace(0.0, H, len(grading.nodes_high(H)))",
          ("tests/test_mesh_grading.py::test_hex_cells_grow_by_the_wall_ratio_across_and_over_the_height",
           "tests/test_mesh_grading.py::test_hex_wall_cells_are_the_requested_first_cell")),
    Plant("resume accepts missing, truncated or altered files", "chanmesh/manifest.py",
          '        if not p.is_file() or p.stat().st_size != entry["bytes"] or file_sha256(p) != entry["sha256"]:',
          "        if False:",
          ("tests/test_sweep.py::test_damaged_finished_variant_is_rebuilt",
           "tests/test_sweep.py::test_damaged_family_level_is_rebuilt")),
    Plant("spiral Dean numbers from the distance to the centre", "chanmesh/numbers/regime.py",
          "    de = dean_number(reynolds, hydraulic_diameter, station.curvature_radius)",
          "    de = dean_number(reynolds, hydraulic_diameter, station.radius)",
          ("tests/test_numbers_regime.py",)),
    # --- five more, in code the other open issues added ------------------------------------
    Plant("section flow: flow-rate constraint integrates 1 % too much", "chanmesh/flow/equations.py",
          '    local = np.einsum("ieq,eq->ie", t.phi, t.dx)', '    local = np.einsum("ieq,eq->ie", t.phi, 1.01 * t.dx)',
          ("tests/test_flow_section.py", "tests/test_flow_dean_by_hand.py")),
    Plant("section flow: centrifugal force reversed in the residual", "chanmesh/flow/equations.py",
          "- kappa * ut * ut)", "+ kappa * ut * ut)",
          ("tests/test_flow_section.py",)),
    Plant("section flow: Dean number on twice the bend radius", "chanmesh/flow/solve.py",
          "de = None if radius is None else dean_number(re, L, abs(radius))",
          "de = None if radius is None else dean_number(re, L, 2 * abs(radius))",
          ("tests/test_flow_section.py", "tests/test_flow_dean_by_hand.py")),
    Plant("section flow: vortex senses swapped", "chanmesh/flow/result.py",
          '((1.0, "counter-clockwise"), (-1.0, "clockwise"))', '((1.0, "clockwise"), (-1.0, "counter-clockwise"))',
          ("tests/test_flow_section.py",)),
    Plant("section flow: bend/straight resistance ratio inverted", "chanmesh/flow/solve.py",
          "dpds_ratio=g / g_straight", "dpds_ratio=g_straight / g",
          ("tests/test_flow_section.py", "tests/test_flow_dean_by_hand.py")),
]


def copy_tree(dest: Path) -> None:
    """The files git tracks (as they are in the working tree) into ``dest``."""
    files = subprocess.run(["git", "ls-files", "-z"], cwd=ROOT, capture_output=True, check=True).stdout
    for rel in files.decode().split("\0"):
        if not rel:
            continue
        src = ROOT / rel
        if src.is_file():
            (dest / rel).parent.mkdir(parents=True, exist_ok=True)
            shutil.copy2(src, dest / rel)


def apply(plant: Plant, tree: Path) -> str | None:
    """Patch the copy; returns an error text when the old text is not found as expected."""
    path = tree / plant.file
    if not path.is_file():
        return f"{plant.file} does not exist"
    text = path.read_text()
    n = text.count(plant.old)
    if n == 0 or (n > 1 and not plant.every):
        return f"{n} occurrences of the old text in {plant.file}"
    path.write_text(text.replace(plant.old, plant.new))
    return None


def run_tests(tree: Path, tests: tuple[str, ...]) -> tuple[int, str]:
    env = {**os.environ, "PYTHONPATH": str(tree), "PYTHONDONTWRITEBYTECODE": "1"}
    cmd = [sys.executable, "-m", "pytest", "-q", "-x", "-p", "no:cacheprovider", *tests]
    proc = subprocess.run(cmd, cwd=tree, env=env, capture_output=True, text=True)
    return proc.returncode, proc.stdout + proc.stderr


def first_failure(output: str) -> str:
    for line in output.splitlines():
        if line.startswith("FAILED "):
            return line[len("FAILED "):].split(" - ")[0]
    return ""


def main() -> int:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--only", default="", help="run plants whose name contains this text")
    parser.add_argument("--baseline", action="store_true", help="first check the tests pass unpatched")
    args = parser.parse_args()
    plants = [p for p in PLANTS if args.only.lower() in p.name.lower()]
    rows = []
    with tempfile.TemporaryDirectory(prefix="chanmesh-plants-") as tmp:
        clean = Path(tmp) / "clean"
        copy_tree(clean)
        if args.baseline:
            tests = tuple(dict.fromkeys(t for p in plants for t in p.tests))
            code, out = run_tests(clean, tests)
            print(f"baseline: {'pass' if code == 0 else 'FAIL'}")
            if code != 0:
                print(out[-3000:])
                return 1
        for plant in plants:
            tree = Path(tmp) / "planted"
            shutil.rmtree(tree, ignore_errors=True)
            shutil.copytree(clean, tree)
            start = time.perf_counter()
            problem = apply(plant, tree)
            if problem:
                rows.append((plant, "error", problem, 0.0))
            else:
                code, out = run_tests(tree, plant.tests)
                if code == 1:
                    rows.append((plant, "caught", first_failure(out), time.perf_counter() - start))
                elif code == 0:
                    rows.append((plant, "MISSED", "", time.perf_counter() - start))
                else:
                    rows.append((plant, "error", f"pytest exit {code}: {out[-300:]}", time.perf_counter() - start))
            plant_row = rows[-1]
            print(f"{plant_row[1]:>7}  {plant.name}  ({plant.file})  {plant_row[2]}  [{plant_row[3]:.0f} s]", flush=True)
    print()
    print("| plant | file | result | first failing test |")
    print("|---|---|---|---|")
    for plant, status, detail, _ in rows:
        print(f"| {plant.name} | `{plant.file}` | {status} | {detail} |")
    return 0 if all(r[1] == "caught" for r in rows) else 1


if __name__ == "__main__":
    sys.exit(main())
