"""Coverage maps: detection probability on a floor grid (top view) and beams against height
and distance (side view).

Top view: for every cell a standard walk (tangential or radial to the detector, by default
twice the cell long, at the protocol speed) passes through the cell at ``trials`` random
positions inside it; the share that turns the output on is the cell's probability. Walks run
in chunks, so memory stays bounded however many cells there are.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

from ..errors import DesignError, check_positive, warnings_once
from ..settings import AnalysisSettings, check_work
from .false_triggers import comparator_sources
from .walk_tests import WalkSet, detect, walk_heading


@dataclass(frozen=True)
class CoverageMap:
    """Detection probability per floor cell.

    Attributes
    ----------
    x, y : numpy.ndarray
        Cell centres [m] (x along the boresight).
    probability : numpy.ndarray, shape (len(y), len(x))
        P(detect) of the standard walk through each cell; cells behind a wall unit are 0.
    kind : str
    speed : float
    walks : int
        Number of walks simulated.
    """

    x: np.ndarray
    y: np.ndarray
    probability: np.ndarray
    kind: str
    speed: float
    walks: int

    def diameter(self, level: float) -> float:
        """Coverage diameter [m] by :data:`COVERAGE_DIAMETER` (cells whose centre is within
        half a cell of the point below the detector do not bound it)."""
        gx, gy = np.meshgrid(self.x, self.y)
        r = np.hypot(gx, gy)
        cell = float(np.min(np.diff(self.x))) if self.x.size > 1 else 0.0
        missed = r[self.probability < level]
        if missed.size == 0:
            return 2.0 * float(np.max(r))
        return 2.0 * max(float(np.min(missed)) - 0.5 * cell, 0.0)


#: The one definition of a coverage diameter, used by the range table and the map alike.
COVERAGE_DIAMETER = (
    "twice the largest radius around the point below the detector within which every place "
    "is detected (P(detect) at least the level)"
)


def diameter_from_ranges(results) -> float | None:
    """Coverage diameter [m] by :data:`COVERAGE_DIAMETER` from range results on several
    bearings of one walk kind: on each bearing the covered radius is the range, or the start
    of the first gap if there is one; the diameter is twice the smallest over the bearings.
    None when there are fewer than three bearings (too few to bound a circle)."""
    rs = list(results)
    if len({r.bearing_deg for r in rs}) < 3:
        return None
    radius = min((r.gaps[0][0] if r.gaps else r.range) for r in rs)
    return 2.0 * float(radius)


@warnings_once()
def top_view(
    detector,
    target,
    env,
    kind: str = "tangential",
    settings: AnalysisSettings | None = None,
    y_max: float | None = None,
    chunk: int = 256,
    walk_length: float | None = None,
    progress=None,
) -> CoverageMap:
    """Top-view coverage map: P(detect) of a standard walk through every floor cell.

    Parameters
    ----------
    detector : Detector
        The design; a wall unit's map covers the half-plane in front of it, a ceiling
        unit's the whole square.
    target : Target
        Who walks.
    env : Environment
        The room.
    kind : {"tangential", "radial"}
        Each cell's walk crosses the line of sight to the cell, or runs along it.
    settings : AnalysisSettings, optional
        ``coverage_cell``, ``coverage_x_max``, ``coverage_trials``, ``coverage_speed``,
        ``seed``, ``noise`` and ``sample_rate`` are used; default
        :class:`AnalysisSettings()` (the NEMA WD 7-2011 walk at 1.22 m/s).
    y_max : float, optional
        Half-extent across the boresight [m]; default ``settings.coverage_x_max``.
    chunk : int
        Walks per batch (memory bound).
    walk_length : float, optional
        Length of each walk [m]; default two cells.
    progress : callable, optional
        Called with the fraction done.

    Returns
    -------
    CoverageMap
        Cell centres and P(detect) per cell.

    Notes
    -----
    Each cell gets ``settings.coverage_trials`` walks through random points inside it,
    run through the whole chain with seeded noise at the comparator input when
    ``settings.noise``; the cell's probability is the share that turns the output on.
    """
    s = AnalysisSettings() if settings is None else settings
    if kind not in ("tangential", "radial"):
        raise DesignError("coverage.kind", kind, "'tangential' or 'radial'")
    cell, x_max, trials = s.coverage_cell, s.coverage_x_max, s.coverage_trials
    y_max = x_max if y_max is None else check_positive("coverage.y_max", y_max, "m")
    wall = detector.mount.kind == "wall"
    x = np.arange(cell / 2 if wall else -x_max + cell / 2, x_max, cell)
    y = np.arange(-y_max + cell / 2, y_max, cell)
    gx, gy = np.meshgrid(x, y)
    cx, cy = gx.ravel(), gy.ravel()
    rng = np.random.default_rng(s.seed)
    cx = np.repeat(cx, trials) + rng.uniform(-0.5, 0.5, cx.size * trials) * cell
    cy = np.repeat(cy, trials) + rng.uniform(-0.5, 0.5, cy.size * trials) * cell
    rho = np.maximum(np.hypot(cx, cy), 0.05)
    los = np.stack([cx / rho, cy / rho], axis=1)
    head = walk_heading(los, kind)
    walks = WalkSet(
        np.stack([cx, cy], axis=1),
        head,
        np.full(cx.size, float(s.coverage_speed)),
        2.0 * cell if walk_length is None else float(walk_length),
    )
    check_work(
        "analysis.coverage_cell × coverage_trials × sample_rate",
        cx.size * (walks.length / s.coverage_speed + 2.5) * s.sample_rate,
    )
    src = comparator_sources(detector, env) if s.noise else None
    hit, _ = detect(
        detector, target, env, walks, s.sample_rate, src, s.seed, chunk, progress=progress
    )
    prob = hit.reshape(gy.size, trials).mean(axis=1).reshape(gy.shape)
    return CoverageMap(x, y, prob, kind, float(s.coverage_speed), int(cx.size))


@dataclass(frozen=True)
class SideView:
    """Beams in the vertical plane of one bearing.

    Attributes
    ----------
    bearing_deg : float
    lens_height : float
        [m].
    el_lo, el_hi : numpy.ndarray
        Lower and upper edge elevations of each beam that contains the bearing [rad].
    polarity : numpy.ndarray of int
        Polarity of the element each beam images.
    """

    bearing_deg: float
    lens_height: float
    el_lo: np.ndarray
    el_hi: np.ndarray
    polarity: np.ndarray

    def heights(self, distance):
        """Beam edge heights above the floor at horizontal distances [m], (beams, distances)."""
        d = np.asarray(distance, dtype=float)
        return (
            self.lens_height + np.tan(self.el_lo)[:, None] * d,
            self.lens_height + np.tan(self.el_hi)[:, None] * d,
        )

    def lowest_height(self, distance) -> np.ndarray:
        """Height of the lowest beam edge above the floor at each distance [m] (inf: none)."""
        lo, hi = self.heights(distance)
        visible = hi > 0
        return np.where(visible, np.clip(lo, 0, None), np.inf).min(axis=0, initial=np.inf)


def side_view(detector, bearing_deg: float = 0.0, tolerance_deg: float | None = None) -> SideView:
    """Beams whose azimuth extent contains ``bearing_deg`` (± a tolerance)."""
    beams = detector.beams()
    b = math.radians(bearing_deg)
    d = np.abs(np.mod(beams.azimuth - b + math.pi, 2 * math.pi) - math.pi)
    tol = 0.0 if tolerance_deg is None else math.radians(tolerance_deg)
    k = d <= beams.half_azimuth + tol
    pol = np.array([e.polarity for e in detector.sensor.elements])[beams.element[k]]
    return SideView(
        float(bearing_deg),
        detector.mount.height,
        beams.elevation[k] - beams.half_elevation[k],
        beams.elevation[k] + beams.half_elevation[k],
        pol,
    )
