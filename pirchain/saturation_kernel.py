"""Compiled form of :func:`pirchain.saturation.piecewise` (same equations, same mode rules).

Each walk is integrated sample by sample in machine code; the walks are split over the CPU
cores. Used for the walks that reach a rail; the array version stays as the reference.
"""

from __future__ import annotations

import numba
import numpy as np


@numba.njit(cache=True)
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


@numba.njit(cache=True, parallel=True)
def piecewise_kernel(u, x0, p_all, q_all, r_all, c, d, f, v_hi, v_lo, has_amp, net, y, pinned):
    """Integrate (walks, samples) inputs; ``p_all`` etc. hold modes linear, high, low."""
    n_w, n_t = u.shape
    n = x0.shape[1]
    for w in numba.prange(n_w):
        x = x0[w].copy()
        xn = np.empty(n)
        y_lin = d * u[w, 0] + f
        for i in range(n):
            y_lin += c[i] * x[i]
        mode = 0
        if has_amp:
            if y_lin > v_hi:
                mode = 1
            elif y_lin < v_lo:
                mode = 2
        y[w, 0] = v_hi if mode == 1 else (v_lo if mode == 2 else y_lin)
        pinned[w, 0] = mode != 0
        for t in range(n_t - 1):
            s = u[w, t] + u[w, t + 1]
            yl = _step(p_all, q_all, r_all, mode if net else 0, x, s, xn, c, d * u[w, t + 1] + f)
            if net and mode == 0 and (yl > v_hi or yl < v_lo):
                mode = 1 if yl > v_hi else 2
                yl = _step(p_all, q_all, r_all, mode, x, s, xn, c, d * u[w, t + 1] + f)
            for i in range(n):
                x[i] = xn[i]
            if has_amp:
                if net:
                    if mode == 1 and yl <= v_hi:
                        mode = 0
                    elif mode == 2 and yl >= v_lo:
                        mode = 0
                    if mode == 0 and yl > v_hi:
                        mode = 1
                    elif mode == 0 and yl < v_lo:
                        mode = 2
                else:
                    mode = 1 if yl > v_hi else (2 if yl < v_lo else 0)
            y[w, t + 1] = v_hi if mode == 1 else (v_lo if mode == 2 else yl)
            pinned[w, t + 1] = mode != 0
