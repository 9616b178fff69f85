"""Fit of a measured walk waveform: the parameters a bench cannot read directly, by least
squares on the model's own simulated waveform at the node the capture was taken at.

Parameters (the first three in logarithms, so they stay positive): ``gain`` (the sensor's
current responsivity times the target's contrast and the lens transmission — on one walk
these only ever multiply each other, so one factor is all the data can tell), the thermal
time constant τ_T, the electrical time constant τ_E (through the gate resistor), the walk's
time offset, a DC offset at the node and the element mismatch (the + and − lobes of a
crossing differ in size by it). The model walk is the one the capture was taken on (a
tangential walk at a distance, bearing and speed); each evaluation runs it through the
whole chain. ``scipy.optimize.least_squares`` (trust-region reflective, bounds) fits. The
95 % intervals are linearised at the optimum (Bates & Watts 1988, §2.3), but a capture's
noise is the chain's own, coloured and strongest where the walk's signal is, so the
white-noise covariance s²(JᵀJ)⁻¹ would be several times too narrow; the covariance is the
sandwich (JᵀJ)⁻¹JᵀΣJ(JᵀJ)⁻¹ with Σ from the design's noise spectrum at the node, its level
and a white floor fitted to the residual (:mod:`pirchain.calibration.residual_noise`). The
correlation matrix is reported beside the intervals.

References
----------
.. [1] Bates, D. M. and Watts, D. G., *Nonlinear Regression Analysis and Its Applications*,
   Wiley (1988), §2.3: linear-approximation inference regions.
"""

from __future__ import annotations

import dataclasses
import math
import warnings
from dataclasses import dataclass

import numpy as np
from scipy import optimize, stats

from ..errors import DesignError, ValidityWarning, check_range
from ..physics.scene import tangential_path, target_preset, walks_from_paths
from ..settings import WALK_SPEED_RANGE
from .residual_noise import node_rms, residual_spectrum, sandwich_covariance

NAMES = (
    "gain",
    "thermal_time_constant",
    "electrical_time_constant",
    "time_offset",
    "offset",
    "mismatch",
)
MISFIT_RATIO = 5.0  # a residual above 5 × the design's noise rms is a misfit, not noise
MISMATCH_BOUND = 0.9  # |m| < 1: one element cannot be more than twice the mean


@dataclass(frozen=True)
class WalkSpec:
    """The walk a capture was taken on: tangential at ``distance`` [m], ``bearing`` [°],
    ``speed`` [m s⁻¹], crossing the line of sight ``cross_time`` s after the capture
    starts, in ``direction`` +1 (counter-clockwise seen from above) or −1, by ``target`` (a
    preset name of :data:`pirchain.physics.scene.TARGET_PRESETS`; "" for the design's)."""

    distance: float
    bearing: float = 0.0
    speed: float = 1.0
    cross_time: float = 5.0
    direction: int = 1
    target: str = ""

    def __post_init__(self):
        check_range("walk.distance", self.distance, 0.1, 100.0, "m")
        check_range("walk.bearing", self.bearing, -180.0, 180.0, "°")
        check_range("walk.speed", self.speed, *WALK_SPEED_RANGE, "m/s")
        check_range("walk.cross_time", self.cross_time, 0.0, 600.0, "s")
        if self.direction not in (1, -1):
            raise DesignError("walk.direction", self.direction, "+1 or -1")
        if self.target:
            target_preset(self.target)


def node_waveform(run, node: str) -> np.ndarray:
    """The waveform of one walk at ``node`` of a chain run."""
    if node == "gate":
        return run.gate_voltage[0]
    if node == "source":
        return run.source_voltage[0]
    if node == "comparator":
        return run.comparator_input[0]
    return run.stage_outputs[int(node.removeprefix("stage")) - 1][0]


def _taps(node: str):
    return {"gate": ("gate",), "source": ("source",), "comparator": ("comparator",)}.get(
        node, ("stages",)
    )


def simulate(design, walk: WalkSpec, node: str, time: np.ndarray, theta) -> np.ndarray:
    """The model's waveform at ``node`` on the capture's ``time`` [s] for parameters
    ``theta`` = (ln gain, ln τ_T, ln τ_E, time offset [s], offset [V][, mismatch]); without
    a sixth entry the sensor keeps its own element mismatch."""
    det = design.operating
    s = det.sensor
    gain, tau_t, tau_e, shift, offset = np.exp(theta[0]), *np.exp(theta[1:3]), *theta[3:5]
    sensor = dataclasses.replace(
        s, current_responsivity=s.current_responsivity * gain, thermal_time_constant=tau_t,
        gate_resistance=tau_e / s.gate_capacitance,
        mismatch=float(theta[5]) if len(theta) > 5 else s.mismatch,
    )  # fmt: skip
    det = dataclasses.replace(det, sensor=sensor, nominal=None)
    fs = min(1e4, max(design.analysis.sample_rate, 4.0 / float(np.median(np.diff(time)))))
    length = 2 * walk.cross_time * walk.speed
    path = tangential_path(walk.distance, walk.bearing, walk.speed, length=length,
                           direction=walk.direction)  # fmt: skip
    duration = float(time[-1]) + 2.0 + abs(shift)
    walks = walks_from_paths([path], duration, fs)
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", ValidityWarning)
        target = target_preset(walk.target) if walk.target else design.target
        run = det.run(target, design.environment, walks, _taps(node))
    v = node_waveform(run, node)
    t_model = np.arange(v.size) / fs
    return np.interp(time + walk.cross_time - length / (2 * walk.speed) + shift, t_model, v) \
        + offset  # fmt: skip


@dataclass(frozen=True)
class WaveformFit:
    """Fitted values, 95 % intervals, their correlation and the residual.

    Attributes
    ----------
    names : tuple of str
        Parameter names (:data:`NAMES`, without ``mismatch`` when it was not fitted).
    values, low, high : numpy.ndarray
        Fitted values and their 95 % intervals (gain dimensionless, times [s], offset [V]).
    correlation : numpy.ndarray
        Correlation matrix of the estimates.
    residual_rms : float
        rms of measured − fitted [V].
    fitted : numpy.ndarray
        The fitted model on the capture's time [V].
    success : bool
        Whether the optimiser converged.
    noise_level : float
        The capture's noise as a multiple of the design's noise model at the node (PSD).
    white_floor : float
        White noise the model does not carry (a scope's own) [V² Hz⁻¹].
    design_noise_rms : float
        rms of the design's own noise at the node up to half the capture's rate [V].
    """

    names: tuple[str, ...]
    values: np.ndarray
    low: np.ndarray
    high: np.ndarray
    correlation: np.ndarray
    residual_rms: float
    fitted: np.ndarray
    success: bool
    noise_level: float = 1.0
    white_floor: float = 0.0
    design_noise_rms: float = 0.0

    def to_dict(self) -> dict:
        return {
            "parameters": {n: {"value": float(v), "low_95": float(lo), "high_95": float(hi)}
                           for n, v, lo, hi in zip(self.names, self.values, self.low, self.high,
                                                   strict=True)},
            "correlation": self.correlation.tolist(), "residual_rms_v": self.residual_rms,
            "converged": self.success, "noise_level": self.noise_level,
            "white_floor_v2_per_hz": self.white_floor,
            "design_noise_rms_v": self.design_noise_rms,
        }  # fmt: skip

    def table(self, capture) -> str:
        """The fit as text."""
        return _table(self, capture)


_LABELS = {
    "gain": ("", "signal gain (responsivity × lens × contrast)"),
    "thermal_time_constant": ("s", "thermal time constant τ_T"),
    "electrical_time_constant": ("s", "electrical time constant τ_E"),
    "time_offset": ("s", "walk time offset"),
    "offset": ("V", "DC offset at the node"),
    "mismatch": ("", "element mismatch (R+ − R−)/R_mean"),
}


def _table(fit, capture) -> str:
    lines = [
        f"Walk capture {capture.source} at {capture.node}: {capture.time.size} samples at "
        f"{capture.sample_rate:.4g} Hz; residual rms {fit.residual_rms * 1e3:.3g} mV"
        + ("" if fit.success else " (the fit did not converge)"),
        f"  the design's noise at this node: {fit.design_noise_rms * 1e3:.3g} mV rms; the"
        f" residual's spectrum fits {fit.noise_level:.3g} × it",
    ]
    if fit.residual_rms > MISFIT_RATIO * fit.design_noise_rms:
        lines.append(
            "  the residual is far above what the design's noise explains: check the walk"
            " (distance, bearing, direction, cross time, target), the node and the scale"
        )
    for k, name in enumerate(fit.names):
        unit, what = _LABELS[name]
        lines.append(
            f"  {what:44s} {fit.values[k]:10.4g} {unit:2s} (95 %: {fit.low[k]:.4g}"
            f" … {fit.high[k]:.4g})"
        )
    big = [
        (fit.names[i], fit.names[j], fit.correlation[i, j])
        for i in range(len(fit.names))
        for j in range(i)
        if abs(fit.correlation[i, j]) > 0.9
    ]
    for a, b, r in big:
        lines.append(
            f"  {a} and {b} are strongly correlated ({r:+.2f}): the data tell mainly"
            " their combination"
        )
    return "\n".join(lines)


def fit_waveform(design, capture, walk: WalkSpec, mismatch: bool = True) -> WaveformFit:
    """Fit ``capture`` (:class:`pirchain.interface.capture_file.Capture`) taken on ``walk``.

    Parameters
    ----------
    mismatch : bool
        Fit the element mismatch as well (the + and − lobes of a crossing then differ in
        size); ``False`` keeps the design's.
    """
    s = design.operating.sensor
    t, y = capture.time, capture.value
    if t.size < 20:
        raise DesignError("capture", capture.source, "at least 20 samples to fit")
    theta0 = np.array([0.0, math.log(s.thermal_time_constant),
                       math.log(s.electrical_time_constant), 0.0, 0.0, s.mismatch])  # fmt: skip
    lo = np.array([-5.0, math.log(1e-3), math.log(1e-2), -walk.cross_time, -10.0,
                   -MISMATCH_BOUND])  # fmt: skip
    hi = np.array([5.0, math.log(30.0), math.log(1e3), walk.cross_time, 10.0, MISMATCH_BOUND])
    used = len(NAMES) if mismatch else len(NAMES) - 1
    theta0, lo, hi = theta0[:used], lo[:used], hi[:used]
    theta0[4] = float(np.mean(y - simulate(design, walk, capture.node, t, theta0)))
    theta0 = np.clip(theta0, lo + 1e-9, hi - 1e-9)

    def raw(th):
        return simulate(design, walk, capture.node, t, th) - y

    res = optimize.least_squares(raw, theta0, bounds=(lo, hi), x_scale="jac", diff_step=1e-4)
    residual = res.fun
    dof = max(residual.size - res.x.size, 1)
    fs = capture.sample_rate
    spectrum, level, white = residual_spectrum(design, capture.node, residual, fs)
    try:
        cov = sandwich_covariance(res.jac, spectrum, fs)
    except np.linalg.LinAlgError:
        cov = np.full((res.x.size, res.x.size), np.nan)
    sd = np.sqrt(np.clip(np.diag(cov), 0.0, None))
    z = stats.t.ppf(0.975, dof)
    lo_t, hi_t = res.x - z * sd, res.x + z * sd
    values, low, high = res.x.copy(), lo_t.copy(), hi_t.copy()
    for k in range(3):  # logarithms back to values
        values[k], low[k], high[k] = np.exp(res.x[k]), np.exp(lo_t[k]), np.exp(hi_t[k])
    with np.errstate(invalid="ignore", divide="ignore"):
        corr = cov / np.outer(sd, sd)
    rms = math.sqrt(float(np.mean(residual**2)))
    return WaveformFit(NAMES[:used], values, low, high, corr, rms,
                       y + residual, bool(res.success), level, white,
                       node_rms(design, capture.node, fs))  # fmt: skip
