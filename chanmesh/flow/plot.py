"""Pictures of section flows: one section (streamwise contours, secondary streamlines) and the
working window of a flow range. matplotlib with the Agg backend, imported only when drawing.

A section is seen looking downstream: u (along n = t x z) to the right, z up, micrometres.
"""

from __future__ import annotations

import io
from typing import Sequence

import numpy as np

from chanmesh.flow.result import SectionFlow


def _pyplot():  # type: ignore[no-untyped-def]
    import matplotlib

    matplotlib.use("Agg")
    import matplotlib.pyplot as plt

    return plt


def _png(fig) -> bytes:  # type: ignore[no-untyped-def]
    buf = io.BytesIO()
    fig.savefig(buf, format="png")
    _pyplot().close(fig)
    return buf.getvalue()


def section_png(flow: SectionFlow, title: str, walls: tuple[str, str], offset: float = 0.0) -> bytes:
    """Streamwise speed as filled contours, in-plane streamlines as stream-function contours,
    vortex centres marked, the walls at u = -w/2 and +w/2 named (``walls``)."""
    plt = _pyplot()
    from matplotlib.tri import Triangulation

    um = 1e6
    p = flow.points * um
    u = p[:, 0] + offset * um
    tri = Triangulation(u, p[:, 1], flow.triangles)
    width = float(np.ptp(u))
    height = float(np.ptp(p[:, 1]))
    fig_w = 9.5
    fig, ax = plt.subplots(figsize=(fig_w, max(2.4, min(7.0, fig_w * 0.8 * height / width)) + 1.6), dpi=130)
    cs = ax.tricontourf(tri, flow.streamwise, levels=20, cmap="viridis")
    bar = fig.colorbar(cs, ax=ax, fraction=0.025, pad=0.02)
    bar.set_label("streamwise speed (m/s)")
    psi = flow.stream_function
    top = float(np.max(np.abs(psi)))
    if flow.secondary_max > 0 and top > 0 and flow.vortices:
        levels = np.concatenate([-top * np.linspace(0.95, 0.05, 7), top * np.linspace(0.05, 0.95, 7)])
        ax.tricontour(tri, psi, levels=np.sort(levels), colors="white", linewidths=0.8)
        for k, v in enumerate(flow.vortices[:8]):
            cu, cz = (v["centre_u_m"] + offset) * um, v["centre_z_m"] * um
            ax.plot(cu, cz, marker="o", markersize=7, markerfacecolor="none", markeredgecolor="orange", markeredgewidth=2)
            ax.annotate(("CCW" if v["sense"] == "counter-clockwise" else "CW") + f" {k + 1}", (cu, cz), xytext=(6, 6),
                        textcoords="offset points", color="orange", fontsize=8, fontweight="bold")
    ax.plot((flow.u_of_streamwise_max + offset) * um, flow.z_of_streamwise_max * um, marker="+", color="red",
            markersize=10, markeredgewidth=2)
    lo, hi = u.min(), u.max()
    bottom = p[:, 1].min()
    for x, name, ha in ((lo, walls[0], "right"), (hi, walls[1], "left")):
        col = p[:, 1][np.isclose(u, x)]
        ax.plot([x, x], [bottom, col.max()], color="firebrick", linewidth=3.0)
        ax.text(x + (-0.015 if ha == "right" else 0.015) * width, bottom + 0.5 * (col.max() - bottom), name,
                rotation=90, va="center", ha=ha, fontsize=9, color="firebrick")
    ax.set_aspect("equal")
    ax.set_xlim(lo - 0.08 * width, hi + 0.08 * width)
    ax.set_xlabel("u across the section (µm), along n = t × z")
    ax.set_ylabel("z (µm)")
    sec = f"secondary max {flow.secondary_max * 1e3:.3g} mm/s, mean {flow.secondary_mean * 1e3:.3g} mm/s"
    de = "" if flow.dean is None else f", De = {flow.dean:.3g}"
    ax.set_title(f"{title}\nmean {flow.mean_velocity:.4g} m/s, max {flow.max_streamwise:.4g} m/s (+); {sec}{de}\n"
                 "white: in-plane streamlines (dashed: clockwise); looking downstream", fontsize=9)
    fig.tight_layout()
    return _png(fig)


def range_png(flows: Sequence[SectionFlow], title: str) -> bytes:
    """Secondary speed, streamwise-peak shift, vortex centres and cell count against De (or flow rate)."""
    plt = _pyplot()
    from chanmesh.numbers.regime import dean_velocity

    curved = flows[0].dean is not None
    x = np.array([f.dean if curved else f.flow_rate * 6e7 for f in flows])
    xlabel = "Dean number De = Re sqrt(D_h / 2R)" if curved else "flow rate (mL/min)"
    fig, axes = plt.subplots(2, 2, figsize=(11, 7.5), dpi=120)
    a = axes[0, 0]
    a.plot(x, [f.secondary_max * 1e3 for f in flows], "o-", label="computed: max in-plane speed")
    a.plot(x, [f.secondary_mean * 1e3 for f in flows], "s-", label="computed: mean in-plane speed")
    if curved:
        a.plot(x, [dean_velocity(f.dean) * 1e3 for f in flows], "k--", label="Ookawara et al. 2004 correlation")
    a.set_ylabel("secondary speed (mm/s)")
    a.legend(fontsize=8)
    a = axes[0, 1]
    a.plot(x, [f.u_of_streamwise_max * 1e6 for f in flows], "o-")
    a.axhline(0.0, color="grey", linewidth=0.8)
    a.set_ylabel("u of the streamwise peak (µm; > 0 toward u = +w/2)")
    a = axes[1, 0]
    for f, xi in zip(flows, x):
        for v in f.vortices:
            a.plot(xi, v["centre_u_m"] * 1e6, "o", color="tab:blue" if v["sense"] == "counter-clockwise" else "tab:red",
                   markersize=4)
            a.plot(xi, v["centre_z_m"] * 1e6, "^", color="tab:blue" if v["sense"] == "counter-clockwise" else "tab:red",
                   markersize=4, alpha=0.5)
    a.set_ylabel("vortex centres: u (o), z (^) in µm\nblue CCW, red CW looking downstream")
    a = axes[1, 1]
    a.step(x, [f.cell_count for f in flows], where="mid")
    a.set_ylabel("number of vortex cells")
    a.set_ylim(0, max(4, max(f.cell_count for f in flows) + 1))
    from matplotlib.ticker import MaxNLocator

    a.yaxis.set_major_locator(MaxNLocator(integer=True))
    for a in axes.ravel():
        a.set_xlabel(xlabel)
        a.grid(alpha=0.3)
    if curved:  # flow rates on top of the first panel
        top = axes[0, 0].secondary_xaxis("top", functions=(lambda d: d * flows[0].flow_rate * 6e7 / flows[0].dean,
                                                            lambda q: q * flows[0].dean / (flows[0].flow_rate * 6e7)))
        top.set_xlabel("flow rate (mL/min)", fontsize=8)
    fig.suptitle(title, fontsize=10)
    fig.tight_layout()
    return _png(fig)
