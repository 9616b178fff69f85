"""The whole chain in one compiled pass per walk: optics to decisions, no stored waveforms.

For every walk (walks split over the CPU cores) the kernel runs, on buffers the size of one
walk: the optics of :mod:`pirchain.optics_kernel` folded straight into the equivalent gate
power Σ c_k P_k, the sensor's section (in parallel form Σ r_i/(1 − p_i z⁻¹) + k when its
poles are real and distinct, else direct form II transposed as ``scipy.signal.sosfilt``),
the JFET follower's square law, every stage's linear / rail-pinned trapezoidal integration of
:mod:`pirchain.saturation_kernel` (started in steady state with its first input, as
:func:`pirchain.saturation.run_stage`; the linear mode in modal coordinates), optional added
noise, and the comparator and rules of :mod:`pirchain.logic_kernel`. It is the same model as
:meth:`pirchain.chain.Detector.simulate` (tested equal to rounding); it keeps per-walk
outcomes instead of every waveform, which is what range, coverage and sweep studies need.

References
----------
.. [1] Oppenheim, A. V. and Schafer, R. W., *Discrete-Time Signal Processing*, 3rd ed.,
   Pearson (2010), §6.3–6.5: direct, cascade and parallel forms of IIR systems.
"""

from __future__ import annotations

import functools
import math
from dataclasses import dataclass

import numba
import numpy as np
from scipy import signal

from .errors import DesignError
from .jit_options import FMA
from .logic import PulseLogic
from .logic_kernel import inhibit_table, logic_tables, logic_walk
from .optics_kernel import compact_heading, pack_beams, pack_parts, walk_power
from .saturation import stage_tables
from .saturation_kernel import piecewise_modal2, piecewise_pair_modal2, piecewise_walk


@dataclass(frozen=True)
class WalkOutcomes:
    """Per-walk outcomes of a batch.

    Attributes
    ----------
    detected : numpy.ndarray of bool
        The output turned on.
    first_on : numpy.ndarray
        First turn-on time [s], NaN where never.
    pulses, triggers, turn_ons : numpy.ndarray of int
        Pulses outside the window, rule firings (retriggers included), output turn-ons.
    peak : numpy.ndarray
        Largest |comparator input − rest level| [V] (added noise included).
    comparator_input : numpy.ndarray or None
        (walks, samples) [V] when asked for.
    """

    detected: np.ndarray
    first_on: np.ndarray
    pulses: np.ndarray
    triggers: np.ndarray
    turn_ons: np.ndarray
    peak: np.ndarray
    comparator_input: np.ndarray | None = None


@numba.njit(cache=True, error_model="numpy", fastmath=FMA)
def analog_walk(sig, sensor_sos, sensor_par, jfet, pw):
    """Equivalent power (samples,) [W] → comparator input [V] in place, for one walk.

    One pass runs the sensor's sections (in parallel form H = Σ r_i/(1 − p_i z⁻¹) + k when
    they are one section with two distinct real poles, equal to rounding; from rest: the
    first sample's power has been there for ever) and the JFET square law; then every
    stage runs the exact linear / rail-pinned integration from its steady state with its
    first input (as
    :func:`pirchain.saturation.run_stage`; in linear mode it equals the sections to
    rounding). ``pw`` = the tables of :func:`_pack_stages`.
    """
    n_t = sig.shape[0]
    p0 = sig[0]
    for t in range(n_t):
        sig[t] -= p0
    if sensor_par[5] > 0:  # one section with two distinct real poles: parallel form
        p1, p2, r1, r2, k0 = (
            sensor_par[0],
            sensor_par[1],
            sensor_par[2],
            sensor_par[3],
            sensor_par[4],
        )
        w1 = w2 = 0.0
        for t in range(n_t):  # two first-order recursions, each one multiply-add deep
            x = sig[t]
            w1 = p1 * w1 + x
            w2 = p2 * w2 + x
            sig[t] = k0 * x + r1 * w1 + r2 * w2
    else:
        for k in range(sensor_sos.shape[0]):  # one section at a time, state in registers
            b0, b1, b2 = sensor_sos[k, 0], sensor_sos[k, 1], sensor_sos[k, 2]
            a1, a2 = sensor_sos[k, 4], sensor_sos[k, 5]
            z0 = z1 = 0.0
            for t in range(n_t):  # direct form II transposed, as scipy.signal.sosfilt
                x = sig[t]
                y = b0 * x + z0
                z0 = b1 * x - a1 * y + z1
                z1 = b2 * x - a2 * y
                sig[t] = y
    a, k4 = jfet[0], jfet[1]
    for t in range(n_t):  # v_s = d − 2d / (1 + √(1 + 4 k d)), d = max(v_g + |V_P|, 0)
        d = max(sig[t] + a, 0.0)
        sig[t] = d - 2.0 * d / (1.0 + math.sqrt(1.0 + k4 * d))
    pin_n, pin_p, pin_q, pin_r, pin_c, pin_df, pin_rail, pin_flags, pin_x0, pin_modal = pw
    n_s = pin_n.shape[0]
    if pin_p.shape[2] > 2:  # a stage with more than 2 states: the general integration
        for s in range(n_s):
            n = pin_n[s]
            x0 = pin_x0[s, 0, :n] + pin_x0[s, 1, :n] * sig[0]
            piecewise_walk(
                sig, x0, pin_p[s, :, :n, :n], pin_q[s, :, :n], pin_r[s, :, :n], pin_c[s, :n],
                pin_df[s, 0], pin_df[s, 1], pin_rail[s, 0], pin_rail[s, 1],
                pin_flags[s, 0] > 0, pin_flags[s, 1] > 0, sig, np.empty(n_t, dtype=np.bool_),
            )  # fmt: skip
        return
    s = 0
    while s < n_s:
        x0 = pin_x0[s, 0] + pin_x0[s, 1] * sig[0]
        ta = _stage_tuple(pw, s)
        mod_a = _modal_tuple(pin_modal[s])
        if s + 1 == n_s:
            pa, qa, ra, ca, da, fa, ha, la, am, ne = ta
            km, tv, dg = mod_a
            piecewise_modal2(sig, x0, pa, qa, ra, ca, da, fa, ha, la, am, ne, sig, km, tv, dg)
            return
        b = s + 1
        tb = _stage_tuple(pw, b)
        xb = np.array([pin_x0[b, 0, 0], pin_x0[b, 1, 0], pin_x0[b, 0, 1], pin_x0[b, 1, 1]])
        piecewise_pair_modal2(sig, x0, xb, ta, tb, mod_a, _modal_tuple(pin_modal[b]))
        s += 2


@numba.njit(inline="always")
def _stage_tuple(pw, s):
    """(p, q, r, c, d, f, v_hi, v_lo, has_amp, net) of stage ``s`` from the tables ``pw``."""
    _, p, q, r, c, df, rail, flags, _, _ = pw
    return (
        p[s], q[s], r[s], c[s], df[s, 0], df[s, 1], rail[s, 0], rail[s, 1], flags[s, 0] > 0,
        flags[s, 1] > 0,
    )  # fmt: skip


@numba.njit(inline="always")
def _modal_tuple(a):
    """(km, tv, diag) tuples of one row of :func:`_modal`."""
    km = (a[0], a[1], a[2], a[3], a[4], a[5], a[6], a[7], a[8], a[9], a[10], a[11])
    tv = (a[12], a[13], a[14], a[15], a[16], a[17], a[18], a[19])
    return km, tv, a[20] > 0


@numba.njit(cache=True, parallel=True, error_model="numpy", fastmath=FMA)
def _chain_kernel(
    pos, head, parts, h, beams, sensor_sos, sensor_par, jfet, pw, extra, rest, wave, lg, inhibit,
    out_i, out_f,
):  # fmt: skip
    n_w, n_t = pos.shape[0], pos.shape[1]
    n_p = parts.shape[1]
    has_extra = extra.shape[1] > 0
    keep = wave.shape[1] > 0
    has_inhibit = inhibit.shape[1] > 0
    lg_index, lg_frac, lg_interp, lg_ticks, lg_comp, lg_rules = lg
    for w in numba.prange(n_w):
        acc = np.zeros((1, n_t))
        az = np.empty(n_t)
        ah = np.empty((n_p, n_t))
        s0 = np.empty((n_p, n_t))
        s1 = np.empty((n_p, n_t))
        walk_power(pos[w], head[w], parts, h, beams, acc, az, ah, s0, s1)
        sig = acc[0]
        analog_walk(sig, sensor_sos, sensor_par, jfet, pw)
        if has_extra:
            for t in range(n_t):
                sig[t] += extra[w, t]
        if keep:
            for t in range(n_t):
                wave[w, t] = sig[t]
        peak = 0.0
        for t in range(n_t):
            peak = max(peak, abs(sig[t] - rest))
        n_pul, n_tr, n_on, first = logic_walk(
            sig, lg_index, lg_frac, lg_interp, lg_ticks, lg_comp, lg_rules, inhibit[w],
            has_inhibit,
        )  # fmt: skip
        out_i[w, 0], out_i[w, 1], out_i[w, 2] = n_pul, n_tr, n_on
        out_f[w, 0], out_f[w, 1] = first, peak


def _normalised_sos(sos: np.ndarray) -> np.ndarray:
    sos = np.array(sos, dtype=float)
    return np.ascontiguousarray(sos / sos[:, 3:4])


def _parallel_form(sos: np.ndarray) -> np.ndarray:
    """[p1, p2, r1, r2, k, usable] of a single section (scipy.signal.residuez), usable when
    its poles are real and distinct and the residues moderate."""
    if sos.shape[0] != 1:
        return np.zeros(6)
    r, p, k = signal.residuez(sos[0, :3], sos[0, 3:])
    ok = (
        p.size == 2
        and k.size == 1
        and np.all(np.imag(p) == 0)
        and abs(p[0] - p[1]) > 1e-6
        and np.max(np.abs(r)) < 1e6 * max(np.max(np.abs(sos[0, :3])), 1e-300)
    )
    if not ok:
        return np.zeros(6)
    return np.array([*np.real(p), *np.real(r), float(np.real(k[0])), 1.0])


def _modal(p0, q0, r0, c, d, f) -> np.ndarray:
    """Linear-mode coefficients in modal coordinates z = V⁻¹ x of a stage padded to 2
    states: [12 coefficients as saturation_kernel._coef2, V and V⁻¹ row by row, diagonal
    flag]. Real, distinct, well-conditioned eigenvalues give a diagonal recursion;
    otherwise V = I and the recursion stays the full 2 × 2 one."""
    lam, v = np.linalg.eig(p0)
    diag = bool(
        np.all(np.abs(np.imag(lam)) == 0)
        and abs(lam[0] - lam[1]) > 1e-9 * max(abs(lam[0]), abs(lam[1]), 1e-300)
        and np.linalg.cond(v) < 1e8
    )
    if diag:
        lam, v = np.real(lam), np.real(v)
        w = np.linalg.inv(v)
        m = np.diag(lam)
    else:
        v = w = np.eye(2)
        m = p0
    return np.concatenate(
        [m.ravel(), w @ q0, w @ r0, c @ v, [d, f], v.ravel(), w.ravel(), [float(diag)]]
    )


def _pack_stages(stages, sample_rate: float):
    tabs = [stage_tables(st, sample_rate) for st in stages]
    n_s = len(tabs)
    n_max = max([t.C.size for t in tabs] + [2])
    p = np.zeros((n_s, 3, n_max, n_max))
    q = np.zeros((n_s, 3, n_max))
    r = np.zeros((n_s, 3, n_max))
    c = np.zeros((n_s, n_max))
    x0 = np.zeros((n_s, 2, n_max))
    n = np.array([t.C.size for t in tabs], dtype=np.int64)
    for i, t in enumerate(tabs):
        m = t.C.size
        p[i, :, :m, :m], q[i, :, :m], r[i, :, :m], c[i, :m] = t.P, t.Q, t.R, t.C
        x0[i, 0, :m], x0[i, 1, :m] = t.x_rest, t.x_per_volt
    df = np.array([[t.D, t.F] for t in tabs]).reshape(n_s, 2)
    rail = np.array([[t.v_high, t.v_low] for t in tabs]).reshape(n_s, 2)
    modal = np.zeros((n_s, 21))
    if n_max == 2:
        for i, t in enumerate(tabs):
            modal[i] = _modal(p[i, 0], q[i, 0], r[i, 0], c[i], t.D, t.F)
    has_amp = [st.opamp is not None for st in stages]
    flags = np.array([[a, t.net] for a, t in zip(has_amp, tabs, strict=True)], dtype=np.int64)
    return n, p, q, r, c, df, rail, flags.reshape(n_s, 2), x0, modal


def supports(target) -> bool:
    """Whether the compiled pass covers this target (static body parts, no swinging arm)."""
    return target.swing is None and bool(target.parts)


@functools.lru_cache(maxsize=16)
def _detector_tables(detector, sample_rate: float):
    """Packed beams, sensor sections, JFET, stages and rest level (cached per design)."""
    sensor = detector.sensor
    coupling = np.asarray(sensor.coupling, dtype=float)
    beams = detector.beams()
    weight = beams.weight * coupling[beams.element] * sensor.window_transmittance
    jf = detector.follower.jfet
    k4 = 4.0 * detector.follower.source_resistance * jf.idss / jf.pinch_off**2
    sos = _normalised_sos(sensor.sos(sample_rate))
    return (
        pack_beams(beams, weight, np.zeros(beams.azimuth.size)),
        sos,
        _parallel_form(sos),
        np.array([jf.pinch_off, k4]),
        _pack_stages(detector.stages, sample_rate),
        float(detector.rest_levels()[-1]),
    )


@functools.lru_cache(maxsize=16)
def _target_table(target, env, band):
    return pack_parts(target, target.radiance_contrast(env, band))


@functools.lru_cache(maxsize=16)
def _logic_tables(comparator, logic, n_samples: int, sample_rate: float):
    return logic_tables(comparator, logic, n_samples, sample_rate)


def run_compiled(
    detector, target, env, walks, lux=None, extra=None, keep_waveform=False
) -> WalkOutcomes:
    """Run a batch through :func:`_chain_kernel` (see :meth:`Detector.outcomes`)."""
    fs = walks.sample_rate
    n_w, n_t = walks.n_walks, walks.n_samples
    beams, sensor_sos, sensor_par, jfet, stages, rest = _detector_tables(detector, fs)
    logic = detector.logic or PulseLogic()
    lt = _logic_tables(detector.comparator, logic, n_t, fs)
    inhibit = inhibit_table(logic, lux, n_w, lt.ticks.size)
    if extra is None:
        extra = np.zeros((n_w, 0))
    else:
        extra = np.asarray(extra, dtype=float)
        if extra.shape != (n_w, n_t) or not np.all(np.isfinite(extra)):
            raise DesignError("extra", extra.shape, f"finite values of shape ({n_w}, {n_t})")
        extra = np.ascontiguousarray(extra)
    wave = np.empty((n_w, n_t if keep_waveform else 0))
    out_i = np.zeros((n_w, 3), dtype=np.int64)
    out_f = np.zeros((n_w, 2))
    _chain_kernel(
        np.ascontiguousarray(walks.position, dtype=float),
        compact_heading(walks),
        _target_table(target, env, detector.sensor.band),
        float(detector.mount.height),
        beams,
        sensor_sos,
        sensor_par,
        jfet,
        stages,
        extra,
        rest,
        wave,
        (lt.index, lt.frac, lt.interpolate, lt.ticks, lt.comparator, lt.rules),
        inhibit,
        out_i,
        out_f,
    )
    return WalkOutcomes(
        out_i[:, 2] > 0,
        out_f[:, 0],
        out_i[:, 0],
        out_i[:, 1],
        out_i[:, 2],
        out_f[:, 1],
        wave if keep_waveform else None,
    )
