"""Compiled window comparator and decision rules: the same rules as :mod:`pirchain.logic`.

:func:`logic_walk` reads one walk's comparator input at the logic ticks, runs the latch
with hysteresis of :meth:`pirchain.comparator.WindowComparator.states`, cuts the pulses as
:func:`pirchain.logic.find_pulses` does and feeds each finished pulse straight into the
rules of :func:`pirchain.logic.decide` (pulse count in a window, alternation, single large
pulse, blanking, hold with retrigger, lockout, daylight inhibit). It keeps counts and the
first turn-on time instead of lists, so a batch needs no Python loop over walks. The array
functions of :mod:`pirchain.logic` stay the reference (tested equal).
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numba
import numpy as np

from .jit_options import FMA
from .logic import PulseLogic

_MAX_COUNT = 16  # PulseLogic allows 1–16 pulses


@dataclass(frozen=True)
class LogicTables:
    """Everything :func:`logic_walk` needs, packed once for a sample rate and walk length.

    Attributes
    ----------
    index : numpy.ndarray of int
        Analog sample read at each logic tick (the lower one when interpolating).
    frac : numpy.ndarray
        Interpolation weight of the next sample (all zero when not interpolating).
    interpolate : bool
        Logic rate above the analog rate.
    ticks : numpy.ndarray
        Tick times [s].
    comparator : numpy.ndarray
        lo, hi, hysteresis, centre, threshold [V].
    rules : numpy.ndarray
        pulses required, count window, alternate, single-pulse factor (inf if none),
        blanking, hold, retrigger, lockout.
    """

    index: np.ndarray
    frac: np.ndarray
    interpolate: bool
    ticks: np.ndarray
    comparator: np.ndarray
    rules: np.ndarray


def logic_tables(comparator, logic: PulseLogic, n_samples: int, sample_rate: float):
    """Tick positions and packed parameters (the resampling of :func:`logic.resample`)."""
    t_end = (n_samples - 1) / sample_rate
    ticks = np.arange(int(np.floor(t_end * logic.rate + 1e-9)) + 1) / logic.rate
    pos = ticks * sample_rate
    interpolate = logic.rate > sample_rate and n_samples > 1
    if interpolate:
        index = np.minimum(np.floor(pos).astype(np.int64), n_samples - 2)
        frac = pos - index
    else:
        index = np.minimum(np.floor(pos + 1e-9).astype(np.int64), n_samples - 1)
        frac = np.zeros(ticks.size)
    lo, hi = comparator.edges()
    comp = np.array([lo, hi, comparator.hysteresis, comparator.centre, comparator.threshold])
    spf = math.inf if logic.single_pulse_factor is None else logic.single_pulse_factor
    rules = np.array(
        [
            logic.pulses_required,
            logic.count_window,
            float(logic.alternate),
            spf,
            logic.blanking,
            logic.hold,
            float(logic.retrigger),
            logic.lockout,
        ],
        dtype=float,
    )
    return LogicTables(index, frac, interpolate, ticks, comp, rules)


@numba.njit(cache=True, error_model="numpy", fastmath=FMA)
def logic_walk(v, index, frac, interpolate, ticks, comp, rules, inhibit, has_inhibit):
    """Comparator and rules over one walk's comparator input ``v`` (samples,) [V].

    Returns
    -------
    n_pulses, n_triggers, n_on : int
        Pulses outside the window, rule firings (retriggers included), output turn-ons.
    first_on : float
        First turn-on time [s], NaN if the output never turned on.
    """
    lo, hi, hyst, centre, thr = comp[0], comp[1], comp[2], comp[3], comp[4]
    need = int(rules[0])
    window, alternate, spf = rules[1], rules[2] > 0, rules[3]
    blanking, hold, retrigger, lockout = rules[4], rules[5], rules[6] > 0, rules[7]
    n_k = ticks.shape[0]
    step = ticks[1] - ticks[0] if n_k > 1 else 0.0
    counted = np.empty(_MAX_COUNT)
    n_counted = 0
    last_sign = 0
    blank_until = -math.inf
    lockout_until = -math.inf
    on = False
    on_until = 0.0
    n_pulses = n_trig = n_on = 0
    first_on = math.nan
    above = below = False
    prev = 0
    p_start = p_peak = 0.0
    p_sign = p_tick = 0
    for j in range(n_k + 1):
        if j < n_k:
            i = index[j]
            x = v[i] * (1.0 - frac[j]) + v[i + 1] * frac[j] if interpolate else v[i]
            if x > hi:
                above = True
            elif x < hi - hyst:
                above = False
            if x < lo:
                below = True
            elif x > lo + hyst:
                below = False
            state = int(above) - int(below)
            dev = abs(x - centre) / thr
            t_now = ticks[j]
        else:
            state = 0
            dev = 0.0
            t_now = ticks[n_k - 1] + step
        if state == prev:
            if state != 0:
                p_peak = max(p_peak, dev)
            continue
        if prev != 0:  # a pulse ends: run the rules of logic.decide on it
            n_pulses += 1
            t = p_start
            if on and t >= on_until:
                on = False
                lockout_until = on_until + lockout
            if not (t < blank_until or (not on and t < lockout_until)):
                keep = 0  # drop counted pulses older than the count window
                for m in range(n_counted):
                    if counted[m] > t - window:
                        counted[keep] = counted[m]
                        keep += 1
                n_counted = keep
                if n_counted == 0:
                    last_sign = 0
                if not (alternate and last_sign == p_sign):
                    blank_until = t_now + blanking
                    counted[n_counted] = t
                    n_counted += 1
                    last_sign = p_sign
                    if n_counted >= need or p_peak >= spf:
                        n_counted = 0
                        last_sign = 0
                        if not on:
                            if not (has_inhibit and inhibit[p_tick]):
                                on = True
                                on_until = t + hold
                                n_trig += 1
                                n_on += 1
                                if n_on == 1:
                                    first_on = t
                        elif retrigger:
                            on_until = t + hold
                            n_trig += 1
        if state != 0:
            p_start, p_sign, p_peak, p_tick = t_now, state, dev, j
        prev = state
    return n_pulses, n_trig, n_on, first_on


@numba.njit(cache=True, parallel=True, error_model="numpy", fastmath=FMA)
def _logic_batch(v, index, frac, interpolate, ticks, comp, rules, inhibit, out_i, out_f):
    has_inhibit = inhibit.shape[1] > 0
    for w in numba.prange(v.shape[0]):
        row = inhibit[w]
        n_p, n_tr, n_on, first = logic_walk(
            v[w], index, frac, interpolate, ticks, comp, rules, row, has_inhibit
        )
        out_i[w, 0], out_i[w, 1], out_i[w, 2] = n_p, n_tr, n_on
        out_f[w] = first


def inhibit_table(logic: PulseLogic, lux, n_walks: int, n_ticks: int) -> np.ndarray:
    """Daylight-inhibit state per logic tick, shape (walks, ticks) (no columns if none)."""
    if logic.daylight is None or lux is None:
        return np.zeros((n_walks, 0), dtype=np.bool_)
    lux = np.asarray(lux, dtype=float)
    rows = n_walks if lux.ndim == 2 else 1
    state = logic.daylight.inhibited(np.broadcast_to(lux, (rows, n_ticks)))
    return np.broadcast_to(state, (n_walks, n_ticks))  # one row for all walks: a view


def logic_counts(v: np.ndarray, sample_rate: float, comparator, logic: PulseLogic, lux=None):
    """Counts of the rules over a batch of comparator inputs (walks, samples) [V].

    Returns
    -------
    counts : numpy.ndarray of int, shape (walks, 3)
        Pulses, rule firings and output turn-ons of each walk.
    first_on : numpy.ndarray, shape (walks,)
        First turn-on time [s], NaN if never.
    """
    v = np.ascontiguousarray(np.atleast_2d(v), dtype=float)
    tab = logic_tables(comparator, logic, v.shape[1], sample_rate)
    inhibit = inhibit_table(logic, lux, v.shape[0], tab.ticks.size)
    counts = np.zeros((v.shape[0], 3), dtype=np.int64)
    first = np.empty(v.shape[0])
    _logic_batch(
        v,
        tab.index,
        tab.frac,
        tab.interpolate,
        tab.ticks,
        tab.comparator,
        tab.rules,
        inhibit,
        counts,
        first,
    )
    return counts, first
