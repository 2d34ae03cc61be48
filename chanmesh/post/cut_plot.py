"""The section picture: streamwise speed as filled contours, secondary flow as arrows over it,
the exact outline with the inner and outer walls named, vortex centres marked.

Viewed looking downstream: u (along n = t x z) to the right, z up, lengths in micrometres.
"""

from __future__ import annotations

import io
import math

import numpy as np

from chanmesh.post.cut import Cut

ARROWS_ACROSS = 22


def _nice(x: float) -> float:
    """1, 2 or 5 times a power of ten, at most ``x``."""
    if not x > 0:
        return 1.0
    e = math.floor(math.log10(x))
    for m in (5, 2, 1):
        if m * 10**e <= x:
            return m * 10**e
    return 10**e


def _speed_label(v: float) -> str:
    if v >= 1:
        return f"{v:g} m/s"
    if v >= 1e-3:
        return f"{v * 1e3:g} mm/s"
    return f"{v * 1e6:g} um/s"


def _wall_names(c: Cut) -> tuple[str, str]:
    """Names of the walls at u0 (left in the picture) and u1 (right)."""
    if c.frame.outward is None:
        return "left wall", "right wall"
    if c.frame.curvature > 0:
        return "inner wall", "outer wall"
    return "outer wall", "inner wall"


def render_png(c: Cut, title: str) -> bytes:
    """PNG bytes of the picture (matplotlib, Agg backend)."""
    import matplotlib

    matplotlib.use("Agg")
    import matplotlib.pyplot as plt

    g, o = c.grid, c.frame.outline
    um = 1e6
    width = (o.u1 - o.u0) * um
    height = (max(o.top0, o.top1) - o.bottom) * um
    fig_w = 10.0
    plot_h = max(2.2, min(7.0, fig_w * 0.78 * height / width))
    from matplotlib.ticker import MaxNLocator
    from mpl_toolkits.axes_grid1 import make_axes_locatable

    fig, ax = plt.subplots(figsize=(fig_w, plot_h + 1.9), dpi=130)
    lo, hi = min(0.0, float(c.streamwise.min())), float(c.streamwise.max()) or 1.0
    levels = MaxNLocator(nbins=20).tick_values(lo, hi)
    cs = ax.contourf(g.uu * um, g.vv * um, c.streamwise, levels=levels, cmap="viridis", extend="both")
    cax = make_axes_locatable(ax).append_axes("right", size="2.5%", pad=0.12)
    bar = fig.colorbar(cs, cax=cax)
    bar.set_label("streamwise speed (m/s)")
    step_u = max(1, len(g.u) // ARROWS_ACROSS)
    dv = (height / len(g.eta))
    step_v = max(1, int(round(step_u * (width / len(g.u)) / dv)))
    sl = (slice(step_v // 2, None, step_v), slice(step_u // 2, None, step_u))
    smax = float(c.secondary_speed.max())
    if smax > 0:
        spacing = step_u * width / len(g.u)
        scale = smax / (0.9 * spacing)  # data units (m/s) per micrometre of arrow
        q = ax.quiver(g.uu[sl] * um, g.vv[sl] * um, c.sec_n[sl], c.sec_z[sl], color="white", edgecolor="black",
                      linewidth=0.4, angles="xy", scale_units="xy", scale=scale, width=0.0028, headwidth=4)
        ref = _nice(smax)
        ax.quiverkey(q, 0.06, 0.035, ref, f"secondary flow {_speed_label(ref)}", labelpos="E",
                     coordinates="figure", color="black", fontproperties={"size": 9})
    corners = np.vstack([o.corners, o.corners[:1]]) * um
    ax.plot(corners[:, 0], corners[:, 1], color="black", linewidth=1.5)
    left, right = _wall_names(c)
    mid_v = 0.5 * (o.bottom + 0.5 * (o.top0 + o.top1)) * um
    for u, name, ha in ((o.u0 * um, left, "right"), (o.u1 * um, right, "left")):
        ax.text(u + (-0.012 if ha == "right" else 0.012) * width, mid_v, name, rotation=90, va="center",
                ha=ha, fontsize=9, color="firebrick", rotation_mode="default")
        ax.plot([u, u], [o.bottom * um, float(o.top(u / um)) * um], color="firebrick", linewidth=3.0)
    for k, vx in enumerate(c.figures.get("vortices", [])):  # the list section.json has, all of it
        ccw = vx["sense"] == "counter-clockwise"
        ax.plot(vx["u_m"] * um, vx["z_m"] * um, marker="o", markersize=7, markerfacecolor="none",
                markeredgecolor="orange", markeredgewidth=2)
        ax.annotate(("CCW" if ccw else "CW") + f" {k + 1}", (vx["u_m"] * um, vx["z_m"] * um), xytext=(6, 6),
                    textcoords="offset points", color="orange", fontsize=8, fontweight="bold")
    ax.set_aspect("equal")
    pad = 0.08 * width
    ax.set_xlim(o.u0 * um - pad, o.u1 * um + pad)
    ax.set_ylim(o.bottom * um - 0.12 * height, max(o.top0, o.top1) * um + 0.12 * height)
    ax.set_xlabel("u across the section (µm), along n = t × z")
    ax.set_ylabel("z (µm)")
    f = c.figures
    ax.set_title(
        f"{title}\nmean {f['streamwise_mean_m_s']:.4g} m/s, max {f['streamwise_max_m_s']:.4g} m/s;  "
        f"secondary max {_speed_label(float(f'{smax:.3g}')) if smax else '0'} "
        f"({100 * (f['secondary_max_over_streamwise_mean'] or 0):.3g} % of mean)  -  looking downstream",
        fontsize=10,
    )
    fig.tight_layout(rect=(0.0, 0.07, 1.0, 1.0))
    buf = io.BytesIO()
    fig.savefig(buf, format="png")
    plt.close(fig)
    return buf.getvalue()
