"""Pictures of the section: the mesh's own section grid, and the section flow on it beside the
converged one (matplotlib, Agg). Looking downstream: u to the right, z up, lengths in µm.

For a bend the wall nearer the centre of curvature is labelled "inner wall": u = -w/2 when the
tightest bend turns left (the README's frame), u = +w/2 when it turns right.
"""

from __future__ import annotations

from typing import Any

import matplotlib

matplotlib.use("Agg")
import matplotlib.pyplot as plt  # noqa: E402
import numpy as np  # noqa: E402
from matplotlib.collections import PolyCollection  # noqa: E402
from matplotlib.tri import LinearTriInterpolator, Triangulation  # noqa: E402

from chanmesh.design.model import Design  # noqa: E402
from chanmesh.geometry.section import section_shape_of  # noqa: E402
from chanmesh.report.palette import INK, PAPER, WALL  # noqa: E402
from chanmesh.report.png import figure_png  # noqa: E402
from chanmesh.terms import count_phrase  # noqa: E402

UM = 1e6


# Titles are placed at y = 1.0 of their axes (pad above it) instead of matplotlib's search for
# tick labels to dodge (which measures every tick label again): nothing of these axes rises
# above them, so the search always left the title there; the pictures are the same to the pixel.


def _png(fig: Any) -> bytes:
    png = figure_png(fig)
    plt.close(fig)
    return png


def wall_labels(radius: float | None) -> tuple[str, str]:
    """Labels of the u = -w/2 and u = +w/2 walls."""
    if radius is None:
        return "side wall (u = -w/2)", "side wall (u = +w/2)"
    if radius > 0:
        return "inner wall (u = -w/2)", "outer wall (u = +w/2)"
    return "outer wall (u = -w/2)", "inner wall (u = +w/2)"


def _label_walls(ax: Any, design: Design, radius: float | None) -> None:
    """Each wall's name just inside it, on a white box so the cell edges stay readable."""
    shape = section_shape_of(design)
    w = shape.width * UM
    left, right = wall_labels(radius)
    bottom = shape.bottom * UM
    top_mid = float(shape.top(np.array([0.0]))[0]) * UM
    mid = 0.5 * (bottom + top_mid)
    box = {"boxstyle": "round,pad=0.2", "facecolor": PAPER, "edgecolor": INK, "alpha": 0.9, "linewidth": 0.5}
    style = {"color": INK, "fontsize": 9, "bbox": box}
    ax.annotate(left, (-0.5 * w, mid), xytext=(6, 0), textcoords="offset points", rotation=90, ha="left", va="center", **style)
    ax.annotate(right, (0.5 * w, mid), xytext=(-6, 0), textcoords="offset points", rotation=90, ha="right", va="center", **style)
    ax.annotate("bottom wall", (0.0, bottom), xytext=(0, 5), textcoords="offset points", ha="center", va="bottom", **style)
    ax.annotate("top wall", (0.0, top_mid), xytext=(0, -5), textcoords="offset points", ha="center", va="top", **style)


def section_mesh_png(design: Design, grid: Any, radius: float | None, width: int = 1000, height: int = 520) -> bytes:
    """The section grid (the mesh's inlet face), every cell edge drawn, walls labelled."""
    pts = np.asarray(grid.points) * UM
    cells = np.asarray(grid.cells)
    fig = plt.figure(figsize=(width / 100, height / 100), dpi=100, facecolor=PAPER)
    ax = fig.add_axes([0.1, 0.14, 0.8, 0.72])
    polys = pts[cells]
    lw = max(0.15, min(0.8, 60.0 / np.sqrt(len(cells))))
    ax.add_collection(PolyCollection(polys, facecolors=WALL, edgecolors=INK, linewidths=lw))
    ax.set_xlim(pts[:, 0].min(), pts[:, 0].max())
    ax.set_ylim(pts[:, 1].min(), pts[:, 1].max())
    ax.set_aspect("equal")
    ax.set_xlabel("u (µm), looking downstream")
    ax.set_ylabel("z (µm)")
    _label_walls(ax, design, radius)
    kind = "quad" if cells.shape[1] == 4 else "triangle"
    ax.set_title(f"section mesh (the inlet face): {count_phrase({kind: len(cells)})}, {len(pts):,} nodes", color=INK, pad=18,
                 y=1.0)  # placed: see above _png
    return _png(fig)


def _panel(ax: Any, flow: Any, levels: np.ndarray, title: str, arrows: int = 18) -> Any:
    p = flow.points * UM
    tri = Triangulation(p[:, 0], p[:, 1], flow.triangles)
    filled = ax.tricontourf(tri, flow.streamwise, levels=levels, cmap="Blues")
    lo, hi = p.min(axis=0), p.max(axis=0)
    nx = arrows
    ny = max(3, int(round(arrows * (hi[1] - lo[1]) / (hi[0] - lo[0]))))
    gx, gy = np.meshgrid(np.linspace(lo[0], hi[0], nx + 2)[1:-1], np.linspace(lo[1], hi[1], ny + 2)[1:-1])
    su = LinearTriInterpolator(tri, flow.secondary_u)(gx, gy)
    sz = LinearTriInterpolator(tri, flow.secondary_z)(gx, gy)
    if flow.secondary_max > 0:  # a grid without interior nodes has no secondary flow to draw
        ax.quiver(gx, gy, su, sz, color="#8C2D2D", scale=flow.secondary_max * max(nx, 1) * 0.9, width=0.004)
    ax.set_aspect("equal")
    ax.set_title(title, fontsize=10, color=INK, y=1.0)
    ax.set_xlabel("u (µm)")
    return filled


STACK_ASPECT = 2.0
"""Sections at least this many times wider than high are drawn one above the other, each across
the picture's width: side by side, a 4:1 section came out about 100 pixels high."""


def _stacked_axes(aspect: float, width: int) -> tuple[Any, list[Any]]:
    """A figure ``width`` pixels wide with two axes one above the other, each as wide as the
    picture allows and as high as the section's ``aspect`` (width / height) makes it."""
    left, panel = 70, width - 220  # pixels: z label, the axes (the colour bar takes the last 150)
    panel_h = max(90, int(round(panel / aspect)))
    title, xlabel, note = 34, 44, 44  # pixels above and below each axes, and the caption
    height = note + 2 * (xlabel + panel_h + title)
    fig = plt.figure(figsize=(width / 100, height / 100), dpi=100, facecolor=PAPER)
    axes = []
    for row in range(2):  # top row first
        bottom = note + (1 - row) * (xlabel + panel_h + title) + xlabel
        axes.append(fig.add_axes([left / width, bottom / height, panel / width, panel_h / height],
                                 sharex=axes[0] if axes else None, sharey=axes[0] if axes else None))
    return fig, axes


def solutions_png(design: Design, reference: Any, on_mesh: Any, radius: float | None, errors: dict[str, float],
                  width: int = 1200, height: int = 460) -> bytes:
    """Converged section flow (left, or above for a section wider than ``STACK_ASPECT``) and the
    same flow on the mesh's section grid (right, or below): streamwise speed filled, secondary
    (in-plane) velocity as arrows, one colour scale."""
    top = max(float(reference.streamwise.max()), float(on_mesh.streamwise.max()))
    levels = np.linspace(0.0, top, 13)
    p = reference.points
    aspect = float(np.ptp(p[:, 0]) / max(np.ptp(p[:, 1]), 1e-30))
    stacked = aspect >= STACK_ASPECT
    if stacked:
        fig, axes = _stacked_axes(aspect, width)
    else:
        fig, axes = plt.subplots(1, 2, figsize=(width / 100, height / 100), dpi=100, facecolor=PAPER, sharey=True)
    _panel(axes[0], reference, levels,
           f"converged (P2-P1): secondary max {reference.secondary_max * 1e3:.3g} mm/s")
    filled = _panel(axes[1], on_mesh, levels,
                    f"on this mesh's section grid: {on_mesh.secondary_max * 1e3:.3g} mm/s ({errors['secondary_max']:+.1%})")
    axes[0].set_ylabel("z (µm)")
    left, right = wall_labels(radius)
    if stacked:
        axes[1].set_ylabel("z (µm)")
        axes[0].tick_params(labelbottom=True)
        lo, hi = axes[1].get_position().y0, axes[0].get_position().y1
        fig.colorbar(filled, cax=fig.add_axes([(width - 120) / width, lo, 14 / width, hi - lo]),
                     label="streamwise speed (m/s)")
    else:
        fig.colorbar(filled, ax=axes, shrink=0.8, label="streamwise speed (m/s)")
    fig.text(0.5, 12 / fig.bbox.height if stacked else 0.02, f"looking downstream; left: {left}, right: {right}; "
             "arrows: secondary velocity, fill: streamwise speed (m/s)", ha="center", fontsize=9, color=INK)
    return _png(fig)
