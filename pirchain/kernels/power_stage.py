"""The two-wire power stage stepped in time: mains, lamp, switch, storage capacitor.

One run is one switch with one lamp over a stretch of time at a fixed step; the states are
the storage-capacitor voltage, the LED lamp's input-capacitor voltage and driver, the
filament's temperature and the triac. Each step splits the mains between the switch and the
lamp (:func:`pirchain.circuit.two_wire.loop_split`) with the triac off, fires it when the
voltage across it reaches the threshold in the on state (the firing instant interpolated
within the step, so the few-volt charging window before firing is resolved), holds it while
the current exceeds the holding current, and integrates the capacitors: explicitly where
their time constants are long against the step, implicitly for the LED lamp's input
capacitor charging through its small input resistor while the triac conducts. Charges and
energies are accumulated from ``k_stat`` on for the analyses; waveforms are kept every
``keep`` steps.
"""

from __future__ import annotations

import math

import numba
import numpy as np

from ..circuit import two_wire as _tw
from .jit import JIT, rule, rule_calling

switch_current = rule(_tw.switch_current)
zener_step = rule(_tw.zener_step)
lamp_current = rule(_tw.lamp_current)
loop_split = rule_calling(_tw.loop_split, switch_current=switch_current,
                          lamp_current=lamp_current)  # fmt: skip

# stats layout
(Q_HARVEST, Q_ZENER, Q_DRAW, E_LAMP, E_LIGHT, N_FIRE, SUM_ALPHA, N_FLASH, VS_MIN, VS_MAX,
 VC_MIN, VC_MAX, I2_LAMP, T_STAT, N_DROPOUT, Q_OFF_PATH, Q_BRIDGE, Q_LOOP) = range(18)  # fmt: skip
N_STATS = 18


@numba.njit(**JIT)
def step_power_stage(sw, lamp, mains, sched, draws, state, dt, n_steps, k_stat, keep, rec,
                     stats):  # fmt: skip
    """Run ``n_steps`` steps of ``dt`` [s].

    Parameters
    ----------
    sw, lamp : numpy.ndarray
        :data:`pirchain.circuit.two_wire.SWITCH_FIELDS` and ``LAMP_FIELDS`` vectors.
    mains : numpy.ndarray
        (rms voltage [V], frequency [Hz], phase at t = 0 [rad]).
    sched : numpy.ndarray
        (on from [s], on until [s]): the on command.
    draws : numpy.ndarray
        (chain [A], extra while off [A], extra while on [A], gate current [A], gate pulse
        [s]) drawn from the storage capacitor.
    state : numpy.ndarray
        (V_store, V_cap, filament temperature 0–1, driver running 0/1, triac on 0/1),
        updated in place.
    rec : numpy.ndarray, shape (5, n_steps // keep)
        Kept waveforms: V_store, V_cap, loop current (signed), lamp voltage, triac.
    stats : numpy.ndarray, shape (N_STATS,)
        Accumulated from step ``k_stat`` on.
    """
    vs, vc, theta, running, triac = state[0], state[1], state[2], state[3] > 0.5, state[4] > 0.5
    peak, w = math.sqrt(2.0) * mains[0], 2.0 * math.pi * mains[1]
    c_s, v_z, fire, r_t, i_hold = sw[3], sw[2], sw[5], sw[8], sw[7]
    led = lamp[0] == 1.0
    r_hot, cold, tau_f = lamp[1], lamp[2], lamp[3]
    c_in, r_in, v_start, v_stop, g_b, p_drv, g_byp, v_dl = (
        lamp[4], lamp[5], lamp[6], lamp[7], lamp[8], lamp[9], lamp[10], lamp[11])  # fmt: skip
    p_rated = mains[0] * mains[0] / r_hot
    gate_left, x_prev = 0.0, 0.0
    stats[VS_MIN], stats[VS_MAX] = np.inf, -np.inf
    stats[VC_MIN], stats[VC_MAX] = np.inf, -np.inf
    for k in range(n_steps):
        t = (k + 1) * dt
        vm = peak * math.sin(w * t + mains[2])
        u = abs(vm)
        on = sched[0] <= t < sched[1]
        r_fil = r_hot * (cold + (1.0 - cold) * theta)
        q_h = 0.0  # charge into the storage capacitor this step
        q_off = 0.0
        i_loop, y = 0.0, u
        i_fil, p_light, i_br = 0.0, 0.0, 0.0
        remaining = dt  # of this step spent with the triac conducting
        if not triac:
            x = loop_split(u, vs, vc, r_fil, on, sw, lamp)
            i_sw = switch_current(x, vs, on, sw)
            i_offp = switch_current(x, vs, False, sw)
            if on and x >= fire:
                phi = (fire - x_prev) / (x - x_prev) if x_prev < fire else 0.0
                i_f = switch_current(fire, vs, True, sw)
                q_h = phi * dt * 0.5 * (i_f + switch_current(x_prev, vs, True, sw))
                q_off = phi * dt * sw[0] * min(1.0, max(0.0, (fire - 2 * sw[4] - vs) / sw[1]))
                triac = True
                remaining = (1.0 - phi) * dt
                gate_left = draws[4]
                if k >= k_stat:
                    stats[N_FIRE] += 1.0
                    stats[SUM_ALPHA] += (w * (t - remaining) + mains[2]) % math.pi
            else:
                remaining = 0.0
                q_h, q_off = i_sw * dt, i_offp * dt
                i_loop, y = i_sw, u - x
                x_prev = x
        if triac:
            if led:
                rr = r_in + r_t
                a = remaining / c_in
                i_out = g_b * vc + (p_drv / max(vc, 1.0) if running else 0.0)
                v_new = (vc + a * ((u - 2.0 * v_dl) / rr - i_out)) / (1.0 + a / rr)
                i_br = (u - 2.0 * v_dl - v_new) / rr
                if i_br < 0.0:
                    i_br, v_new = 0.0, vc - a * i_out
                i_loop = i_br + u * g_byp
                i_br *= remaining / dt
            else:
                r_lamp = 1.0 / (1.0 / r_fil + g_byp)
                i_loop = u / (r_lamp + r_t)
                i_fil = i_loop * r_lamp / r_fil
            y = u - i_loop * r_t
            if i_loop < i_hold:  # drops out at the end of the half-cycle
                triac = False
                x_prev = 0.0
            elif led:
                vc = v_new
        if not triac or remaining == 0.0:
            if led:
                i_br = max(0.0, i_loop - y * g_byp)
                i_out = g_b * vc + (p_drv / max(vc, 1.0) if running else 0.0)
                vc = max(0.0, vc + (i_br - i_out) * dt / c_in)
            else:
                i_fil = max(0.0, i_loop - y * g_byp)
        if led:
            if running and vc <= v_stop:
                running = False
            elif not running and vc >= v_start:
                running = True
                if k >= k_stat and not on:
                    stats[N_FLASH] += 1.0
            p_light = p_drv if running else 0.0  # the driver's input power
        else:
            p_light = i_fil * i_fil * r_fil
            theta += dt / tau_f * (p_light / p_rated - theta)
        draw = draws[0] + (draws[2] if on else draws[1])
        if gate_left > 0.0:
            draw += draws[3] * min(gate_left, dt) / dt
            gate_left -= dt
        vs = zener_step(vs, q_h - draw * dt, c_s, dt, v_z, sw[9], sw[10])
        q_z = dt * sw[9] * math.exp((vs - v_z) / sw[10]) if vs > 0.0 else 0.0
        dropped = vs < 0.0
        if dropped:
            vs = 0.0
        if k >= k_stat:
            stats[Q_HARVEST] += q_h
            stats[Q_OFF_PATH] += q_off
            stats[Q_ZENER] += q_z
            stats[Q_DRAW] += draw * dt
            stats[E_LAMP] += i_loop * y * dt
            stats[E_LIGHT] += p_light * dt
            stats[I2_LAMP] += i_loop * i_loop * dt
            stats[Q_BRIDGE] += i_br * dt
            stats[Q_LOOP] += i_loop * dt
            stats[T_STAT] += dt
            stats[N_DROPOUT] += 1.0 if dropped else 0.0
            stats[VS_MIN] = min(stats[VS_MIN], vs)
            stats[VS_MAX] = max(stats[VS_MAX], vs)
            stats[VC_MIN] = min(stats[VC_MIN], vc)
            stats[VC_MAX] = max(stats[VC_MAX], vc)
        if k % keep == 0 and k // keep < rec.shape[1]:
            j = k // keep
            s = 1.0 if vm >= 0.0 else -1.0
            rec[0, j], rec[1, j], rec[2, j] = vs, vc, s * i_loop
            rec[3, j], rec[4, j] = s * y, 1.0 if triac else 0.0
    state[0], state[1], state[2] = vs, vc, theta
    state[3], state[4] = 1.0 if running else 0.0, 1.0 if triac else 0.0
