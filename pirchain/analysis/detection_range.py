"""Detection range per bearing: the farthest distance where P(detect) ≥ a level.

P(detect) at a distance is the share of ``trials`` test walks, at positions spread evenly
over one beam pitch (tangential walks both ways in turn) and with seeded noise, that turn
the output on. The range is found on a distance grid, then refined by bisection between the
farthest grid point that passes and the next; distances below the range that fail (walks
too fast close in, too slow far out, or holes between zones) are reported as gaps rather
than smoothed over.
"""

from __future__ import annotations

import dataclasses
import math
import warnings
from dataclasses import dataclass

import numpy as np

from ..errors import ValidityWarning, check_range, warnings_once
from ..settings import WALK_SPEED_RANGE, AnalysisSettings, check_work
from .false_triggers import comparator_sources
from .rice import clopper_pearson
from .walk_tests import WalkSet, beam_pitch, detect, make_walks


@dataclass(frozen=True)
class RangeResult:
    """Detection range on one bearing for one kind of walk and speed.

    Attributes
    ----------
    bearing_deg : float
        [°].
    kind : str
        "tangential" or "radial".
    speed : float
        [m s⁻¹].
    level : float
        Required P(detect).
    distances : numpy.ndarray
        Grid [m].
    probability, probability_noise_free : numpy.ndarray
        P(detect) on the grid, with and without noise.
    range : float
        Farthest distance meeting the level [m]; 0 if none.
    range_noise_free : float
        The same without noise at the comparator. The walk positions are spread evenly over
        one beam period (not drawn at random), so it depends on the design alone, not on
        the seed.
    gaps : tuple of (float, float)
        Distances closer than the range that fail the level [m]: each gap spans the grid
        cells (± step/2) of its failing grid distances, so it is at least one step wide.
    sample_rate : float
        Analog sample rate of the walks [Hz].
    trials : int
        Walks per distance.
    walk_direction : str
        Which way the tangential walks went ("both", "ccw", "cw"; see
        :data:`pirchain.settings.WALK_DIRECTIONS`).
    range_interval : tuple of float or None
        95 % interval of ``range`` [m] (:func:`range_interval`): from the binomial spread of
        P(detect) at the distances evaluated; None without noise. Its low end is 0 when the
        trial count cannot confirm the level (:func:`trials_to_resolve`).
    probability_by_direction : dict of str to numpy.ndarray
        P(detect) on the grid of the walks of each direction ("ccw", "cw"; "radial" for
        radial walks), noise as in ``probability``: at one bearing of a mirror-symmetric
        design the two differ only through the chain's own time order (the high-pass
        sections and the pulse rules see a walk and its time reverse differently).
    """

    bearing_deg: float
    kind: str
    speed: float
    level: float
    distances: np.ndarray
    probability: np.ndarray
    probability_noise_free: np.ndarray
    range: float
    range_noise_free: float
    gaps: tuple[tuple[float, float], ...]
    sample_rate: float
    trials: int
    walk_direction: str = "both"
    probability_by_direction: dict = dataclasses.field(default_factory=dict)
    range_interval: tuple[float, float] | None = None


#: Names of the walking directions of :attr:`WalkSet.direction` in P(detect) by direction.
DIRECTION_NAMES = {1: "ccw", -1: "cw", 0: "radial"}

#: Confidence of a range's interval (two-sided, Clopper–Pearson at each evaluated distance).
RANGE_CONFIDENCE = 0.95


def trials_to_resolve(level: float, confidence: float = RANGE_CONFIDENCE) -> int | None:
    """Fewest walks per distance whose all-detected outcome puts the exact lower confidence
    bound of P(detect) at or above ``level``: n ≥ ln((1 − confidence)/2) / ln(level)
    (Clopper–Pearson with k = n); None for a level of 1, which no finite count confirms."""
    if level >= 1.0:
        return None
    return math.ceil(math.log((1.0 - confidence) / 2.0) / math.log(level) - 1e-12)


def warn_unresolved(trials: int, level: float) -> None:
    """Say (as a :class:`ValidityWarning`) when ``trials`` walks cannot confirm ``level``."""
    need = trials_to_resolve(level)
    if need is not None and trials >= need:
        return
    low = clopper_pearson(trials, trials, RANGE_CONFIDENCE, "analysis.trials")[0]
    fix = "no finite number does" if need is None else f"at least {need} do"
    warnings.warn(
        ValidityWarning(
            f"analysis.trials = {trials} cannot resolve P(detect) >= {level:g}: even all "
            f"{trials} walks detected leave its 95 % lower bound at {low:.2f}, so the "
            f"range's interval starts at 0 ({fix})"
        ),
        stacklevel=3,
    )


def range_interval(seen, trials: int, level: float, found: float, d_max: float):
    """95 % interval of a range from the distances evaluated and their P(detect).

    The true range lies beyond the farthest distance at or below ``found`` whose P(detect)
    is confidently at least ``level`` (the Clopper–Pearson lower bound of its k of ``trials``
    at or above the level; 0 if none is), and before the nearest distance beyond ``found``
    whose P(detect) is confidently below it (upper bound under the level; ``d_max`` if none).

    Parameters
    ----------
    seen : sequence of (float, float)
        Distances [m] and the P(detect) found there (grid and bisection).
    trials : int
    level : float
    found : float
        The range [m].
    d_max : float
        End of the search [m].

    Returns
    -------
    tuple of float
        (low, high) [m].
    """
    low, high = 0.0, float(d_max)
    for d, q in seen:
        lo, hi = clopper_pearson(round(q * trials), trials, RANGE_CONFIDENCE, "analysis.trials")
        if d <= found + 1e-12 and lo >= level:
            low = max(low, d)
        if d > found + 1e-12 and hi < level:
            high = min(high, d)
    return low, high


def probability_of_detection(
    detector,
    target,
    env,
    distances,
    bearing_deg=0.0,
    speed=1.0,
    kind="tangential",
    trials=16,
    seed=0,
    noise=True,
    length=3.0,
    sample_rate=100.0,
    sources=None,
    jitter=None,
    direction="both",
    by_direction=False,
):
    """P(detect) for each broadcast combination of distance, bearing and speed.

    Parameters
    ----------
    detector : Detector
    target : Target
    env : Environment
    distances : array_like
        [m].
    bearing_deg, speed : array_like
        [°], [m s⁻¹]; broadcast with ``distances``.
    kind : {"tangential", "radial"}
    trials : int
        Walks per combination, at positions spread evenly over one beam pitch.
    seed : int
        Seed of the positions and the noise.
    noise : bool
        Add seeded noise (every source of the budget) at the comparator input.
    length : float
        Walk length [m].
    sample_rate : float
        [Hz].
    sources : list of NoiseSource, optional
        The noise sources (default: :func:`comparator_sources`).
    jitter : float, optional
        Angular spread of start positions [rad]; default one beam pitch.
    direction : {"both", "ccw", "cw"}
        Which way tangential walks go (:func:`pirchain.analysis.walk_tests.trial_directions`).
    by_direction : bool
        Also return P(detect) of each walking direction separately.

    Returns
    -------
    numpy.ndarray
        P(detect), the broadcast shape.
    dict of str to numpy.ndarray
        Only with ``by_direction``: P(detect) of the walks of each direction ("ccw", "cw",
        or "radial"), the broadcast shape.
    """
    d, b, v = np.broadcast_arrays(
        np.atleast_1d(np.asarray(distances, float)),
        np.asarray(bearing_deg, float),
        np.asarray(speed, float),
    )
    jit = beam_pitch(detector) if jitter is None else jitter
    walks = make_walks(d, b, v, kind, length, trials, jit, direction)
    src = None
    if noise:
        src = comparator_sources(detector, env) if sources is None else sources
    # common random numbers: trial k meets the same noise at every distance and in every
    # call with this seed, so a grid, its bisection and a re-evaluation agree
    hit, _ = detect(detector, target, env, walks, sample_rate, src, seed, common=trials)
    hit = hit.reshape(d.size, trials)
    p = hit.mean(axis=1).reshape(d.shape)
    if not by_direction:
        return p
    sense = walks.direction[:trials]
    split = {DIRECTION_NAMES[int(w)]: hit[:, sense == w].mean(axis=1).reshape(d.shape)
             for w in np.unique(sense)}  # fmt: skip
    return p, split


def _farthest(prob, level):
    ok = np.flatnonzero(prob >= level)
    return int(ok[-1]) if ok.size else -1


@warnings_once()
def detection_range(
    detector,
    target,
    env,
    bearing_deg: float = 0.0,
    speed: float = 1.0,
    kind: str = "tangential",
    settings: AnalysisSettings | None = None,
    jitter: float | None = None,
    sources=None,
) -> RangeResult:
    """Detection range on one bearing (grid + bisection), with the noise-free range beside it.

    Parameters
    ----------
    detector : Detector
        The design.
    target : Target
        Who walks.
    env : Environment
        The room (its temperature sets the target's contrast and the noise).
    bearing_deg : float
        Bearing of the walks [°] (0: the boresight).
    speed : float
        Walking speed [m s⁻¹].
    kind : {"tangential", "radial"}
        Walks across the line of sight, or along it towards the detector.
    settings : AnalysisSettings, optional
        ``level``, ``d_min``, ``d_max``, ``step``, ``refine``, ``trials``, ``seed``,
        ``noise`` and ``sample_rate`` are used; default :class:`AnalysisSettings()`.
    jitter : float, optional
        Angular spread of the walk positions [rad]; default one beam pitch.
    sources : list of NoiseSource, optional
        The noise at the comparator input (default :func:`comparator_sources` of the
        detector in ``env``); pass them when several ranges share one design.

    Returns
    -------
    RangeResult
        The range at P(detect) ≥ ``settings.level`` [m], the noise-free range, the grid
        probabilities and the gaps.

    Notes
    -----
    P(detect) at each distance is estimated from ``settings.trials`` walks 3 m long at
    positions spread evenly over one beam-pattern period, tangential ones walked both ways in
    turn unless ``settings.walk_direction`` says one way
    (:func:`pirchain.analysis.walk_tests.make_walks`), run through the whole chain with
    seeded noise at the comparator input. The positions are fixed (not drawn), so the
    noise-free range depends on the design and the settings alone, never on the seed, and a
    mirror-symmetric design gives the same noise-free range at ±bearing. The range is the
    farthest grid distance that meets the level, refined by ``settings.refine`` bisection
    steps towards the next grid distance. The noise uses common random numbers: trial k
    meets the same noise draw at every distance of the grid and the bisection, so P(detect)
    re-evaluated at the reported range with the same seed is the one the search saw (at
    least the level), and the range's 95 % interval comes from the binomial spread of
    P(detect) at the distances evaluated (:func:`range_interval`); a trial count too small
    to confirm the level is said once.
    """
    return detection_ranges(
        detector, target, env, [(kind, bearing_deg, speed)], settings, jitter, sources
    )[0]


def _case_probabilities(detector, target, env, cases, distances, s, jitter, src, cache):
    """P(detect) of every case (kind, bearing, speed) at its own distances, all walks of one
    speed through one :func:`detect` call: (cases, distances) and, per case, the P(detect) of
    each walking direction. Trial k meets the noise of stream k (common random numbers), so
    a case's result does not depend on which other cases share the call."""
    n_case, n_dist = distances.shape
    hits = np.zeros((n_case, n_dist, s.trials))
    sense = {}
    jit = beam_pitch(detector) if jitter is None else jitter
    for v in dict.fromkeys(c[2] for c in cases):  # one call per speed: one walk duration
        parts, rows = [], []
        for kind in dict.fromkeys(c[0] for c in cases if c[2] == v):
            idx = [i for i, c in enumerate(cases) if c[0] == kind and c[2] == v]
            b = np.array([cases[i][1] for i in idx], float)[:, None]
            parts.append(make_walks(distances[idx], b, v, kind, 3.0, s.trials, jit,
                                    s.walk_direction))  # fmt: skip
            rows += idx
            sense[kind] = parts[-1].direction[: s.trials]
        walks = WalkSet(
            *(np.concatenate([getattr(w, f) for w in parts]) for f in ("centre", "heading",
              "speed")), parts[0].length, np.concatenate([w.direction for w in parts]),
        )  # fmt: skip
        hit, _ = detect(detector, target, env, walks, s.sample_rate, src, s.seed,
                        common=s.trials, noise_cache=cache)  # fmt: skip
        hits[rows] = hit.reshape(len(rows), n_dist, s.trials)
    split = []
    for i, c in enumerate(cases):
        w = sense[c[0]]
        split.append(
            {DIRECTION_NAMES[int(x)]: hits[i][:, w == x].mean(axis=1) for x in np.unique(w)}
        )
    return hits.mean(axis=2), split


@warnings_once()
def detection_ranges(
    detector, target, env, cases, settings=None, jitter=None, sources=None, progress=None
):
    """:func:`detection_range` of several cases of one design, searched together.

    Every case's grid is walked in one batch and each bisection step of every case in one
    more, so a table of bearings costs a few large batches instead of many small ones
    (both cores busy, the noise drawn once per sample rate). With common random numbers
    every result is the one :func:`detection_range` gives for its case alone.

    Parameters
    ----------
    detector, target, env
        As for :func:`detection_range`.
    cases : sequence of (str, float, float)
        Kind of walk ("tangential" or "radial"), bearing [°] and speed [m s⁻¹] of each range.
    settings, jitter, sources
        As for :func:`detection_range`.
    progress : callable, optional
        Called with the fraction of the search's batches done.

    Returns
    -------
    list of RangeResult
        In the order of ``cases``.
    """
    s = AnalysisSettings() if settings is None else settings
    cases = [(str(k), float(b), float(v)) for k, b, v in cases]
    grid = np.arange(s.d_min, s.d_max + 1e-9, s.step)
    for _, _, speed in cases:
        check_range("speed", speed, *WALK_SPEED_RANGE, "m/s (a person's speed)")
        walk_samples = (3.0 / speed + 2.5) * s.sample_rate  # 3 m walks and their tail
        check_work(
            "analysis.trials × distances × sample_rate",
            grid.size * s.trials * (2 if s.noise else 1) * walk_samples
            * (1 + s.refine / grid.size),
        )  # fmt: skip
    src = None
    if s.noise:
        src = comparator_sources(detector, env) if sources is None else sources
    cache = {}  # the noise draws, shared by every call of this search
    batches, done = (2 if s.noise else 1) * (1 + s.refine), [0]

    def evaluate(dist, use_noise):
        done[0] += 1
        if progress is not None:
            progress(min(done[0] / batches, 1.0))
        return _case_probabilities(
            detector, target, env, [cases[i] for i in dist], np.array(list(dist.values())),
            s, jitter, src if use_noise else None, cache,
        )  # fmt: skip

    every = range(len(cases))
    p_free, split = evaluate({i: grid for i in every}, False)
    p = p_free
    if s.noise:
        p, split = evaluate({i: grid for i in every}, True)

    def refined(prob, use_noise, seen):
        """Bisection towards the next grid distance, every unfinished case at each step."""
        k = np.array([_farthest(q, s.level) for q in prob])
        found = np.where(k < 0, 0.0, grid[-1])
        todo = np.flatnonzero((k >= 0) & (k < grid.size - 1))
        a, b = grid[k[todo]], grid[k[todo] + 1]
        for _ in range(s.refine):
            if not todo.size:
                break
            mid = 0.5 * (a + b)
            pm = evaluate({int(i): [m] for i, m in zip(todo, mid, strict=True)}, use_noise)[0]
            for j, i in enumerate(todo):
                seen[i].append((float(mid[j]), float(pm[j, 0])))
            ok = pm[:, 0] >= s.level
            a, b = np.where(ok, mid, a), np.where(ok, b, mid)
        found[todo] = a
        return found

    seen = [[(float(d), float(q)) for d, q in zip(grid, row, strict=True)] for row in p]
    rng = refined(p, s.noise, seen)
    rng_free = refined(p_free, False, [[] for _ in every]) if s.noise else rng
    out = []
    for i, (kind, bearing, speed) in enumerate(cases):
        if s.noise:
            warn_unresolved(s.trials, s.level)  # once per range: the count says how many
        interval = range_interval(seen[i], s.trials, s.level, rng[i], s.d_max) if s.noise else None
        out.append(RangeResult(
            bearing, kind, speed, float(s.level), grid, p[i], p_free[i], float(rng[i]),
            float(rng_free[i]), _gaps(grid, p[i], s), float(s.sample_rate), int(s.trials),
            s.walk_direction, split[i], interval,
        ))  # fmt: skip
    return out


def _gaps(grid, p, s):
    """Distances closer than the range that fail the level: each gap covers the grid cells
    (± step/2) of its failing distances, so it is never 0 wide."""
    k = _farthest(p, s.level)
    gaps, start = [], None
    half = 0.5 * s.step
    for i in range(k + 1):
        if p[i] < s.level and start is None:
            start = grid[i]
        if p[i] >= s.level and start is not None:
            gaps.append((max(float(start) - half, s.d_min), float(grid[i - 1]) + half))
            start = None
    return tuple(gaps)


@warnings_once()
def range_table(design, kinds=("tangential", "radial"), bearings=None, progress=None):
    """:func:`detection_range` of a design for every kind and bearing of its settings.

    Parameters
    ----------
    design : Design
        Detector, target, room, speed and settings (``settings.bearings`` by default).
    kinds : sequence of str
    bearings : sequence of float, optional
        [°]; default ``design.analysis.bearings``.
    progress : callable, optional
        Called with the fraction done.

    Returns
    -------
    list of RangeResult
        Kinds in order, bearings within each.
    """
    bearings = design.analysis.bearings if bearings is None else tuple(bearings)
    cases = [(kind, float(b), design.speed) for kind in kinds for b in bearings]
    return detection_ranges(design.operating, design.target, design.environment, cases,
                            design.analysis, progress=progress)  # fmt: skip
