"""Standard-value selection: the IEC 60063 values of chosen parts that give the best yield,
or the longest worst-case range at a yield of at least a target with 95 % confidence (the
lower end of the yield's interval at or above the target).

Every candidate (a combination of series values, one per chosen part) runs on the same drawn
units (the chosen parts' own tolerances are applied around each candidate's value), in
rounds of 25, 50, 100, … units; after each round a candidate whose yield interval lies
wholly below the best candidate's (or, for the range objective, below the target) is dropped
— a sequential elimination on the Clopper–Pearson intervals — and every unit evaluated is
kept (a cache: a candidate that survives is never re-evaluated). Without any other tolerance
every unit is the same and one unit decides each candidate exactly.

References
----------
.. [1] IEC 60063:2015 (the series). Even-Dar, E., Mannor, S. and Mansour, Y., "Action
   elimination and stopping conditions for the multi-armed bandit", JMLR 7, 1079 (2006):
   elimination of arms whose upper confidence bound is below the best lower bound.
"""

from __future__ import annotations

import dataclasses
import itertools
import math
from dataclasses import dataclass

import numpy as np

from ..analysis.detection_range import detection_ranges
from ..analysis.rice import clopper_pearson
from ..errors import DesignError
from ..settings import AnalysisSettings
from .eseries import values_between
from .runners import DaskCluster, InProcess
from .tolerances import draw, expand, with_values
from .yields import evaluate_units

MAX_CANDIDATES = 2000


@dataclass(frozen=True)
class Part:
    """A part to choose: its path and the series range to search."""

    path: str
    series: str
    low: float
    high: float


@dataclass(frozen=True)
class Candidate:
    """One candidate's standing."""

    values: tuple[float, ...]
    units: int
    passed: int
    exact: bool
    dropped_after: int | None
    range_m: float

    @property
    def yield_fraction(self) -> float:
        return self.passed / self.units

    @property
    def interval(self) -> tuple[float, float]:
        if self.exact:
            return (self.yield_fraction, self.yield_fraction)
        return clopper_pearson(self.passed, self.units)


@dataclass(frozen=True)
class Choice:
    """Every candidate ranked (best first) and the objective."""

    parts: tuple[Part, ...]
    objective: str
    target_yield: float
    ranked: tuple[Candidate, ...]

    @property
    def best(self) -> Candidate | None:
        top = self.ranked[0] if self.ranked else None
        if top is None or (self.objective == "range" and top.interval[0] < self.target_yield):
            return None
        return top

    def to_dict(self) -> dict:
        return {
            "parts": [p.path for p in self.parts], "objective": self.objective,
            "target_yield": self.target_yield,
            "best": None if self.best is None else list(self.best.values),
            "candidates": [
                {"values": list(c.values), "units": c.units, "yield": c.yield_fraction,
                 "yield_95": list(c.interval), "dropped_after_units": c.dropped_after,
                 "worst_range_m": None if math.isnan(c.range_m) else c.range_m}
                for c in self.ranked
            ],
        }  # fmt: skip

    def table(self, rows: int = 12) -> str:
        head = " ".join(f"{p.path.rsplit('.', 1)[-1]:>10s}" for p in self.parts)
        out = [f"{head} {'units':>6s} {'yield':>7s} {'95 % interval':>15s} {'range m':>8s}"]
        for c in self.ranked[:rows]:
            lo, hi = c.interval
            vals = " ".join(f"{v:10.4g}" for v in c.values)
            rng = "" if math.isnan(c.range_m) else f"{c.range_m:8.2f}"
            out.append(f"{vals} {c.units:6d} {100 * c.yield_fraction:6.1f}% "
                       f"{100 * lo:6.1f}–{100 * hi:5.1f}% {rng}")  # fmt: skip
        b = self.best
        out.append(
            "best: "
            + (
                "none meets the target"
                if b is None
                else ", ".join(
                    f"{p.path} = {v:.4g}" for p, v in zip(self.parts, b.values, strict=True)
                )
            )
        )
        return "\n".join(out)  # fmt: skip


def _unit_rows(spreads, base, parts, cand, values):
    """Drawn rows with the chosen parts moved to the candidate's values."""
    rows = values.copy()
    extra = []
    for p, v in zip(parts, cand, strict=True):
        j = next((k for k, s in enumerate(spreads) if s.path == p.path), None)
        if j is None:
            extra.append(v)
            continue
        s = spreads[j]
        if s.tolerance.relative:
            rows[:, j] = v * (values[:, j] / s.nominal if s.nominal else 1.0)
        else:
            rows[:, j] = v + (values[:, j] - s.nominal)
    if extra:
        rows = np.hstack([rows, np.tile(extra, (rows.shape[0], 1))])
    return rows


def worst_case_range(design) -> float:
    """Noise-free range at every bearing and speed of the acceptance, the smallest [m]."""
    acc, a = design.acceptance, design.analysis
    s = AnalysisSettings(
        sample_rate=a.sample_rate, level=acc.level, trials=a.trials, d_min=a.d_min,
        d_max=a.d_max, step=a.step, refine=a.refine, noise=False, seed=a.seed,
    )  # fmt: skip
    cases = [(acc.kind, b, v) for b in acc.bearings for v in acc.speeds]
    found = detection_ranges(design.operating, design.target, design.environment, cases, s)
    return min(r.range for r in found)


def choose_values(design, parts, units=200, objective="yield", target_yield=0.9, seed=None,
                  runner=None, progress=None, client=None) -> Choice:  # fmt: skip
    """Search the series values of ``parts`` (sequence of :class:`Part`) for the best yield
    (``objective="yield"``) or the longest worst-case range among candidates whose yield
    interval lies at or above ``target_yield`` (``objective="range"``); ``runner`` or a
    Dask ``client`` says where the units run."""
    if design.acceptance is None:
        raise DesignError("acceptance", None, "an [acceptance] section to judge units by")
    if objective not in ("yield", "range"):
        raise DesignError("objective", objective, "'yield' or 'range'")
    parts = tuple(parts)
    if not 1 <= len(parts) <= 4:
        raise DesignError("parts", len(parts), "between 1 and 4 parts to choose")
    grids = [values_between(p.series, p.low, p.high) for p in parts]
    n_cand = math.prod(len(g) for g in grids)
    if not 1 <= n_cand <= MAX_CANDIDATES:
        raise DesignError("parts", f"{n_cand} candidates", f"1 to {MAX_CANDIDATES} candidates")
    cands = list(itertools.product(*[tuple(float(x) for x in g) for g in grids]))
    seed = design.analysis.seed if seed is None else int(seed)
    spreads = expand(design)
    exact = not [s for s in spreads if s.path not in {p.path for p in parts}]
    units = 1 if exact else units
    values = draw(spreads, units, seed)
    paths = [s.path for s in spreads] + [p.path for p in parts
                                          if p.path not in {s.path for s in spreads}]  # fmt: skip
    runner = DaskCluster(client=client) if client is not None else runner or InProcess()
    results: dict[int, list] = {k: [] for k in range(len(cands))}
    alive, dropped = set(range(len(cands))), {}
    done, size = 0, 25
    while done < units and alive:
        stop = min(units, done + size)
        order = sorted(alive)
        tasks = [(design, paths, _unit_rows(spreads, design, parts, cands[k], values)[done:stop])
                 for k in order]  # fmt: skip
        for k, res in zip(order, runner.map(evaluate_units, tasks), strict=True):
            results[k] += [bool(r[3] == "" and all(r[0])) for r in res]
        done, size = stop, 2 * size
        if progress is not None:
            progress(done / units)
        if exact or done >= units:
            break
        iv = {k: clopper_pearson(sum(results[k]), done) for k in alive}
        bar = target_yield if objective == "range" else max(lo for lo, _ in iv.values())
        for k in list(alive):
            if iv[k][1] < bar:
                alive.discard(k)
                dropped[k] = done
    out = []
    for k, cand in enumerate(cands):
        n, ok = len(results[k]), sum(results[k])
        rng = math.nan
        c = Candidate(cand, n, ok, exact, dropped.get(k), rng)
        if objective == "range" and k in alive and c.interval[0] >= target_yield:
            rng = worst_case_range(with_values(design, [p.path for p in parts], cand))
            c = dataclasses.replace(c, range_m=rng)
        out.append(c)
    if objective == "yield":
        key = lambda c: (-c.interval[0], -c.yield_fraction, -c.units, c.values)  # noqa: E731
    else:
        key = lambda c: (  # noqa: E731
            math.isnan(c.range_m),
            -(0.0 if math.isnan(c.range_m) else c.range_m),
            -c.yield_fraction,
            c.values,
        )
    return Choice(parts, objective, float(target_yield), tuple(sorted(out, key=key)))
