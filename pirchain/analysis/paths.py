"""Dotted paths into a design: ``detector.stages[0].c1``, ``environment.air_c``, ``target``
…, read and replaced on frozen dataclasses. What a sweep varies and what a tolerance
draws are named this way (:mod:`pirchain.analysis.sweep`, :mod:`pirchain.production`)."""

from __future__ import annotations

import dataclasses
import re

from ..errors import DesignError
from ..physics.scene import target_preset

_STEP = re.compile(r"^([A-Za-z_][A-Za-z0-9_]*)(?:\[(\d+)\])?$")


def get_path(obj, path: str):
    """Value at a dotted path (with ``[i]`` indices) of a design's fields."""
    if not isinstance(path, str) or not path or len(path) > 200:
        raise DesignError("sweep.path", path, "a dotted path such as detector.stages[0].c1")
    for part in path.split("."):
        m = _STEP.match(part)
        if (
            m is None
            or m.group(1).startswith("_")
            or not dataclasses.is_dataclass(obj)
            or m.group(1) not in {f.name for f in dataclasses.fields(obj)}
        ):
            raise DesignError("sweep.path", path, f"an existing field (no '{part}' here)")
        obj = getattr(obj, m.group(1))
        if m.group(2) is not None:
            if not isinstance(obj, (tuple, list)) or int(m.group(2)) >= len(obj):
                n = len(obj) if isinstance(obj, (tuple, list)) else 0
                raise DesignError("sweep.path", path, f"an index below {n} in '{part}'")
            obj = obj[int(m.group(2))]
    return obj


def check_sweep_path(design, path: str) -> float | str:
    """The current value at ``path`` if it names a number of the design (or the target),
    else :class:`DesignError`: a sweep varies one number (or the target preset)."""
    value = get_path(design, path)
    if path == "target":
        return value.name
    if path == "detector_c" and value is None:  # unset: the parts are at the room's air
        return design.parts_k - 273.15
    if isinstance(value, bool) or not isinstance(value, (int, float)):
        raise DesignError(
            "sweep.path", path, f"a numeric parameter (this is a {type(value).__name__})"
        )
    return value


def best_meaning(path: str) -> str | None:
    """What the "best" row of a sweep of ``path`` means, or None where it means nothing.

    Best is the most tangential range within the false-trigger budget; that is a choice
    only for a value of the detector's electronics (a resistor, a capacitor, a threshold, an
    op-amp or logic setting). For the mounting, the lens, the room, the walker or the
    analysis settings "more range" is not what one picks them for, so no best is given.
    """
    parts = path.split(".")
    if parts[0] != "detector" or len(parts) < 2:
        return None
    if parts[1].split("[")[0] in ("mount", "lens", "name"):
        return None
    return "the most tangential range within the false-trigger budget"


def set_path(obj, path: str, value):
    """A copy of ``obj`` with the value at ``path`` replaced (frozen dataclasses rebuilt)."""
    head, _, rest = path.partition(".")
    m = _STEP.match(head)
    if m is None or not dataclasses.is_dataclass(obj) or not hasattr(obj, m.group(1)):
        raise DesignError("sweep.path", path, f"an existing field (no '{head}' here)")
    name, idx = m.group(1), m.group(2)
    if name == "target" and isinstance(value, str) and not rest:
        value = target_preset(value)
    current = getattr(obj, name)
    if idx is not None:
        items = list(current)
        i = int(idx)
        if i >= len(items):
            raise DesignError("sweep.path", path, f"an index below {len(items)}")
        items[i] = set_path(items[i], rest, value) if rest else value
        new = tuple(items)
    else:
        new = set_path(current, rest, value) if rest else value
    return dataclasses.replace(obj, **{name: new})
