"""Print the design numbers (the dict of ``chanmesh.numbers.report``) for a person, and write
them as JSON without ever leaving a half-written file under the final name."""

from __future__ import annotations

import json
from pathlib import Path
from typing import Any

from chanmesh.errors import OutputError
from chanmesh.safeio import atomic_write_text


def _um(m: float) -> str:
    return f"{m * 1e6:.4g} um"


def _mm(m: float) -> str:
    return f"{m * 1e3:.4g} mm"


def render(numbers: dict[str, Any]) -> str:
    """A plain-text report of ``numbers``, in the units designers use (um, mm, mL/min, kPa)."""
    n = numbers
    sec, fl, fluid, pr = n["section"], n["flow"], n["fluid"], n["pressure"]
    lines = [f"Design numbers: {n['design']} ({n['path_kind']})", ""]
    lines.append(
        f"Fluid       {fluid['name']} at {fluid['temperature_K'] - 273.15:.2f} C: density {fluid['density_kg_m3']:.6g} kg/m3, "
        f"viscosity {fluid['viscosity_Pa_s'] * 1e3:.6g} mPa s  [{fluid['source']}]"
    )
    lines.append(
        f"Section     {sec['shape']} {_um(sec['width_m'])} wide, {_um(sec['height_inner_m'])}"
        + (f" / {_um(sec['height_outer_m'])}" if sec["height_inner_m"] != sec["height_outer_m"] else "")
        + f" high: area {sec['area_m2'] * 1e12:.6g} um2, wetted perimeter {_um(sec['wetted_perimeter_m'])}, "
        f"D_h = 4A/P = {_um(sec['hydraulic_diameter_m'])}"
    )
    lines.append(
        f"Flow        {fl['rate_m3_s'] * 6e7:.5g} mL/min = {fl['rate_m3_s'] * 6e10:.5g} uL/min; mean velocity "
        f"{fl['mean_velocity_m_s']:.4g} m/s, max {fl['max_velocity_m_s']:.4g} m/s (x{fl['max_over_mean']:.3f})"
    )
    lines.append(f"Reynolds    Re = rho U D_h / mu = {fl['reynolds']:.4g}")
    for row in n.get("inlets") or []:
        lines.append(
            f"  {row['name']:<10} {row['width_fraction']:.3g} of the width, {row['share']:.4g} of the flow = "
            f"{row['rate_m3_s'] * 6e7:.5g} mL/min (same mean velocity at every inlet piece)"
        )
    if n["dean"]:
        d = n["dean"]
        lines += ["", f"Dean number {d['definition']}", f"            ({n['definitions']['dean'].split('; ', 1)[1]})"]
        lines.append(f"  {'station':<16} {'s':>10} {'r':>10} {'R=1/k':>10} {'De':>8} {'U_Dean':>10}  {'inner wall':<18}regime")
        for st in d["stations"]:
            inner = f"{st['inner_wall']} ({st['side']})" if st.get("inner_wall") else ""
            lines.append(
                f"  {st['label']:<16} {_mm(st['s_m']):>10} {_mm(st['radius_m']):>10} {_mm(st['curvature_radius_m']):>10} "
                f"{st['dean']:>8.3g} {st['dean_velocity_m_s'] * 1e3:>7.3g} mm/s  {inner:<18}{st['regime']}"
            )
        lines.append(f"  bands: below {d['band_low']:g}, inside up to {d['band_high']:g}, above (common practice, no source)")
        lines.append("  U_Dean = 1.8e-4 De^1.63 m/s: empirical correlation (Ookawara et al. 2004)")
        sf = n.get("section_flow")
        if sf and "skipped" in sf:
            lines.append(f"  computed section flow at {sf['station']}: not available ({sf['skipped']})")
        elif sf:
            lines.append(
                f"  computed (fully developed section flow at {sf['station']}, De = {sf['dean']:.3g}): secondary max "
                f"{sf['computed_secondary_max_m_s'] * 1e3:.3g} mm/s, mean {sf['computed_secondary_mean_m_s'] * 1e3:.3g} mm/s, "
                f"{sf['computed_vortex_cells']} vortex cells"
            )
            lines.append(
                f"  correlation (Ookawara et al. 2004) there: {sf['correlation_dean_velocity_m_s'] * 1e3:.3g} mm/s = "
                f"{sf['correlation_over_computed_mean']:.3g} x the computed mean  (chanmesh dean for the full picture)"
            )
    if n["chambers"]:
        c = n["chambers"]
        lines += ["", f"Chambers    straight, no Dean number; expansion ratio chamber/throat = {c['expansion_ratio']:.4g}"]
        for part in ("throat", "chamber"):
            q = c[part]
            lines.append(
                f"  {part:<8} D_h {_um(q['hydraulic_diameter_m'])}, U {q['mean_velocity_m_s']:.4g} m/s, Re {q['reynolds']:.4g}"
            )
    if n["particles"]:
        lines += ["", "Particles   confinement a/D_h (focusing needs >= 0.07, Di Carlo 2009); F_L with f_L = "
                  f"{n['inputs']['lift_coefficient']:g} (default 0.5, from memory)"]
        for p in n["particles"]:
            verdict = "expected to focus" if p["expected_to_focus"] else "not expected to focus"
            lines.append(
                f"  {_um(p['diameter_m']):>8}: a/D_h = {p['confinement']:.3f}"
                f" ({'meets' if p['meets_confinement'] else 'below'} 0.07), F_L = {p['lift_N']:.3g} N -> {verdict}"
            )
            for st in p["stations"]:
                ratio = st["lift_over_drag"]
                shown = "inf" if ratio is None else f"{ratio:.3g}"
                lines.append(f"      {st['label']:<16} F_D = {st['dean_drag_N']:.3g} N, F_L/F_D = {shown}")
        if n["dean"] and n["inputs"]["focus_ratio"] is not None:
            lines.append(f"  verdict also needs F_L/F_D >= {n['inputs']['focus_ratio']:g} (focus ratio as given)")
        elif n["dean"]:
            lines.append("  verdict from a/D_h only; apply your own F_L/F_D threshold (or set flow.focus_ratio)")
    lines += [
        "",
        f"Pressure    {pr['drop_kPa']:.4g} kPa = {pr['drop_psi']:.4g} psi over {_mm(pr['length_m'])} "
        f"(fully developed laminar, Fanning f Re = {pr['fanning_fRe']:.4f}, Shah & London 1978)",
        f"            entrance length {_mm(pr['entrance_length_m'])} (Chen 1973, from memory)",
        "",
        "Cautions",
    ]
    lines += [f"  - {c}" for c in n["cautions"]]
    return "\n".join(lines) + "\n"


def write_json(numbers: dict[str, Any], path: str | Path) -> Path:
    """Write ``numbers`` to ``path`` through a temporary file in the same folder (os.replace)."""
    target = Path(path)
    folder = target.parent if str(target.parent) else Path(".")
    if not folder.is_dir():
        what = "is a file, not a folder" if folder.exists() else "does not exist"
        raise OutputError(f"--json {target}: {folder} {what}")
    text = json.dumps(numbers, indent=2, allow_nan=False) + "\n"
    return atomic_write_text(target, text)
