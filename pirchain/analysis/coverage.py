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

from ..errors import DesignError, check_positive
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


def top_view(
    detector,
    target,
    env,
    kind: str = "tangential",
    speed: float = 1.22,
    cell: float = 0.91,
    x_max: float = 16.0,
    y_max: float | None = None,
    trials: int = 4,
    seed: int = 0,
    noise: bool = True,
    chunk: int = 256,
    sample_rate: float = 100.0,
    walk_length: float | None = None,
    progress=None,
) -> CoverageMap:
    """Top-view coverage map (defaults: NEMA WD 7 cell 0.91 m and 1.22 m/s)."""
    if kind not in ("tangential", "radial"):
        raise DesignError("coverage.kind", kind, "'tangential' or 'radial'")
    check_positive("coverage.cell", cell, "m")
    check_positive("coverage.x_max", x_max, "m")
    y_max = x_max if y_max is None else check_positive("coverage.y_max", y_max, "m")
    wall = detector.mount.kind == "wall"
    x = np.arange(cell / 2 if wall else -x_max + cell / 2, x_max, cell)
    y = np.arange(-y_max + cell / 2, y_max, cell)
    gx, gy = np.meshgrid(x, y)
    cx, cy = gx.ravel(), gy.ravel()
    rng = np.random.default_rng(seed)
    cx = np.repeat(cx, trials) + rng.uniform(-0.5, 0.5, cx.size * trials) * cell
    cy = np.repeat(cy, trials) + rng.uniform(-0.5, 0.5, cy.size * trials) * cell
    rho = np.maximum(np.hypot(cx, cy), 0.05)
    los = np.stack([cx / rho, cy / rho], axis=1)
    head = walk_heading(los, kind)
    walks = WalkSet(
        np.stack([cx, cy], axis=1),
        head,
        np.full(cx.size, float(speed)),
        2.0 * cell if walk_length is None else float(walk_length),
    )
    src = comparator_sources(detector, env) if noise else None
    hit, _ = detect(detector, target, env, walks, sample_rate, src, seed, chunk, progress=progress)
    prob = hit.reshape(gy.size, trials).mean(axis=1).reshape(gy.shape)
    return CoverageMap(x, y, prob, kind, float(speed), int(cx.size))


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
