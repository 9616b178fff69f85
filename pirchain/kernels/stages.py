"""The analog stages, one walk at a time, in place: linear / rail-pinned trapezoidal
integration of every ≤ 2-state section.

Each section (:class:`pirchain.circuit.rails.Section`) runs its trapezoidal tables
(:func:`pirchain.circuit.rails.discretise`) with the rail-mode rule
:func:`pirchain.circuit.rails.mode_after`. The linear mode runs in modal coordinates
z = V⁻¹ x (:func:`pirchain.circuit.rails.modal_form`): when the eigenvalues are real and
distinct each state is one multiply-add deep, so a loop runs at the CPU's throughput, not
its latency. A driver runs a tight loop while the op-amp stays linear and hands a sample
that reaches a rail, and every pinned sample, to :func:`sample`, which applies the full
rules in x. :func:`run_pair` drives two sections in one pass (twice the independent work
per sample); :func:`run_single` drives one and can record where its op-amp is pinned. Both
start every section in steady state with its first input (the input has been there for
ever) or, for a power-up, with every capacitor discharged.
"""

from __future__ import annotations

from typing import NamedTuple

import numba

from ..circuit import rails
from .jit import INLINE, JIT, rule

mode_after = rule(rails.mode_after)


class Coef(NamedTuple):
    """One mode's recursion x' = P x + Q (u + u') + R, y = C x' + D u' + F of a section."""

    p00: float
    p01: float
    p10: float
    p11: float
    q0: float
    q1: float
    r0: float
    r1: float
    c0: float
    c1: float
    d: float
    f: float


class Basis(NamedTuple):
    """The modal basis V (x = V z) and its inverse, row by row."""

    v00: float
    v01: float
    v10: float
    v11: float
    w00: float
    w01: float
    w10: float
    w11: float


class Sec(NamedTuple):
    """Everything one section's sample loop holds in registers."""

    modal: Coef  # linear mode, modal coordinates
    linear: Coef  # linear mode, x
    high: Coef  # pinned at the high rail, x
    low: Coef  # pinned at the low rail, x
    basis: Basis
    diagonal: bool
    v_high: float
    v_low: float
    limited: bool
    switches: bool


@numba.njit(**INLINE)
def _coef(tab, s, m):
    p, q, r, c, d, f = tab.p[s, m], tab.q[s, m], tab.r[s, m], tab.c[s], tab.d[s], tab.f[s]
    return Coef(p[0, 0], p[0, 1], p[1, 0], p[1, 1], q[0], q[1], r[0], r[1], c[0], c[1], d, f)


@numba.njit(**INLINE)
def section(tab, s):
    """Section ``s`` of a :class:`pirchain.chain.tables.StageTable` as a :class:`Sec`."""
    mp, mq, mr, mc = tab.modal_p, tab.modal_q, tab.modal_r, tab.modal_c
    modal = Coef(mp[s, 0, 0], mp[s, 0, 1], mp[s, 1, 0], mp[s, 1, 1], mq[s, 0], mq[s, 1],
                 mr[s, 0], mr[s, 1], mc[s, 0], mc[s, 1], tab.d[s], tab.f[s])  # fmt: skip
    v, w = tab.basis, tab.basis_inverse
    basis = Basis(v[s, 0, 0], v[s, 0, 1], v[s, 1, 0], v[s, 1, 1],
                  w[s, 0, 0], w[s, 0, 1], w[s, 1, 0], w[s, 1, 1])  # fmt: skip
    return Sec(modal, _coef(tab, s, rails.LINEAR), _coef(tab, s, rails.HIGH),
               _coef(tab, s, rails.LOW), basis, tab.diagonal[s], tab.v_high[s], tab.v_low[s],
               tab.limited[s], tab.switches[s])  # fmt: skip


@numba.njit(**INLINE)
def step(k, x0, x1, ss, y0):
    """One trapezoidal step with coefficients ``k``: (x0', x1', y_linear)."""
    n0 = k.p00 * x0 + k.p01 * x1 + k.q0 * ss + k.r0
    n1 = k.p10 * x0 + k.p11 * x1 + k.q1 * ss + k.r1
    return n0, n1, y0 + k.c0 * n0 + k.c1 * n1


@numba.njit(**INLINE)
def step_linear(sec, z0, z1, u_prev, u_next):
    """A linear-mode step in modal coordinates: (z0', z1', y_linear)."""
    k = sec.modal
    ss = u_prev + u_next
    y0 = k.d * u_next + k.f
    if sec.diagonal:
        n0 = k.p00 * z0 + (k.q0 * ss + k.r0)
        n1 = k.p11 * z1 + (k.q1 * ss + k.r1)
        return n0, n1, y0 + k.c0 * n0 + k.c1 * n1
    return step(k, z0, z1, ss, y0)


@numba.njit(**INLINE)
def reaches_rail(sec, y):
    """A linear step of a section with pinned equations ended beyond a rail."""
    return sec.switches and (y > sec.v_high or y < sec.v_low)


@numba.njit(**INLINE)
def _to_x(b, z0, z1):
    return b.v00 * z0 + b.v01 * z1, b.v10 * z0 + b.v11 * z1


@numba.njit(**INLINE)
def _to_z(b, x0, x1):
    return b.w00 * x0 + b.w01 * x1, b.w10 * x0 + b.w11 * x1


@numba.njit(**INLINE)
def _output(sec, m, y):
    return sec.v_high if m == rails.HIGH else (sec.v_low if m == rails.LOW else y)


@numba.njit(**INLINE)
def sample(sec, a0, a1, m, u_prev, u_next):
    """One sample under the full rules: (a0', a1', mode', y).

    In linear mode (and always for a section without pinned equations) the state (a0, a1)
    is z; pinned at a rail it is x. A linear step that runs into a rail is redone pinned.
    """
    ss = u_prev + u_next
    y0 = sec.modal.d * u_next + sec.modal.f
    modal = m == rails.LINEAR or not sec.switches
    if modal:
        n0, n1, yl = step_linear(sec, a0, a1, u_prev, u_next)
        if reaches_rail(sec, yl):  # runs into a rail during this step
            m = rails.HIGH if yl > sec.v_high else rails.LOW
            x0, x1 = _to_x(sec.basis, a0, a1)
            n0, n1, yl = step(sec.high if m == rails.HIGH else sec.low, x0, x1, ss, y0)
            modal = False
    else:
        n0, n1, yl = step(sec.high if m == rails.HIGH else sec.low, a0, a1, ss, y0)
    m = mode_after(m, yl, sec.v_high, sec.v_low, sec.limited, sec.switches)
    want = m == rails.LINEAR or not sec.switches
    if want and not modal:
        n0, n1 = _to_z(sec.basis, n0, n1)
    elif modal and not want:
        n0, n1 = _to_x(sec.basis, n0, n1)
    return n0, n1, m, _output(sec, m, yl)


@numba.njit(**INLINE)
def begin(sec, x0, x1, u0):
    """First sample from the initial state x: (a0, a1, mode, y)."""
    k = sec.linear
    yl = k.d * u0 + k.f + k.c0 * x0 + k.c1 * x1
    m = mode_after(rails.LINEAR, yl, sec.v_high, sec.v_low, sec.limited, False)
    if m == rails.LINEAR or not sec.switches:
        x0, x1 = _to_z(sec.basis, x0, x1)
    return x0, x1, m, _output(sec, m, yl)


@numba.njit(**INLINE)
def initial_state(tab, s, u0, discharged):
    """Section ``s``'s capacitor voltages at the first sample: steady with input ``u0``, or
    zero (discharged)."""
    if discharged:
        return 0.0, 0.0
    return (tab.x_rest[s, 0] + tab.x_per_volt[s, 0] * u0,
            tab.x_rest[s, 1] + tab.x_per_volt[s, 1] * u0)  # fmt: skip


@numba.njit(**JIT)
def run_single(sig, tab, s, discharged, pinned):
    """Section ``s`` over one walk's input ``sig`` (samples,), in place; ``pinned`` (bool
    array or None) records where its op-amp sits at a rail."""
    sec = section(tab, s)
    n_t = sig.shape[0]
    u_prev = sig[0]
    x0, x1 = initial_state(tab, s, u_prev, discharged)
    a0, a1, m, y = begin(sec, x0, x1, u_prev)
    sig[0] = y
    if pinned is not None:
        pinned[0] = m != rails.LINEAR
    t = 1
    while t < n_t:
        if m == rails.LINEAR or not sec.switches:  # linear: run until a rail is reached
            while t < n_t:
                u_next = sig[t]
                n0, n1, yl = step_linear(sec, a0, a1, u_prev, u_next)
                if reaches_rail(sec, yl):
                    break
                a0, a1, u_prev = n0, n1, u_next
                sig[t] = min(max(yl, sec.v_low), sec.v_high)  # a section without a network clamps
                if pinned is not None:
                    pinned[t] = yl > sec.v_high or yl < sec.v_low
                t += 1
            if t == n_t:
                break
        u_next = sig[t]
        a0, a1, m, sig[t] = sample(sec, a0, a1, m, u_prev, u_next)
        if pinned is not None:
            pinned[t] = m != rails.LINEAR
        u_prev = u_next
        t += 1


@numba.njit(**JIT)
def run_pair(sig, tab, s, discharged):
    """Sections ``s`` and ``s + 1`` in series over one walk, in a single pass, in place.

    While both op-amps stay linear a tight loop runs both modal recursions; otherwise a
    sample takes the full rules of :func:`sample` for each.
    """
    sa, sb = section(tab, s), section(tab, s + 1)
    n_t = sig.shape[0]
    ua = sig[0]
    x0, x1 = initial_state(tab, s, ua, discharged)
    a0, a1, ma, ub = begin(sa, x0, x1, ua)
    x0, x1 = initial_state(tab, s + 1, ub, discharged)
    b0, b1, mb, sig[0] = begin(sb, x0, x1, ub)
    t = 1
    while t < n_t:
        if (ma == rails.LINEAR or not sa.switches) and (mb == rails.LINEAR or not sb.switches):
            while t < n_t:  # both linear
                u_next = sig[t]
                n0, n1, ya = step_linear(sa, a0, a1, ua, u_next)
                if reaches_rail(sa, ya):
                    break
                ya = min(max(ya, sa.v_low), sa.v_high)
                m0, m1, yb = step_linear(sb, b0, b1, ub, ya)
                if reaches_rail(sb, yb):
                    break
                a0, a1, ua, b0, b1, ub = n0, n1, u_next, m0, m1, ya
                sig[t] = min(max(yb, sb.v_low), sb.v_high)
                t += 1
            if t == n_t:
                break
        u_next = sig[t]
        a0, a1, ma, ya = sample(sa, a0, a1, ma, ua, u_next)
        ua = u_next
        b0, b1, mb, yb = sample(sb, b0, b1, mb, ub, ya)
        ub = ya
        sig[t] = yb
        t += 1
