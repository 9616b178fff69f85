"""Worst-case corners: the k most influential toleranced values (from a yield run) set to
the ends of their tolerance in every combination, the others nominal, each corner judged
on every acceptance line; the corner that fails first has the most failing lines, then the
smallest margin.

The direction of each value is searched, not assumed (all 2^k sign combinations), so a value
whose effect changes sign between lines is still covered.
"""

from __future__ import annotations

import itertools
from dataclasses import dataclass

import numpy as np

from ..errors import DesignError
from .runners import InProcess
from .tolerances import expand
from .yields import evaluate_units


@dataclass(frozen=True)
class Corner:
    """One corner: the signs and values of the corner parameters and its outcome."""

    signs: tuple[int, ...]
    values: tuple[float, ...]
    passed: tuple[bool, ...]
    margins: tuple[float, ...]
    error: str

    @property
    def failing(self) -> int:
        return sum(1 for p in self.passed if not p) if not self.error else len(self.passed)


@dataclass(frozen=True)
class CornerStudy:
    """Every corner of the ``paths`` (most influential first)."""

    paths: tuple[str, ...]
    lines: tuple[str, ...]
    corners: tuple[Corner, ...]

    @property
    def first_to_fail(self) -> Corner:
        """Most failing lines, then the smallest margin."""
        return max(self.corners, key=lambda c: (c.failing, -float(np.min(c.margins))))

    def to_dict(self) -> dict:
        w = self.first_to_fail
        return {
            "paths": list(self.paths),
            "corners": [
                {"signs": list(c.signs), "values": list(c.values), "failing_lines": c.failing,
                 "worst_margin": float(np.min(c.margins)), "error": c.error}
                for c in self.corners
            ],
            "first_to_fail": {
                "signs": list(w.signs), "values": list(w.values),
                "failed": [ln for ln, p in zip(self.lines, w.passed, strict=True) if not p],
            },
        }  # fmt: skip

    def table(self) -> str:
        rows = ["corners of: " + ", ".join(self.paths)]
        for c in self.corners:
            s = " ".join("+" if x > 0 else "−" for x in c.signs)
            rows.append(f"  {s:<{2 * len(self.paths)}s} failing lines {c.failing:3d}, worst "
                        f"margin {np.min(c.margins):.4g}")  # fmt: skip
        w = self.first_to_fail
        failed = [ln for ln, p in zip(self.lines, w.passed, strict=True) if not p]
        rows.append(
            "fails first: "
            + " ".join("+" if x > 0 else "−" for x in w.signs)
            + (f" ({', '.join(failed)})" if failed else " (passes every line)")
        )
        return "\n".join(rows)


def corner_study(design, paths, runner=None) -> CornerStudy:
    """Every ± corner of the toleranced values at ``paths`` (at most 8 of them)."""
    spreads = {s.path: s for s in expand(design)}
    paths = tuple(paths)
    if not 1 <= len(paths) <= 8:
        raise DesignError("corners", len(paths), "between 1 and 8 toleranced values")
    for p in paths:
        if p not in spreads:
            raise DesignError("corners.path", p, "a toleranced value of the design")
    signs = list(itertools.product((-1, 1), repeat=len(paths)))
    rows = np.array([[spreads[p].corner(s) for p, s in zip(paths, sg, strict=True)]
                     for sg in signs])  # fmt: skip
    tasks = [(design, paths, rows[i : i + 8]) for i in range(0, len(rows), 8)]
    flat = [r for chunk in (runner or InProcess()).map(evaluate_units, tasks) for r in chunk]
    corners = tuple(
        Corner(sg, tuple(float(v) for v in row), tuple(r[0]), tuple(r[1]), r[3])
        for sg, row, r in zip(signs, rows, flat, strict=True)
    )
    return CornerStudy(paths, design.acceptance.lines(), corners)
