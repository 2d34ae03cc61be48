"""``summary.csv`` of a sweep: one row per variant, written atomically after each variant.

Columns: variant, the varied keys, status (built, resumed, infeasible, failed), message, volume
cells (finest level first for families, ';'-separated), the mesh quality figures one column
each (as the manifest names them; ';'-separated per level for families), design numbers (Reynolds, largest Dean, pressure drop; blank without a [flow]),
time in seconds, and the variant's folder relative to the sweep folder.
"""

from __future__ import annotations

import csv
import io
from pathlib import Path
from typing import Any

from chanmesh.design.model import Design
from chanmesh.errors import DesignError
from chanmesh.post.quality import summary_figures
from chanmesh.safeio import atomic_write_text

SUMMARY = "summary.csv"
NUMBER_COLUMNS = ("reynolds", "dean_max", "pressure_drop_Pa")
QUALITY_COLUMNS = ("scaled_jacobian_min", "scaled_jacobian_mean", "aspect_ratio_max", "non_orthogonality_max",
                   "wall_cell_min", "wall_cell_mean", "wall_cell_max")
"""The manifest's quality figures, one column each so a spreadsheet can sort by them (wall-adjacent cells in m)."""


def design_figures(design: Design) -> dict[str, float | None]:
    """Reynolds number, largest Dean number and pressure drop; None without a flow."""
    from chanmesh.numbers import design_numbers

    try:
        n = design_numbers(design)
    except DesignError:
        return dict.fromkeys(NUMBER_COLUMNS)
    deans = [float(s["dean"]) for s in (n.get("dean") or {}).get("stations", [])]
    return {
        "reynolds": n["flow"]["reynolds"],
        "dean_max": max(deans) if deans else None,
        "pressure_drop_Pa": n["pressure"]["drop_Pa"],
    }


def _cell(value: Any) -> str:
    if value is None:
        return ""
    if isinstance(value, float):
        return f"{value:.6g}"
    return str(value)


def summary_rows(rows: list[dict[str, Any]], keys: list[str]) -> list[list[str]]:
    header = ["variant", *keys, "status", "message", "volume_cells", *QUALITY_COLUMNS, *NUMBER_COLUMNS, "time_s", "path"]
    out = [header]
    for r in rows:
        levels = r.get("levels") or []
        quality = [summary_figures(lv["quality"]) for lv in levels if lv.get("quality") is not None]
        numbers = r.get("numbers") or {}
        out.append([
            str(r["variant"]),
            *(_cell(r["params"].get(k)) for k in keys),
            r["status"],
            r.get("message", ""),
            ";".join(str(lv["cells"]) for lv in levels),
            *(";".join(_cell(q.get(c)) for q in quality) for c in QUALITY_COLUMNS),
            *(_cell(numbers.get(c)) for c in NUMBER_COLUMNS),
            _cell(r.get("time_s")),
            r.get("path", ""),
        ])
    return out


def write_summary(rows: list[dict[str, Any]], folder: Path, keys: list[str]) -> Path:
    buf = io.StringIO()
    csv.writer(buf, lineterminator="\n").writerows(summary_rows(rows, keys))
    return atomic_write_text(Path(folder) / SUMMARY, buf.getvalue())


def read_summary(folder: Path) -> list[dict[str, str]]:
    with open(Path(folder) / SUMMARY, newline="", encoding="utf-8") as fh:
        return list(csv.DictReader(fh))
