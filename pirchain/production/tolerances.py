"""Tolerances of a design: expanded to the values they act on, and drawn for N units.

A group name (``resistors``, ``capacitors``) or a path with ``[*]`` expands to every value
it covers; each value gets its own random stream (a child of the run's seed sequence, by
its position in the expanded list), so a draw does not depend on how the units are split
across workers. The units' designs are rebuilt with every drawn value at once.

References
----------
.. [1] JCGM 100:2008 (GUM), §4.3: a tolerance as the bound of a rectangular distribution, or
   as a stated multiple of a standard deviation.
"""

from __future__ import annotations

import dataclasses
import math
import re
from dataclasses import dataclass

import numpy as np

from ..analysis.paths import check_sweep_path, get_path, set_path
from ..errors import DesignError
from ..signoff import GROUPS, Tolerance

_STAR = re.compile(r"\[\*\]")


@dataclass(frozen=True)
class Spread:
    """One toleranced value: its path, nominal value and tolerance."""

    path: str
    nominal: float
    tolerance: Tolerance

    @property
    def half_width(self) -> float:
        """The tolerance in the value's units (± this around the nominal) [SI]."""
        t = self.tolerance
        return abs(self.nominal) * t.tolerance if t.relative else t.tolerance

    def corner(self, sign: int) -> float:
        """The value at the + or − end of its tolerance."""
        t = self.tolerance
        if t.distribution == "lognormal":
            k = (1.0 + t.tolerance) ** sign
            return self.nominal * k
        return self.nominal + sign * self.half_width

    def draw(self, rng, n: int) -> np.ndarray:
        """``n`` values."""
        t, x0 = self.tolerance, self.nominal
        if t.distribution == "uniform":
            x = x0 + self.half_width * rng.uniform(-1.0, 1.0, n)
        elif t.distribution == "gaussian":
            x = x0 + self.half_width / t.sigmas * rng.standard_normal(n)
        else:
            x = x0 * np.exp(math.log1p(t.tolerance) / t.sigmas * rng.standard_normal(n))
        if t.random_sign:
            x = x * rng.choice([-1.0, 1.0], n)
        return x


def _group_paths(design, group: str) -> list[str]:
    det = design.detector
    out = []
    for k, st in enumerate(det.stages):
        names = st.resistors if group == "resistors" else st.capacitors
        out += [f"detector.stages[{k}].{n}" for n in names]
    if group == "resistors":
        if det.follower is not None:
            out.append("detector.follower.source_resistance")
        win = det.comparator.window if det.comparator is not None else None
        for n in ("r_top", "r_middle", "r_bottom"):
            if win is not None and hasattr(win, n):
                out.append(f"detector.comparator.window.{n}")
    return out


def _expand_path(design, path: str) -> list[str]:
    if path in GROUPS:
        return _group_paths(design, path)
    if "[*]" not in path:
        return [path]
    head = path[: path.index("[*]")]
    items = get_path(design, head)
    if not isinstance(items, tuple):
        raise DesignError("tolerances.path", path, f"a list before [*] ({head} is not one)")
    out = []
    for k in range(len(items)):
        p = _STAR.sub(f"[{k}]", path, count=1)
        try:
            check_sweep_path(design, p.split("[*]")[0] if "[*]" in p else p)
        except DesignError:
            continue  # this item has no such value (another stage type)
        out += _expand_path(design, p)
    if not out:
        raise DesignError("tolerances.path", path, "a path that names a value of some item")
    return out


def expand(design, tolerances=None) -> list[Spread]:
    """Every toleranced value of ``design`` (a later tolerance on the same value wins)."""
    tolerances = design.tolerances if tolerances is None else tolerances
    found: dict[str, Spread] = {}
    for tol in tolerances:
        for path in _expand_path(design, tol.path):
            try:
                value = check_sweep_path(design, path)
            except DesignError as err:
                raise DesignError("tolerances.path", tol.path, err.expected) from None
            if not isinstance(value, (int, float)) or isinstance(value, bool):
                raise DesignError("tolerances.path", tol.path, "a numeric value")
            found[path] = Spread(path, float(value), tol)
    return list(found.values())


def draw(spreads, units: int, seed: int) -> np.ndarray:
    """Values of every spread for ``units`` units, shape (units, spreads).

    Spread j draws from the j-th child of ``numpy.random.SeedSequence(seed)``.
    """
    children = np.random.SeedSequence(int(seed)).spawn(len(spreads))
    cols = [s.draw(np.random.default_rng(c), units) for s, c in zip(spreads, children, strict=True)]
    return np.column_stack(cols) if cols else np.zeros((units, 0))


def with_values(design, paths, values):
    """The design with every path set to its value, each object rebuilt once."""
    tree: dict = {}
    for path, v in zip(paths, values, strict=True):
        tree[path] = float(v)
    return _apply(design, tree)


def _apply(obj, changes: dict):
    """Apply {dotted path: value} to ``obj``: one ``dataclasses.replace`` per object."""
    by_field: dict[str, dict] = {}
    for path, v in changes.items():
        head, _, rest = path.partition(".")
        name, _, idx = head.partition("[")
        key = int(idx.rstrip("]")) if idx else None
        by_field.setdefault(name, {}).setdefault(key, {})[rest] = v
    fields = {}
    for name, parts in by_field.items():
        if name == "target" or not dataclasses.is_dataclass(obj):
            obj = set_path(obj, name, parts[None][""])  # checks and the preset lookup
            continue
        current = getattr(obj, name)
        if None in parts:
            sub = parts[None]
            fields[name] = sub[""] if "" in sub else _apply(current, sub)
            continue
        items = list(current)
        for i, sub in parts.items():
            items[i] = sub[""] if "" in sub else _apply(items[i], sub)
        fields[name] = tuple(items)
    return dataclasses.replace(obj, **fields) if fields else obj
