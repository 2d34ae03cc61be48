"""Dean numbers along the path and the secondary-flow regime at each station.

De = Re sqrt(D_h / (2 R)) with R the local radius of curvature of the centreline (the
definition printed with every result; part of the literature uses sqrt(D_h / R), a factor
sqrt(2) larger). Stations, per curved piece of the path: the middle of each arc (the arc's
bend, each U-turn of a serpentine, each bend of a segments path); a spiral at its start, every
whole turn and its end. Each states its turning side and inner wall (u = -w/2 turning left,
u = +w/2 turning right). Straight paths (chambers, straight) have no Dean number.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

from chanmesh.design.model import ArcPath, Design, SerpentinePath, SpiralPath
from chanmesh.geometry.centerline import Arc, Spiral, centerline_of

DEAN_DEFINITION = "De = Re * sqrt(D_h / (2 R)), R the local radius of curvature of the centreline"
DEAN_ALTERNATIVE = "some authors use De = Re * sqrt(D_h / R), larger by a factor sqrt(2) = 1.414"
DEAN_VELOCITY_SOURCE = (
    "U_Dean = 1.8e-4 * De^1.63 m/s, empirical correlation of Ookawara et al. (2004) as used in the "
    "inertial-microfluidics literature"
)
REGIME_SOURCE = (
    "regime bands: below dean_low, between dean_low and dean_high (stable counter-rotating Dean "
    "vortices seen in microchannels), above dean_high (secondary vortices, instability): common "
    "practice, no source; set flow.dean_low / flow.dean_high to override"
)


def dean_number(reynolds: float, hydraulic_diameter: float, radius: float) -> float:
    """De = Re sqrt(D_h / (2 R)); R in metres, same unit as D_h."""
    return reynolds * math.sqrt(hydraulic_diameter / (2.0 * radius))


def dean_velocity(dean: float) -> float:
    """Average secondary-flow velocity, m/s: 1.8e-4 De^1.63 (Ookawara et al. 2004, empirical)."""
    return 1.8e-4 * dean**1.63


def regime(dean: float, low: float, high: float) -> str:
    """'below', 'inside' or 'above' the band [low, high] of stable counter-rotating vortices."""
    if dean < low:
        return "below"
    if dean <= high:
        return "inside"
    return "above"


REGIME_TEXT = {
    "below": "below the stable-vortex range: weak secondary flow",
    "inside": "inside the stable counter-rotating vortex range",
    "above": "above it: secondary vortices and instability expected",
}


@dataclass(frozen=True)
class Station:
    """A place on the centreline where the curvature is reported.

    ``s`` arc length from the inlet (m), ``curvature_radius`` 1/kappa (m), ``radius`` the
    distance from the piece's centre (m; the bend radius of an arc, r = r0 + c theta of a
    spiral), ``turn`` the spiral turn number (None elsewhere), ``side`` 'left' / 'right' (the
    way the path turns there), ``piece`` the bend number (arcs and spirals counted from the
    inlet, 1-based) and ``inner_wall`` the section wall nearer the centre of curvature:
    u = -w/2 where the path turns left, u = +w/2 where it turns right.
    """

    label: str
    s: float
    curvature_radius: float
    radius: float
    turn: float | None = None
    side: str | None = None
    piece: int | None = None
    inner_wall: str | None = None


def _wall(kappa: float) -> tuple[str, str]:
    return ("left", "u = -w/2") if kappa > 0 else ("right", "u = +w/2")


def stations_of(design: Design) -> tuple[Station, ...]:
    """The Dean stations of a design's path, one set per curved piece: the middle of each arc;
    a spiral's start, every whole turn and its end. Empty for straight paths."""
    line = centerline_of(design)
    breaks = line.breaks
    path = design.path
    out: list[Station] = []
    curved = [i for i, seg in enumerate(line.segments) if isinstance(seg, (Arc, Spiral))]
    for k, i in enumerate(curved, start=1):
        seg = line.segments[i]
        if isinstance(seg, Spiral):
            turns_total = seg.theta_end / (2.0 * math.pi)
            turns = [float(t) for t in range(int(math.floor(turns_total + 1e-12)) + 1)]
            if turns_total - turns[-1] > 1e-9:
                turns.append(turns_total)
            for t in turns:
                theta = 2.0 * math.pi * t
                s_local = float(seg.arclength_at(np.array(theta)))
                kappa = float(seg.curvature(np.array([s_local]))[0])
                side, wall = _wall(kappa)
                r = seg.r0 + seg.c * theta
                label = f"turn {t:g}" if isinstance(path, SpiralPath) else f"bend {k} turn {t:g}"
                out.append(Station(label, float(breaks[i]) + s_local, 1.0 / abs(kappa), r, turn=t,
                                   side=side, piece=k, inner_wall=wall))
            continue
        mid = float(0.5 * (breaks[i] + breaks[i + 1]))
        kappa = float(line.curvature(np.array([mid]))[0])
        side, wall = _wall(kappa)
        if isinstance(path, ArcPath):
            label = "bend"
        elif isinstance(path, SerpentinePath):
            label = f"U-turn {k}"
        else:
            label = f"bend {k}"
        out.append(Station(label, mid, 1.0 / abs(kappa), seg.radius, side=side, piece=k, inner_wall=wall))
    return tuple(out)


def station_numbers(station: Station, reynolds: float, hydraulic_diameter: float, low: float, high: float) -> dict[str, object]:
    """JSON-able numbers of one station (SI)."""
    de = dean_number(reynolds, hydraulic_diameter, station.curvature_radius)
    band = regime(de, low, high)
    out: dict[str, object] = {
        "label": station.label,
        "s_m": station.s,
        "radius_m": station.radius,
        "curvature_radius_m": station.curvature_radius,
        "dean": de,
        "dean_velocity_m_s": dean_velocity(de),
        "regime": band,
    }
    if station.turn is not None:
        out["turn"] = station.turn
    if station.side is not None:
        out["side"] = station.side
    if station.piece is not None:
        out["bend"] = station.piece
        out["inner_wall"] = station.inner_wall
    return out
