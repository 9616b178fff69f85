"""Time simulation of op-amp stages that leave linear operation at the rails.

Model
-----
Each stage's capacitor voltages x obey affine state equations that depend on the op-amp's
mode: *linear* (ideal op-amp, virtual short between its inputs) or *pinned* at the high or
low rail (output fixed at the rail, inputs no longer equal, the feedback network driven by
the pinned output). In the pinned mode of a non-inverting band-pass stage, for instance, the
gain-leg capacitor C1 charges through Rf + R1 instead of R1, so recovery takes (Rf + R1) C1
rather than R1 C1. The op-amp is pinned when its linear output would pass a rail and returns
to linear when the linear output computed from the capacitor voltages comes back inside
(equivalently, when its differential input changes sign). Mode changes are resolved at
sample instants; each mode is integrated with the trapezoidal rule, which is the bilinear
transform of the linear path, so the two paths agree to rounding when nothing saturates.

Fast path: every stage is first filtered linearly with ``scipy.signal.sosfilt`` over all
walks; only walks whose output crosses a rail are re-run through the exact piecewise
integration, which advances all such walks together sample by sample. The op-amp's finite
gain-bandwidth is left out of the time simulation (valid while GBW ≫ noise gain × the
highest signal frequency; :func:`gbw_margin` reports it) and kept in the Bode plot.

A stage given only as a transfer function cannot expose its network, so its saturation is
an output clamp.

References
----------
.. [1] Ascher, U. M. and Petzold, L. R., *Computer Methods for Ordinary Differential
   Equations and Differential-Algebraic Equations* (1998): trapezoidal rule, switched systems.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np
from scipy import signal

from .frontend import InvertingBandPass, NonInvertingBandPass, StateModel


@dataclass(frozen=True)
class _Discrete:
    P: np.ndarray
    Q: np.ndarray
    R: np.ndarray


def _trapezoid(m: StateModel, h: float) -> _Discrete:
    n = m.A.shape[0]
    left = np.eye(n) - 0.5 * h * m.A
    P = np.linalg.solve(left, np.eye(n) + 0.5 * h * m.A)
    Q = np.linalg.solve(left, 0.5 * h * m.B)
    R = np.linalg.solve(left, h * m.e)
    return _Discrete(P, Q, R)


def stage_sos(stage, sample_rate: float) -> np.ndarray:
    """Bilinear-transform second-order sections of a stage's linear transfer function."""
    tf = stage.transfer_function()
    num = np.asarray(tf.num[0][0], dtype=float)
    den = np.asarray(tf.den[0][0], dtype=float)
    bz, az = signal.bilinear(num, den, sample_rate)
    return signal.tf2sos(bz, az)


def _has_network(stage) -> bool:
    return isinstance(stage, (NonInvertingBandPass, InvertingBandPass))


@dataclass(frozen=True)
class StageTables:
    """A stage's trapezoidal matrices in the modes linear, high rail, low rail (P, Q, R stacked
    on the first axis), output row C, D, f, rails, and steady state x = a + b u_dc."""

    P: np.ndarray
    Q: np.ndarray
    R: np.ndarray
    C: np.ndarray
    D: float
    F: float
    v_high: float
    v_low: float
    net: bool
    x_rest: np.ndarray
    x_per_volt: np.ndarray


def stage_tables(stage, sample_rate: float) -> StageTables:
    """Pack a stage for the piecewise integration at ``sample_rate`` [Hz]."""
    h = 1.0 / sample_rate
    lin = stage.state_model()
    amp = stage.opamp
    net = amp is not None and _has_network(stage)
    d_lin = _trapezoid(lin, h)
    modes = (
        (
            d_lin,
            _trapezoid(stage.state_model(amp.v_high), h),
            _trapezoid(stage.state_model(amp.v_low), h),
        )
        if net
        else (d_lin, d_lin, d_lin)
    )
    x_rest = np.asarray(stage.steady_state(0.0), dtype=float)
    return StageTables(
        np.stack([m.P for m in modes]),
        np.stack([m.Q for m in modes]),
        np.stack([m.R for m in modes]),
        np.asarray(lin.C, dtype=float),
        float(lin.D),
        float(lin.f),
        amp.v_high if amp is not None else np.inf,
        amp.v_low if amp is not None else -np.inf,
        net,
        x_rest,
        np.asarray(stage.steady_state(1.0), dtype=float) - x_rest,
    )


def piecewise(stage, u: np.ndarray, sample_rate: float, x0: np.ndarray, compiled: bool = True):
    """Exact linear / pinned integration of one stage for a batch of walks.

    Parameters
    ----------
    stage : stage object
        A stage from :mod:`pirchain.frontend`.
    u : numpy.ndarray, shape (walks, samples)
        Absolute input voltage [V].
    sample_rate : float
        [Hz].
    x0 : numpy.ndarray, shape (walks, states)
        Initial capacitor voltages [V].

    Returns
    -------
    y : numpy.ndarray, shape (walks, samples)
        Output voltage [V].
    pinned : numpy.ndarray of bool, shape (walks, samples)
        True where the op-amp is at a rail.

    ``compiled=False`` runs the array version (all walks advanced together per sample), the
    reference for the compiled kernel of :mod:`pirchain.saturation_kernel`.
    """
    tab = stage_tables(stage, sample_rate)
    amp, net = stage.opamp, tab.net
    d_lin = _Discrete(tab.P[0], tab.Q[0], tab.R[0])
    d_hi = _Discrete(tab.P[1], tab.Q[1], tab.R[1])
    d_lo = _Discrete(tab.P[2], tab.Q[2], tab.R[2])
    w, t = u.shape
    y = np.empty((w, t))
    pinned = np.zeros((w, t), dtype=bool)
    x = np.array(x0, dtype=float, copy=True)
    c, d, f = tab.C, tab.D, tab.F
    if compiled:
        from .saturation_kernel import piecewise_kernel

        piecewise_kernel(
            np.ascontiguousarray(u, dtype=float),
            x,
            tab.P,
            tab.Q,
            tab.R,
            c,
            d,
            f,
            tab.v_high,
            tab.v_low,
            amp is not None,
            net,
            y,
            pinned,
        )
        return y, pinned

    def step(dm, xv, s):
        return xv @ dm.P.T + s[:, None] * dm.Q + dm.R

    y_lin = x @ c + d * u[:, 0] + f
    mode = np.zeros(w, dtype=np.int8)  # 0 linear, 1 high rail, -1 low rail
    if amp is not None:
        mode[y_lin > amp.v_high] = 1
        mode[y_lin < amp.v_low] = -1
    y[:, 0] = _output(y_lin, mode, amp)
    pinned[:, 0] = mode != 0
    for n in range(t - 1):
        s = u[:, n] + u[:, n + 1]
        if not net:
            x = step(d_lin, x, s)
            y_lin = x @ c + d * u[:, n + 1] + f
            if amp is not None:
                mode = np.where(y_lin > amp.v_high, 1, np.where(y_lin < amp.v_low, -1, 0))
            y[:, n + 1] = _output(y_lin, mode, amp)
            pinned[:, n + 1] = mode != 0
            continue
        xl, xh, xo = step(d_lin, x, s), step(d_hi, x, s), step(d_lo, x, s)
        yl = xl @ c + d * u[:, n + 1] + f
        # linear walks that run into a rail during this step are pinned for it
        mode = np.where((mode == 0) & (yl > amp.v_high), 1, mode)
        mode = np.where((mode == 0) & (yl < amp.v_low), -1, mode)
        x = np.where((mode == 0)[:, None], xl, np.where((mode == 1)[:, None], xh, xo))
        y_lin = x @ c + d * u[:, n + 1] + f
        # pinned walks whose linear output is back inside the rails leave the rail; one that
        # swings past the other rail within the step is pinned there instead
        mode = np.where((mode == 1) & (y_lin <= amp.v_high), 0, mode)
        mode = np.where((mode == -1) & (y_lin >= amp.v_low), 0, mode)
        mode = np.where((mode == 0) & (y_lin > amp.v_high), 1, mode)
        mode = np.where((mode == 0) & (y_lin < amp.v_low), -1, mode)
        y[:, n + 1] = _output(y_lin, mode, amp)
        pinned[:, n + 1] = mode != 0
    return y, pinned


def _output(y_lin, mode, amp):
    if amp is None:
        return y_lin
    return np.where(mode == 1, amp.v_high, np.where(mode == -1, amp.v_low, y_lin))


@dataclass(frozen=True)
class StageRun:
    """Output of one stage for a batch of walks.

    Attributes
    ----------
    output : numpy.ndarray
        Absolute output voltage, shape (walks, samples) [V].
    pinned : numpy.ndarray of bool
        Where the op-amp sits at a rail.
    exact_walks : numpy.ndarray of int
        Indices of walks that needed the piecewise path.
    """

    output: np.ndarray
    pinned: np.ndarray
    exact_walks: np.ndarray


def run_stage(stage, u: np.ndarray, sample_rate: float, x0: np.ndarray | None = None) -> StageRun:
    """Simulate one stage: fast linear path, exact piecewise path where a rail is reached.

    Parameters
    ----------
    u : numpy.ndarray, shape (walks, samples)
        Absolute input voltage [V].
    x0 : numpy.ndarray, shape (walks, states), optional
        Initial capacitor voltages; default: steady state with the first input sample
        (the input has been there for ever). Given x0, every walk takes the piecewise path.
    """
    w = u.shape[0]
    if x0 is not None:
        y, pinned = piecewise(stage, u, sample_rate, x0)
        return StageRun(y, pinned, np.arange(w))
    u0 = u[:, :1]
    h0 = float(np.real(stage.transfer_function()(0.0)))
    y = (
        stage.v_ref
        + h0 * (u0 - stage.v_ref)
        + signal.sosfilt(stage_sos(stage, sample_rate), u - u0, axis=-1)
    )
    pinned = np.zeros(u.shape, dtype=bool)
    amp = stage.opamp
    if amp is None:
        return StageRun(y, pinned, np.zeros(0, dtype=int))
    bad = np.flatnonzero(np.any((y > amp.v_high) | (y < amp.v_low), axis=1))
    if bad.size:
        x_ss = np.stack([stage.steady_state(float(v)) for v in u0[bad, 0]])
        y[bad], pinned[bad] = piecewise(stage, u[bad], sample_rate, x_ss)
    return StageRun(y, pinned, bad)


def gbw_margin(stage, f_max: float) -> float:
    """GBW / (mid-band noise gain × f_max): ≫ 1 means the ideal-op-amp time model holds."""
    if stage.opamp is None:
        return float("inf")
    ng = getattr(stage, "noise_gain", None)
    gain = (
        abs(ng()(2j * np.pi * f_max)) if ng else abs(stage.transfer_function()(2j * np.pi * f_max))
    )
    return stage.opamp.gbw / (max(gain, 1.0) * f_max)
