"""Walk-test results on the bench against the model: P(detect) for each walked row, the
likelihood of the results, a fitted sensitivity scale with its interval, and the rows where
model and test disagree most.

The model of a row: its walk (tangential or radial at the row's distance, bearing and
speed) at ``positions`` places spread over one beam pitch, as the range analysis walks them
(:func:`pirchain.analysis.walk_tests.make_walks`); for each, the noise-free margin m — the
smallest multiplier of the signal (the sensor's equivalent power, so responsivity × lens ×
contrast) at which the whole chain's logic turns the output on — found by bisection on the
engine, every walk of the table at once. A real walk varies from walk to walk (gait,
clothing, arm swing, the exact path) and the unit's noise moves the threshold, so the signal
of a walk at scale s is taken as s·e^(σZ) with Z standard normal (probit) or standard
logistic, σ² = spread² + (σ_noise/u)² (u the window's half-width, σ_noise the budget's rms):
P(detect | s) = mean over positions of F(ln(s/m)/σ). The fitted scale maximises the
Bernoulli log-likelihood Σ y ln P + (1 − y) ln(1 − P); its 95 % interval is where twice the
log-likelihood ratio stays under χ²₁(0.95) = 3.84 (the profile-likelihood interval; Wilks
1938). Rows are ranked by their deviance −2 ln P(observed outcome).

References
----------
.. [1] Wilks, S. S., Ann. Math. Statist. 9, 60 (1938): the likelihood-ratio statistic is
   χ² distributed.
.. [2] McCullagh, P. and Nelder, J. A., *Generalized Linear Models*, 2nd ed., Chapman & Hall
   (1989), ch. 4: binary data, probit and logit links, deviance.
"""

from __future__ import annotations

import math
import warnings
from dataclasses import dataclass

import numpy as np
from scipy import optimize, stats

from ..analysis.false_triggers import analytic_rate
from ..analysis.walk_tests import beam_pitch, closest_range, make_walks
from ..errors import DesignError, ValidityWarning
from ..physics.scene import straight_walks, target_preset

LINKS = {"probit": stats.norm, "logistic": stats.logistic}
SPREAD = 0.3  # walk-to-walk spread of a person's signal in ln units: from memory (±30 %)
SCALE_RANGE = (1e-3, 1e3)


@dataclass(frozen=True)
class WalkRow:
    """One walked row: ``distance`` [m], ``bearing`` [°], ``speed`` [m s⁻¹], ``kind``
    ("tangential" or "radial"), ``target`` (a preset name) and the outcome."""

    distance: float
    bearing: float
    speed: float
    detected: bool
    kind: str = "tangential"
    target: str = ""
    line: int = 0


def row_margins(design, rows, positions: int = 4, steps: int = 14) -> np.ndarray:
    """Noise-free margins (rows, positions): the signal multiplier at which each walk just
    turns the output on (``inf``: never within :data:`SCALE_RANGE`)."""
    det, env = design.operating, design.environment
    out = np.full((len(rows), positions), np.inf)
    groups: dict[tuple, list[int]] = {}
    for i, r in enumerate(rows):
        groups.setdefault((r.kind, r.target or ""), []).append(i)
    for (kind, target_name), idx in groups.items():
        target = target_preset(target_name) if target_name else design.target
        walks = make_walks(
            [rows[i].distance for i in idx],
            [rows[i].bearing for i in idx],
            [rows[i].speed for i in idx],
            kind,
            3.0,
            positions,
            beam_pitch(det),
        )
        rate = float(
            np.max(
                det.sample_rate_for(walks.speed, closest_range(walks), design.analysis.sample_rate)
            )
        )
        v = walks.speed
        start = walks.centre - 0.5 * walks.length * walks.heading
        batch = straight_walks(
            start,
            walks.heading,
            v,
            walks.length / v.min() + 2.0,
            rate,
            start_times=0.5,
            lengths=walks.length,
        )
        with warnings.catch_warnings():
            warnings.simplefilter("ignore", ValidityWarning)
            power = det.run(target, env, batch, ("equivalent_power",)).equivalent_power
            # the first scale of a coarse grid that detects, then bisection below it (above
            # it a saturated chain may merge pulses, so detection need not stay monotonic)
            grid = np.linspace(*np.log(SCALE_RANGE), 13)
            first = np.full(power.shape[0], grid.size)
            for j in range(grid.size - 1, -1, -1):
                hit = det.drive("equivalent_power", power * math.exp(grid[j]), rate)
                first = np.where(hit.outcomes.detected, j, first)
            found = first < grid.size
            hi = grid[np.minimum(first, grid.size - 1)]
            lo = np.where(first > 0, grid[np.maximum(first - 1, 0)], grid[0] - 1.0)
            for _ in range(steps):  # bisection in ln(scale), every walk at once
                mid = 0.5 * (lo + hi)
                hit = det.drive(
                    "equivalent_power", power * np.exp(mid)[:, None], rate
                ).outcomes.detected
                hi, lo = np.where(hit, mid, hi), np.where(hit, lo, mid)
        m = np.where(found, np.exp(hi), np.inf)
        out[idx] = m.reshape(len(idx), positions)
    return out


def detection_probability(margins, scale, spread, link: str = "probit") -> np.ndarray:
    """P(detect) of each row (mean over its positions) at signal ``scale``."""
    dist = LINKS[link]
    with np.errstate(divide="ignore"):
        z = (math.log(scale) - np.log(margins)) / spread
    return dist.cdf(z).mean(axis=-1)


def log_likelihood(p, detected) -> float:
    """Σ ln P(observed) of Bernoulli outcomes ``detected`` with probabilities ``p``."""
    p = np.clip(np.asarray(p, float), 1e-300, 1.0 - 1e-16)
    y = np.asarray(detected, bool)
    return float(np.sum(np.where(y, np.log(p), np.log1p(-p))))


@dataclass(frozen=True)
class WalkTestFit:
    """The fitted sensitivity scale, its interval, the likelihood and every row's P."""

    rows: tuple
    margins: np.ndarray
    spread: float
    link: str
    scale: float
    low: float
    high: float
    log_likelihood: float
    log_likelihood_at_one: float
    p_fitted: np.ndarray
    p_design: np.ndarray
    open_ended: bool

    def worst(self, k: int = 5) -> list[int]:
        """Indices of the ``k`` rows the fitted model explains worst (largest deviance)."""
        y = np.array([r.detected for r in self.rows])
        p_obs = np.where(y, self.p_fitted, 1.0 - self.p_fitted)
        return [int(i) for i in np.argsort(-(-2 * np.log(np.maximum(p_obs, 1e-300))))[:k]]

    def to_dict(self) -> dict:
        return {
            "scale": self.scale,
            "scale_low_95": self.low,
            "scale_high_95": self.high,
            "interval_open_ended": self.open_ended,
            "spread": self.spread,
            "link": self.link,
            "log_likelihood": self.log_likelihood,
            "log_likelihood_uncalibrated": self.log_likelihood_at_one,
            "rows": [
                {
                    "line": r.line,
                    "distance_m": r.distance,
                    "bearing_deg": r.bearing,
                    "speed_m_s": r.speed,
                    "kind": r.kind,
                    "target": r.target,
                    "detected": r.detected,
                    "p_design": float(pd),
                    "p_fitted": float(pf),
                }
                for r, pd, pf in zip(self.rows, self.p_design, self.p_fitted, strict=True)
            ],
            "worst_rows": [self.rows[i].line for i in self.worst()],
        }

    def table(self) -> str:
        tail = " (open: the data do not bound it)" if self.open_ended else ""
        lines = [
            f"Walk tests: {len(self.rows)} rows; sensitivity scale {self.scale:.3g} (95 %: "
            f"{self.low:.3g} … {self.high:.3g}){tail}; log-likelihood "
            f"{self.log_likelihood:.2f} (design as it is: {self.log_likelihood_at_one:.2f});"
            f" spread {self.spread:.2f} ({self.link})",
            "  rows the fitted model explains worst:",
            "  line  distance  bearing  speed  kind        walked    P(detect)",
        ]
        for i in self.worst():
            r = self.rows[i]
            lines.append(
                f"  {r.line:4d}  {r.distance:6.2f} m  {r.bearing:6.1f}°  {r.speed:4.2f}  "
                f"{r.kind:10s}  {'detected' if r.detected else 'missed':8s}  "
                f"{self.p_fitted[i]:.3f}"
            )
        return "\n".join(lines)


def fit_walk_tests(
    design, rows, spread: float = SPREAD, link: str = "probit", positions: int = 4, margins=None
) -> WalkTestFit:
    """Fit the sensitivity scale to walk-test ``rows``.

    Parameters
    ----------
    spread : float
        Walk-to-walk spread of the signal (standard deviation of its logarithm); the unit's
        noise is added to it in quadrature.
    link : {"probit", "logistic"}
    margins : numpy.ndarray, optional
        Margins (rows, positions) already computed (:func:`row_margins`).
    """
    if link not in LINKS:
        raise DesignError("walk link", link, "'probit' or 'logistic'")
    if not 0.01 <= spread <= 3.0:
        raise DesignError("walk spread", spread, "a spread between 0.01 and 3 (ln units)")
    m = row_margins(design, rows, positions) if margins is None else np.asarray(margins, float)
    det = design.operating
    sigma_n = analytic_rate(det, design.environment, design.draught).sigma
    rest = det.rest_levels()[-1]
    lo_w, hi_w = det.window()
    u = min(hi_w - rest, rest - lo_w)
    total = math.hypot(spread, sigma_n / u) if u > 0 else spread
    y = np.array([r.detected for r in rows])

    def nll(log_s):
        return -log_likelihood(detection_probability(m, math.exp(log_s), total, link), y)

    grid = np.linspace(*np.log(SCALE_RANGE), 241)
    costs = np.array([nll(g) for g in grid])
    k = int(np.argmin(costs))
    a, b = grid[max(k - 1, 0)], grid[min(k + 1, grid.size - 1)]
    best = optimize.minimize_scalar(nll, bounds=(a, b), method="bounded", options={"xatol": 1e-9})
    log_s, top = float(best.x), -float(best.fun)
    cut = stats.chi2.ppf(0.95, 1) / 2.0

    def gap(g):
        return -nll(g) - top + cut  # ℓ(g) − (ℓ_max − cut)

    ends, open_ended = [], False
    for edge in (grid[0], grid[-1]):
        if gap(edge) > 0:
            ends.append(edge)
            open_ended = True
        else:
            ends.append(optimize.brentq(gap, min(edge, log_s), max(edge, log_s), xtol=1e-10))
    s = math.exp(log_s)
    return WalkTestFit(
        tuple(rows),
        m,
        total,
        link,
        s,
        math.exp(ends[0]),
        math.exp(ends[1]),
        top,
        -nll(0.0),
        detection_probability(m, s, total, link),
        detection_probability(m, 1.0, total, link),
        open_ended,
    )
