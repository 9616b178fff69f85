"""Compiled forms of :func:`pirchain.saturation.piecewise` (same equations, same mode rules).

:func:`piecewise_walk` integrates one walk of any stage sample by sample in machine code
(:func:`piecewise_kernel` splits a batch over the CPU cores); ``run_stage`` uses it for the
walks that reach a rail, and the array version stays as the reference. For the compiled
whole-chain pass, :func:`piecewise_modal2` and :func:`piecewise_pair_modal2` run stages of
at most two states with the linear mode diagonalised (modal coordinates z = V⁻¹ x, each state
one multiply-add deep) in a tight loop, and switch to the rail rules in x at the sample a
rail is reached; they equal :func:`piecewise_walk` to rounding (tested through the chain).
"""

from __future__ import annotations

import numba
import numpy as np

from .jit_options import FMA


@numba.njit(cache=True, fastmath=FMA)
def _step(p_all, q_all, r_all, m, x, s, xn, c, y0):
    """One trapezoidal step in mode m into ``xn``; returns the linear output y0 + c·xn."""
    n = x.shape[0]
    y = y0
    for i in range(n):
        acc = q_all[m, i] * s + r_all[m, i]
        for j in range(n):
            acc += p_all[m, i, j] * x[j]
        xn[i] = acc
        y += c[i] * acc
    return y


@numba.njit(inline="always", fastmath=FMA)
def _next_mode(m, yl, v_hi, v_lo, has_amp, net):
    """Mode after a step (0 linear, 1 high rail, 2 low rail): a pinned op-amp whose linear
    output is back inside leaves the rail, one past the other rail is pinned there; without
    a network the mode is only the output clamp."""
    if not has_amp:
        return m
    if not net:
        return 1 if yl > v_hi else (2 if yl < v_lo else 0)
    if m == 1 and yl <= v_hi:
        m = 0
    elif m == 2 and yl >= v_lo:
        m = 0
    if m == 0 and yl > v_hi:
        m = 1
    elif m == 0 and yl < v_lo:
        m = 2
    return m


@numba.njit(cache=True, fastmath=FMA)
def piecewise_walk(u, x0, p_all, q_all, r_all, c, d, f, v_hi, v_lo, has_amp, net, y, pinned):
    """Integrate one walk's input ``u`` (samples,) from states ``x0`` into ``y``, ``pinned``.

    ``p_all`` etc. hold the trapezoidal matrices of the modes linear, high rail, low rail;
    ``y`` may be the same array as ``u`` (each input sample is read before it is written).
    """
    n_t = u.shape[0]
    n = x0.shape[0]
    x = x0.copy()
    xn = np.empty(n)
    y_lin = d * u[0] + f
    for i in range(n):
        y_lin += c[i] * x[i]
    mode = _next_mode(0, y_lin, v_hi, v_lo, has_amp, False)  # at a rail from the start?
    u_prev = u[0]
    y[0] = v_hi if mode == 1 else (v_lo if mode == 2 else y_lin)
    pinned[0] = mode != 0
    for t in range(n_t - 1):
        u_next = u[t + 1]
        s = u_prev + u_next
        u_prev = u_next
        yl = _step(p_all, q_all, r_all, mode if net else 0, x, s, xn, c, d * u_next + f)
        if net and mode == 0 and (yl > v_hi or yl < v_lo):
            mode = 1 if yl > v_hi else 2
            yl = _step(p_all, q_all, r_all, mode, x, s, xn, c, d * u_next + f)
        for i in range(n):
            x[i] = xn[i]
        mode = _next_mode(mode, yl, v_hi, v_lo, has_amp, net)
        y[t + 1] = v_hi if mode == 1 else (v_lo if mode == 2 else yl)
        pinned[t + 1] = mode != 0


@numba.njit(cache=True, parallel=True, fastmath=FMA)
def piecewise_kernel(u, x0, p_all, q_all, r_all, c, d, f, v_hi, v_lo, has_amp, net, y, pinned):
    """Integrate (walks, samples) inputs; ``p_all`` etc. hold modes linear, high, low."""
    for w in numba.prange(u.shape[0]):
        piecewise_walk(
            u[w], x0[w], p_all, q_all, r_all, c, d, f, v_hi, v_lo, has_amp, net, y[w], pinned[w]
        )


@numba.njit(inline="always", fastmath=FMA)
def _coef2(p, q, r, c, d, f, m):
    """Mode ``m``'s coefficients of a ≤ 2-state stage as one tuple of scalars, so that the
    sample loop holds them in registers and touches no arrays."""
    return (p[m, 0, 0], p[m, 0, 1], p[m, 1, 0], p[m, 1, 1], q[m, 0], q[m, 1], r[m, 0],
            r[m, 1], c[0], c[1], d, f)  # fmt: skip


@numba.njit(inline="always", fastmath=FMA)
def _modes2(p, q, r, c, d, f):
    """The coefficient tuples of the three modes (linear, high rail, low rail)."""
    return _coef2(p, q, r, c, d, f, 0), _coef2(p, q, r, c, d, f, 1), _coef2(p, q, r, c, d, f, 2)


@numba.njit(inline="always", fastmath=FMA)
def _step2(k, x_0, x_1, ss, y0):
    """One trapezoidal step with coefficients ``k``: (x0', x1', y_lin)."""
    n0 = k[0] * x_0 + k[1] * x_1 + k[4] * ss + k[6]
    n1 = k[2] * x_0 + k[3] * x_1 + k[5] * ss + k[7]
    return n0, n1, y0 + k[8] * n0 + k[9] * n1


@numba.njit(inline="always", fastmath=FMA)
def _start2(k, x_0, x_1, u0, v_hi, v_lo, has_amp):
    """Output and mode at the first sample: (y, mode)."""
    yl = k[10] * u0 + k[11] + k[8] * x_0 + k[9] * x_1
    m = _next_mode(0, yl, v_hi, v_lo, has_amp, False)
    return (v_hi if m == 1 else (v_lo if m == 2 else yl)), m


@numba.njit(inline="always", fastmath=FMA)
def _sample2m(km, tv, diag, k1, k2, v_hi, v_lo, has_amp, net, a0, a1, m, u_prev, u_next):
    """One sample of :func:`piecewise_walk`'s rules for a ≤ 2-state stage, with the linear
    mode in modal coordinates z = V⁻¹ x.

    In linear mode (and always for a stage without a network) the state (a0, a1) is z,
    whose recursion is diagonal when ``diag`` (each state one multiply-add deep, so the
    loop runs at the CPU's throughput, not its latency); on a rail it is x. ``km`` = the
    linear mode's coefficients in z (12-tuple as :func:`_coef2`), ``tv`` = (V, V⁻¹) row
    by row. Returns (a0', a1', mode', y).
    """
    ss = u_prev + u_next
    y0 = km[10] * u_next + km[11]
    modal = m == 0 or not net
    if modal:
        if diag:
            n0 = km[0] * a0 + (km[4] * ss + km[6])
            n1 = km[3] * a1 + (km[5] * ss + km[7])
            yl = y0 + km[8] * n0 + km[9] * n1
        else:
            n0, n1, yl = _step2(km, a0, a1, ss, y0)
        if net and (yl > v_hi or yl < v_lo):  # runs into a rail during this step
            m = 1 if yl > v_hi else 2
            x0, x1 = tv[0] * a0 + tv[1] * a1, tv[2] * a0 + tv[3] * a1
            n0, n1, yl = _step2(k1 if m == 1 else k2, x0, x1, ss, y0)
            modal = False
    else:
        n0, n1, yl = _step2(k1 if m == 1 else k2, a0, a1, ss, y0)
    m = _next_mode(m, yl, v_hi, v_lo, has_amp, net)
    want = m == 0 or not net
    if want and not modal:
        n0, n1 = tv[4] * n0 + tv[5] * n1, tv[6] * n0 + tv[7] * n1
    elif modal and not want:
        n0, n1 = tv[0] * n0 + tv[1] * n1, tv[2] * n0 + tv[3] * n1
    return n0, n1, m, (v_hi if m == 1 else (v_lo if m == 2 else yl))


@numba.njit(inline="always", fastmath=FMA)
def _begin2(km, tv, k0, x_0, x_1, u0, v_hi, v_lo, has_amp, net):
    """First sample of a stage from its initial state x: (a0, a1, mode, y)."""
    y, m = _start2(k0, x_0, x_1, u0, v_hi, v_lo, has_amp)
    if m == 0 or not net:
        x_0, x_1 = tv[4] * x_0 + tv[5] * x_1, tv[6] * x_0 + tv[7] * x_1
    return x_0, x_1, m, y


@numba.njit(inline="always", fastmath=FMA)
def _linear_modal(km, diag, a0, a1, u_prev, u_next):
    """A linear-mode step in modal coordinates: (z0', z1', y_lin)."""
    ss = u_prev + u_next
    y0 = km[10] * u_next + km[11]
    if diag:
        n0 = km[0] * a0 + (km[4] * ss + km[6])
        n1 = km[3] * a1 + (km[5] * ss + km[7])
        return n0, n1, y0 + km[8] * n0 + km[9] * n1
    return _step2(km, a0, a1, ss, y0)


@numba.njit(cache=True, fastmath=FMA)
def piecewise_modal2(u, x0, p, q, r, c, d, f, v_hi, v_lo, has_amp, net, y, km, tv, diag):
    """:func:`piecewise_walk` for a stage of at most 2 states (tables padded to 2) with the
    linear mode in modal coordinates (see :func:`_sample2m`): while the op-amp stays linear
    a tight loop runs the diagonal recursion; a sample that reaches a rail, and every
    pinned sample, takes the full rules. ``y`` may be ``u``."""
    k0, k1, k2 = _modes2(p, q, r, c, d, f)
    n_t = u.shape[0]
    u_prev = u[0]
    a0, a1, m, y[0] = _begin2(km, tv, k0, x0[0], x0[1], u_prev, v_hi, v_lo, has_amp, net)
    t = 1
    while t < n_t:
        if m == 0 or not net:  # linear: run until a rail is reached
            while t < n_t:
                u_next = u[t]
                n0, n1, yl = _linear_modal(km, diag, a0, a1, u_prev, u_next)
                if net and (yl > v_hi or yl < v_lo):
                    break
                a0, a1, u_prev = n0, n1, u_next
                y[t] = min(max(yl, v_lo), v_hi)  # a stage without a network clamps
                t += 1
            if t == n_t:
                break
        u_next = u[t]
        a0, a1, m, y[t] = _sample2m(
            km, tv, diag, k1, k2, v_hi, v_lo, has_amp, net, a0, a1, m, u_prev, u_next
        )
        u_prev = u_next
        t += 1


@numba.njit(cache=True, fastmath=FMA)
def piecewise_pair_modal2(sig, xa, xb, ta, tb, ma_, mb_):
    """Two ≤ 2-state stages in series over one walk in a single pass, in place, each with
    its linear mode in modal coordinates; ``ta``/``tb`` = (p, q, r, c, d, f, v_hi, v_lo,
    has_amp, net), ``xa`` the first's initial states, ``xb`` the second's steady state (rest
    and per-volt value of each state) started with the first's initial output. While
    both op-amps stay linear a tight loop runs both diagonal recursions; otherwise a sample
    takes the full rules of :func:`_sample2m`. ``ma_``/``mb_`` = (km, tv, diag)."""
    pa, qa, ra, ca, da, fa, ha, la, amp_a, net_a = ta
    pb, qb, rb, cb, db, fb, hb, lb, amp_b, net_b = tb
    kma, tva, dga = ma_
    kmb, tvb, dgb = mb_
    a0k, a1k, a2k = _modes2(pa, qa, ra, ca, da, fa)
    b0k, b1k, b2k = _modes2(pb, qb, rb, cb, db, fb)
    n_t = sig.shape[0]
    ua = sig[0]
    a0, a1, ma, ub = _begin2(kma, tva, a0k, xa[0], xa[1], ua, ha, la, amp_a, net_a)
    xb0, xb1 = xb[0] + xb[1] * ub, xb[2] + xb[3] * ub
    b0, b1, mb, sig[0] = _begin2(kmb, tvb, b0k, xb0, xb1, ub, hb, lb, amp_b, net_b)
    t = 1
    while t < n_t:
        if (ma == 0 or not net_a) and (mb == 0 or not net_b):  # both linear
            while t < n_t:
                u_next = sig[t]
                n0, n1, ya = _linear_modal(kma, dga, a0, a1, ua, u_next)
                if net_a and (ya > ha or ya < la):
                    break
                ya = min(max(ya, la), ha)
                m0, m1, yb = _linear_modal(kmb, dgb, b0, b1, ub, ya)
                if net_b and (yb > hb or yb < lb):
                    break
                a0, a1, ua, b0, b1, ub = n0, n1, u_next, m0, m1, ya
                sig[t] = min(max(yb, lb), hb)
                t += 1
            if t == n_t:
                break
        u_next = sig[t]
        a0, a1, ma, ya = _sample2m(
            kma, tva, dga, a1k, a2k, ha, la, amp_a, net_a, a0, a1, ma, ua, u_next
        )
        ua = u_next
        b0, b1, mb, yb = _sample2m(
            kmb, tvb, dgb, b1k, b2k, hb, lb, amp_b, net_b, b0, b1, mb, ub, ya
        )
        ub = ya
        sig[t] = yb
        t += 1
