"""One spelling per term in every text a person reads (issue 15 item 20).

A small hexahedral build with [flow] is run through the command line; its terminal summary,
report.html's text (and image descriptions), the manifest's human-readable values, and the
output of `chanmesh quality`, `numbers` and `cut` are scanned for the variants `chanmesh.terms`
forbids (tets, "992 hexahedron", quad, "wall cell", "Scaled Jacobian", "non orthogonality",
a section coordinate v, ...). The spellings are the project's choice; the reference for the
plurals is ordinary English usage (tetrahedron/tetrahedra, hexahedron/hexahedra).
"""

from __future__ import annotations

import contextlib
import io
import json
import re
from typing import Any

import numpy as np
import pytest
import pyvista as pv

from chanmesh.cli import main
from chanmesh.report import REPORT
from chanmesh.terms import count_phrase, forbidden_in, metric_label
from conftest import design_text
from synthetic_flow import arc_field, duct_flow_rate

W, H, R = 150e-6, 60e-6, 1200e-6

DESIGN = design_text("arc", name="terms-arc", section={"width": W * 1e6, "height": H * 1e6},
                     path={"radius": R * 1e6, "angle": 60}, mesh={"cells": "hex", "cells_across": 4},
                     flow={"rate": "100uL/min", "particles": ["10um"]})
# (invented demo design: an arc 150 x 60 um, no lead, so the synthetic arc field centred at the
# origin fits it)


def _strings(data: Any, skip: tuple[str, ...] = ("design", "files", "versions", "request")) -> list[str]:
    """Every string value of a JSON tree (keys are formats and are not scanned), except the design
    file as written (input format) and file names."""
    if isinstance(data, dict):
        return [s for k, v in data.items() if k not in skip for s in _strings(v, ())]
    if isinstance(data, list):
        return [s for v in data for s in _strings(v, ())]
    return [data] if isinstance(data, str) else []


@pytest.fixture(scope="module")
def outputs(tmp_path_factory) -> dict[str, str]:
    folder = tmp_path_factory.mktemp("terms")
    design = folder / "d.toml"
    design.write_text(DESIGN, encoding="utf-8")
    texts: dict[str, str] = {}

    def run(*args: str) -> str:
        buf = io.StringIO()
        with contextlib.redirect_stdout(buf):
            assert main(list(args)) == 0, args
        return buf.getvalue()

    out = folder / "out"
    texts["build summary"] = run("build", str(design), "--out", str(out), "--format", "vtu")
    page = (out / REPORT).read_text(encoding="utf-8")
    alts = " ".join(re.findall(r'alt="([^"]*)"', page))
    page = re.sub(r"<style.*?</style>", " ", page, flags=re.S)
    page = re.sub(r"<img[^>]*>", " ", page)
    texts["report.html"] = " ".join(re.sub(r"<[^>]+>", " ", page).split()) + " " + alts
    manifest = json.loads((out / "manifest.json").read_text(encoding="utf-8"))
    texts["manifest values"] = "\n".join(_strings(manifest))
    texts["quality"] = run("quality", str(out / "terms-arc.vtu"))
    texts["numbers"] = run("numbers", str(design))
    grid = pv.read(out / "terms-arc.vtu")
    g_over_mu = 0.185 * W * H / duct_flow_rate(W, H, 1.0)
    grid.point_data["U"] = arc_field(np.asarray(grid.points), R, W, H, g_over_mu, -0.02 * W)
    result = folder / "result.vtu"
    grid.save(result)
    texts["cut"] = run("cut", str(result), "--design", str(design), "--at", "0.5", "--field", "U", "--out", str(folder / "cut"))
    section = json.loads((folder / "cut" / "section.json").read_text(encoding="utf-8"))
    texts["cut json vortices"] = " ".join(k for v in section["figures"].get("vortices", []) for k in v)
    texts["section.csv header"] = (folder / "cut" / "section.csv").read_text(encoding="utf-8").splitlines()[0]
    return texts


def test_the_scanner_catches_the_old_spellings():
    """The check is not vacuous: each variant the code printed before this change is found."""
    for old in ("rep-arc: 992 hexahedron, 808 quad -> out", "scaled jacobian min 0.999", "non orthogonality max",
                "refine the core or the wall cell (first_cell)", "hex (structured sweep, numpy)", "u_m,v_m,x_m",
                "Scaled Jacobian", "4,000 tets", "12 hexahedron"):
        assert forbidden_in(old), old
    for fine in ("856,562 hexahedra, 130,930 quadrilaterals", "scaled Jacobian min", "wall-adjacent cell (first_cell)",
                 "mesh.cells hex", "mesh.first_cell 2 µm", "non-orthogonality max"):
        assert forbidden_in(fine) == [], fine


def test_words_come_from_one_place():
    assert count_phrase({"hexahedron": 856562, "quad": 130930}) == "856,562 hexahedra, 130,930 quadrilaterals"
    assert count_phrase({"tetra": 1, "triangle": 1}) == "1 tetrahedron, 1 triangle"
    assert metric_label("scaled_jacobian_min") == "scaled Jacobian min"
    assert metric_label("wall_cell_m") == "wall-adjacent cell"
    assert metric_label("non_orthogonality_max") == "non-orthogonality max"


@pytest.mark.parametrize("which", ["build summary", "report.html", "manifest values", "quality", "numbers", "cut",
                                   "cut json vortices", "section.csv header"])
def test_outputs_use_one_spelling(outputs, which):
    text = outputs[which]
    assert text.strip(), which  # something was produced to scan
    assert forbidden_in(text) == [], f"{which}: {forbidden_in(text)}"


def test_outputs_hold_the_chosen_words(outputs):
    """The chosen words are there (so the scan above read the right texts)."""
    assert re.search(r"\d hexahedra, [\d,]+ quadrilaterals", outputs["build summary"])
    assert "scaled Jacobian" in outputs["report.html"] and "non-orthogonality" in outputs["report.html"]
    assert "wall-adjacent cell" in outputs["report.html"] and "wall-adjacent cell" in outputs["quality"]
    assert "hexahedra" in outputs["manifest values"]
    assert outputs["section.csv header"].startswith("u_m,x_m,y_m,z_m,")
    assert "z =" in outputs["cut"]
