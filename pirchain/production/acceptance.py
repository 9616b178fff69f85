"""One built unit against the acceptance lines (:class:`pirchain.signoff.Acceptance`).

A range line is judged as detection at the required distance — P(detect) from
``acceptance.trials`` walks with seeded noise on every listed bearing and speed, in one
batch through the engine — not by a range search, so a unit costs milliseconds. Every unit
uses the same walk positions and noise seed (common random numbers), so two units differ
only by their parts. The seated line runs the minor-motion arm target, still, at
``seated_m`` on the boresight (noise-free). False triggers are the analytic (Rice) turn-on
rate with the design's draught; warm-up is the power-up settling time; supply the current
budget.

Each line gives a pass and a margin whose sign says pass (≥ 0) or fail: P − level for a
range line, peak/threshold − 1 for the seated line, log10(limit/rate) for false triggers,
(limit − value)/limit for warm-up and supply.
"""

from __future__ import annotations

import math
import warnings
from dataclasses import dataclass

import numpy as np

from ..analysis.detection_range import probability_of_detection
from ..analysis.false_triggers import DRAUGHT_SOURCE, YEAR, analytic_rate, comparator_sources
from ..analysis.power_up import power_up
from ..errors import DesignError, ValidityWarning
from ..physics.scene import Path, minor_motion_arm, walks_from_paths


@dataclass(frozen=True)
class UnitResult:
    """One unit's outcome on every line (in the order of ``Acceptance.lines()``).

    Attributes
    ----------
    passed : tuple of bool
    margins : tuple of float
        ≥ 0 passes.
    values : tuple of float
        What each line measured (P(detect), peak/threshold, false triggers per year, warm-up
        [s], supply [A]).
    error : str
        Why the unit could not be evaluated (its drawn values make no valid design), or "".
    """

    passed: tuple[bool, ...]
    margins: tuple[float, ...]
    values: tuple[float, ...]
    error: str = ""

    @property
    def ok(self) -> bool:
        """Passes every line."""
        return not self.error and all(self.passed)


def evaluate_unit(design) -> UnitResult:
    """Judge ``design`` (one unit, parts at its temperature) against ``design.acceptance``."""
    acc = design.acceptance
    if acc is None:
        raise DesignError("acceptance", None, "an [acceptance] section to judge units by")
    n_lines = len(acc.lines())
    try:
        with warnings.catch_warnings():
            warnings.simplefilter("ignore", ValidityWarning)
            values, margins = _lines(design, acc)
    except DesignError as err:
        return UnitResult((False,) * n_lines, (-math.inf,) * n_lines, (math.nan,) * n_lines,
                          str(err))  # fmt: skip
    passed = tuple(bool(m >= 0) for m in margins)
    return UnitResult(passed, tuple(margins), tuple(values))


def _lines(design, acc):
    det, env, a = design.operating, design.environment, design.analysis
    values, margins = [], []
    sources = comparator_sources(det, env, design.draught)  # once: range noise and Rice
    if acc.range_m is not None:
        b, v = np.meshgrid(acc.bearings, acc.speeds, indexing="ij")
        src = [s for s in sources if s.name != DRAUGHT_SOURCE]  # walks: as in a range search
        p = probability_of_detection(
            det, design.target, env, np.full(b.size, acc.range_m), b.ravel(), v.ravel(),
            acc.kind, acc.trials, a.seed, True, sample_rate=a.sample_rate, sources=src,
            direction=a.walk_direction,
        )  # fmt: skip
        values += [float(x) for x in p]
        margins += [float(x) - acc.level for x in p]
    if acc.seated_m is not None:
        walks = walks_from_paths([Path(((acc.seated_m, 0.0),), 1.0)], 8.0, a.sample_rate)
        peak = float(det.outcomes(minor_motion_arm(), env, walks).peak[0])
        values.append(peak)
        margins.append(peak - 1.0)
    if acc.false_triggers_per_year is not None:
        rate = analytic_rate(det, env, design.draught, sources=sources).alarm_rate * YEAR
        values.append(rate)
        margins.append(math.log10(acc.false_triggers_per_year / max(rate, 1e-300)))
    if acc.warm_up_s is not None:
        t = power_up(det, max(a.settle_duration, 2 * acc.warm_up_s), a.settle_sample_rate).settling
        t = math.inf if not math.isfinite(t) else t
        values.append(t)
        margins.append((acc.warm_up_s - t) / acc.warm_up_s)
    if acc.supply_a is not None:
        i = det.supply_budget().total
        values.append(i)
        margins.append((acc.supply_a - i) / acc.supply_a)
    return values, margins
