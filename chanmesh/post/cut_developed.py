"""The 3D result's section beside the fully developed flow of the same section (``chanmesh.flow``).

At a station on a bend or a straight, ``chanmesh.flow.solve_section_flow`` gives the flow the
section would carry far from any inlet, bend start or chamber, at the same flow rate as the 3D
result's section (the cut's own flow rate, so a flow-rate shortfall of the 3D run does not show
up as a difference here) and the design's fluid. The differences of the secondary maximum and
mean and the distance between matching vortex centres tell how far the 3D flow at the station
is from developed (entrance length, a bend's start, a mesh too coarse). Only for stations
whose section is the channel's own (not inside an expansion chamber) and designs with ``[flow]``
(the fluid's properties).
"""

from __future__ import annotations

import math
from typing import Any

import numpy as np

from chanmesh.design.model import Design
from chanmesh.post.cut import Cut

SOURCE = ("chanmesh.flow.solve_section_flow: fully developed laminar flow of the section, exact toroidal "
          "equations at the station's radius (docs/dean.md), P2-P1 on its default grid, same flow rate as the cut")


def developed_reason(design: Design, c: Cut) -> str | None:
    """Why there is no comparison at this cut (None: there is one to make)."""
    from chanmesh.geometry.section import section_shape_of

    spec = design.flow
    if spec is None or (spec.rate is None and spec.velocity is None):
        return "the design has no [flow] (its fluid is needed)"
    o, shape = c.frame.outline, section_shape_of(design)
    if abs((o.u1 - o.u0) - shape.width) > 1e-9 * shape.width:
        return "the station's section is not the channel's own (an expansion chamber)"
    if not c.figures.get("flow_rate_m3_s", 0.0) > 0:
        return "the section carries no downstream flow"
    return None


def developed_flow(design: Design, c: Cut):  # type: ignore[no-untyped-def]
    """The fully developed ``SectionFlow`` at the cut's station and flow rate (see the module)."""
    from chanmesh.flow.station import problem_at, solve_station

    problem = problem_at(c.frame, design.flow)  # the station's section, signed radius (> 0: left turn), fluid
    return solve_station(problem, float(c.figures["flow_rate_m3_s"]), estimate_error=False)


def _rel(a: float, b: float) -> float | None:
    return a / b - 1.0 if b else None


def compare(c: Cut, sf: Any) -> dict[str, Any]:  # sf: chanmesh.flow.SectionFlow
    """Figures of the 3D section against the developed one; vortex centres matched by sense and
    nearest distance (each developed centre to the 3D centre of its sense closest to it)."""
    f = c.figures
    width = c.frame.outline.u1 - c.frame.outline.u0
    dev_vortices = [{"u_m": float(v["centre_u_m"]), "z_m": float(v["centre_z_m"]), "sense": v["sense"]}
                    for v in sf.vortices]
    pairs = []
    for v in dev_vortices:
        same = [w for w in f.get("vortices", []) if w["sense"] == v["sense"]]
        if not same:
            pairs.append({"developed": v, "cut": None, "distance_m": None})
            continue
        w = min(same, key=lambda w: math.hypot(w["u_m"] - v["u_m"], w["z_m"] - v["z_m"]))
        d = math.hypot(w["u_m"] - v["u_m"], w["z_m"] - v["z_m"])
        pairs.append({"developed": v, "cut": {"u_m": w["u_m"], "z_m": w["z_m"]}, "distance_m": d,
                      "distance_over_width": d / width})
    return {
        "source": SOURCE,
        "flow_rate_m3_s": sf.flow_rate,
        "radius_m": sf.radius,
        "dean": sf.dean,
        "reynolds": sf.reynolds,
        "secondary_max_m_s": sf.secondary_max,
        "secondary_mean_m_s": sf.secondary_mean,
        "streamwise_max_m_s": sf.max_streamwise,
        "cut_minus_developed": {
            "secondary_max_relative": _rel(f["secondary_max_m_s"], sf.secondary_max),
            "secondary_mean_relative": _rel(f["secondary_mean_m_s"], sf.secondary_mean),
            "streamwise_max_relative": _rel(f["streamwise_max_m_s"], sf.max_streamwise),
        },
        "vortices": dev_vortices,
        "vortex_pairs": pairs,
        "vortex_count": {"cut": len(f.get("vortices", [])), "developed": len(dev_vortices)},
        "grid": sf.grid,
    }


def render_comparison_png(c: Cut, sf: Any, title: str) -> bytes:
    """Side by side, looking downstream: the 3D result's section (left) and the developed flow
    (right), secondary speed on one colour scale, secondary arrows at the same places, every
    vortex centre of each."""
    import matplotlib

    matplotlib.use("Agg")
    import matplotlib.pyplot as plt
    import matplotlib.tri as mtri

    g, o = c.grid, c.frame.outline
    um = 1e6
    tri = mtri.Triangulation(sf.points[:, 0] * um, sf.points[:, 1] * um, sf.triangles)
    dev_speed = np.asarray(sf.secondary_speed)
    top = max(float(c.secondary_speed.max()), float(dev_speed.max())) or 1.0
    levels = np.linspace(0.0, top, 21)
    width = (o.u1 - o.u0) * um
    height = (max(o.top0, o.top1) - o.bottom) * um
    fig_h = max(3.0, min(9.0, 5.4 * height / width + 2.0))
    fig, axes = plt.subplots(1, 2, figsize=(13.0, fig_h), dpi=120, sharey=True, layout="constrained")
    step_u = max(1, len(g.u) // 16)
    step_v = max(1, int(round(step_u * (width / len(g.u)) / (height / len(g.eta)))))
    sl = (slice(step_v // 2, None, step_v), slice(step_u // 2, None, step_u))
    au, av = g.uu[sl] * um, g.vv[sl] * um
    dev_n = mtri.LinearTriInterpolator(tri, sf.secondary_u)(au, av)
    dev_z = mtri.LinearTriInterpolator(tri, sf.secondary_z)(au, av)
    scale = top / (0.9 * step_u * width / len(g.u))
    panels = (
        (axes[0], "3D result at the station", c.figures.get("vortices", []), "u_m", "z_m",
         lambda ax: ax.contourf(g.uu * um, g.vv * um, c.secondary_speed, levels=levels, cmap="magma", extend="max"),
         (c.sec_n[sl], c.sec_z[sl]), c.figures["secondary_max_m_s"], c.figures["secondary_mean_m_s"]),
        (axes[1], "fully developed (chanmesh.flow)", sf.vortices, "centre_u_m", "centre_z_m",
         lambda ax: ax.tricontourf(tri, dev_speed, levels=levels, cmap="magma", extend="max"),
         (dev_n, dev_z), sf.secondary_max, sf.secondary_mean),
    )
    cs = None
    for ax, name, vortices, ku, kv, fill, (an, az), smax, smean in panels:
        cs = fill(ax)
        ax.quiver(au, av, an, az, color="white", angles="xy", scale_units="xy", scale=scale, width=0.003)
        corners = np.vstack([o.corners, o.corners[:1]]) * um
        ax.plot(corners[:, 0], corners[:, 1], color="black", linewidth=1.2)
        for k, v in enumerate(vortices):
            ccw = v["sense"] == "counter-clockwise"
            ax.plot(v[ku] * um, v[kv] * um, marker="o", markersize=7, markerfacecolor="none",
                    markeredgecolor="cyan", markeredgewidth=2)
            ax.annotate(("CCW" if ccw else "CW") + f" {k + 1}", (v[ku] * um, v[kv] * um), xytext=(6, 6),
                        textcoords="offset points", color="cyan", fontsize=8, fontweight="bold")
        ax.set_aspect("equal")
        ax.set_title(f"{name}\nsecondary max {smax * 1e3:.4g} mm/s, mean {smean * 1e3:.4g} mm/s", fontsize=10)
        ax.set_xlabel("u across the section (µm), along n = t × z")
    axes[0].set_ylabel("z (µm)")
    bar = fig.colorbar(cs, ax=list(axes), shrink=0.85, pad=0.02)
    bar.set_label("secondary (in-plane) speed (m/s)")
    fig.suptitle(f"{title}  -  looking downstream", fontsize=11)
    import io

    buf = io.BytesIO()
    fig.savefig(buf, format="png")
    plt.close(fig)
    return buf.getvalue()
