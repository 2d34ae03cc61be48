"""Write a GCI report: a text table for the screen, ``gci.json``, ``gci.csv`` and one PNG per
quantity (value against h, Richardson-extrapolated value marked at h = 0).

Every file is written to a temporary name in the target folder and renamed into place, so an
interrupted run never leaves a file that looks complete.
"""

from __future__ import annotations

import csv
import dataclasses
import io
import json
import math
import re
from pathlib import Path
from typing import Any, Sequence

import numpy as np

from chanmesh import __version__
from chanmesh.jsondata import finite_json
from chanmesh.post.gci import QuantityReport, StudyTable, TripleResult, TwoGridResult
from chanmesh.safeio import atomic_write_bytes, atomic_write_text

CAUTION = ("The GCI bounds discretisation error only; it does not validate the model. Simulation does "
           "not replace validation of a device against experiment.")

CSV_COLUMNS = (
    "quantity", "kind", "levels", "h1", "h2", "h3", "phi1", "phi2", "phi3", "r21", "r32", "s", "p",
    "phi_ext", "e_a21", "e_ext21", "gci_fine", "gci_medium", "band_fine", "asymptotic_ratio",
    "safety_factor", "convergence", "flags",
)


def slug(name: str) -> str:
    """A file-name-safe form of a quantity name."""
    return re.sub(r"[^A-Za-z0-9._-]+", "_", name).strip("_") or "quantity"


def _pct(x: float) -> str:
    return f"{100 * x:.3g} %" if math.isfinite(x) else "-"


def _num(x: float, fmt: str = ".6g") -> str:
    return format(x, fmt) if math.isfinite(x) else "-"


def format_report(table: StudyTable, reports: Sequence[QuantityReport]) -> str:
    """The screen table: one block per quantity, one column per triple (or the two-grid pair)."""
    out = io.StringIO()
    out.write(f"Grid convergence (Celik et al. 2008; two grids: Roache 1994). {table.h_note}\n")
    scale, _ = h_scale(table)
    unit = " um" if table.h_unit == "m" else ""  # the terminal spells units in ASCII, as `numbers` does
    out.write("levels " + ", ".join(f"{lv}: h = {h * scale:.6g}{unit}" for lv, h in zip(table.levels, table.h)) + "\n")
    for rep in reports:
        out.write(f"\n{rep.name}\n")
        cols: list[TripleResult | TwoGridResult] = list(rep.triples) or [rep.two_grid]  # type: ignore[list-item]
        rows = [("levels", [",".join(map(str, c.levels)) for c in cols])]
        if rep.triples:
            rows += [
                ("phi1 / phi2 / phi3", [" / ".join(_num(v) for v in c.phi) for c in cols]),
                ("r21 / r32", [f"{c.r21:.4g} / {c.r32:.4g}" for c in rep.triples]),
                ("apparent order p", [_num(c.p, ".4g") + (" (s=-1)" if c.s < 0 else "") for c in rep.triples]),
            ]
        else:
            two = rep.two_grid
            rows += [("phi1 / phi2", [" / ".join(_num(v) for v in two.phi)]),  # type: ignore[union-attr]
                     ("r21", [f"{two.r21:.4g}"]),  # type: ignore[union-attr]
                     ("assumed order p", [f"{two.p_assumed:g}"])]  # type: ignore[union-attr]
        rows += [
            ("phi_ext (Richardson)", [_num(c.phi_ext21, ".8g") for c in cols]),
            ("e_a21", [_pct(c.e_a21) for c in cols]),
            ("e_ext21", [_pct(c.e_ext21) for c in cols]),
            ("GCI fine (Fs)", [f"{_pct(c.gci_fine)} ({c.safety_factor:g})" for c in cols]),
        ]
        if rep.triples:
            rows += [("GCI medium", [_pct(c.gci_medium) for c in rep.triples]),
                     ("GCI32/(r21^p GCI21)", [_num(c.asymptotic_ratio, ".4g") for c in rep.triples])]
        rows.append(("convergence", [c.convergence for c in cols]))
        width = max(len(r[0]) for r in rows)
        cw = [max(len(r[1][j]) for r in rows) for j in range(len(cols))]
        for label, cells in rows:
            out.write(f"  {label:<{width}}  " + "  ".join(f"{c:>{w}}" for c, w in zip(cells, cw)) + "\n")
        if rep.fit is not None:
            f = rep.fit
            out.write(f"  least squares over {f.n_levels} levels: p = {f.p:.4g}, phi0 = {f.phi0:.8g}, "
                      f"rms residual = {f.rms_residual:.3g}\n")
        notes = list(rep.notes) + [n for c in cols for n in c.notes] + (list(rep.fit.notes) if rep.fit else [])
        for note in dict.fromkeys(notes):
            out.write(f"  note: {note}\n")
    out.write(f"\n{CAUTION}\n")
    return out.getvalue()


def report_dict(table: StudyTable, reports: Sequence[QuantityReport]) -> dict[str, Any]:
    """Everything in the report as plain JSON-ready data."""
    return finite_json({
        "chanmesh_version": __version__,
        "method": "Celik et al. (2008) J. Fluids Eng. 130(7) 078001; two-grid GCI: Roache (1994)",
        "h_source": table.h_note,
        "levels": list(table.levels),
        "h": list(table.h),
        "quantities": [dataclasses.asdict(r) for r in reports],
        "caution": CAUTION,
    })


def _csv_rows(reports: Sequence[QuantityReport]) -> list[dict[str, Any]]:
    rows: list[dict[str, Any]] = []
    for rep in reports:
        for c in rep.triples:
            rows.append(dict(quantity=rep.name, kind="triple", levels=" ".join(map(str, c.levels)),
                             h1=c.h[0], h2=c.h[1], h3=c.h[2], phi1=c.phi[0], phi2=c.phi[1], phi3=c.phi[2],
                             r21=c.r21, r32=c.r32, s=c.s, p=c.p, phi_ext=c.phi_ext21, e_a21=c.e_a21,
                             e_ext21=c.e_ext21, gci_fine=c.gci_fine, gci_medium=c.gci_medium,
                             band_fine=c.band_fine, asymptotic_ratio=c.asymptotic_ratio,
                             safety_factor=c.safety_factor, convergence=c.convergence, flags=" ".join(c.flags)))
        if rep.two_grid is not None:
            t = rep.two_grid
            rows.append(dict(quantity=rep.name, kind="two-grid", levels=" ".join(map(str, t.levels)),
                             h1=t.h[0], h2=t.h[1], phi1=t.phi[0], phi2=t.phi[1], r21=t.r21, p=t.p_assumed,
                             phi_ext=t.phi_ext21, e_a21=t.e_a21, e_ext21=t.e_ext21, gci_fine=t.gci_fine,
                             band_fine=t.band_fine, safety_factor=t.safety_factor, convergence=t.convergence,
                             flags=" ".join(t.flags)))
        if rep.fit is not None:
            f = rep.fit
            rows.append(dict(quantity=rep.name, kind="least-squares", levels=" ".join(map(str, rep.levels)),
                             p=f.p, phi_ext=f.phi0, convergence="fit", flags=" ".join(f.notes)))
    return rows


def _write_csv(fh: Any, reports: Sequence[QuantityReport]) -> None:
    writer = csv.DictWriter(fh, fieldnames=CSV_COLUMNS, restval="")
    writer.writeheader()
    for row in _csv_rows(reports):
        writer.writerow({k: ("" if isinstance(v, float) and not math.isfinite(v) else
                             (repr(v) if isinstance(v, float) else v)) for k, v in row.items()})


FIGURE_PX = (1000, 640)
"""GCI picture size in pixels (at 100 dpi): wide enough to read on a report page."""
FONT_PT = 12
"""Base font size of the GCI picture (ticks, legend and level numbers; labels and title larger)."""


def h_scale(table: StudyTable) -> tuple[float, str]:
    """(factor, axis label) that show the table's h: metres as µm, other sizes as they are."""
    if table.h_unit == "m":
        return 1e6, "representative cell size h (µm)"
    if table.h_unit == "relative":
        return 1.0, "relative cell size h = (1/N)^(1/dim), no unit (give --volume or --area for µm)"
    return 1.0, "representative cell size h (unit of the CSV's h column)"


def gci_figure(rep: QuantityReport, table: StudyTable) -> Any:
    """The quantity against h (µm when h is in metres), the fitted or Richardson curve, the
    extrapolated value at h = 0 and the fine-grid GCI band; a matplotlib ``Figure``."""
    from matplotlib.backends.backend_agg import FigureCanvasAgg
    from matplotlib.figure import Figure

    fig = Figure(figsize=(FIGURE_PX[0] / 100, FIGURE_PX[1] / 100), dpi=100)
    FigureCanvasAgg(fig)  # off-screen rendering; no display needed
    ax = fig.add_subplot()
    scale, xlabel = h_scale(table)
    h, phi = np.asarray(rep.h), np.asarray(rep.phi)
    ax.plot(h * scale, phi, "o-", color="#1f5a8c", ms=7, label="levels (1 = finest)")
    for lv, x, y in zip(rep.levels, h * scale, phi):
        ax.annotate(str(lv), (x, y), textcoords="offset points", xytext=(5, 5), fontsize=FONT_PT)
    head = rep.headline
    ext, p = head.phi_ext21, (head.p if isinstance(head, TripleResult) else head.p_assumed)
    if rep.fit is not None and math.isfinite(rep.fit.p):
        ext, p = rep.fit.phi0, rep.fit.p
        label = f"least squares, p = {p:.3g}"
    else:
        label = f"Richardson, p = {p:.3g}"
    if math.isfinite(ext) and math.isfinite(p):
        hs = np.linspace(0.0, float(h.max()), 200)
        c = (phi[0] - ext) / h[0] ** p
        ax.plot(hs * scale, ext + c * hs**p, "--", color="#8c8c8c", lw=1.2, label=label)
    if math.isfinite(ext):
        ax.plot([0.0], [ext], marker="*", ms=16, color="#c0392b", ls="none", label=f"extrapolated {ext:.6g}")
    if math.isfinite(head.band_fine):
        ax.errorbar([h[0] * scale], [phi[0]], yerr=[head.band_fine], fmt="none", ecolor="#c0392b", capsize=5,
                    label=f"GCI fine {_pct(head.gci_fine)}")
    top = float(h.max()) * scale
    ax.set_xlim(-0.04 * top, 1.05 * top)  # room for the star at h = 0
    ax.set_xlabel(xlabel, fontsize=FONT_PT + 1)
    ax.set_ylabel(rep.name, fontsize=FONT_PT + 1)
    ax.set_title(f"{rep.name} against cell size h: {head.convergence} (Celik et al. 2008)", fontsize=FONT_PT + 2)
    ax.tick_params(labelsize=FONT_PT)
    ax.grid(True, alpha=0.3)
    ax.legend(fontsize=FONT_PT)
    fig.tight_layout()
    return fig


def write_report(out_dir: Path, table: StudyTable, reports: Sequence[QuantityReport]) -> list[Path]:
    """Write gci.json, gci.csv and gci-<quantity>.png into ``out_dir``; the paths written."""
    paths = [out_dir / "gci.json", out_dir / "gci.csv"]
    text = json.dumps(report_dict(table, reports), indent=2)
    atomic_write_text(paths[0], text + "\n")
    table_text = io.StringIO(newline="")
    _write_csv(table_text, reports)
    atomic_write_text(paths[1], table_text.getvalue())
    used: set[str] = set()
    for rep in reports:
        stem = base = f"gci-{slug(rep.name)}"
        k = 2
        while stem in used:  # two names with the same safe form must not overwrite each other
            stem, k = f"{base}-{k}", k + 1
        used.add(stem)
        png = out_dir / f"{stem}.png"
        picture = io.BytesIO()
        gci_figure(rep, table).savefig(picture, format="png")
        atomic_write_bytes(png, picture.getvalue())
        paths.append(png)
    return paths
