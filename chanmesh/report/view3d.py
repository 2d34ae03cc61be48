"""A 3D picture of a built mesh: each boundary or section group in its own colour, with a
legend, and a close-up of every inlet and outlet below it.

The main view is in true proportions, parallel projection, the camera 35 degrees above the
plan on the side where the inlet and outlet faces can both be seen. In a spiral or a
serpentine one port still faces away or is a few pixels wide, so each port also gets a
close-up of its end of the channel, seen from outside, with every cell edge drawn.

Cell edges are drawn at every size: a large mesh's surface is drawn merged, which keeps the
picture readable and its cost bounded; the subtitle says when it is. A swept hexahedral mesh's
surface is read off its grid (``grid_surface``: the grid's boundary on every few node lines,
about ``GRID_DRAW_LIMIT`` quads; its close-ups from the few cell layers at each port), any
other's merged by vertex clustering (``drawing_surface``: at most ``DRAW_LIMIT`` facets).

Two engines draw the main view:

* ``"mpl"`` (and ``"auto"``): our own orthographic projection drawn by matplotlib's Agg as
  flat-shaded polygons sorted back to front (painter's algorithm; exact for a closed shell of
  small facets): no OpenGL needed, used in every build's report;
* ``"vtk"``: VTK through pyvista, off-screen (EGL with the system's Mesa libraries; no
  display), with a depth buffer.

The close-ups are always drawn with matplotlib.
"""

from __future__ import annotations

import os
from collections.abc import Mapping

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
from chanmesh.report.drawing_surface import (  # noqa: E402
    DrawingSurface, NumberedSurface, SurfaceFacets, blocks_surface, drawing_surface, facet_normals, numbered_surface,
    surface_facets, surface_groups)
from chanmesh.report.grid_surface import (  # noqa: E402
    GridSurface, closeup_candidates, decimated_surface, grid_surface, plane_quads)
from chanmesh.report.palette import INK, PAPER, group_colours  # noqa: E402
from chanmesh.report.png import figure_png  # noqa: E402
from chanmesh.terms import count_phrase  # noqa: E402

ENGINES = ("auto", "vtk", "mpl")
WALL_EDGE = "#7D8A94"

DRAW_LIMIT = 20_000
"""Facets drawn in the main view; a larger surface is drawn merged (``drawing_surface``)."""
GRID_DRAW_LIMIT = 10_000
"""Facets drawn in the main view of a swept mesh, read off its grid (``grid_surface``): true
quads of a coarser grid, where the merge's facets are partly triangles, so half as many give
about the merged cells' size (0.07 mm on the bench spiral's walls; the merge's were
0.05-0.09 mm at 0.1-4 M hexahedra) and fewer polygons to draw."""
CLOSEUP_LIMIT = 6_000
"""Facets drawn in one port close-up; more are merged the same way."""
MAX_CLOSEUPS = 6
"""Ports shown in close-up (the first ones, inlets before outlets)."""

ELEVATION = 35.0
"""Camera angle above the plan, degrees."""


class RenderUnavailable(RuntimeError):
    """Off-screen rendering could not start (no OpenGL context); the report goes on without it."""


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


def _basis(view: np.ndarray) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """Screen right, screen up and the unit vector toward the camera."""
    view = view / np.linalg.norm(view)
    right = np.cross([0.0, 0.0, 1.0], view)
    right /= np.linalg.norm(right)
    return right, np.cross(view, right), view


def _camera_basis(design: Design) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    return _basis(view_direction(design))


def port_names(mesh: ChannelMesh, facets: Mapping[str, object] | None = None) -> list[str]:
    """The inlet and outlet groups, inlets first (``facets``: ``surface_facets(mesh)`` or another
    mapping keyed by the surface groups, if at hand)."""
    names = surface_groups(mesh) if facets is None else list(facets)
    return [n for n in names if n.startswith("inlet")] + [n for n in names if n.startswith("outlet")]


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


def _polydata(surface: DrawingSurface, name: str):  # type: ignore[no-untyped-def]
    import pyvista as pv

    faces = [np.column_stack([np.full(len(c), c.shape[1]), c]).ravel() for c in surface.polygons[name]]
    return pv.PolyData(surface.points, np.concatenate(faces)).clean()


def render_groups(surface: DrawingSurface, design: Design, width: int, height: int
                  ) -> tuple[np.ndarray, list[tuple[str, str]]]:
    """RGB image (height, width, 3) uint8 of the surface groups drawn by VTK, and the
    (name, colour) drawn. ``surface`` is in mm."""
    plotter = _plotter(width, height)
    try:
        plotter.set_background(PAPER)
        names = list(surface.polygons)
        colours = group_colours(names)
        has_internal = any(n.startswith("section") for n in names)
        for name in names:
            is_wall = name == "wall"
            plotter.add_mesh(_polydata(surface, name), color=colours[name], show_edges=True,
                             edge_color=WALL_EDGE if is_wall else tuple(_edge_colour(np.array(to_rgb(colours[name])))),
                             line_width=0.6,
                             opacity=0.45 if (is_wall and has_internal) else 1.0,
                             ambient=0.45, diffuse=0.6, specular=0.0)
        plotter.enable_parallel_projection()
        right, up, view = _camera_basis(design)
        p = surface.points
        screen = np.column_stack([p @ right, p @ up])
        lo, hi = screen.min(axis=0), screen.max(axis=0)
        mid = 0.5 * (lo + hi)
        focus = mid[0] * right + mid[1] * up + float(np.mean(p @ view)) * view
        depth = float(np.ptp(p @ view)) + float(np.max(hi - lo))
        plotter.camera.focal_point = focus
        plotter.camera.position = focus + view * 4.0 * depth
        plotter.camera.up = tuple(up)
        half = 0.5 * (hi - lo) * 1.08
        plotter.camera.parallel_scale = float(max(half[1], half[0] * height / width))
        plotter.reset_camera_clipping_range()
        image = plotter.screenshot(None, return_img=True)
    finally:
        plotter.close()
    return np.asarray(image, dtype=np.uint8)[:, :, :3], [(n, colours[n]) for n in names]


def draw_surface_mpl(ax, surface: DrawingSurface, view: np.ndarray, colours: dict[str, str],  # type: ignore[no-untyped-def]
                     linewidth: float = 0.3) -> None:
    """Draw ``surface`` into ``ax`` seen along ``view`` (toward the camera): flat-shaded
    polygons sorted back to front, every edge drawn; equal aspect, axes off."""
    right, up, view = _basis(view)
    light = 0.6 * view + 0.8 * up
    light /= np.linalg.norm(light)
    p = surface.points
    screen = np.column_stack([p @ right, p @ up])
    depth = p @ view
    see_through = any(n.startswith("section") for n in surface.polygons)
    polys: list[np.ndarray] = []  # (n, 4, 2) screen corners; triangles repeat their last corner
    faces, edge_colours, order = [], [], []
    for name, blocks in surface.polygons.items():
        base = np.array(to_rgb(colours[name]))
        edge = np.array(to_rgb(WALL_EDGE)) if name == "wall" else _edge_colour(base)
        for c in blocks:
            normal = facet_normals(p, c)
            normal /= np.maximum(np.linalg.norm(normal, axis=1), 1e-300)[:, None]
            shade = 0.6 + 0.4 * np.abs(normal @ light)  # two-sided Lambert with ambient
            polys.append(screen[c if c.shape[1] == 4 else c[:, [0, 1, 2, 2]]])  # one (n, 4, 2) array: matplotlib's fast path
            rgb = np.clip(base[None, :] * shade[:, None], 0.0, 1.0)
            alpha = 0.45 if (name == "wall" and see_through) else 1.0  # internal sections show through
            faces.append(np.column_stack([rgb, np.full(len(c), alpha)]))
            edge_colours.append(np.repeat(edge[None, :], len(c), axis=0))
            order.append(depth[c].mean(axis=1))
    back_to_front = np.argsort(np.concatenate(order), kind="stable")
    ax.add_collection(PolyCollection(
        np.concatenate(polys)[back_to_front],
        facecolors=np.concatenate(faces)[back_to_front],
        edgecolors=np.concatenate(edge_colours)[back_to_front],
        linewidths=linewidth,
    ), autolim=False)  # the limits are set below: no pass over every polygon for its extent
    _equal_limits(ax, screen.min(axis=0), screen.max(axis=0))  # a drawing surface carries only its own nodes
    ax.set_axis_off()


def _edge_colour(face: np.ndarray) -> np.ndarray:
    """Cell edges on a coloured face: the colour darkened, or lightened on a dark face, so that
    small cells do not turn a port black."""
    luminance = float(face @ np.array([0.2126, 0.7152, 0.0722]))
    return 0.55 * face + 0.45 if luminance < 0.35 else 0.72 * face


def facet_centres(mesh: ChannelMesh, facets: SurfaceFacets | None = None,
                  numbered: NumberedSurface | None = None) -> np.ndarray:
    """Centre (mm) of every facet of the surface groups, in ``drawing_surface``'s order.
    ``facets``: ``surface_facets(mesh)`` and ``numbered``: ``numbered_surface(mesh, facets)``,
    when several pictures share them (the same centres, gathered from the surface's own nodes)."""
    if numbered is None:
        facets = surface_facets(mesh) if facets is None else facets
        p, blocks = mesh.points, [c for cells in facets.values() for c in cells]
    else:
        p, blocks = numbered.points, [c for _, c in numbered.blocks]
    # corner by corner: a mean over the middle axis of (m, k, 3) is several times slower
    return np.concatenate([sum(p[c[:, j]] for j in range(c.shape[1])) * (1e3 / c.shape[1]) for c in blocks])


def closeup_surface(mesh: ChannelMesh, design: Design, port: str, centres: np.ndarray | None = None,
                    facets: SurfaceFacets | None = None, grid: GridSurface | None = None
                    ) -> tuple[DrawingSurface, np.ndarray]:
    """The facets near one port (within 1.6 section sizes of its centre, mm) and the view
    direction that shows the port from outside, 40 degrees to its side and 30 above.
    A swept mesh's close-up is read off its grid (``grid``: ``grid_surface(mesh)``, looked up
    when neither ``centres`` nor ``facets`` is given), any other's from its facets
    (``centres``: ``facet_centres(mesh)`` and ``facets``: ``surface_facets(mesh)``, when
    several close-ups share them); both choose the same facets."""
    if grid is None and centres is None and facets is None:
        grid = grid_surface(mesh)
    p = mesh.points
    port_cells = [plane_quads(grid, port)] if grid is not None else (facets or surface_facets(mesh))[port]
    port_nodes = np.unique(np.concatenate([c.ravel() for c in port_cells]))
    centre = p[port_nodes].mean(axis=0) * 1e3
    normal = sum((facet_normals(p, c).sum(axis=0) for c in port_cells), np.zeros(3))
    line = centerline_of(design)
    guess = -line.tangents(np.array([0.0]))[0] if port.startswith("inlet") else line.tangents(np.array([line.length]))[0]
    outward = normal if normal @ guess >= 0 else -normal
    outward = outward / max(float(np.linalg.norm(outward)), 1e-300)
    size = max(design.section.width, design.section.max_height) * 1e3
    reach = 1.6 * size
    if grid is not None:
        surface = _grid_closeup(grid, p, port, port_nodes, centre, reach)
    else:
        facets = surface_facets(mesh) if facets is None else facets
        blocks = [c for cells in facets.values() for c in cells]
        centres = facet_centres(mesh, facets) if centres is None else centres
        near = _within(centres, centre, reach)
        keep = near & _attached(blocks, near, port_nodes, len(p))
        surface = drawing_surface(mesh, CLOSEUP_LIMIT, 1e3, keep=keep, facets=facets)
    side = np.cross([0.0, 0.0, 1.0], outward)
    view = outward + 0.84 * side + 0.7 * np.array([0.0, 0.0, 1.0])
    return surface, view / np.linalg.norm(view)


def _within(centres: np.ndarray, centre: np.ndarray, reach: float) -> np.ndarray:
    d = centres - centre
    return d[:, 0] * d[:, 0] + d[:, 1] * d[:, 1] + d[:, 2] * d[:, 2] <= reach * reach


def _grid_closeup(grid: GridSurface, p: np.ndarray, port: str, port_nodes: np.ndarray, centre: np.ndarray,
                  reach: float) -> DrawingSurface:
    """The close-up's facets from the cell layers at the port's end of the grid: as many
    layers as lie within twice the reach along the channel, doubled while a facet of the far
    layer still lies near (a chain of near facets could go on beyond it)."""
    from_port = grid.along if grid.planes[port].k == 0 else grid.along[-1] - grid.along[::-1]
    layers = int(np.searchsorted(from_port, 2e-3 * reach)) + 1
    while True:
        blocks, far = closeup_candidates(grid, port, layers)
        cells = [c for _, c in blocks]
        near = _within(np.concatenate([sum(p[c[:, j]] for j in range(4)) * (1e3 / 4) for c in cells]), centre, reach)
        if not (near & far).any() or layers >= grid.grid.shape[0]:
            break
        layers *= 2
    keep = near & _attached(cells, near, port_nodes, len(p))
    kept, offset = [], 0
    for gi, c in blocks:
        kept.append((gi, c[keep[offset:offset + len(c)]]))
        offset += len(c)
    return blocks_surface(p, list(grid.counts), [b for b in kept if len(b[1])], CLOSEUP_LIMIT, 1e3)


def _attached(blocks: list[np.ndarray], near: np.ndarray, seeds: np.ndarray, n_points: int) -> np.ndarray:
    """Facets joined to the ``seeds`` nodes through nodes shared among the ``near`` facets:
    the port's own end of the channel, without a neighbouring turn that happens to be close.
    The graph holds only the near facets and their nodes (numbered compactly)."""
    from scipy.sparse import coo_matrix
    from scipy.sparse.csgraph import connected_components

    rows, cols, offset, count = [], [], 0, 0
    for c in blocks:
        cells = c[near[offset:offset + len(c)]]
        offset += len(c)
        rows.append(np.repeat(np.arange(count, count + len(cells)), c.shape[1]))
        cols.append(cells.ravel())
        count += len(cells)
    nodes, k = np.unique(np.concatenate(cols + [seeds]), return_inverse=True)
    r, k, seed_ids = np.concatenate(rows), k[:-len(seeds)], k[-len(seeds):]
    n = count + len(nodes)  # near facets first, then their nodes, in one bipartite graph
    graph = coo_matrix((np.ones(len(r)), (r, count + k)), shape=(n, n))
    _, label = connected_components(graph, directed=False)
    keep = np.zeros(len(near), dtype=bool)
    keep[np.flatnonzero(near)] = np.isin(label[:count], label[count + seed_ids])
    return keep


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
    """PNG of the mesh's surface groups at ``width`` x ``height`` px: the whole channel, a
    close-up of each port below it, a title and a legend."""
    if engine not in ENGINES:
        raise ValueError(f"engine = {engine!r}, but one of {ENGINES} is expected")
    grid = grid_surface(mesh)
    if grid is not None:  # a swept mesh: the surface read off its grid, no pass over every facet
        facets, numbered = None, None
        ports = port_names(mesh, grid.counts)[:MAX_CLOSEUPS]
        surface = (decimated_surface(grid, mesh.points, GRID_DRAW_LIMIT, 1e3)
                   if sum(grid.counts.values()) > DRAW_LIMIT
                   else drawing_surface(mesh, DRAW_LIMIT, 1e3))
    else:
        facets = surface_facets(mesh)  # fetched and numbered once for the main view and every close-up
        numbered = numbered_surface(mesh, facets)
        ports = port_names(mesh, facets)[:MAX_CLOSEUPS]
        surface = drawing_surface(mesh, DRAW_LIMIT, 1e3, facets=facets, numbered=numbered)
    colours = group_colours(list(surface.polygons))
    main_box = (0.01, 0.31, 0.98, 0.60) if ports else (0.01, 0.01, 0.98, 0.86)
    image = None
    if engine == "vtk":
        image, _ = render_groups(surface, design, round(main_box[2] * width), round(main_box[3] * height))
    fig = plt.figure(figsize=(width / 100, height / 100), dpi=100, facecolor=PAPER)
    try:
        ax = fig.add_axes(main_box)
        if image is not None:
            ax.imshow(image, interpolation="nearest")
            ax.set_axis_off()
        else:
            draw_surface_mpl(ax, surface, view_direction(design), colours)
        _draw_closeups(fig, mesh, design, ports, colours, facets, numbered, grid)
        merged = (f"  ·  surface drawn merged, {surface.facets:,} of {surface.facets_in_mesh:,} facets"
                  f" (close-ups: every cell)" if surface.merged else "")
        fig.text(0.02, 1 - 14 / height, f"{design.name}  ·  mesh in true proportions", ha="left", va="top",
                 fontsize=13, color=INK, weight="bold")
        fig.text(0.02, 1 - 40 / height, count_phrase(mesh.cell_counts()) + merged, ha="left", va="top",
                 fontsize=10, color=INK)
        handles = [Patch(facecolor=colours[n], edgecolor=INK, linewidth=0.6, label=n) for n in surface.polygons]
        fig.legend(handles=handles, loc="upper right", frameon=True, fontsize=11, title="groups", title_fontsize=11,
                   labelcolor=INK, edgecolor="#9AA5AE", borderpad=0.8)
        png = figure_png(fig)
    finally:
        plt.close(fig)
    return png


def _draw_closeups(fig, mesh: ChannelMesh, design: Design, ports: list[str], colours: dict[str, str],  # type: ignore[no-untyped-def]
                   facets: SurfaceFacets | None, numbered: NumberedSurface | None = None,
                   grid: GridSurface | None = None) -> None:
    """One framed close-up per port along the bottom of the figure, titled in its colour
    (read off ``grid`` when the mesh has one, else from ``facets``)."""
    if not ports:
        return
    slot = 0.98 / max(len(ports), 4)
    left = 0.01 + 0.5 * (0.98 - slot * len(ports))
    centres = facet_centres(mesh, facets, numbered) if grid is None else None
    for i, port in enumerate(ports):
        ax = fig.add_axes((left + i * slot + 0.006, 0.015, slot - 0.012, 0.255))
        surface, view = (closeup_surface(mesh, design, port, grid=grid) if grid is not None
                         else closeup_surface(mesh, design, port, centres, facets))
        draw_surface_mpl(ax, surface, view, colours, linewidth=0.25)
        ax.set_axis_on()
        ax.set_xticks([])
        ax.set_yticks([])
        for spine in ax.spines.values():
            spine.set_edgecolor(colours[port])
            spine.set_linewidth(2.0)
        note = "every cell" if not surface.merged else "merged for drawing"
        ax.set_title(f"{port}  ·  close-up, {note}", fontsize=9.5, color=INK, loc="left", pad=3,
                     y=1.0)  # placed, not searched for tick labels to dodge: the close-ups have none
