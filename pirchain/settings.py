"""Analysis settings: the one object whose fields every analysis reads.

Owns the defaults and the validation limits of every analysis setting; the design file's
``[analysis]`` section is read into it key for key (its schema is derived from these
fields), the command line and the report pass it whole to each analysis, and the Python
functions of :mod:`pirchain.analysis` take it as their ``settings`` argument. May import
only :mod:`pirchain.errors`.
"""

from __future__ import annotations

from dataclasses import dataclass

from .errors import DesignError, check_range, check_real

# speeds the walking-person model stands for [m/s]: the intrusion standards' slow walk
# (0.1 m/s, EN 50131-2-2, from memory) down to half that, up to a sprint (common practice);
# outside it the gait and the sampled optics are no longer a person walking
WALK_SPEED_RANGE = (0.05, 10.0)
MC_HOURS = (0.01, 1e5)  # simulated hours of a Monte Carlo: at least 36 s, at most ~11 years
# samples one analysis may run through the chain: about 10 min at the measured 3e7 samples/s
# (docs/performance.md); beyond, the run is refused before it starts, naming the key
MAX_WORK = 2e10
_MAX_GRID = 20_000  # distances, cells or sweep values in one analysis (memory and time bound)


def _count(field: str, value, low: int, high: int) -> int:
    if isinstance(value, bool) or not isinstance(value, int):
        raise DesignError(field, value, "an integer")
    if not low <= value <= high:
        raise DesignError(field, value, f"an integer between {low} and {high}")
    return value


#: Walking directions of tangential test walks: both ways in equal numbers, or one way only
#: ("ccw": counter-clockwise seen from above, towards larger bearings; "cw": the other way).
WALK_DIRECTIONS = ("both", "ccw", "cw")


@dataclass(frozen=True)
class AnalysisSettings:
    """How the analyses run: sampling, trial counts, grids, seeds and budgets.

    Attributes
    ----------
    sample_rate : float
        Analog sample rate of every walk, range and coverage simulation and of the
        false-trigger Monte Carlo [Hz].
    level : float
        Required probability of detection for a range.
    trials : int
        Walks per distance of a range search (positions spread evenly over one beam pitch).
    d_min, d_max, step : float
        Distance grid of a range search [m].
    refine : int
        Bisection steps between the farthest passing grid distance and the next.
    noise : bool
        Seeded noise at the comparator input in range and coverage walks.
    bearings : tuple of float
        Bearings of the range table [°]; a sweep uses the middle one.
    seed : int
        Seed of every random draw (walk positions, noise).
    walk_distance : float
        Distance of the sample walk of the report and of an exported netlist [m].
    sensitivity_path : str
        Dotted path of the sensitivity setting swept by the report and ``sweep``.
    sensitivity_values : tuple of float or None
        Values of that sweep (None: a default set).
    false_trigger_budget : float
        False triggers per year allowed when choosing the sensitivity.
    coverage_cell, coverage_x_max : float
        Cell size and half-extent of the top-view coverage map [m].
    coverage_trials : int
        Walks per coverage cell.
    coverage_speed : float
        Walking speed of the coverage map [m s⁻¹] (1.22 m/s: NEMA WD 7-2011).
    walk_direction : {"both", "ccw", "cw"}
        Which way the tangential walks of ranges and coverage maps go: both ways in equal
        numbers (default; the set of walks is then mirror-symmetric), or only
        counter-clockwise seen from above (towards larger bearings), or only clockwise.
    settle_duration : float
        Length of the power-up simulation [s].
    settle_sample_rate : float
        Sample rate of the power-up simulation [Hz] (its signals are slow).
    """

    sample_rate: float = 100.0
    level: float = 0.9
    trials: int = 4
    d_min: float = 0.5
    d_max: float = 30.0
    step: float = 1.5
    refine: int = 4
    noise: bool = True
    bearings: tuple[float, ...] = (0.0,)
    seed: int = 0
    walk_distance: float = 8.0
    sensitivity_path: str = "detector.comparator.window.r_middle"
    sensitivity_values: tuple[float, ...] | None = None
    false_trigger_budget: float = 1.0
    coverage_cell: float = 1.0
    coverage_x_max: float = 16.0
    coverage_trials: int = 2
    coverage_speed: float = 1.22
    walk_direction: str = "both"
    settle_duration: float = 120.0
    settle_sample_rate: float = 50.0

    def __post_init__(self):
        f = "analysis."
        check_range(f + "sample_rate", self.sample_rate, 1.0, 1e4, "Hz")
        check_range(f + "level", self.level, 0.01, 1.0)
        _count(f + "trials", self.trials, 1, 100_000)
        check_range(f + "d_min", self.d_min, 0.05, 1000.0, "m")
        check_range(f + "d_max", self.d_max, 0.05, 1000.0, "m")
        if self.d_max <= self.d_min:
            raise DesignError(f + "d_max", self.d_max, f"a distance above d_min = {self.d_min} m")
        check_range(f + "step", self.step, 1e-3, 1000.0, "m")
        if (self.d_max - self.d_min) / self.step > _MAX_GRID:
            raise DesignError(
                f + "step", self.step, f"at most {_MAX_GRID} grid distances from d_min to d_max"
            )
        _count(f + "refine", self.refine, 0, 40)
        if not isinstance(self.noise, bool):
            raise DesignError(f + "noise", self.noise, "true or false")
        object.__setattr__(self, "bearings", _numbers(f + "bearings", self.bearings, -360, 360))
        if not self.bearings:
            raise DesignError(f + "bearings", self.bearings, "at least one bearing")
        _count(f + "seed", self.seed, 0, 2**63 - 1)
        check_range(f + "walk_distance", self.walk_distance, 0.05, 1000.0, "m")
        if not isinstance(self.sensitivity_path, str) or not self.sensitivity_path:
            raise DesignError(f + "sensitivity_path", self.sensitivity_path, "a dotted path")
        if self.sensitivity_values is not None:
            vals = _numbers(f + "sensitivity_values", self.sensitivity_values, -1e300, 1e300)
            if not vals:
                raise DesignError(f + "sensitivity_values", vals, "at least one value")
            object.__setattr__(self, "sensitivity_values", vals)
        check_range(f + "false_trigger_budget", self.false_trigger_budget, 1e-12, 1e12, "/year")
        check_range(f + "coverage_cell", self.coverage_cell, 0.01, 100.0, "m")
        check_range(f + "coverage_x_max", self.coverage_x_max, 0.05, 1000.0, "m")
        if (2 * self.coverage_x_max / self.coverage_cell) ** 2 > 1e6:
            raise DesignError(
                f + "coverage_cell", self.coverage_cell, "at most a million coverage cells"
            )
        _count(f + "coverage_trials", self.coverage_trials, 1, 10_000)
        check_range(f + "coverage_speed", self.coverage_speed, *WALK_SPEED_RANGE, "m/s")
        if not isinstance(self.walk_direction, str) or self.walk_direction not in WALK_DIRECTIONS:
            raise DesignError(
                f + "walk_direction", self.walk_direction, "one of " + ", ".join(WALK_DIRECTIONS)
            )
        check_range(f + "settle_duration", self.settle_duration, 0.1, 1e5, "s")
        check_range(f + "settle_sample_rate", self.settle_sample_rate, 1.0, 1e4, "Hz")

    @property
    def sweep_bearing(self) -> float:
        """Bearing of the range walks of a sweep: the middle listed bearing [°]."""
        return self.bearings[len(self.bearings) // 2]


def check_work(field: str, samples: float) -> float:
    """Refuse an analysis that would push more than :data:`MAX_WORK` samples through the chain
    (``field`` names the key or option that set its size)."""
    if not samples <= MAX_WORK:  # also NaN
        raise DesignError(
            field,
            f"{samples:.3g} samples of work",
            f"an analysis of at most {MAX_WORK:.0e} samples (about 10 min): fewer trials, a "
            "coarser step or a lower sample rate",
        )
    return samples


def _numbers(field: str, values, low: float, high: float) -> tuple[float, ...]:
    if isinstance(values, (str, bytes)) or not hasattr(values, "__iter__"):
        raise DesignError(field, values, "a list of numbers")
    out = tuple(check_real(f"{field}[{i}]", v) for i, v in enumerate(values))
    if len(out) > _MAX_GRID:
        raise DesignError(field, len(out), f"at most {_MAX_GRID} values")
    for i, v in enumerate(out):
        if not low <= v <= high:
            raise DesignError(f"{field}[{i}]", v, f"a value between {low:g} and {high:g}")
    return out
