"""The window comparator and the decision rules, one walk at a time.

:func:`logic_walk` reads one walk's comparator input at the logic ticks
(:func:`pirchain.logic.rules.logic_clock`), runs both window edges and the daylight inhibit
as latches (:func:`pirchain.circuit.comparator.latch_step`), cuts the pulses (a run of ticks
outside the window on one side; a jump from above to below ends one pulse and starts the
next) and feeds each finished pulse into the rules: pulse count in a window, alternation,
single large pulse, blanking, hold with retrigger, lockout, daylight inhibit
(:class:`pirchain.logic.rules.PulseLogic`). It keeps counts and the first turn-on time, and
records every pulse and on-interval when the caller provides room for them.
"""

from __future__ import annotations

import math

import numba
import numpy as np

from ..circuit import comparator as _comparator
from .jit import JIT, rule

latch_step = rule(_comparator.latch_step)
MAX_COUNT = 16  # PulseLogic allows 1–16 pulses


@numba.njit(**JIT)
def logic_walk(v, lt, daylight, w, ev):
    """Comparator and rules over walk ``w``'s comparator input ``v`` (samples,) [V].

    Parameters
    ----------
    v : numpy.ndarray
        Comparator input [V].
    lt : LogicTable
        Clock, window and rules (:class:`pirchain.chain.tables.LogicTable`).
    daylight : numpy.ndarray, shape (rows, columns)
        Daylight sense-node voltage [V] per walk (one row for all) and tick (one column for
        all); no rows: no inhibit.
    w : int
        Walk index (row of ``daylight`` and of the event records).
    ev : TapArrays
        Event records (:class:`pirchain.chain.tables.TapArrays`); capacity 0: none kept.

    Returns
    -------
    n_pulses, n_triggers, n_on : int
        Pulses outside the window, rule firings (retriggers included), output turn-ons.
    first_on : float
        First turn-on time [s], NaN if the output never turned on.
    """
    lo, hi, hyst = lt.v_low, lt.v_high, lt.hysteresis
    centre, thr = lt.centre, lt.threshold
    need, window, alternate, spf = lt.pulses_required, lt.count_window, lt.alternate, lt.big
    blanking, hold, retrigger, lockout = lt.blanking, lt.hold, lt.retrigger, lt.lockout
    ticks, index, frac, interpolate = lt.tick_time, lt.tick_index, lt.tick_frac, lt.interpolate
    day_on = lt.has_daylight and daylight.shape[0] > 0
    day_row = min(w, np.int64(daylight.shape[0] - 1))
    per_tick = daylight.shape[1] > 1
    cap = ev.pulse_start.shape[1]
    cap_on = ev.on_start.shape[1]
    n_k = ticks.shape[0]
    step = ticks[1] - ticks[0] if n_k > 1 else 0.0
    counted = np.empty(MAX_COUNT)
    n_counted = 0
    last_sign = 0
    blank_until = -math.inf
    lockout_until = -math.inf
    on = False
    on_until = 0.0
    n_pulses = n_trig = n_on = 0
    first_on = math.nan
    above = below = inhibit = False
    prev = 0
    p_start = p_peak = 0.0
    p_sign = 0
    p_inhibit = False
    for j in range(n_k + 1):
        if j < n_k:
            i = index[j]
            x = v[i] * (1.0 - frac[j]) + v[i + 1] * frac[j] if interpolate else v[i]
            above = latch_step(above, x, hi, hi - hyst)
            below = latch_step(below, -x, -lo, -(lo + hyst))
            if day_on:
                vn = daylight[day_row, j if per_tick else 0]
                inhibit = latch_step(inhibit, vn, lt.daylight_on, lt.daylight_off)
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
        if prev != 0:  # a pulse ends: the rules
            t = p_start
            was_counted = fired = False
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
                    was_counted = True
                    blank_until = t_now + blanking
                    counted[n_counted] = t
                    n_counted += 1
                    last_sign = p_sign
                    if n_counted >= need or p_peak >= spf:
                        n_counted = 0
                        last_sign = 0
                        if not on:
                            if not (day_on and p_inhibit):
                                on = True
                                on_until = t + hold
                                fired = True
                                n_on += 1
                                if n_on == 1:
                                    first_on = t
                                if n_on <= cap_on:
                                    ev.on_start[w, n_on - 1] = t
                                    ev.on_end[w, n_on - 1] = on_until
                        elif retrigger:
                            on_until = t + hold
                            fired = True
                            if n_on <= cap_on:
                                ev.on_end[w, n_on - 1] = on_until
            if fired:
                n_trig += 1
            if n_pulses < cap:
                ev.pulse_start[w, n_pulses] = t
                ev.pulse_end[w, n_pulses] = t_now
                ev.pulse_sign[w, n_pulses] = p_sign
                ev.pulse_peak[w, n_pulses] = p_peak
                ev.pulse_counted[w, n_pulses] = was_counted
                ev.pulse_fired[w, n_pulses] = fired
            n_pulses += 1
        if state != 0:
            p_start, p_sign, p_peak, p_inhibit = t_now, state, dev, inhibit
        prev = state
    return n_pulses, n_trig, n_on, first_on
