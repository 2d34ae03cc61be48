"""The variants of a sweep: ``--vary KEY=SPEC`` options combined as a cartesian product or,
with ``--zip``, pairwise. Values are put into the raw design data (in the design file's own
unit, e.g. ``path.radius=3000:8000:6`` in um), and every variant is re-read through
``design_from_dict`` so it passes exactly the checks a design file does.

KEY is dotted, and a list item is picked by its index from 0: ``path.segments[1].arc`` is the
radius of the second piece of a ``segments`` path.

SPEC is ``a:b:n`` (n evenly spaced values from a to b inclusive), a comma list ``300,400,500``
(numbers, or text such as ``1.5mm`` or ``hex``), or a single value.
"""

from __future__ import annotations

import copy
import itertools
import math
import re
from dataclasses import dataclass
from typing import Any

from chanmesh.errors import DesignError

MAX_VARIANTS = 10_000
_PART = re.compile(r"^([A-Za-z_][A-Za-z0-9_]*)((?:\[\d+\])*)$")


def _steps(key: str) -> list[str | int]:
    """``path.segments[1].arc`` -> ['path', 'segments', 1, 'arc']; [] if malformed."""
    out: list[str | int] = []
    for part in key.split("."):
        m = _PART.match(part)
        if not m:
            return []
        out.append(m.group(1))
        out += [int(i) for i in re.findall(r"\[(\d+)\]", m.group(2))]
    return out


@dataclass(frozen=True)
class Variation:
    """One ``--vary`` option: a dotted design key and its values."""

    key: str
    values: tuple[Any, ...]


def _value(option: str, text: str) -> Any:
    t = text.strip()
    if not t:
        raise DesignError("--vary", option, "has an empty value; write KEY=a:b:n or KEY=v1,v2,...")
    low = t.lower()
    if low in ("true", "false"):
        return low == "true"
    try:
        return int(t)
    except ValueError:
        pass
    try:
        v = float(t)
    except ValueError:
        return t  # text: a length with unit, a mesher name, ...
    if not math.isfinite(v):
        raise DesignError("--vary", option, "values must be finite numbers")
    return v


def parse_vary(option: str) -> Variation:
    """``KEY=a:b:n`` or ``KEY=v1,v2,...`` -> Variation; errors name the option as written."""
    key, sep, spec = option.partition("=")
    key = key.strip()
    if not sep or not key or not _steps(key):
        raise DesignError("--vary", option, "must be KEY=VALUES with a dotted design key, e.g. path.radius=3000:8000:6 "
                          "or path.segments[1].arc=300,400")
    if ":" in spec:
        parts = spec.split(":")
        if len(parts) != 3:
            raise DesignError("--vary", option, "a range is start:stop:count, e.g. 3000:8000:6")
        a, b, n = (_value(option, p) for p in parts)
        if isinstance(n, bool) or not isinstance(n, int) or not 1 <= n <= MAX_VARIANTS:
            raise DesignError("--vary", option, f"the count after the second ':' must be a whole number from 1 to {MAX_VARIANTS}")
        if any(isinstance(x, (bool, str)) for x in (a, b)):
            raise DesignError("--vary", option, "a range start:stop:count needs numbers for start and stop")
        if n == 1:
            values: tuple[Any, ...] = (a,)
        else:
            values = tuple(a + (b - a) * i / (n - 1) for i in range(n))
            if isinstance(a, int) and isinstance(b, int) and all(float(v).is_integer() for v in values):
                values = tuple(int(v) for v in values)
        return Variation(key, values)
    values = tuple(_value(option, p) for p in spec.split(","))
    return Variation(key, values)


def combine(variations: list[Variation], paired: bool = False) -> list[dict[str, Any]]:
    """Assignments ``{key: value}``, one per variant: the product, or with ``paired`` the zip."""
    keys = [v.key for v in variations]
    if len(set(keys)) != len(keys):
        dup = next(k for k in keys if keys.count(k) > 1)
        raise DesignError("--vary", dup, "each key may be varied only once")
    if not variations:
        return [{}]
    if paired:
        lengths = {v.key: len(v.values) for v in variations}
        if len(set(lengths.values())) != 1:
            raise DesignError("--zip", lengths, "paired lists must all have the same length")
        rows = list(zip(*(v.values for v in variations)))
    else:
        total = math.prod(len(v.values) for v in variations)
        if total > MAX_VARIANTS:
            raise DesignError("--vary", f"{total} variants", f"a sweep may have at most {MAX_VARIANTS} variants")
        rows = list(itertools.product(*(v.values for v in variations)))
    return [dict(zip(keys, row)) for row in rows]


def apply(data: dict[str, Any], assignment: dict[str, Any]) -> dict[str, Any]:
    """A deep copy of the raw design data with each dotted key set (tables created as needed;
    a list item ``name[i]`` must already exist)."""
    out = copy.deepcopy(data)
    for key, value in assignment.items():
        *path, last = _steps(key)
        node: Any = out
        for depth, step in enumerate(path):
            where = key if depth + 1 == len(path) else _shown(path[: depth + 1])
            if isinstance(step, int):
                if not isinstance(node, list) or not 0 <= step < len(node):
                    size = len(node) if isinstance(node, list) else 0
                    raise DesignError(where, step, f"has no item {step}: the list has {size} items (counted from 0), "
                                      f"so --vary {key} cannot set it")
                node = node[step]
            else:
                nxt = node.setdefault(step, {}) if isinstance(node, dict) else None
                if not isinstance(nxt, (dict, list)):
                    raise DesignError(_shown(path[: depth + 1]), nxt, f"is a value, not a table, so --vary {key} cannot set it")
                node = nxt
        if isinstance(last, int):
            if not isinstance(node, list) or not 0 <= last < len(node):
                raise DesignError(key, last, f"is not an item of the list, so --vary {key} cannot set it")
        elif not isinstance(node, dict):
            raise DesignError(key, last, f"--vary {key}: the parent is a list, not a table")
        node[last] = value
    return out


def _shown(steps: list[str | int]) -> str:
    text = ""
    for st in steps:
        text += f"[{st}]" if isinstance(st, int) else (("." if text else "") + st)
    return text
