"""``report.html``: one self-contained page per build, readable in any browser without a server.

Everything is inside the file: pictures are PNGs embedded as ``data:`` URIs, the style sheet is
inline, and there is no script. Sections: pictures (plan view, 3D mesh), design table (in the
design file's unit), derived geometry, mesh figures (cell counts, quality histograms when the
manifest has a ``quality`` section), physical groups with measured and analytic sizes, design
numbers (when the design gives a flow), output files and the cautions.
"""

from __future__ import annotations

import base64
import html
import math
from dataclasses import dataclass
from pathlib import Path
from typing import Any

from chanmesh.design.load import FABRICATION_KEYS, LEAD_KEYS, MESH_KEYS, PATH_KEYS, SECTION_KEYS, read_length, read_length_list
from chanmesh.design.model import Design
from chanmesh.errors import DesignError
from chanmesh.geometry.section import section_shape_of
from chanmesh.meshing.model import ChannelMesh
from chanmesh.report.charts import histogram_of, histogram_pngs
from chanmesh.report.palette import INK, INLET, WALL
from chanmesh.report.plan_view import plan_picture
from chanmesh.report.view3d import mesh_picture
from chanmesh.terms import cell_word, metric_label

REPORT = "report.html"

CAUTIONS = (
    "A simulation on this mesh does not replace validation of the device: compare with "
    "measurements before relying on it.",
    "A mould or mask made from the fabrication files must still be checked against the "
    "fabricator's design rules (minimum feature, draft, resist thickness).",
    "Bonded chips have pressure limits; stay within the bond's rating at the planned flow.",
    "Biological samples need the biosafety practice of your site; local rules and qualified "
    "practice come first.",
)

_LENGTH_FIELDS = {
    k
    for table in (SECTION_KEYS, LEAD_KEYS, MESH_KEYS, FABRICATION_KEYS, *PATH_KEYS.values())
    for k, spec in table.items()
    if spec.read in (read_length, read_length_list)
} | {"height_inner", "height_outer", "particles"}

_FLOW_SHOWN = {  # key: (unit shown, factor from SI)
    "rate": ("µL/min", 1e9 * 60.0),
    "velocity": ("m/s", 1.0),
    "density": ("kg/m³", 1.0),
    "viscosity": ("Pa·s", 1.0),
}

_STYLE = f"""
body {{ font-family: system-ui, -apple-system, 'Segoe UI', sans-serif; color: {INK}; margin: 2rem auto;
       max-width: 72rem; padding: 0 1rem; line-height: 1.4; }}
h1 {{ font-size: 1.6rem; margin-bottom: 0.2rem; }}
h2 {{ font-size: 1.2rem; border-bottom: 2px solid {WALL}; padding-bottom: 0.2rem; margin-top: 2rem; }}
table {{ border-collapse: collapse; margin: 0.5rem 0; font-size: 0.92rem; }}
th, td {{ text-align: left; padding: 0.2rem 0.8rem 0.2rem 0; border-bottom: 1px solid #E3E7EA; vertical-align: top; }}
th {{ color: {INLET}; font-weight: 600; }}
td.num {{ text-align: right; font-variant-numeric: tabular-nums; }}
figure {{ margin: 0.8rem 0; }}
img {{ max-width: 100%; height: auto; border: 1px solid #E3E7EA; }}
.charts img {{ width: 32rem; }}
.cols {{ display: flex; flex-wrap: wrap; gap: 0 3rem; }}
.note {{ color: #55616B; font-size: 0.9rem; }}
.caution {{ background: #FFF6E5; border-left: 4px solid #E69A2E; padding: 0.6rem 1rem; }}
"""


def _img(png: bytes, alt: str) -> str:
    data = base64.b64encode(png).decode("ascii")
    return f'<img src="data:image/png;base64,{data}" alt="{html.escape(alt)}">'


def _num(x: Any, digits: int = 6) -> str:
    if isinstance(x, bool) or x is None:
        return html.escape(str(x))
    if isinstance(x, int):
        return f"{x:,}"
    if isinstance(x, float):
        return f"{x:.{digits}g}" if math.isfinite(x) else "—"
    return html.escape(str(x))


def _table(header: list[str], rows: list[list[Any]]) -> str:
    head = "".join(f"<th>{html.escape(h)}</th>" for h in header)
    body = []
    for row in rows:
        cells = []
        for v in row:
            cls = ' class="num"' if isinstance(v, (int, float)) and not isinstance(v, bool) else ""
            cells.append(f"<td{cls}>{_num(v)}</td>")
        body.append("<tr>" + "".join(cells) + "</tr>")
    return f"<table><thead><tr>{head}</tr></thead><tbody>{''.join(body)}</tbody></table>"


def _columns(*blocks: str) -> str:
    return '<div class="cols">' + "".join(f"<div>{b}</div>" for b in blocks if b) + "</div>"


def design_rows(design: Design) -> list[list[Any]]:
    """(key, value, unit) rows of the resolved design, lengths in the design file's unit."""
    per = 1.0 / design.scale
    length_unit = "µm" if design.unit == "um" else design.unit
    rows: list[list[Any]] = [["name", design.name, ""], ["unit", length_unit, ""]]
    for table, values in design.to_dict().items():
        if not isinstance(values, dict):
            continue
        for key, value in values.items():
            full = f"{table}.{key}"
            if table == "path" and key == "segments":
                rows += [[f"{full}[{i}]", _piece_text(piece, per, length_unit), ""] for i, piece in enumerate(value)]
            elif value is None or value == [] or value == ():
                rows.append([full, "—", ""])
            elif key in _LENGTH_FIELDS and table != "flow" or (table == "flow" and key == "particles"):
                if isinstance(value, list):
                    rows.append([full, ", ".join(f"{v * per:.6g}" for v in value), length_unit])
                else:
                    rows.append([full, float(value) * per, length_unit])
            elif table == "flow" and key == "temperature":
                rows.append([full, round(float(value) - 273.15, 6), "°C"])  # as a design file writes it
            elif table == "flow" and key in _FLOW_SHOWN:
                unit, factor = _FLOW_SHOWN[key]
                rows.append([full, float(value) * factor, unit])
            elif isinstance(value, list):
                rows.append([full, ", ".join(str(v) for v in value), ""])
            else:
                rows.append([full, value, "deg" if key == "angle" else ""])
    return rows


def geometry_rows(design: Design, manifest: dict[str, Any]) -> list[list[Any]]:
    g = manifest["geometry"]
    shape = section_shape_of(design)
    return [
        ["centreline length", g["centerline_length"] * 1e3, "mm"],
        ["volume", g["volume"] * 1e9, "µL (mm³)"],
        ["section area", g["section_area"] * 1e12, "µm²"],
        ["hydraulic diameter 4A/P", shape.hydraulic_diameter * 1e6, "µm"],
        ["plan area (footprint)", g["plan_area"] * 1e6, "mm²"],
    ]


def group_rows(manifest: dict[str, Any]) -> list[list[Any]]:
    rows = []
    for g in manifest["groups"]:
        unit = "mm³" if g["dim"] == 3 else "mm²"
        f = 1e9 if g["dim"] == 3 else 1e6
        analytic = g.get("analytic")
        rows.append([
            g["name"], g["dim"], g["tag"], g["entities"], g["measured"] * f,
            analytic * f if analytic is not None else "—",
            f"{g['relative_error']:+.2e}" if "relative_error" in g else "—", unit,
        ])
    return rows


def quality_charts(quality: Any) -> list[tuple[str, bytes]]:
    """(alt text, PNG) of one histogram per entry of ``quality["histograms"]`` (the manifest's
    quality section); lengths (metres in the manifest) are shown in micrometres."""
    if not isinstance(quality, dict) or "skipped" in quality:
        return []
    charts = []
    for name, entry in (quality.get("histograms") or {}).items():
        hist = histogram_of(entry)
        if hist is not None:
            edges, counts = hist
            label = metric_label(name)
            if name.endswith("_m"):
                label, edges = f"{label} (µm)", edges * 1e6
            charts.append((label, edges, counts))
    return [(f"histogram of {label}", png) for (label, _, _), png in zip(charts, histogram_pngs(charts))]


def _quality_section(manifest: dict[str, Any], charts: list[tuple[str, bytes]] | None = None) -> str:
    """Summary figures as a table and the histograms (``quality_charts``, drawn here unless
    given)."""
    quality = manifest.get("quality")
    if not isinstance(quality, dict) or "skipped" in quality or not quality:
        return '<p class="note">No quality figures in this build\'s manifest.</p>'
    charts = quality_charts(quality) if charts is None else charts
    summary = []
    for name, v in quality.items():
        if isinstance(v, (int, float)) and not isinstance(v, bool):
            length = name.startswith("wall_cell")
            unit = "µm" if length else ("deg" if name.startswith("non_orthogonality") else "")
            summary.append([metric_label(name), _num(v * 1e6 if length else v, 4), unit])
    out = f'<div class="charts">{"".join(_img(png, alt) for alt, png in charts)}</div>' if charts else ""
    if summary:
        out += _table(["figure", "value", "unit"], summary)
    return out or '<p class="note">The quality section holds no histogram or summary numbers.</p>'


def numbers_of(design: Design, manifest: dict[str, Any]) -> dict[str, Any] | str:
    """The design numbers: the manifest's own, else computed; a message when there is no flow."""
    found = manifest.get("numbers")
    if isinstance(found, dict) and "skipped" not in found:
        return found
    from chanmesh.numbers import design_numbers

    try:
        return design_numbers(design)
    except DesignError as exc:
        return f"No design numbers: {exc}"


def _numbers_section(numbers: dict[str, Any] | str) -> str:
    if isinstance(numbers, str):
        return f'<p class="note">{html.escape(numbers)}</p>'
    flow = numbers.get("flow") or {}
    sec = numbers.get("section") or {}
    fluid = numbers.get("fluid") or {}
    pressure = numbers.get("pressure") or {}
    rows = [
        ["fluid", fluid.get("name", "—"), ""],
        ["flow rate", (flow.get("rate_m3_s") or math.nan) * 1e9 * 60, "µL/min"],
        ["mean velocity", flow.get("mean_velocity_m_s", math.nan), "m/s"],
        ["Reynolds number (on D_h)", flow.get("reynolds", math.nan), ""],
        ["hydraulic diameter", (sec.get("hydraulic_diameter_m") or math.nan) * 1e6, "µm"],
        ["pressure drop", pressure.get("drop_kPa", math.nan), "kPa"],
    ]
    computed = numbers.get("section_flow") or {}
    if "computed_secondary_max_m_s" in computed:
        rows += [
            ["secondary speed, max (computed: fully developed section flow, chanmesh.flow)",
             computed["computed_secondary_max_m_s"] * 1e3, "mm/s"],
            ["secondary speed, mean (computed)", computed["computed_secondary_mean_m_s"] * 1e3, "mm/s"],
        ]
    out = _table(["number", "value", "unit"], rows)
    dean = numbers.get("dean") or {}
    stations = dean.get("stations") or []
    if stations:
        out += f'<p class="note">Dean number: {html.escape(str(dean.get("definition", "")))}. Dean velocity: the ' \
               "empirical correlation 1.8e-4 De^1.63 m/s (Ookawara et al. 2004), beside the computed secondary " \
               "speed above.</p>"
        out += _table(["Dean station", "Dean number", "regime", "Dean velocity (correlation), mm/s"],
                      [[s.get("label", ""), s.get("dean", math.nan), s.get("regime", ""),
                        (s.get("dean_velocity_m_s") or math.nan) * 1e3] for s in stations])
    particles = numbers.get("particles") or []
    if particles:
        out += _table(["particle", "a / D_h (focusing needs ≳ 0.07, Di Carlo 2009)", "lift / Dean drag (per station)",
                       "expected to focus"],
                      [[f"{p['diameter_m'] * 1e6:.3g} µm", p.get("confinement", math.nan),
                        ", ".join(f"{st.get('lift_over_drag', math.nan):.3g}" for st in p.get("stations", [])),
                        "yes" if p.get("expected_to_focus") else "no"] for p in particles])
    return out


def section_pictures(design: Design, mesh: ChannelMesh, record: Any) -> list[tuple[str, bytes]]:
    """(alt text, PNG) of the resolution figure's pictures: the section mesh, and the two
    section flows side by side when the figure has a secondary speed; none without a figure.
    ``record``: the manifest's ``resolution`` section (its solves are cached per mesh)."""
    if not isinstance(record, dict) or "errors" not in record:
        return []
    from chanmesh.report.section_view import section_mesh_png, solutions_png
    from chanmesh.resolution import figure_for_mesh

    fig = figure_for_mesh(design, mesh)
    out = [("the section mesh, walls labelled", section_mesh_png(design, fig.grid, record["radius_m"]))]
    if record["errors"].get("secondary_max") is not None:
        out.append(("converged section flow and the same on this mesh",
                    solutions_png(design, fig.reference, fig.on_mesh, record["radius_m"], record["errors"])))
    return out


def _resolution_section(design: Design, mesh: ChannelMesh, manifest: dict[str, Any],
                        pictures: list[tuple[str, bytes]] | None = None) -> str:
    """The section mesh picture, the figure's table, and the two section flows side by side
    (``section_pictures``, drawn here unless given)."""
    record = manifest.get("resolution")
    if not isinstance(record, dict):
        return '<p class="note">No resolution figure in this build.</p>'
    if "errors" not in record:
        return f'<p class="note">Resolution figure not computed: {html.escape(str(record.get("skipped", "")))}</p>'
    pictures = section_pictures(design, mesh, record) if pictures is None else pictures
    e, lim = record["errors"], record["limits"]
    op = record["operating_point"]
    ref_err = record["reference"]["estimated_error"]
    pred = record.get("predicted_fv_error", {})
    rows = [
        [name.replace("_", " "), f"{e[name]:+.2%}", f"{pred[name]:.2%}", f"{lim[name]:.0%}",
         "yes" if pred[name] <= lim[name] else "no", "" if ref_err.get(key) is None else f"{ref_err[key]:.1e}"]
        for name, key in (("secondary_max", "secondary_max"), ("secondary_mean", "secondary_mean"), ("flow_rate", "dpds"))
        if e.get(name) is not None
    ]
    de = record.get("dean")
    where = (f"{op['flow_rate_mL_min']:.4g} mL/min ({html.escape(op['source'])}), Re {record['reynolds']:.3g}, "
             + (f"De {de:.3g} at the tightest bend, R = {abs(record['radius_m']) * 1e3:.4g} mm" if de else "straight duct"))
    warn = ('<p class="caution">This mesh misses the developed section flow by more than 10 %: refine the core '
            "(cells_high, cells_across) or the wall-adjacent cell (first_cell).</p>") if record.get("warning") else ""
    from chanmesh.resolution import TETRAHEDRA_NOTE, on_tetrahedra

    if on_tetrahedra(record):
        note = TETRAHEDRA_NOTE.removeprefix("note: ")
        warn += f'<p class="caution">{html.escape(note[0].upper() + note[1:])}</p>'
    return "\n".join([
        f'<p class="note">Fully developed flow of the channel\'s own section at {where}, solved on this mesh\'s '
        "section grid (its inlet face; velocity on the mesh's own nodes) and on a converged reference. Errors "
        "relative to the reference; an idealisation that fails in short bends, U-turns, chambers and entrance "
        "regions (docs/resolution.md).</p>",
        warn,
        _table(["figure", "error on this mesh", "finite-volume error predicted (calibrated)", "default mesh meets", "met",
                "reference's own error"], rows),
        *(f"<figure>{_img(png, alt)}</figure>" for alt, png in pictures),
    ])


def _is_length(key: str) -> bool:
    """A mesher figure in metres: the wall-adjacent and core cells (``wall_cell``, ``wall_cell_high``, ``core_cell``…)."""
    return key.startswith(("wall_cell", "core_cell"))


@dataclass(frozen=True)
class ReportPictures:
    """The report's pictures (PNG bytes) drawn ahead of its page: the plan and 3D views, and,
    when drawn from the manifest's sections, the quality histograms and the resolution
    figure's section pictures as (alt text, PNG) lists; None: drawn with the page."""

    plan: bytes
    view: bytes
    charts: list[tuple[str, bytes]] | None = None
    section: list[tuple[str, bytes]] | None = None


def report_views(design: Design, mesh: ChannelMesh) -> tuple[bytes, bytes]:
    """The plan view and the 3D view (PNG): they need only the design and the mesh, so a build
    draws them in its background thread as soon as the mesh exists."""
    return plan_picture(design, 1100, 720).png, mesh_picture(mesh, design, 1100, 720)


def report_figures(design: Design, mesh: ChannelMesh, sections: dict[str, Any]
                   ) -> tuple[list[tuple[str, bytes]], list[tuple[str, bytes]]]:
    """The quality histograms and the resolution figure's section pictures, from the
    manifest's ``quality`` and ``resolution`` sections (``sections``: the build's manifest
    hooks, or the manifest)."""
    return quality_charts(sections.get("quality")), section_pictures(design, mesh, sections.get("resolution"))


def report_pictures(design: Design, mesh: ChannelMesh, sections: dict[str, Any] | None = None) -> ReportPictures:
    """Every picture of the report: the plan and 3D views, and with ``sections`` (the
    manifest's, or the build's hooks) the histograms and section pictures too. A build draws
    them in its background thread (``report_views`` early, ``report_figures`` after the quality
    figures), so that its report stage only writes the page."""
    if sections is None:
        return ReportPictures(*report_views(design, mesh))
    return ReportPictures(*report_views(design, mesh), *report_figures(design, mesh, sections))


def report_html(design: Design, mesh: ChannelMesh, manifest: dict[str, Any], files: list[Path],
                pictures: ReportPictures | None = None) -> str:
    """The page as text. ``manifest`` is the build's manifest (its ``files`` list is not used);
    ``pictures``: ``report_pictures(design, mesh, ...)`` when already drawn (from the same
    manifest sections)."""
    pictures = pictures or report_pictures(design, mesh)
    cells = [[cell_word(t, n), n] for t, n in manifest["cells"].items()] + [["points", manifest["points"]]]
    info = manifest.get("mesher", {})
    mesher_rows = [
        [metric_label(k), v * 1e6, "µm"] if _is_length(k) and isinstance(v, float) else [metric_label(k), v, ""]
        for k, v in info.items()
        if isinstance(v, (int, float, str)) and not isinstance(v, bool)
    ]
    rows = design_rows(design)
    half = (len(rows) + 1) // 2
    listing = [[p.name, p.stat().st_size] for p in sorted(files) if p.exists()]
    parts = [
        "<!DOCTYPE html>",
        '<html lang="en"><head><meta charset="utf-8">',
        '<meta name="viewport" content="width=device-width, initial-scale=1">',
        f"<title>{html.escape(design.name)} · chanmesh build report</title>",
        f"<style>{_STYLE}</style></head><body>",
        f"<h1>{html.escape(design.name)}</h1>",
        f'<p class="note">chanmesh {html.escape(str(manifest.get("versions", {}).get("chanmesh", "")))} build report · '
        f'design hash <code>{html.escape(str(manifest.get("design_hash", ""))[:16])}</code></p>',
        "<h2>Pictures</h2>",
        f"<figure>{_img(pictures.plan, 'plan view of the channel to scale')}</figure>",
        f"<figure>{_img(pictures.view, 'the mesh in 3D, groups coloured')}</figure>",
        "<h2>Design</h2>",
        _columns(_table(["key", "value", "unit"], rows[:half]),
                 _table(["key", "value", "unit"], rows[half:])),
        "<h2>Derived geometry</h2>",
        _table(["quantity", "value", "unit"], geometry_rows(design, manifest)),
        "<h2>Mesh</h2>",
        _columns(_table(["cells", "count"], cells), _table(["mesher", "value", "unit"], mesher_rows) if mesher_rows else ""),
        "<h3>Quality</h3>",
        _quality_section(manifest, pictures.charts),
        "<h2>Resolution of the section flow</h2>",
        _resolution_section(design, mesh, manifest, pictures.section),
        "<h2>Physical groups</h2>",
        _table(["group", "dim", "tag", "entities", "measured", "analytic", "relative error", "unit"], group_rows(manifest)),
        "<h2>Design numbers</h2>",
        _numbers_section(numbers_of(design, manifest)),
        "<h2>Files</h2>",
        _table(["file", "bytes"], listing + [[REPORT, "this page"], ["manifest.json", "written last: every file's size and SHA-256"]]),
        "<h2>Cautions</h2>",
        '<div class="caution"><ul>' + "".join(f"<li>{html.escape(c)}</li>" for c in CAUTIONS) + "</ul></div>",
        "</body></html>",
    ]
    return "\n".join(p for p in parts if p) + "\n"


def write_report(folder: Path, design: Design, mesh: ChannelMesh, manifest: dict[str, Any], files: list[Path],
                 pictures: ReportPictures | None = None) -> Path:
    """Write ``folder/report.html`` and return its path (the build stages the folder)."""
    path = Path(folder) / REPORT
    path.write_text(report_html(design, mesh, manifest, files, pictures), encoding="utf-8")
    return path


def _piece_text(piece: dict[str, float], per: float, unit: str) -> str:
    """One piece of a segments path in the design's unit: line, arc or spiral."""
    if "line" in piece:
        return f"line {piece['line'] * per:.6g} {unit}"
    if "arc" in piece:
        side = "left" if piece["angle"] > 0 else "right"
        return f"arc R = {piece['arc'] * per:.6g} {unit}, {piece['angle']:g} deg ({side})"
    side = "left" if piece["turns"] > 0 else "right"
    return f"spiral r0 = {piece['spiral'] * per:.6g} {unit}, pitch {piece['pitch'] * per:.6g} {unit}, {piece['turns']:g} turns ({side})"
