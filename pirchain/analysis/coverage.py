"""Coverage maps: detection probability on a floor grid (top view) and beams against height
and distance (side view).

Top view: for every cell a standard walk (tangential or radial to the detector, by default
twice the cell long, at the protocol speed) passes through the cell at ``trials`` seeded
random positions inside it, tangential walks both ways in turn; the share that turns the
output on is the cell's probability. The rows lie symmetrically about the boresight and the
positions and directions of one side are the mirror images of the other's, so a
mirror-symmetric design gives a mirror-symmetric map (:func:`mirrored_trials`). Walks run in
chunks, so memory stays bounded however many cells there are.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

from ..errors import DesignError, check_positive, warnings_once
from ..settings import AnalysisSettings, check_work
from .false_triggers import comparator_sources
from .walk_tests import WalkSet, detect, trial_directions, walk_heading


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


def mirror_rows(y_max: float, cell: float) -> np.ndarray:
    """Row centres across the boresight [m]: as many whole cells as fit in ±``y_max``,
    placed symmetrically about the boresight (y → −y maps the rows onto each other)."""
    n = max(int(math.floor(2.0 * y_max / cell + 1e-9)), 1)
    return (np.arange(n) - 0.5 * (n - 1)) * cell


def mirrored_trials(rows: int, cols: int, trials: int, seed: int, direction: str):
    """Walk positions inside each cell and walking directions, mirror-symmetric across rows.

    The offsets (fractions of a cell, uniform in ±½, seeded) are drawn for the rows on one
    side of the boresight; the rows on the other side take the same draws mirrored (y offset
    and, with ``direction`` "both", the walking direction change sign), and in a row on the
    boresight itself trial 2m + 1 is the mirror image of trial 2m. With "both" the
    directions alternate from trial to trial and cell to cell, so a mirror-symmetric design
    gives a mirror-symmetric noise-free map for any seed.

    Returns
    -------
    ox, oy : numpy.ndarray, shape (rows, cols, trials)
        Offsets along x and y [cells].
    sense : numpy.ndarray of int8, shape (rows, cols, trials)
        +1 counter-clockwise, −1 clockwise.
    """
    rng = np.random.default_rng(seed)
    half = (rows + 1) // 2  # rows on one side, the boresight row (odd count) first
    ox = rng.uniform(-0.5, 0.5, (half, cols, trials))
    oy = rng.uniform(-0.5, 0.5, (half, cols, trials))
    k = np.arange(trials)
    if direction == "both":
        parity = k[None, None, :] + np.arange(cols)[None, :, None] + np.arange(half)[:, None, None]
        sense = np.where(parity % 2 == 0, 1, -1).astype(np.int8)
    else:
        sense = np.broadcast_to(trial_directions(trials, direction), (half, cols, trials))
    if rows % 2:  # the boresight row mirrors onto itself: trials in mirror pairs
        odd = k[k % 2 == 1]
        ox[0][:, odd] = ox[0][:, odd - 1]
        oy[0][:, odd] = -oy[0][:, odd - 1]
    j = np.arange(rows)
    canon = np.maximum(j, rows - 1 - j) - rows // 2
    lower = (j < rows - 1 - j)[:, None, None]
    flip = np.where(lower & (direction == "both"), -1, 1).astype(np.int8)
    return ox[canon], np.where(lower, -oy[canon], oy[canon]), sense[canon] * flip


def coverage_walks(detector, kind, settings, y_max=None, walk_length=None):
    """The cells and the walks of a top-view map (:func:`top_view` documents the arguments).

    Returns
    -------
    x, y : numpy.ndarray
        Cell centres [m]; the rows ``y`` are symmetric about the boresight.
    walks : WalkSet
        ``settings.coverage_trials`` walks per cell, cell by cell (rows outer), positions and
        directions by :func:`mirrored_trials`.
    """
    s = settings
    if kind not in ("tangential", "radial"):
        raise DesignError("coverage.kind", kind, "'tangential' or 'radial'")
    cell, x_max, trials = s.coverage_cell, s.coverage_x_max, s.coverage_trials
    y_max = x_max if y_max is None else check_positive("coverage.y_max", y_max, "m")
    wall = detector.mount.kind == "wall"
    x = np.arange(cell / 2 if wall else -x_max + cell / 2, x_max, cell)
    y = mirror_rows(y_max, cell)
    length = 2.0 * cell if walk_length is None else float(walk_length)
    check_work(  # before any array of walks is made
        "analysis.coverage_cell × coverage_trials × sample_rate",
        x.size * y.size * trials * (length / s.coverage_speed + 2.5) * s.sample_rate,
    )
    gx, gy = np.meshgrid(x, y)
    ox, oy, sense = mirrored_trials(y.size, x.size, trials, s.seed, s.walk_direction)
    cx = np.repeat(gx.ravel(), trials) + ox.ravel() * cell
    cy = np.repeat(gy.ravel(), trials) + oy.ravel() * cell
    sense = sense.ravel() if kind == "tangential" else np.zeros(cx.size, np.int8)
    rho = np.maximum(np.hypot(cx, cy), 0.05)
    los = np.stack([cx / rho, cy / rho], axis=1)
    walks = WalkSet(
        np.stack([cx, cy], axis=1),
        walk_heading(los, kind, sense),
        np.full(cx.size, float(s.coverage_speed)),
        length,
        np.ascontiguousarray(sense),
    )
    return x, y, walks


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
    Each cell gets ``settings.coverage_trials`` walks through seeded random points inside
    it, mirrored across the boresight (:func:`mirrored_trials`), walking the ways
    ``settings.walk_direction`` says (:func:`coverage_walks`), run through the whole chain
    with seeded noise at the comparator input when ``settings.noise``; the cell's
    probability is the share that turns the output on.
    """
    s = AnalysisSettings() if settings is None else settings
    x, y, walks = coverage_walks(detector, kind, s, y_max, walk_length)
    src = comparator_sources(detector, env) if s.noise else None
    hit, _ = detect(
        detector, target, env, walks, s.sample_rate, src, s.seed, chunk, progress=progress
    )
    prob = hit.reshape(y.size * x.size, s.coverage_trials).mean(axis=1).reshape(y.size, x.size)
    return CoverageMap(x, y, prob, kind, float(s.coverage_speed), int(hit.size))


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
