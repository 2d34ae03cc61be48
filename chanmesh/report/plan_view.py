"""The plan view: the channel seen from above, to scale, as a PNG (matplotlib, Agg).

Drawn with an exact, known scale so that the picture can be measured: the data limits are set
by hand to the axes box's aspect (no autoscaling), so ``px_per_mm`` is the same along x and y
and the scale bar, drawn in pixels outside the data area, is exactly ``bar_mm * px_per_mm``
long. Inlet and outlet(s) carry arrows in their group colours; section stations are ticks
across the channel.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import matplotlib

matplotlib.use("Agg")
import matplotlib.pyplot as plt  # noqa: E402
import numpy as np  # noqa: E402
from matplotlib.patches import FancyArrow, Polygon, Rectangle  # noqa: E402

from chanmesh.design.model import Design  # noqa: E402
from chanmesh.geometry.centerline import centerline_of  # noqa: E402
from chanmesh.geometry.plan import plan_outline  # noqa: E402
from chanmesh.geometry.stations import station_arc_lengths  # noqa: E402
from chanmesh.report.palette import INK, INLET, PAPER, SCALE_BAR, WALL, group_colours  # noqa: E402
from chanmesh.report.png import figure_png  # noqa: E402

DPI = 100
TOP_BAND = 44  # px: title
BOTTOM_BAND = 56  # px: scale bar and its label
SIDE = 24  # px margin left and right of the drawing
BAR_HEIGHT = 6  # px


@dataclass(frozen=True)
class PlanPicture:
    """A rendered plan view: PNG bytes plus the numbers needed to measure it."""

    png: bytes
    width: int  # px
    height: int  # px
    px_per_mm: float
    bar_mm: float
    bar_px: int  # drawn length of the scale bar
    bar_row: int  # pixel row (from the top) through the middle of the bar


def nice_length(target: float) -> float:
    """The largest 1, 2 or 5 x 10^k not above ``target`` (> 0)."""
    k = math.floor(math.log10(target))
    for m in (5.0, 2.0, 1.0):
        if m * 10**k <= target:
            return m * 10**k
    return 10.0**k  # pragma: no cover - m = 1 always fits


def _label_mm(mm: float) -> str:
    return f"{mm * 1000:g} µm" if mm < 1 else f"{mm:g} mm"


def plan_picture(design: Design, width: int = 1200, height: int = 800) -> PlanPicture:
    """Render the plan view at ``width`` x ``height`` pixels."""
    outline = plan_outline(design)
    line = centerline_of(design)
    w = design.section.width
    pts_mm = outline.points * 1e3
    lo, hi = pts_mm.min(axis=0), pts_mm.max(axis=0)
    extent = float(max(hi - lo))
    arrow = max(3.0 * w * 1e3, 0.08 * extent)  # mm
    pad = 1.25 * arrow + 0.05 * extent
    lo, hi = lo - pad, hi + pad

    box_w, box_h = width - 2 * SIDE, height - TOP_BAND - BOTTOM_BAND
    px_per_mm = min(box_w / (hi[0] - lo[0]), box_h / (hi[1] - lo[1]))
    centre = 0.5 * (lo + hi)
    half = 0.5 * np.array([box_w, box_h]) / px_per_mm

    fig = plt.figure(figsize=(width / DPI, height / DPI), dpi=DPI, facecolor=PAPER)
    ax = fig.add_axes((SIDE / width, BOTTOM_BAND / height, box_w / width, box_h / height))
    ax.set_xlim(centre[0] - half[0], centre[0] + half[0])
    ax.set_ylim(centre[1] - half[1], centre[1] + half[1])
    ax.set_axis_off()
    # add_artist, not add_patch: the limits are set above, and add_patch's pass over every
    # segment of the outline for the data limits cost 0.06 s of the 0.12 s picture
    ax.add_artist(Polygon(pts_mm, closed=True, facecolor=WALL, edgecolor=INK, linewidth=0.8))

    colours = group_colours([*design.inlets.names, *design.outlets.names])
    for port, s_end, into in ((design.inlets, 0.0, True), (design.outlets, line.length, False)):
        cum = np.cumsum((0.0,) + port.split) if port.split else np.array([0.0, 1.0])
        names = port.names
        fan = math.radians(min(60.0, 30.0 * (len(names) - 1)))  # split ports fan out so labels stay apart
        for k, name in enumerate(names):
            u = (-0.5 + 0.5 * (cum[k] + cum[k + 1])) * w
            turn = fan * (k / (len(names) - 1) - 0.5) if len(names) > 1 else 0.0
            _port_arrow(ax, line, s_end, u, arrow, colours[name], name, into=into, turn=-turn if into else turn)
    for i, s in enumerate(station_arc_lengths(design)):
        _tick(ax, line, s, w, f"section_{i + 1}")

    kind = design.path.kind
    fig.text(SIDE / width, 1 - 14 / height, f"{design.name}  ·  {kind}  ·  plan view to scale",
             ha="left", va="top", fontsize=13, color=INK, weight="bold")
    fig.text(1 - SIDE / width, 1 - 16 / height, f"width {w * 1e6:g} µm, centreline {line.length * 1e3:.4g} mm",
             ha="right", va="top", fontsize=10, color=INK)

    bar_mm = nice_length(0.25 * box_w / px_per_mm)
    bar_px = int(round(bar_mm * px_per_mm))
    x0, y_mid = SIDE, BOTTOM_BAND // 2 + 6  # px from the left and from the bottom
    fig.add_artist(Rectangle((x0 / width, (y_mid - BAR_HEIGHT / 2) / height), bar_px / width, BAR_HEIGHT / height,
                             transform=fig.transFigure, facecolor=SCALE_BAR, edgecolor="none", antialiased=False))
    fig.text((x0 + bar_px / 2) / width, (y_mid - BAR_HEIGHT / 2 - 4) / height, _label_mm(bar_mm),
             ha="center", va="top", fontsize=10, color=INK)
    png = figure_png(fig, DPI)
    plt.close(fig)
    return PlanPicture(png, width, height, px_per_mm, bar_mm, bar_px, height - y_mid)


def _frame(line, s: float) -> tuple[np.ndarray, np.ndarray, np.ndarray]:  # type: ignore[no-untyped-def]
    p = line.points(np.array([s]))[0, :2] * 1e3
    t = line.tangents(np.array([s]))[0, :2]
    n = line.normals(np.array([s]))[0, :2]
    return p, t, n


def _port_arrow(ax, line, s: float, u: float, length: float, colour: str, label: str, into: bool, turn: float = 0.0) -> None:  # type: ignore[no-untyped-def]
    """An arrow along the flow ending at (inlet) or starting from (outlet) the port edge,
    turned by ``turn`` rad toward the right-hand side."""
    p, t, n = _frame(line, s)
    p = p + n * u * 1e3
    t = math.cos(turn) * t + math.sin(turn) * n
    gap = 0.06 * length
    tail = p - t * (length + gap) if into else p + t * gap
    head = 0.28 * length
    ax.add_artist(FancyArrow(*tail, *(t * length), width=0.09 * length, head_width=0.3 * length,
                            head_length=head, length_includes_head=True, color=colour, linewidth=0))
    text_at = tail - t * 0.12 * length if into else tail + t * 1.12 * length
    # the label sits beyond the arrow, aligned away from it so fanned outlet labels stay apart
    lean = t[0] if not into else -t[0]
    ha = "left" if lean > 0.1 else ("right" if lean < -0.1 else "center")
    va = "center" if abs(t[0]) > 0.3 else (("top" if t[1] > 0 else "bottom") if into else ("bottom" if t[1] > 0 else "top"))
    ax.text(*text_at, label, color=INLET if into else INK, fontsize=11, ha=ha, va=va, weight="bold")


def _tick(ax, line, s: float, w: float, label: str) -> None:  # type: ignore[no-untyped-def]
    """A tick across the channel at station s, reaching half a width beyond each wall."""
    p, _, n = _frame(line, s)
    a, b = p - n * w * 1e3, p + n * w * 1e3
    ax.plot([a[0], b[0]], [a[1], b[1]], color=INK, linewidth=1.6, solid_capstyle="butt")
    ax.text(*(b + n * 0.5 * w * 1e3), label, color=INK, fontsize=9, ha="center", va="center")
