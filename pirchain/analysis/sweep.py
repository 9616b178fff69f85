"""Parameter sweeps and the range / false-trigger trade-off.

A sweep varies one value (or a grid of two) of a :class:`pirchain.design.Design`, addressed
by a dotted path with list indices, e.g. ``detector.comparator.window.r_middle`` (the
sensitivity resistor of a ladder window), ``detector.follower.source_resistance``,
``detector.stages[0].c1``, ``detector.stages[1].rf``, ``environment.air_c``, ``speed``,
``target`` (a preset name) or ``analysis.trials``. Each point gives tangential and radial
range on the design's sweep bearing (the middle of ``analysis.bearings``), the
false-trigger rate, the power-up settling time and the supply current.
"""

from __future__ import annotations

import itertools
import warnings
from dataclasses import dataclass

import numpy as np

from ..errors import DesignError, ValidityWarning, warnings_once
from .detection_range import detection_ranges
from .false_triggers import RATE_FLOOR_PER_YEAR, YEAR, analytic_rate
from .paths import best_meaning, check_sweep_path, get_path, set_path
from .power_up import power_up

__all__ = ["best_meaning", "check_sweep_path", "get_path", "set_path", "sweep", "trade_off"]


def evaluate(design) -> dict:
    """Tangential and radial range, false triggers, settling time and supply current."""
    det, env, tgt, a = design.operating, design.environment, design.target, design.analysis
    b = a.sweep_bearing
    cases = [("tangential", b, design.speed), ("radial", b, design.speed)]  # one search
    tang, rad = detection_ranges(det, tgt, env, cases, a)
    est = analytic_rate(det, env, design.draught)
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", ValidityWarning)
        settle = power_up(det, a.settle_duration, a.settle_sample_rate).settling
        supply = det.supply_budget().total
    return {
        "tangential_range_m": tang.range,
        "tangential_range_noise_free_m": tang.range_noise_free,
        "radial_range_m": rad.range,
        "false_triggers_per_year": est.alarm_rate * YEAR,
        "threshold_v": det.comparator.threshold,
        "settling_s": settle,
        "supply_a": supply,
        "gaps": tang.gaps,
    }


@dataclass(frozen=True)
class SweepTable:
    """Rows of a sweep: the swept values and the evaluated figures."""

    paths: tuple[str, ...]
    rows: tuple[dict, ...]

    def column(self, name: str) -> np.ndarray:
        """One column as an array."""
        return np.array([r[name] for r in self.rows])

    def to_text(self) -> str:
        """Plain-text table."""
        head = [p.split(".")[-1] for p in self.paths] + [
            "tang. range m",
            "radial m",
            "false/yr",
            "settle s",
            "supply µA",
        ]
        lines = ["  ".join(f"{h:>14s}" for h in head)]
        for r in self.rows:
            vals = [_fmt(r[p]) for p in self.paths] + [
                f"{r['tangential_range_m']:.2f}",
                f"{r['radial_range_m']:.2f}",
                _rate(r["false_triggers_per_year"]),
                f"{r['settling_s']:.1f}" if np.isfinite(r["settling_s"]) else "never",
                f"{r['supply_a'] * 1e6:.1f}",
            ]
            lines.append("  ".join(f"{v:>14s}" for v in vals))
        return "\n".join(lines)


def _rate(per_year: float) -> str:
    return f"{per_year:.3g}" if per_year >= RATE_FLOOR_PER_YEAR else f"< {RATE_FLOOR_PER_YEAR:g}"


def _fmt(v) -> str:
    if isinstance(v, float):
        return f"{v:.4g}"
    return getattr(v, "name", str(v))


def sweep(
    design, path: str, values, path2: str | None = None, values2=None, progress=None
) -> SweepTable:
    """Evaluate the design at every value of one parameter, or on a grid of two."""
    check_sweep_path(design, path)
    values = list(values)
    if not values or len(values) > 1000:
        raise DesignError("sweep.values", len(values), "between 1 and 1000 values")
    grid = [(v,) for v in values]
    paths = (path,)
    if path2 is not None:
        check_sweep_path(design, path2)
        grid = list(itertools.product(values, values2))
        paths = (path, path2)
    rows = []
    for i, combo in enumerate(grid):
        s = design
        for p, v in zip(paths, combo, strict=True):
            s = set_path(s, p, v)
        row = evaluate(s)
        row.update({p: v for p, v in zip(paths, combo, strict=True)})
        rows.append(row)
        if progress is not None:
            progress((i + 1) / len(grid))
    return SweepTable(paths, tuple(rows))


@dataclass(frozen=True)
class TradeOff:
    """Range against false triggers across one parameter.

    Attributes
    ----------
    table : SweepTable
    budget_per_year : float
    best : int or None
        Row with the most tangential range whose false-trigger rate is within the budget.
    """

    table: SweepTable
    budget_per_year: float
    best: int | None

    @property
    def best_value(self):
        """Parameter value of the chosen row (None if no row meets the budget)."""
        return None if self.best is None else self.table.rows[self.best][self.table.paths[0]]


@warnings_once()
def trade_off(design, path: str, values, budget_per_year: float = 1.0, progress=None) -> TradeOff:
    """Sweep ``path`` and pick the value with the most range within the false-trigger budget."""
    table = sweep(design, path, values, progress=progress)  # checks the path
    rng = table.column("tangential_range_m")
    ok = table.column("false_triggers_per_year") <= budget_per_year
    best = int(np.flatnonzero(ok)[np.argmax(rng[ok])]) if ok.any() else None
    return TradeOff(table, float(budget_per_year), best if best_meaning(path) else None)


def log_values(low: float, high: float, n: int) -> list[float]:
    """n log-spaced values (for resistor sweeps)."""
    return [float(v) for v in np.geomspace(low, high, n)] if n > 1 else [float(low)]


__all__ = [
    "SweepTable",
    "TradeOff",
    "evaluate",
    "best_meaning",
    "check_sweep_path",
    "get_path",
    "log_values",
    "set_path",
    "sweep",
    "trade_off",
]
