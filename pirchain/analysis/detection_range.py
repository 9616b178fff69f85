"""Detection range per bearing: the farthest distance where P(detect) ≥ a level.

P(detect) at a distance is the share of ``trials`` test walks, at random positions relative
to the beams and with seeded noise, that turn the output on. The range is found on a
distance grid, then refined by bisection between the farthest grid point that passes and
the next; distances below the range that fail (walks too fast close in, too slow far out,
or holes between zones) are reported as gaps rather than smoothed over.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from ..errors import check_positive, check_range
from .false_triggers import comparator_sources
from .walk_tests import beam_pitch, detect, make_walks


@dataclass(frozen=True)
class RangeResult:
    """Detection range on one bearing for one kind of walk and speed.

    Attributes
    ----------
    bearing_deg, speed : float
    kind : str
    level : float
        Required P(detect).
    distances : numpy.ndarray
        Grid [m].
    probability, probability_noise_free : numpy.ndarray
        P(detect) on the grid, with and without noise.
    range, range_noise_free : float
        Farthest distance meeting the level [m]; 0 if none.
    gaps : tuple of (float, float)
        Grid intervals closer than the range that fail the level [m].
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
):
    """P(detect) for each broadcast combination of distance, bearing and speed.

    ``jitter`` is the angular spread of start positions [rad]; default one beam pitch.
    """
    d, b, v = np.broadcast_arrays(
        np.atleast_1d(np.asarray(distances, float)),
        np.asarray(bearing_deg, float),
        np.asarray(speed, float),
    )
    jit = beam_pitch(detector) if jitter is None else jitter
    walks = make_walks(d, b, v, kind, length, trials, jit, seed)
    src = None
    if noise:
        src = comparator_sources(detector, env) if sources is None else sources
    hit, _ = detect(detector, target, env, walks, sample_rate, src, seed)
    return hit.reshape(d.size, trials).mean(axis=1).reshape(d.shape)


def _farthest(dist, prob, level):
    ok = np.flatnonzero(prob >= level)
    return int(ok[-1]) if ok.size else -1


def detection_range(
    detector,
    target,
    env,
    bearing_deg=0.0,
    speed=1.0,
    kind="tangential",
    level=0.9,
    d_min=0.5,
    d_max=30.0,
    step=1.0,
    trials=16,
    seed=0,
    noise=True,
    refine=4,
    sample_rate=100.0,
    jitter=None,
) -> RangeResult:
    """Range on one bearing (grid + bisection), with the noise-free range beside it."""
    check_range("level", level, 0.01, 1.0)
    check_positive("step", step, "m")
    grid = np.arange(d_min, d_max + 1e-9, step)
    src = comparator_sources(detector, env) if noise else None
    kw = dict(
        bearing_deg=bearing_deg,
        speed=speed,
        kind=kind,
        trials=trials,
        seed=seed,
        sample_rate=sample_rate,
        jitter=jitter,
    )
    p_free = probability_of_detection(detector, target, env, grid, noise=False, **kw)
    p = (
        probability_of_detection(detector, target, env, grid, noise=noise, sources=src, **kw)
        if noise
        else p_free
    )

    def refined(prob, use_noise):
        k = _farthest(grid, prob, level)
        if k < 0:
            return 0.0
        if k == grid.size - 1:
            return float(grid[-1])
        a, b = grid[k], grid[k + 1]
        for _ in range(refine):
            mid = 0.5 * (a + b)
            pm = probability_of_detection(
                detector, target, env, [mid], noise=use_noise, sources=src, **kw
            )[0]
            a, b = (mid, b) if pm >= level else (a, mid)
        return float(a)

    rng = refined(p, noise)
    rng_free = refined(p_free, False) if noise else rng
    k = _farthest(grid, p, level)
    gaps, start = [], None
    for i in range(k + 1):
        if p[i] < level and start is None:
            start = grid[i]
        if p[i] >= level and start is not None:
            gaps.append((float(start), float(grid[i - 1])))
            start = None
    return RangeResult(
        float(bearing_deg),
        kind,
        float(speed),
        float(level),
        grid,
        p,
        p_free,
        rng,
        rng_free,
        tuple(gaps),
    )


def range_by_bearing(detector, target, env, bearings_deg, **kw) -> list[RangeResult]:
    """:func:`detection_range` on every bearing."""
    return [detection_range(detector, target, env, float(b), **kw) for b in bearings_deg]
