"""Write a cut: ``section.csv``, ``section.vtu``, ``section.png`` and ``section.json``.

The four files are staged in a hidden folder and renamed into place together, ``section.json``
last (``safeio.StagedOutput``), so a folder with a ``section.json`` holds a complete cut.
"""

from __future__ import annotations

import csv
import io
import json
from pathlib import Path
from typing import Any

import numpy as np

from chanmesh import __version__
from chanmesh.post.cut import Z, Cut
from chanmesh.post.cut_plot import render_png
from chanmesh.post.result_file import ResultField
from chanmesh.safeio import StagedOutput

NAMES = ("section.csv", "section.vtu", "section.png", "section.json")
CSV_COLUMNS = (
    "u_m", "x_m", "y_m", "z_m", "weight_m2", "streamwise_m_s", "secondary_u_m_s", "secondary_z_m_s",
    "secondary_speed_m_s", "ux_m_s", "uy_m_s", "uz_m_s", "psi_m2_s",
)
CAUTIONS = [
    "The cut reads what the solver computed; it does not check the solution. Simulation does not replace "
    "experimental validation of a device.",
    "Sampling interpolates inside the result's cells; near walls and on coarse meshes the values carry the "
    "solver's own discretisation error.",
]


def csv_text(c: Cut) -> str:
    g = c.grid
    # (u, z) of the section: z is the global z (the centreline lies in z = 0), so one column holds both
    cols = [g.uu, *(g.points[:, k].reshape(g.shape) for k in range(3)), g.weights, c.streamwise, c.sec_n,
            c.sec_z, c.secondary_speed, *(c.velocity[..., k] for k in range(3)), c.psi]
    buf = io.StringIO()
    w = csv.writer(buf, lineterminator="\n")
    w.writerow(CSV_COLUMNS)
    for row in np.column_stack([np.ravel(a) for a in cols]):
        w.writerow([f"{x:.9g}" for x in row])
    return buf.getvalue()


def section_dataset(c: Cut):  # type: ignore[no-untyped-def]
    """The sample grid (nu x nv x 1 structured, stored as an UnstructuredGrid for VTU) with the velocity split."""
    import pyvista as pv

    g = c.grid
    nv, nu = g.shape
    pts = g.points.reshape(nv, nu, 3)
    sg = pv.StructuredGrid(pts[..., 0].T[..., None], pts[..., 1].T[..., None], pts[..., 2].T[..., None])
    # StructuredGrid numbers points with u fastest, as the (nv, nu) sample arrays in C order
    order = lambda a: np.asarray(a).reshape(nv * nu, -1).squeeze()  # noqa: E731
    secondary = c.sec_n[..., None] * c.frame.normal + c.sec_z[..., None] * Z
    sg.point_data["streamwise"] = order(c.streamwise)
    sg.point_data["secondary"] = order(secondary)
    sg.point_data["velocity"] = order(c.velocity)
    sg.point_data["secondary_speed"] = order(c.secondary_speed)
    sg.point_data["psi"] = order(c.psi)
    return sg.cast_to_unstructured_grid()


def json_data(c: Cut, design_name: str, result: ResultField) -> dict[str, Any]:
    return {
        "schema": "chanmesh.cut/1",
        "chanmesh_version": __version__,
        "design": design_name,
        "result": result.source,
        "reader": result.kind,
        "time": result.time,
        "times": list(result.times),
        "scale_m_per_unit": result.scale,
        "field": {"name": result.name, "association": result.association, "also_as": result.also or None},
        "station": c.frame.to_dict(),
        "sampling": {"across": c.grid.shape[1], "high": c.grid.shape[0], "points": int(np.prod(c.grid.shape)),
                     "rule": "node samples on the exact outline, walls and mid-planes included, trapezoidal rule, VTK probe filter; maxima refined by parabolas between samples"},
        "figures": c.figures,
        "view": "looking downstream: u along n = t x z to the right, z up; sense of rotation in that view",
        "cautions": CAUTIONS,
    }


def write_cut(c: Cut, out: Path, title: str, design_name: str, result: ResultField,
              extra: dict[str, bytes] | None = None) -> list[Path]:
    """Write the four files (and any ``extra`` name -> bytes, e.g. the comparison picture) into
    ``out``; returns their paths."""
    with StagedOutput(Path(out)) as staged:
        for name, data in (extra or {}).items():
            (staged.stage / name).write_bytes(data)
        (staged.stage / "section.csv").write_text(csv_text(c), encoding="utf-8")
        section_dataset(c).save(str(staged.stage / "section.vtu"))
        (staged.stage / "section.png").write_bytes(render_png(c, title))
        data = json_data(c, design_name, result)
        (staged.stage / "section.json").write_text(json.dumps(data, indent=2) + "\n", encoding="utf-8")
        return staged.commit("section.json")
