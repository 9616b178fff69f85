"""Reference implementations (oracles) of every time-domain rule, as straightforward numpy.

These are the array forms the package had before its single compiled engine: each rule
written directly from its equation, vectorised over walks with numpy, slow and obvious.
They are test references only: the package never imports them, and they import nothing of
the package's engine (``pirchain.kernels``, ``pirchain.chain``); they use only parameter
objects and their pure physics functions (beams, transfer functions, state equations).
Discretisation is re-derived here from the continuous models (scipy's bilinear transform,
the trapezoidal rule), not read from the package's tables.

Sources: the optics of Boyd (1983) P = L A cos θ Ω and the exact az–el overlap; the sensor
and stages as bilinear transforms of their transfer functions (scipy.signal.bilinear,
Oppenheim & Schafer); the rail-pinned stage as the trapezoidal rule in each mode (Ascher &
Petzold 1998); the JFET's Shockley square law (Sedra & Smith); the decision rules as
stated in docs/model.md.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np
from scipy import signal

from pirchain.circuit.opamp_stages import InvertingBandPass, NonInvertingBandPass

MIN_RANGE = 0.01  # [m]


# -- pose and optics ------------------------------------------------------------------------
@dataclass(frozen=True)
class PartPose:
    x: np.ndarray
    y: np.ndarray
    half_width: np.ndarray
    z_bottom: np.ndarray
    z_top: np.ndarray


def _line_of_sight(position):
    rho = np.hypot(position[..., 0], position[..., 1])
    safe = np.where(rho > 0, rho, 1.0)
    return np.where(rho[..., None] > 0, position / safe[..., None], np.array([1.0, 0.0]))


def pose(target, walks) -> PartPose:
    """Every part's floor position, half width and heights (walks, samples, parts)."""
    pos = walks.position
    los = _line_of_sight(pos)
    xs, ys, hws, z0s, z1s = [], [], [], [], []
    if target.parts:
        cos_psi = np.abs(np.sum(walks.heading * los, axis=-1))[..., None]
        sin_psi = np.sqrt(np.clip(1.0 - cos_psi**2, 0.0, None))
        wf = np.array([p.width_front for p in target.parts])
        ws = np.array([p.width_side for p in target.parts])
        hws.append(0.5 * np.sqrt((wf * cos_psi) ** 2 + (ws * sin_psi) ** 2))
        n = len(target.parts)
        shape = pos.shape[:2] + (n,)
        xs.append(np.broadcast_to(pos[..., 0:1], shape))
        ys.append(np.broadcast_to(pos[..., 1:2], shape))
        z0s.append(np.broadcast_to(np.array([p.z_bottom for p in target.parts]), shape))
        z1s.append(np.broadcast_to(np.array([p.z_top for p in target.parts]), shape))
    if target.swing is not None:
        arm = target.swing
        m = arm.segments
        seg = arm.length / m
        theta = arm.angle(walks.time)[None, :, None]
        r = (np.arange(m) + 0.5) * seg
        c, s = np.abs(np.cos(theta)), np.abs(np.sin(theta))
        lat_extent = seg * c + arm.width * s
        vert_extent = seg * s + arm.width * c
        k = np.sqrt(seg * arm.width / (lat_extent * vert_extent))
        perp = np.stack([-los[..., 1], los[..., 0]], axis=-1)
        lateral = r * np.cos(theta)
        shape = pos.shape[:2] + (m,)
        xs.append(pos[..., 0:1] + lateral * perp[..., 0:1])
        ys.append(pos[..., 1:2] + lateral * perp[..., 1:2])
        hws.append(np.broadcast_to(0.5 * k * lat_extent, shape))
        zc = arm.pivot_height + r * np.sin(theta)
        z0s.append(np.broadcast_to(zc - 0.5 * k * vert_extent, shape))
        z1s.append(np.broadcast_to(zc + 0.5 * k * vert_extent, shape))
    return PartPose(*(np.concatenate(a, axis=-1) for a in (xs, ys, hws, z0s, z1s)))


def element_power(beams, target, env, walks, lens_height, n_elements, window, band):
    """Radiant power change on each element (walks, samples, elements) [W]."""
    pp = pose(target, walks)
    rho = np.maximum(np.hypot(pp.x, pp.y), MIN_RANGE)
    az = np.arctan2(pp.y, pp.x)
    ha = np.arctan(pp.half_width / rho)
    dz0, dz1 = pp.z_bottom - lens_height, pp.z_top - lens_height
    s_lo_p, s_hi_p = dz0 / np.sqrt(rho**2 + dz0**2), dz1 / np.sqrt(rho**2 + dz1**2)
    dl = target.radiance_contrast(env, band)
    out = np.zeros(az.shape[:-1] + (n_elements,))
    s_lo = np.sin(np.maximum(beams.elevation - beams.half_elevation, -math.pi / 2))
    s_hi = np.sin(np.minimum(beams.elevation + beams.half_elevation, math.pi / 2))
    for b in range(beams.count):
        d = np.mod(az - beams.azimuth[b] + math.pi, 2 * math.pi) - math.pi
        h = beams.half_azimuth[b]
        ov_az = np.minimum(d + ha, h) - np.maximum(d - ha, -h)
        ov_el = np.minimum(s_hi_p, s_hi[b]) - np.maximum(s_lo_p, s_lo[b])
        omega = np.clip(ov_az, 0.0, None) * np.clip(ov_el, 0.0, None)
        out[..., beams.element[b]] += beams.weight[b] * (omega @ dl)
    return window * out


# -- sensor, follower and stages ------------------------------------------------------------
def bilinear_sos(tf, fs):
    """Second-order sections of the bilinear transform of a python-control SISO system."""
    num = np.asarray(tf.num[0][0], dtype=float)
    den = np.asarray(tf.den[0][0], dtype=float)
    bz, az = signal.bilinear(num, den, fs)
    return signal.tf2sos(bz, az)


def gate_voltage(sensor, p_eq, fs):
    """Gate-voltage change for equivalent power P_eq (walks, samples), settled start [V]."""
    p = np.asarray(p_eq, dtype=float)
    return signal.sosfilt(bilinear_sos(sensor.transfer_function(), fs), p - p[..., :1], axis=-1)


def source_voltage(follower, v_gate):
    """Exact square law v_s = R_S I_DSS (1 + (v_g − v_s)/|V_P|)², vectorised (stable root);
    ``v_gate`` is the change on the gate's DC bias."""
    a = follower.jfet.pinch_off
    k = follower.source_resistance * follower.jfet.idss / a**2
    d = np.maximum(np.asarray(v_gate, dtype=float) + follower.gate_bias + a, 0.0)
    return d - 2.0 * d / (1.0 + np.sqrt(1.0 + 4.0 * k * d))


def _trapezoid(m, h):
    n = m.A.shape[0]
    left = np.eye(n) - 0.5 * h * m.A
    return (
        np.linalg.solve(left, np.eye(n) + 0.5 * h * m.A),
        np.linalg.solve(left, 0.5 * h * m.B),
        np.linalg.solve(left, h * m.e),
    )


def _network_known(stage):
    return stage.opamp is not None and isinstance(stage, (NonInvertingBandPass, InvertingBandPass))


def piecewise(stage, u, fs, x0):
    """Linear / rail-pinned trapezoidal integration of the stage's whole state equations,
    all walks advanced together sample by sample: (output, pinned)."""
    amp, net = stage.opamp, _network_known(stage)
    lin = stage.state_model()
    h = 1.0 / fs
    d_lin = _trapezoid(lin, h)
    d_hi = _trapezoid(stage.state_model(amp.v_high), h) if net else d_lin
    d_lo = _trapezoid(stage.state_model(amp.v_low), h) if net else d_lin
    c, d, f = lin.C, lin.D, lin.f
    w, t = u.shape
    y = np.empty((w, t))
    pinned = np.zeros((w, t), dtype=bool)
    x = np.array(x0, dtype=float, copy=True)

    def step(dm, xv, s):
        return xv @ dm[0].T + s[:, None] * dm[1] + dm[2]

    def out(y_lin, mode):
        if amp is None:
            return y_lin
        return np.where(mode == 1, amp.v_high, np.where(mode == -1, amp.v_low, y_lin))

    y_lin = x @ c + d * u[:, 0] + f
    mode = np.zeros(w, dtype=np.int8)  # 0 linear, 1 high rail, -1 low rail
    if amp is not None:
        mode[y_lin > amp.v_high] = 1
        mode[y_lin < amp.v_low] = -1
    y[:, 0] = out(y_lin, mode)
    pinned[:, 0] = mode != 0
    for n in range(t - 1):
        s = u[:, n] + u[:, n + 1]
        if not net:
            x = step(d_lin, x, s)
            y_lin = x @ c + d * u[:, n + 1] + f
            if amp is not None:
                mode = np.where(y_lin > amp.v_high, 1, np.where(y_lin < amp.v_low, -1, 0))
            y[:, n + 1] = out(y_lin, mode)
            pinned[:, n + 1] = mode != 0
            continue
        xl, xh, xo = step(d_lin, x, s), step(d_hi, x, s), step(d_lo, x, s)
        yl = xl @ c + d * u[:, n + 1] + f
        mode = np.where((mode == 0) & (yl > amp.v_high), 1, mode)  # runs into a rail
        mode = np.where((mode == 0) & (yl < amp.v_low), -1, mode)
        x = np.where((mode == 0)[:, None], xl, np.where((mode == 1)[:, None], xh, xo))
        y_lin = x @ c + d * u[:, n + 1] + f
        mode = np.where((mode == 1) & (y_lin <= amp.v_high), 0, mode)  # leaves the rail
        mode = np.where((mode == -1) & (y_lin >= amp.v_low), 0, mode)
        mode = np.where((mode == 0) & (y_lin > amp.v_high), 1, mode)
        mode = np.where((mode == 0) & (y_lin < amp.v_low), -1, mode)
        y[:, n + 1] = out(y_lin, mode)
        pinned[:, n + 1] = mode != 0
    return y, pinned


def _offset_at_output(stage) -> float:
    """An op-amp band-pass stage's input offset at its output: V_os times the DC noise gain
    1 + Z_f/Z_1 (superposition; Motchenbacher & Connelly). A transfer-function stage's
    network is unknown and its offset is not modelled."""
    if not isinstance(stage, NonInvertingBandPass | InvertingBandPass):
        return 0.0
    return float(np.real(stage.noise_gain()(0.0))) * stage.opamp.offset


def run_stage(stage, u, fs, discharged=False):
    """One stage for a batch of absolute inputs (walks, samples): (output, pinned).

    Settled start: every walk is filtered linearly (bilinear sections, sosfilt) from its
    first input; walks that reach a rail are rerun exactly from the steady state. A
    discharged start runs every walk exactly from zero capacitor voltages.
    """
    w = u.shape[0]
    n = stage.state_model().A.shape[0]
    if discharged:
        return piecewise(stage, u, fs, np.zeros((w, n)))
    u0 = u[:, :1]
    h0 = float(np.real(stage.transfer_function()(0.0)))
    y = stage.v_ref + h0 * (u0 - stage.v_ref) + _offset_at_output(stage)
    y = y + signal.sosfilt(bilinear_sos(stage.transfer_function(), fs), u - u0, axis=-1)
    pinned = np.zeros(u.shape, dtype=bool)
    amp = stage.opamp
    if amp is None:
        return y, pinned
    bad = np.flatnonzero(np.any((y > amp.v_high) | (y < amp.v_low), axis=1))
    if bad.size:
        x_ss = np.stack([stage.steady_state(float(v)) for v in u0[bad, 0]])
        y[bad], pinned[bad] = piecewise(stage, u[bad], fs, x_ss)
    return y, pinned


# -- comparator and decision logic ----------------------------------------------------------
def latch(set_, reset):
    """Set/reset latch along the last axis: True after a set until a reset (set wins)."""
    idx = np.arange(set_.shape[-1])
    last_set = np.maximum.accumulate(np.where(set_, idx, -1), axis=-1)
    last_reset = np.maximum.accumulate(np.where(reset & ~set_, idx, -1), axis=-1)
    return last_set > last_reset


def resample(v, fs, logic_rate):
    """(tick times, comparator input at the ticks): sampled below the analog rate,
    interpolated above it."""
    t_end = (v.shape[-1] - 1) / fs
    ticks = np.arange(int(np.floor(t_end * logic_rate + 1e-9)) + 1) / logic_rate
    pos = ticks * fs
    if logic_rate <= fs or v.shape[-1] < 2:
        return ticks, v[..., np.minimum(np.floor(pos + 1e-9).astype(int), v.shape[-1] - 1)]
    i0 = np.minimum(np.floor(pos).astype(int), v.shape[-1] - 2)
    frac = pos - i0
    return ticks, v[..., i0] * (1 - frac) + v[..., i0 + 1] * frac


@dataclass(frozen=True)
class Pulses:
    walk: np.ndarray
    start: np.ndarray
    end: np.ndarray
    sign: np.ndarray
    peak: np.ndarray


def find_pulses(v, times, comparator):
    """Runs of ticks outside the window (a jump across it ends one and starts the next)."""
    lo, hi = comparator.edges()
    h = comparator.hysteresis
    state = latch(v > hi, v < hi - h).astype(np.int8) - latch(v < lo, v > lo + h).astype(np.int8)
    w, t = state.shape
    pad = np.zeros((w, 1), dtype=np.int8)
    padded = np.concatenate([pad, state, pad], axis=1)
    before, after = padded[:, :-1], padded[:, 1:]
    changed = before != after
    s_rows, s_cols = np.nonzero(changed & (after != 0))
    _, e_cols = np.nonzero(changed & (before != 0))
    sign = state[s_rows, s_cols].astype(int)
    dev = np.abs(v - comparator.centre) / comparator.threshold
    flat = np.append(dev.ravel(), -np.inf)
    bounds = np.empty(2 * s_rows.size, dtype=np.intp)
    bounds[0::2] = s_rows * t + s_cols
    bounds[1::2] = s_rows * t + e_cols
    peak = np.maximum.reduceat(flat, bounds)[0::2] if s_rows.size else np.zeros(0)
    step = times[1] - times[0] if times.size > 1 else 0.0
    t_ext = np.append(times, times[-1] + step)
    return Pulses(s_rows, times[s_cols], t_ext[e_cols], sign, peak)


@dataclass(frozen=True)
class Decision:
    triggers: np.ndarray
    on_intervals: list
    counted: np.ndarray


def decide(pulses, logic, inhibit=None, ticks=None):
    """The rules over one walk's pulses, in time order."""
    order = np.argsort(pulses.start, kind="stable")
    counted, triggers, intervals, kept = [], [], [], []
    last_sign = 0
    blank_until = lockout_until = -np.inf
    on, on_start, on_until = False, 0.0, 0.0
    for i in order:
        t, sign, end, peak = pulses.start[i], pulses.sign[i], pulses.end[i], pulses.peak[i]
        if on and t >= on_until:
            intervals.append((on_start, on_until))
            on, lockout_until = False, on_until + logic.lockout
        if t < blank_until or (not on and t < lockout_until):
            continue
        counted = [c for c in counted if c > t - logic.count_window]
        if not counted:
            last_sign = 0
        if logic.alternate and last_sign == sign:
            continue
        blank_until = end + logic.blanking
        counted.append(t)
        kept.append(t)
        last_sign = sign
        big = logic.single_pulse_factor is not None and peak >= logic.single_pulse_factor
        if len(counted) < logic.pulses_required and not big:
            continue
        counted, last_sign = [], 0
        if not on:
            if inhibit is not None and inhibit[min(np.searchsorted(ticks, t), len(ticks) - 1)]:
                continue
            on, on_start, on_until = True, t, t + logic.hold
            triggers.append(t)
        elif logic.retrigger:
            on_until = t + logic.hold
            triggers.append(t)
    if on:
        intervals.append((on_start, on_until))
    return Decision(np.array(triggers), intervals, np.array(kept))


def daylight_inhibited(daylight, lux):
    """Inhibit state along the last axis of a lux history."""
    v = daylight.node_voltage(lux)
    return latch(v > daylight.v_on, v < daylight.v_on - daylight.hysteresis)


def run_logic(v, fs, comparator, logic, lux=None):
    """Comparator and rules for a batch (walks, samples): (pulses, decisions)."""
    ticks, vl = resample(np.atleast_2d(v), fs, logic.rate)
    pulses = find_pulses(vl, ticks, comparator)
    inhibit = None
    if logic.daylight is not None and lux is not None:
        lx = np.asarray(lux, float)
        rows = vl.shape[0] if lx.ndim == 2 else 1
        inhibit = np.broadcast_to(
            daylight_inhibited(logic.daylight, np.broadcast_to(lx, (rows, vl.shape[1]))), vl.shape
        )
    bounds = np.searchsorted(pulses.walk, np.arange(vl.shape[0] + 1))
    decisions = []
    for w in range(vl.shape[0]):
        sl = slice(bounds[w], bounds[w + 1])
        mine = Pulses(*(getattr(pulses, k)[sl] for k in ("walk", "start", "end", "sign", "peak")))
        decisions.append(decide(mine, logic, None if inhibit is None else inhibit[w], ticks))
    return pulses, decisions


# -- the whole chain ------------------------------------------------------------------------
@dataclass(frozen=True)
class ChainOracle:
    element_power: np.ndarray
    equivalent_power: np.ndarray
    gate_voltage: np.ndarray
    source_voltage: np.ndarray
    stage_outputs: tuple
    pinned: tuple
    comparator_input: np.ndarray
    pulses: Pulses
    decisions: list


def analog(detector, gate, fs, discharged=False):
    """Gate-voltage change (walks, samples) → source and every stage's output."""
    source = source_voltage(detector.follower, gate)
    u, outs, pins = source, [], []
    for st in detector.stages:
        u, p = run_stage(st, u, fs, discharged)
        outs.append(u)
        pins.append(p)
    return source, tuple(outs), tuple(pins)


def chain(detector, target, env, walks, lux=None, extra=None):
    """Every node of a batch of walks, each stage by its oracle, chained."""
    s = detector.sensor
    fs = walks.sample_rate
    power = element_power(detector.beams(), target, env, walks, detector.mount.height,
                          len(s.elements), s.window_transmittance, s.band)  # fmt: skip
    p_eq = power @ s.coupling
    gate = gate_voltage(s, p_eq, fs)
    source, outs, pins = analog(detector, gate, fs)
    vc = outs[-1] if extra is None else outs[-1] + extra
    logic = detector.logic
    pulses, decisions = run_logic(vc, fs, detector.comparator, logic, lux)
    return ChainOracle(power, p_eq, gate, source, outs, pins, vc, pulses, decisions)
