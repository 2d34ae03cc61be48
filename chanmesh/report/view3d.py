"""A 3D picture of a built mesh: each boundary or section group in its own colour, with a legend.

Two engines draw the same view (true proportions, parallel projection, the camera 35 degrees
above the plan on the side where the inlet and outlet faces can both be seen):

* ``"vtk"``: VTK through pyvista, off-screen (EGL with the system's Mesa libraries; no
  display), with a depth buffer: the most faithful picture, used by ``chanmesh preview``;
* ``"mpl"``: our own orthographic projection drawn by matplotlib's Agg as flat-shaded
  polygons sorted back to front (painter's algorithm; exact for a closed shell of small
  facets): no OpenGL needed and about ten times quicker to start, used in every build's report.

Both are framed by matplotlib with a title and a legend. Cell edges are drawn on small meshes,
where they show the grading, and left out on large ones, where they would only darken it.
"""

from __future__ import annotations

import io
import os

import matplotlib

matplotlib.use("Agg")
import matplotlib.pyplot as plt  # noqa: E402
import numpy as np  # noqa: E402
from matplotlib.collections import PolyCollection  # noqa: E402
from matplotlib.colors import to_rgb  # noqa: E402
from matplotlib.patches import Patch  # noqa: E402

from chanmesh.design.model import Design  # noqa: E402
from chanmesh.geometry.centerline import centerline_of  # noqa: E402
from chanmesh.meshing.model import ChannelMesh  # noqa: E402
from chanmesh.report.palette import INK, PAPER, group_colours  # noqa: E402

ENGINES = ("auto", "vtk", "mpl")
AUTO_LIMIT = 100_000
"""Facets up to which ``engine="auto"`` draws with matplotlib (quicker to start); VTK above."""
WALL_EDGE = "#7D8A94"

EDGE_LIMIT = 60_000
"""Facets up to which cell edges are drawn."""

ELEVATION = 35.0
"""Camera angle above the plan, degrees."""


class RenderUnavailable(RuntimeError):
    """Off-screen rendering could not start (no OpenGL context); the report goes on without it."""


def _facet_polydata(mesh: ChannelMesh, name: str):  # type: ignore[no-untyped-def]
    import pyvista as pv

    faces = []
    for block in mesh.facets_of(name):
        if len(block.cells):
            k = block.cells.shape[1]
            faces.append(np.column_stack([np.full(len(block.cells), k), block.cells]).ravel())
    if not faces:
        return None
    return pv.PolyData(mesh.points * 1e3, np.concatenate(faces)).clean()


def view_direction(design: Design) -> np.ndarray:
    """Unit vector from the focal point toward the camera that shows the inlet and outlet
    faces: the sum of their outward normals, lifted ``ELEVATION`` above the plan."""
    line = centerline_of(design)
    t_in = line.tangents(np.array([0.0]))[0]
    t_out = line.tangents(np.array([line.length]))[0]
    side = -t_in + t_out
    if np.linalg.norm(side) < 0.5:  # inlet and outlet face opposite ways: look from the right side
        side = line.normals(np.array([0.0]))[0] + 0.6 * t_out
    side = side / np.linalg.norm(side)
    d = side + np.array([0.0, 0.0, np.tan(np.radians(ELEVATION))])
    return d / np.linalg.norm(d)


def _camera_basis(design: Design) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """Screen right, screen up and the unit vector toward the camera."""
    view = view_direction(design)
    right = np.cross([0.0, 0.0, 1.0], view)
    right /= np.linalg.norm(right)
    return right, np.cross(view, right), view


def _plotter(width: int, height: int):  # type: ignore[no-untyped-def]
    if not os.environ.get("DISPLAY"):
        # go straight to EGL: VTK would otherwise try X first and print a warning
        os.environ.setdefault("VTK_DEFAULT_OPENGL_WINDOW", "vtkEGLRenderWindow")
    import pyvista as pv

    pv.OFF_SCREEN = True
    try:
        return pv.Plotter(off_screen=True, window_size=(int(width), int(height)))
    except RuntimeError as exc:  # VTK reports a missing OpenGL context as a RuntimeError
        raise RenderUnavailable(f"off-screen rendering is not available: {exc}") from exc


def render_groups(mesh: ChannelMesh, design: Design, width: int, height: int) -> tuple[np.ndarray, list[tuple[str, str]]]:
    """RGB image (height, width, 3) uint8 of the surface groups, and the (name, colour) drawn."""
    plotter = _plotter(width, height)
    try:
        plotter.set_background(PAPER)
        surface_groups, colours, edges = _surface_groups(mesh)
        has_internal = any(n.startswith("section") for n in surface_groups)
        drawn = []
        for name in surface_groups:
            poly = _facet_polydata(mesh, name)
            if poly is None:
                continue
            is_wall = name == "wall"
            plotter.add_mesh(
                poly,
                color=colours[name],
                show_edges=edges and is_wall,
                edge_color=WALL_EDGE,
                line_width=0.6,
                opacity=0.45 if (is_wall and has_internal) else 1.0,
                ambient=0.45,
                diffuse=0.6,
                specular=0.0,
            )
            drawn.append((name, colours[name]))
        plotter.enable_parallel_projection()
        right, up, view = _camera_basis(design)
        p = mesh.points * 1e3
        screen = np.column_stack([p @ right, p @ up])
        lo, hi = screen.min(axis=0), screen.max(axis=0)
        mid = 0.5 * (lo + hi)
        focus = mid[0] * right + mid[1] * up + float(np.mean(p @ view)) * view
        depth = float(np.ptp(p @ view)) + float(np.max(hi - lo))
        plotter.camera.focal_point = focus
        plotter.camera.position = focus + view * 4.0 * depth
        plotter.camera.up = tuple(up)
        half = 0.5 * (hi - lo) * 1.08
        plotter.camera.parallel_scale = float(max(half[1], half[0] * height / width)) / 0.86
        plotter.reset_camera_clipping_range()
        image = plotter.screenshot(None, return_img=True)
    finally:
        plotter.close()
    return np.asarray(image, dtype=np.uint8)[:, :, :3], drawn


def _surface_groups(mesh: ChannelMesh) -> tuple[list[str], dict[str, str], bool]:
    names = [g.name for g in mesh.groups if g.dim == 2 and any(len(b.cells) for b in mesh.facets_of(g.name))]
    edges = sum(len(b.cells) for b in mesh.facets) <= EDGE_LIMIT
    return names, group_colours(names), edges


def draw_groups_mpl(ax, mesh: ChannelMesh, design: Design) -> list[tuple[str, str]]:  # type: ignore[no-untyped-def]
    """Draw the surface groups into ``ax`` (equal aspect, axes off); returns (name, colour)."""
    names, colours, edges = _surface_groups(mesh)
    right, up, view = _camera_basis(design)
    light = 0.6 * view + 0.8 * up
    light /= np.linalg.norm(light)
    p = mesh.points * 1e3
    screen = np.column_stack([p @ right, p @ up])
    depth = p @ view
    polys, faces, edge_colours, order = [], [], [], []
    for name in names:
        base = np.array(to_rgb(colours[name]))
        edge = np.array(to_rgb(WALL_EDGE if name == "wall" else INK))
        for block in mesh.facets_of(name):
            c = block.cells
            corners = p[c]
            normal = np.cross(corners[:, 1] - corners[:, 0], corners[:, 2] - corners[:, 0])
            normal /= np.linalg.norm(normal, axis=1)[:, None]
            shade = 0.6 + 0.4 * np.abs(normal @ light)  # two-sided Lambert with ambient
            polys += list(screen[c])
            faces.append(np.clip(base[None, :] * shade[:, None], 0.0, 1.0))
            edge_colours.append(np.repeat(edge[None, :], len(c), axis=0))
            order.append(depth[c].mean(axis=1))
    back_to_front = np.argsort(np.concatenate(order))
    ax.add_collection(PolyCollection(
        [polys[i] for i in back_to_front],
        facecolors=np.concatenate(faces)[back_to_front],
        edgecolors=np.concatenate(edge_colours)[back_to_front] if edges else "face",
        linewidths=0.3 if edges else 0.0,
    ))
    _equal_limits(ax, screen.min(axis=0), screen.max(axis=0))
    return [(n, colours[n]) for n in names]


def _equal_limits(ax, lo: np.ndarray, hi: np.ndarray, margin: float = 0.04) -> None:  # type: ignore[no-untyped-def]
    """Data limits around [lo, hi] with one data unit the same length on screen in x and y."""
    box = ax.get_position()
    fig_w, fig_h = ax.figure.get_size_inches()
    aspect = (box.width * fig_w) / (box.height * fig_h)
    span = (hi - lo) * (1 + 2 * margin)
    span = np.array([max(span[0], span[1] * aspect), max(span[1], span[0] / aspect)])
    mid = 0.5 * (lo + hi)
    ax.set_xlim(mid[0] - span[0] / 2, mid[0] + span[0] / 2)
    ax.set_ylim(mid[1] - span[1] / 2, mid[1] + span[1] / 2)


def mesh_picture(mesh: ChannelMesh, design: Design, width: int = 1200, height: int = 800, engine: str = "auto") -> bytes:
    """PNG of the mesh's surface groups at ``width`` x ``height`` px, with a title and a legend."""
    if engine not in ENGINES:
        raise ValueError(f"engine = {engine!r}, but one of {ENGINES} is expected")
    fallback = engine == "auto"
    if engine == "auto":
        engine = "mpl" if sum(len(b.cells) for b in mesh.facets) <= AUTO_LIMIT else "vtk"
    image = None
    if engine == "vtk":
        try:
            image, drawn = render_groups(mesh, design, width, height)
        except RenderUnavailable:
            if not fallback:
                raise
    fig = plt.figure(figsize=(width / 100, height / 100), dpi=100, facecolor=PAPER)
    try:
        if image is not None:
            ax = fig.add_axes((0, 0, 1, 1))
            ax.imshow(image, interpolation="nearest")
        else:
            ax = fig.add_axes((0.01, 0.01, 0.98, 0.86))
            drawn = draw_groups_mpl(ax, mesh, design)
        ax.set_axis_off()
        counts = ", ".join(f"{n:,} {t}" for t, n in mesh.cell_counts().items())
        fig.text(0.02, 1 - 14 / height, f"{design.name}  ·  mesh in true proportions", ha="left", va="top",
                 fontsize=13, color=INK, weight="bold")
        fig.text(0.02, 1 - 40 / height, counts, ha="left", va="top", fontsize=10, color=INK)
        handles = [Patch(facecolor=c, edgecolor=INK, linewidth=0.6, label=n) for n, c in drawn]
        fig.legend(handles=handles, loc="upper right", frameon=True, fontsize=11, title="groups", title_fontsize=11,
                   labelcolor=INK, edgecolor="#9AA5AE", borderpad=0.8)
        buf = io.BytesIO()
        fig.savefig(buf, format="png", dpi=100, facecolor=PAPER)
    finally:
        plt.close(fig)
    return buf.getvalue()
