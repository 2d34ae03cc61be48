"""Write the outputs of ``chanmesh dean``: dean.json / .csv / .vtu / .png for one flow, and
dean_range.json / .csv / .png for a flow range. Staged and renamed into place, JSON last
(``safeio.StagedOutput``), so a folder with its JSON holds a complete set."""

from __future__ import annotations

import csv
import io
import json
from pathlib import Path
from typing import Any, Sequence

import numpy as np

from chanmesh import __version__
from chanmesh.flow.plot import range_png, section_png
from chanmesh.flow.result import SectionFlow
from chanmesh.flow.station import StationProblem, correlation_comparison
from chanmesh.numbers.regime import dean_velocity
from chanmesh.safeio import StagedOutput

SCHEMA = "chanmesh.dean/1"
LIMITS = (
    "Fully developed flow is an idealisation: the section is assumed not to change along the flow and the bend "
    "to continue unchanged. It does not hold in short bends, serpentine U-turns, chambers, the entrance region "
    "(about 0.06 Re D_h) or where the curvature changes quickly; there the real flow lags behind this answer."
)
CAUTIONS = [
    LIMITS,
    "Steady laminar Newtonian flow; a simulation does not replace experimental validation of a device.",
    "Biological samples need biosafety practice; bonded chips have pressure limits (check dpds times the length "
    "against the fabricator's data). Defer to local rules and qualified practice.",
]
NODE_COLUMNS = ("u_m", "z_m", "streamwise_m_s", "secondary_u_m_s", "secondary_z_m_s", "secondary_speed_m_s",
                "stream_function_m2_s")


def _header(design_name: str, problem: StationProblem) -> dict[str, Any]:
    return {
        "schema": SCHEMA,
        "chanmesh": __version__,
        "design": design_name,
        "station": problem.frame.to_dict(),
        "section_offset_u_m": problem.offset,
        "walls": {"u_minus_half_width": problem.wall_names[0], "u_plus_half_width": problem.wall_names[1]},
        "fluid": problem.fluid.to_dict(),
        "frame": ("section frame of the README: u along n = t x z (right looking downstream), z up, bottom at "
                  "z = -H/2; node coordinates are u - offset"),
    }


def nodes_csv(flow: SectionFlow, offset: float = 0.0) -> str:
    cols = [flow.points[:, 0] + offset, flow.points[:, 1], flow.streamwise, flow.secondary_u, flow.secondary_z,
            flow.secondary_speed, flow.stream_function]
    buf = io.StringIO()
    w = csv.writer(buf, lineterminator="\n")
    w.writerow(NODE_COLUMNS)
    for row in np.column_stack(cols):
        w.writerow([f"{x:.9g}" for x in row])
    return buf.getvalue()


def vtu_bytes(flow: SectionFlow, problem: StationProblem, path: Path) -> None:
    """The section as triangles placed at the station in 3D (p + u n + z z), with the velocity."""
    import pyvista as pv

    f = problem.frame
    u = flow.points[:, 0] + problem.offset
    pts = f.point[None, :] + u[:, None] * f.normal[None, :] + flow.points[:, 1:2] * np.array([0.0, 0.0, 1.0])
    cells = np.column_stack([np.full(len(flow.triangles), 3), flow.triangles]).ravel()
    grid = pv.UnstructuredGrid(cells, np.full(len(flow.triangles), pv.CellType.TRIANGLE, dtype=np.uint8), pts)
    secondary = flow.secondary_u[:, None] * f.normal + flow.secondary_z[:, None] * np.array([0.0, 0.0, 1.0])
    grid.point_data["velocity"] = flow.streamwise[:, None] * f.tangent + secondary
    grid.point_data["streamwise"] = flow.streamwise
    grid.point_data["secondary"] = secondary
    grid.point_data["secondary_speed"] = flow.secondary_speed
    grid.point_data["stream_function"] = flow.stream_function
    grid.point_data["u"] = u
    grid.point_data["z"] = flow.points[:, 1]
    grid.save(str(path), binary=True)


def write_dean(flow: SectionFlow, problem: StationProblem, folder: Path, design_name: str, title: str) -> list[Path]:
    data = {**_header(design_name, problem), "flow": flow.as_dict(), "correlation_comparison": correlation_comparison(flow),
            "cautions": CAUTIONS}
    with StagedOutput(folder) as st:
        (st.stage / "dean.csv").write_text(nodes_csv(flow, problem.offset))
        vtu_bytes(flow, problem, st.stage / "dean.vtu")
        (st.stage / "dean.png").write_bytes(section_png(flow, title, problem.wall_names, problem.offset))
        (st.stage / "dean.json").write_text(json.dumps(data, indent=2, allow_nan=False) + "\n")
        return st.commit("dean.json")


RANGE_COLUMNS = ("flow_rate_mL_min", "mean_velocity_m_s", "reynolds", "dean", "secondary_max_m_s", "secondary_mean_m_s",
                 "correlation_dean_velocity_m_s", "u_of_streamwise_max_m", "max_streamwise_m_s", "dpds_Pa_m",
                 "dpds_ratio", "vortex_cells", "vortex_centres_u_z_sense")


def range_rows(flows: Sequence[SectionFlow]) -> list[list[Any]]:
    rows = []
    for f in flows:
        centres = ";".join(f"{v['centre_u_m']:.4e} {v['centre_z_m']:.4e} {v['sense']}" for v in f.vortices)
        rows.append([f.flow_rate * 6e7, f.mean_velocity, f.reynolds, f.dean, f.secondary_max, f.secondary_mean,
                     None if f.dean is None else dean_velocity(f.dean), f.u_of_streamwise_max, f.max_streamwise, f.dpds,
                     f.dpds_ratio, f.cell_count, centres])
    return rows


def write_range(flows: Sequence[SectionFlow], problem: StationProblem, folder: Path, design_name: str, title: str) -> list[Path]:
    buf = io.StringIO()
    w = csv.writer(buf, lineterminator="\n")
    w.writerow(RANGE_COLUMNS)
    for row in range_rows(flows):
        w.writerow(["" if x is None else (f"{x:.6g}" if isinstance(x, float) else x) for x in row])
    data = {**_header(design_name, problem), "flows": [f.as_dict() for f in flows],
            "correlation_comparison": [correlation_comparison(f) for f in flows], "cautions": CAUTIONS}
    with StagedOutput(folder) as st:
        (st.stage / "dean_range.csv").write_text(buf.getvalue())
        (st.stage / "dean_range.png").write_bytes(range_png(flows, title))
        (st.stage / "dean_range.json").write_text(json.dumps(data, indent=2, allow_nan=False) + "\n")
        return st.commit("dean_range.json")
