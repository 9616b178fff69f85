"""Yield of a design: N seeded units, each one draw of every toleranced value, judged on
every acceptance line; the fraction passing with its exact interval, the failures per line,
and which values drive them.

References
----------
.. [1] Clopper, C. J. and Pearson, E. S., "The use of confidence or fiducial limits
   illustrated in the case of the binomial", Biometrika 26, 404 (1934): the exact interval
   [B(α/2; k, n−k+1), B(1−α/2; k+1, n−k)] from beta quantiles.
.. [2] Saltelli, A. et al., *Global Sensitivity Analysis: The Primer*, Wiley (2008), §1.2.5:
   rank (Spearman) correlation of inputs and outputs of a Monte Carlo sample as a screening
   measure; it costs no evaluation beyond the sample (Sobol indices through SALib would need
   N(2D + 2) structured evaluations, more than the yield itself).
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np
from scipy import stats

from ..analysis.detection_range import probability_of_detection
from ..analysis.rice import clopper_pearson
from ..errors import DesignError
from .acceptance import evaluate_unit
from .runners import DaskCluster, InProcess
from .tolerances import draw, expand, with_values

MAX_UNITS = 100_000


def evaluate_units(design, paths, rows):
    """Evaluate the units whose drawn values are ``rows`` (a task: picklable arguments,
    plain results)."""
    out = []
    for row in rows:
        try:
            unit = with_values(design, paths, row)
        except DesignError as err:
            n = len(design.acceptance.lines())
            out.append(((False,) * n, (-math.inf,) * n, (math.nan,) * n, str(err)))
            continue
        r = evaluate_unit(unit)
        out.append((r.passed, r.margins, r.values, r.error))
    return out


@dataclass(frozen=True)
class Influence:
    """How strongly one toleranced value drives the failures."""

    path: str
    score: float
    rho: tuple[float, ...]  # Spearman ρ with each line's margin (0 where undefined)


@dataclass(frozen=True)
class YieldResult:
    """N units against the acceptance lines.

    Attributes
    ----------
    lines : tuple of str
    paths : tuple of str
        The toleranced values, in draw order.
    values : numpy.ndarray
        Drawn values (units, paths).
    passed, margins, measured : numpy.ndarray
        Per unit and line (units, lines).
    errors : tuple of str
        Per unit: why it could not be built ("" if it could).
    seed : int
    """

    lines: tuple[str, ...]
    paths: tuple[str, ...]
    values: np.ndarray
    passed: np.ndarray
    margins: np.ndarray
    measured: np.ndarray
    errors: tuple[str, ...]
    seed: int

    @property
    def units(self) -> int:
        return int(self.passed.shape[0])

    @property
    def good(self) -> np.ndarray:
        """Units passing every line."""
        ok = np.all(self.passed, axis=1)
        return ok & np.array([not e for e in self.errors], dtype=bool)

    @property
    def yield_fraction(self) -> float:
        return float(self.good.mean())

    @property
    def interval(self) -> tuple[float, float]:
        """Clopper–Pearson 95 % interval of the yield."""
        return clopper_pearson(int(self.good.sum()), self.units)

    @property
    def failures(self) -> np.ndarray:
        """Units failing each line."""
        return (~self.passed).sum(axis=0)

    def influence(self) -> list[Influence]:
        """Toleranced values ranked by how they drive failures: Σ over lines of the line's
        failure fraction × |Spearman ρ| with its margin (the largest |ρ| where nothing
        fails)."""
        n, out = self.units, []
        fail = self.failures / max(n, 1)
        margins = np.where(np.isfinite(self.margins), self.margins, -1e9)
        for j, path in enumerate(self.paths):
            x = self.values[:, j]
            rho = []
            for m in margins.T:
                if np.ptp(x) == 0 or np.ptp(m) == 0:
                    rho.append(0.0)
                    continue
                r = stats.spearmanr(x, m).statistic
                rho.append(0.0 if not np.isfinite(r) else float(r))
            a = np.abs(rho)
            score = float(np.sum(fail * a)) if fail.any() else float(a.max(initial=0.0))
            out.append(Influence(path, score, tuple(rho)))
        return sorted(out, key=lambda i: (-i.score, i.path))

    def to_dict(self) -> dict:
        """The JSON form (deterministic for a seed)."""
        lo, hi = self.interval
        return {
            "units": self.units, "seed": self.seed, "yield": self.yield_fraction,
            "yield_95": [lo, hi], "passed_units": int(self.good.sum()),
            "invalid_units": int(sum(1 for e in self.errors if e)),
            "lines": [
                {"line": ln, "failures": int(f),
                 "worst_margin": float(np.min(self.margins[:, k])) if self.units else None}
                for k, (ln, f) in enumerate(zip(self.lines, self.failures, strict=True))
            ],
            "influence": [
                {"path": i.path, "score": i.score, "rho": list(i.rho)} for i in self.influence()
            ],
        }  # fmt: skip

    def table(self) -> str:
        """Plain-text summary."""
        lo, hi = self.interval
        rows = [
            f"yield {100 * self.yield_fraction:.1f} % of {self.units} units "
            f"(95 % interval {100 * lo:.1f}–{100 * hi:.1f} %)",
            f"{'line':<24s} {'failures':>8s} {'worst margin':>13s}",
        ]
        for k, ln in enumerate(self.lines):
            rows.append(f"{ln:<24s} {int(self.failures[k]):8d} {np.min(self.margins[:, k]):13.4g}")
        inf = self.influence()[:8]
        if inf:
            rows.append("most influential values (failure-weighted |Spearman ρ|):")
            rows += [f"  {i.path:<44s} {i.score:.3f}" for i in inf]
        return "\n".join(rows)


def run_yield(design, units: int = 200, seed: int | None = None, runner=None, progress=None,
              batch: int | None = None, client=None) -> YieldResult:  # fmt: skip
    """Draw ``units`` units of ``design`` (its tolerances) and judge each on its acceptance
    lines.

    Parameters
    ----------
    design : Design
        With ``tolerances`` and ``acceptance``.
    units : int
    seed : int, optional
        Seed of the draws (default: ``design.analysis.seed``); the walks' noise uses the
        design's seed for every unit (common random numbers).
    runner : InProcess, LocalProcesses or DaskCluster, optional
        Where the units run (default: in this process); the result is the same.
    batch : int, optional
        Units per task (default: up to 25, at least eight tasks when there are units for
        them; the answer does not depend on it).
    client : distributed.Client, optional
        Run on this Dask cluster (instead of ``runner``).
    """
    if design.acceptance is None:
        raise DesignError("acceptance", None, "an [acceptance] section to judge units by")
    if isinstance(units, bool) or not isinstance(units, int) or not 1 <= units <= MAX_UNITS:
        raise DesignError("units", units, f"an integer between 1 and {MAX_UNITS}")
    seed = design.analysis.seed if seed is None else int(seed)
    spreads = expand(design)
    paths = tuple(s.path for s in spreads)
    values = draw(spreads, units, seed)
    batch = min(25, max(1, units // 8)) if batch is None else int(batch)
    tasks = [(design, paths, values[i : i + batch]) for i in range(0, units, batch)]
    if client is not None:
        runner = DaskCluster(client=client)
    results = (runner or InProcess()).map(evaluate_units, tasks, progress)
    flat = [r for chunk in results for r in chunk]
    return YieldResult(
        design.acceptance.lines(), paths, values,
        np.array([r[0] for r in flat], dtype=bool).reshape(units, -1),
        np.array([r[1] for r in flat], dtype=float).reshape(units, -1),
        np.array([r[2] for r in flat], dtype=float).reshape(units, -1),
        tuple(r[3] for r in flat), seed,
    )  # fmt: skip


def critical_line(design) -> tuple[float, float]:
    """(bearing, speed) of the acceptance whose nominal noise-free range is shortest."""
    acc = design.acceptance
    best, line = np.inf, (acc.bearings[0], acc.speeds[0])
    for b in acc.bearings:
        for v in acc.speeds:
            r = _grid_range(design, b, v)
            if r < best:
                best, line = r, (b, v)
    return line


def _grid_range(design, bearing, speed, step=0.5) -> float:
    acc, a = design.acceptance, design.analysis
    grid = np.arange(a.d_min, a.d_max + 1e-9, step)
    p = probability_of_detection(
        design.operating, design.target, design.environment, grid, bearing, speed, acc.kind,
        acc.trials, a.seed, False, sample_rate=a.sample_rate, direction=a.walk_direction,
    )  # fmt: skip
    ok = np.flatnonzero(p >= acc.level)
    return float(grid[ok[-1]]) if ok.size else 0.0


def unit_ranges(design, paths, rows, line) -> list[float]:
    """Noise-free range (0.5 m grid) of each unit at ``line`` = (bearing, speed) [m] (a
    task, like :func:`evaluate_units`)."""
    out = []
    for row in rows:
        try:
            out.append(_grid_range(with_values(design, paths, row), *line))
        except DesignError:
            out.append(math.nan)
    return out
