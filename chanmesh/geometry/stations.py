"""Stations along the centreline, as written in ``mesh.sections``, resolved to arc lengths.

A station is a fraction of the centreline length (``0.25``), a length from the inlet with its
unit (``'12.5mm'``), an angle turned since the inlet (``'90deg'``, the accumulated absolute
change of heading, so a serpentine's alternating bends add up), or a number of turns
(``'turn=2.25'``, the same as 810 degrees).
"""

from __future__ import annotations

import math

import numpy as np

from chanmesh.design.model import Design
from chanmesh.errors import DesignError
from chanmesh.geometry.centerline import Centerline, centerline_of
from chanmesh.units import parse_length

_SAMPLES = 4_001  # per segment


def turned_angle(line: Centerline) -> tuple[np.ndarray, np.ndarray]:
    """(s, accumulated |heading change| in rad) on a fine grid, for inverting angle -> s.

    Each segment is sampled on its own (curvature is smooth inside a segment and jumps only
    at the joins), so lines and arcs come out exact and spirals to the trapezoid rule."""
    s_all, turned_all = [np.array([0.0])], [np.array([0.0])]
    base = 0.0
    for seg, s0 in zip(line.segments, line.breaks[:-1]):
        local = np.linspace(0.0, seg.length, _SAMPLES)
        k = np.abs(seg.curvature(local))
        turned = np.concatenate([[0.0], np.cumsum(0.5 * (k[1:] + k[:-1]) * np.diff(local))])
        s_all.append(s0 + local[1:])
        turned_all.append(base + turned[1:])
        base += float(turned[-1])
    return np.concatenate(s_all), np.concatenate(turned_all)


def station_arclength(design: Design, station: object, key: str = "mesh.sections") -> float:
    """Arc length (m) from the inlet of one station; ``DesignError`` naming ``key`` otherwise."""
    line = centerline_of(design)
    L = line.length
    if isinstance(station, (int, float)) and not isinstance(station, bool):
        if not 0.0 <= station <= 1.0:
            raise DesignError(key, station, "a plain number is a fraction of the centreline length, from 0 to 1")
        return float(station) * L
    if not isinstance(station, str):
        raise DesignError(key, station, "must be a fraction, a length with unit ('12.5mm'), an angle ('90deg') or 'turn=N'")
    text = station.strip().lower()
    if text.startswith("turn="):
        try:
            degrees = 360.0 * float(text[5:])
        except ValueError:
            raise DesignError(key, station, "'turn=N' needs a number N, e.g. 'turn=2.25'") from None
        return _at_angle(design, line, degrees, key, station)
    if text.endswith("deg"):
        try:
            degrees = float(text[:-3])
        except ValueError:
            raise DesignError(key, station, "an angle is a number followed by 'deg', e.g. '90deg'") from None
        return _at_angle(design, line, degrees, key, station)
    s = parse_length(key, station)
    if not 0.0 <= s <= L:
        raise DesignError(key, station, f"must lie on the centreline, from 0 to {L * 1e3:.6g} mm")
    return s


def _at_angle(design: Design, line: Centerline, degrees: float, key: str, station: object) -> float:
    s, turned = turned_angle(line)
    total = math.degrees(turned[-1])
    if not 0.0 <= degrees <= total * (1 + 1e-9):
        raise DesignError(key, station, f"the path turns through {total:.6g} deg in all; an angle must lie from 0 to that")
    return float(np.interp(math.radians(degrees), turned, s))


def section_stations(design: Design) -> list[float]:
    """Arc lengths (m) of every station in ``mesh.sections``, in the order written."""
    return [station_arclength(design, st, f"mesh.sections[{i}]") for i, st in enumerate(design.mesh.sections)]
