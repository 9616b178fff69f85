"""Fit of a measured walk waveform: the parameters a bench cannot read directly, by least
squares on the model's own simulated waveform at the node the capture was taken at.

Parameters (the first three in logarithms, so they stay positive): ``gain`` (the sensor's
current responsivity times the target's contrast and the lens transmission — on one walk
these only ever multiply each other, so one factor is all the data can tell), the thermal
time constant τ_T, the electrical time constant τ_E (through the gate resistor), the walk's
time offset and a DC offset at the node. The model walk is the one the capture was taken on
(a tangential walk at a distance, bearing and speed); each evaluation runs it through the
whole chain. ``scipy.optimize.least_squares`` (trust-region reflective, bounds) fits; the
95 % intervals come from the covariance s² (JᵀJ)⁻¹ at the optimum with s² the residual
variance (the usual linearised intervals; Bates & Watts 1988, §2.3), widened by the
residual's integrated autocorrelation time when the capture's noise is coloured (a real
chain's noise is band-limited; white residuals leave it at 1), and the correlation matrix
is reported beside them.

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

from ..errors import DesignError, ValidityWarning
from ..physics.scene import tangential_path, walks_from_paths

NAMES = ("gain", "thermal_time_constant", "electrical_time_constant", "time_offset", "offset")


@dataclass(frozen=True)
class WalkSpec:
    """The walk a capture was taken on: tangential at ``distance`` [m], ``bearing`` [°],
    ``speed`` [m s⁻¹], crossing the line of sight ``cross_time`` s after the capture
    starts."""

    distance: float
    bearing: float = 0.0
    speed: float = 1.0
    cross_time: float = 5.0


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
    ``theta`` = (ln gain, ln τ_T, ln τ_E, time offset [s], offset [V])."""
    det = design.operating
    s = det.sensor
    gain, tau_t, tau_e, shift, offset = np.exp(theta[0]), *np.exp(theta[1:3]), *theta[3:]
    sensor = dataclasses.replace(
        s, current_responsivity=s.current_responsivity * gain, thermal_time_constant=tau_t,
        gate_resistance=tau_e / s.gate_capacitance,
    )  # fmt: skip
    det = dataclasses.replace(det, sensor=sensor, nominal=None)
    fs = min(1e4, max(design.analysis.sample_rate, 4.0 / float(np.median(np.diff(time)))))
    length = 2 * walk.cross_time * walk.speed
    path = tangential_path(walk.distance, walk.bearing, walk.speed, length=length)
    duration = float(time[-1]) + 2.0 + abs(shift)
    walks = walks_from_paths([path], duration, fs)
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", ValidityWarning)
        run = det.run(design.target, design.environment, walks, _taps(node))
    v = node_waveform(run, node)
    t_model = np.arange(v.size) / fs
    return np.interp(time + walk.cross_time - length / (2 * walk.speed) + shift, t_model, v) \
        + offset  # fmt: skip


@dataclass(frozen=True)
class WaveformFit:
    """Fitted values, 95 % intervals, their correlation and the residual."""

    names: tuple[str, ...]
    values: np.ndarray
    low: np.ndarray
    high: np.ndarray
    correlation: np.ndarray
    residual_rms: float
    fitted: np.ndarray
    success: bool

    def to_dict(self) -> dict:
        return {
            "parameters": {n: {"value": float(v), "low_95": float(lo), "high_95": float(hi)}
                           for n, v, lo, hi in zip(self.names, self.values, self.low, self.high,
                                                   strict=True)},
            "correlation": self.correlation.tolist(), "residual_rms_v": self.residual_rms,
            "converged": self.success,
        }  # fmt: skip

    def table(self, capture) -> str:
        """The fit as text."""
        return _table(self, capture)


def correlation_inflation(residual: np.ndarray) -> float:
    """1 + 2 Σ ρ_k over the residual's autocorrelation up to its first non-positive lag:
    the factor by which correlated (coloured) noise widens least-squares variances when the
    model varies slowly against the noise (the integrated autocorrelation time; Priestley,
    *Spectral Analysis and Time Series*, 1981, §5.3). 1 for white residuals."""
    r = residual - residual.mean()
    n = r.size
    spec = np.fft.rfft(r, 2 * n)
    acf = np.fft.irfft(spec * np.conj(spec))[:n]
    if acf[0] <= 0:
        return 1.0
    rho = acf[1 : n // 4] / acf[0]
    stop = np.flatnonzero(rho <= 0)
    rho = rho[: stop[0]] if stop.size else rho
    return float(max(1.0, 1.0 + 2.0 * rho.sum()))


_LABELS = {
    "gain": ("", "signal gain (responsivity × lens × contrast)"),
    "thermal_time_constant": ("s", "thermal time constant τ_T"),
    "electrical_time_constant": ("s", "electrical time constant τ_E"),
    "time_offset": ("s", "walk time offset"),
    "offset": ("V", "DC offset at the node"),
}


def _table(fit, capture) -> str:
    lines = [
        f"Walk capture {capture.source} at {capture.node}: {capture.time.size} samples at "
        f"{capture.sample_rate:.4g} Hz; residual rms {fit.residual_rms * 1e3:.3g} mV"
        + ("" if fit.success else " (the fit did not converge)")
    ]
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


def fit_waveform(design, capture, walk: WalkSpec) -> WaveformFit:
    """Fit ``capture`` (:class:`pirchain.interface.capture_file.Capture`) taken on ``walk``."""
    s = design.operating.sensor
    t, y = capture.time, capture.value
    if t.size < 20:
        raise DesignError("capture", capture.source, "at least 20 samples to fit")
    theta0 = np.array(
        [0.0, math.log(s.thermal_time_constant), math.log(s.electrical_time_constant), 0.0, 0.0]
    )
    theta0[4] = float(np.mean(y - simulate(design, walk, capture.node, t, theta0)))
    lo = np.array([-5.0, math.log(1e-3), math.log(1e-2), -walk.cross_time, -10.0])
    hi = np.array([5.0, math.log(30.0), math.log(1e3), walk.cross_time, 10.0])
    theta0 = np.clip(theta0, lo + 1e-9, hi - 1e-9)

    def resid(th):
        return simulate(design, walk, capture.node, t, th) - y

    res = optimize.least_squares(resid, theta0, bounds=(lo, hi), x_scale="jac",
                                 diff_step=1e-4)  # fmt: skip
    dof = max(t.size - res.x.size, 1)
    s2 = float(res.fun @ res.fun) / dof
    inflation = correlation_inflation(res.fun)
    try:
        cov = np.linalg.inv(res.jac.T @ res.jac) * s2 * inflation
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
    return WaveformFit(NAMES, values, low, high, corr, math.sqrt(s2), y + res.fun,
                       bool(res.success))  # fmt: skip
