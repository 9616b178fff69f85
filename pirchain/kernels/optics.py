"""Element power from the beam overlaps, one walk at a time: the optics of the chain's pass.

For every sample the kernel finds each body part's angular rectangle seen from the lens —
static parts from the walker's position and heading (:func:`pirchain.physics.pose.
projected_half_width`), swinging-arm segments from the arm angle as well
(:func:`pirchain.physics.pose.arm_segment`) — and sums, for every beam, τ A cos θ · ΔL ·
Ω_overlap into the beam's output (:mod:`pirchain.physics.optics` states the model). The
work is laid out for the vector units: the walker geometry runs in straight loops over
samples; the walk is cut into blocks of samples and, per block, only the beams whose
azimuth and elevation intervals can touch the target are visited, and the static parts'
rectangles are computed only in blocks that some beam can see.

The arctangent is evaluated with the rational approximation of the Cephes library (Moshier
1989), written without branches so that it vectorises; it agrees with the C library to
within one unit in the last place (tested against ``numpy.arctan``).

References
----------
.. [1] Moshier, S. L., *Methods and Programs for Mathematical Functions*, Ellis Horwood
   (1989); Cephes ``atan.c`` (reduction at tan 3π/8 and 0.66, P/Q of degree 4/5).
"""

from __future__ import annotations

import math

import numba
import numpy as np

from ..physics import pose
from ..physics.optics import MIN_RANGE
from .jit import INLINE, JIT, rule

_BLOCK = 64  # samples per block of the beam search
_STEP_EVERY = 8  # the sampling check's speed estimate reads every 8th sample step
_TWO_PI = 2.0 * math.pi

_T3P8 = 2.41421356237309504880  # tan(3π/8)
_MOREBITS = 6.123233995736765886130e-17
_P0, _P1, _P2, _P3, _P4 = (
    -8.750608600031904122785e-1,
    -1.615753718733365076637e1,
    -7.500855792314704667340e1,
    -1.228866684490136173410e2,
    -6.485021904942025371773e1,
)
_Q0, _Q1, _Q2, _Q3, _Q4 = (
    2.485846490142306297962e1,
    1.650270098316988542046e2,
    4.328810604912902668951e2,
    4.853903996359136964868e2,
    1.945506571482613964425e2,
)

projected_half_width = rule(pose.projected_half_width)
arm_segment = rule(pose.arm_segment)


@numba.njit(**INLINE)
def fast_atan(v):
    """arctan(v) [rad], branch-free Cephes rational approximation (vectorises)."""
    x = abs(v)
    big = x > _T3P8
    mid = x > 0.66
    num = -1.0 if big else (x - 1.0 if mid else x)
    den = x if big else (x + 1.0 if mid else 1.0)
    xr = num / den  # one division for the three reductions
    y0 = 0.5 * math.pi + _MOREBITS if big else (0.25 * math.pi + 0.5 * _MOREBITS if mid else 0.0)
    z = xr * xr
    pz = (((_P0 * z + _P1) * z + _P2) * z + _P3) * z + _P4
    qz = ((((z + _Q0) * z + _Q1) * z + _Q2) * z + _Q3) * z + _Q4
    r = y0 + (xr * z * pz / qz + xr)
    return r if v >= 0 else -r


@numba.njit(**INLINE)
def fast_atan2(y, x):
    """atan2(y, x) [rad] from :func:`fast_atan`, quadrants as the C library (atan2(0, 0) = 0)."""
    ax, ay = abs(x), abs(y)
    lo = min(ax, ay)
    hi = max(ax, ay)
    a = fast_atan(lo / max(hi, 1e-300))  # branch-free; 0/tiny = 0 at the origin
    a = 0.5 * math.pi - a if ay > ax else a
    a = math.pi - a if x < 0 else a
    return math.copysign(a, y)


@numba.njit(**JIT)
def _atan_array(v, out):
    for i in range(v.size):
        out[i] = fast_atan(v[i])


@numba.njit(**JIT)
def _atan2_array(y, x, out):
    for i in range(y.size):
        out[i] = fast_atan2(y[i], x[i])


def atan(v: np.ndarray) -> np.ndarray:
    """Vectorised arctangent of the kernel (for tests against ``numpy.arctan``) [rad]."""
    v = np.ascontiguousarray(v, dtype=float).ravel()
    out = np.empty_like(v)
    _atan_array(v, out)
    return out


def atan2(y: np.ndarray, x: np.ndarray) -> np.ndarray:
    """Two-argument arctangent of the kernel (for tests against ``numpy.arctan2``) [rad]."""
    y, x = np.broadcast_arrays(np.asarray(y, dtype=float), np.asarray(x, dtype=float))
    y, x = np.ascontiguousarray(y).ravel(), np.ascontiguousarray(x).ravel()
    out = np.empty_like(y)
    _atan2_array(y, x, out)
    return out


@numba.njit(**INLINE)
def _wrap(d):
    d = d - _TWO_PI if d > math.pi else d
    return d + _TWO_PI if d < -math.pi else d


@numba.njit(**JIT)
def _arm_block(t0, t1, px, py, parts, h, az_a, ah_a, s0_a, s1_a):
    """Angular rectangles of every arm segment for samples t0..t1 (per segment and sample)."""
    m = parts.arm_segments
    seg = parts.arm_segment_length
    for t in range(t0, t1):
        x, y = px[t], py[t]
        r = math.sqrt(x * x + y * y)
        lx, ly = (x / r, y / r) if r > 0 else (1.0, 0.0)
        theta = parts.arm_angle[t]
        for i in range(m):
            lateral, hw, rise, hh = arm_segment((i + 0.5) * seg, seg, parts.arm_width, theta)
            xs, ys = x - lateral * ly, y + lateral * lx  # sideways, across the line of sight
            rho = max(math.sqrt(xs * xs + ys * ys), MIN_RANGE)
            d0 = parts.arm_pivot + rise - hh - h
            d1 = parts.arm_pivot + rise + hh - h
            az_a[i, t] = fast_atan2(ys, xs)
            ah_a[i, t] = fast_atan(hw / rho)
            s0_a[i, t] = d0 / math.sqrt(rho * rho + d0 * d0)
            s1_a[i, t] = d1 / math.sqrt(rho * rho + d1 * d1)


@numba.njit(**JIT)
def walk_power(pos, head, parts, optics, out):
    """Power [W] of every beam output of one walk, accumulated into ``out`` (outputs, samples).

    Parameters
    ----------
    pos : numpy.ndarray, shape (samples, 2)
        Walker position [m].
    head : numpy.ndarray, shape (samples or 1, 2)
        Unit walking direction.
    parts : PartTable
        The target (:class:`pirchain.chain.tables.PartTable`).
    optics : OpticsTable
        The beams (:class:`pirchain.chain.tables.OpticsTable`); a beam adds its weight ×
        ΣΔL Ω to row ``output`` of ``out``.
    out : numpy.ndarray, shape (outputs, samples)
        Accumulated power [W].

    Returns
    -------
    step : float
        Largest distance between successive samples, read at every 8th sample [m].
    closest : float
        Shortest horizontal range of the walk [m] (at least the model's minimum range).
    """
    n_t = pos.shape[0]
    n_p = parts.contrast.size
    n_a = parts.arm_segments
    n_b = optics.azimuth.size
    h = optics.lens_height
    b_az, b_half = optics.azimuth, optics.half_azimuth
    b_lo, b_hi, b_w, b_out = optics.sin_low, optics.sin_high, optics.weight, optics.output
    rho = np.empty(n_t)
    cos2 = np.empty(n_t)
    inv_rho = np.empty(n_t)
    px = np.empty(n_t)
    py = np.empty(n_t)
    az = np.empty(n_t)
    ah = np.empty((n_p, n_t))
    s0 = np.empty((n_p, n_t))
    s1 = np.empty((n_p, n_t))
    az_a = np.empty((n_a, n_t))
    ah_a = np.empty((n_a, n_t))
    s0_a = np.empty((n_a, n_t))
    s1_a = np.empty((n_a, n_t))
    blk = np.empty(_BLOCK)
    acc = np.empty(_BLOCK)
    per_sample = head.shape[0] > 1
    for t in range(n_t):  # de-interleave, so that the loops below vectorise
        px[t] = pos[t, 0]
        py[t] = pos[t, 1]
    hx, hy = head[0, 0], head[0, 1]
    for t in range(n_t):  # walker geometry of every sample: straight loops
        x, y = px[t], py[t]
        r = math.sqrt(x * x + y * y)
        inv = 1.0 / max(r, 1e-300)
        lx = x * inv if r > 0 else 1.0
        ly = y * inv
        if per_sample:
            hx, hy = head[t, 0], head[t, 1]
        c = abs(hx * lx + hy * ly)
        cos2[t] = min(c * c, 1.0)
        rho[t] = max(r, MIN_RANGE)
        inv_rho[t] = 1.0 / rho[t]
    for t in range(n_t):
        az[t] = fast_atan2(py[t], px[t])
    step2, r_min_walk = 0.0, np.inf  # for the sampling check: largest step, shortest range
    # bounds of the static parts over a block, from the range extremes: the half width is
    # largest at the shortest range, and sin(elevation) of a fixed height is monotonic in range
    hw_max = parts.half_width_max
    z_lo, z_hi = np.inf, -np.inf
    for p in range(n_p):
        z_lo, z_hi = min(z_lo, parts.z_bottom[p] - h), max(z_hi, parts.z_top[p] - h)
    cand = np.empty(n_b, dtype=np.int64)
    for t0 in range(0, n_t, _BLOCK):
        t1 = min(n_t, t0 + _BLOCK)
        m = t1 - t0
        mid = az[(t0 + t1) // 2]
        for t in range(t0, t1 - 1, _STEP_EVERY):  # the sampling check reads every 8th step
            dx, dy = px[t + 1] - px[t], py[t + 1] - py[t]
            step2 = max(step2, dx * dx + dy * dy)
        reach, lo_b, hi_b = -1.0, np.inf, -np.inf  # nothing reachable yet
        if n_p > 0:
            span = 0.0
            r_min, r_max = np.inf, 0.0
            for t in range(t0, t1):
                span = max(span, abs(_wrap(az[t] - mid)))
                r_min = min(r_min, rho[t])
                r_max = max(r_max, rho[t])
            r_min_walk = min(r_min_walk, r_min)
            reach = span + fast_atan(hw_max / r_min)
            e_a = z_lo / math.sqrt(r_min**2 + z_lo**2)
            e_b = z_lo / math.sqrt(r_max**2 + z_lo**2)
            lo_b = min(e_a, e_b)
            e_a = z_hi / math.sqrt(r_min**2 + z_hi**2)
            e_b = z_hi / math.sqrt(r_max**2 + z_hi**2)
            hi_b = max(e_a, e_b)
        if n_a > 0:  # arm segments: rectangles first, then their bounds
            for t in range(t0, t1):
                r_min_walk = min(r_min_walk, rho[t])
            _arm_block(t0, t1, px, py, parts, h, az_a, ah_a, s0_a, s1_a)
            for i in range(n_a):
                for t in range(t0, t1):
                    reach = max(reach, abs(_wrap(az_a[i, t] - mid)) + ah_a[i, t])
                    lo_b = min(lo_b, s0_a[i, t])
                    hi_b = max(hi_b, s1_a[i, t])
        n_c = 0
        for b in range(n_b):
            if not (
                abs(_wrap(b_az[b] - mid)) >= reach + b_half[b] or b_hi[b] <= lo_b or b_lo[b] >= hi_b
            ):
                cand[n_c] = b
                n_c += 1
        if n_c == 0:  # no beam can see the target in this block: no part geometry needed
            continue
        for p in range(n_p):  # static part geometry of this block: straight loops
            a2, b2 = parts.half_front_sq[p], parts.half_side_sq[p]
            d0, d1 = parts.z_bottom[p] - h, parts.z_top[p] - h
            ahv, s0v, s1v = ah[p, t0:t1], s0[p, t0:t1], s1[p, t0:t1]
            c2v, rv, iv = cos2[t0:t1], rho[t0:t1], inv_rho[t0:t1]
            for t in range(m):
                ahv[t] = fast_atan(projected_half_width(a2, b2, c2v[t]) * iv[t])
                s1v[t] = d1 / math.sqrt(rv[t] * rv[t] + d1 * d1)
            if parts.stacked[p]:  # its bottom edge is the top edge of the part below
                s0v[:] = s1[p - 1, t0:t1]
            else:
                for t in range(m):
                    s0v[t] = d0 / math.sqrt(rv[t] * rv[t] + d0 * d0)
        for i in range(n_c):
            b = cand[i]
            baz, bh, blo, bhi = b_az[b], b_half[b], b_lo[b], b_hi[b]
            for t in range(m):
                blk[t] = _wrap(az[t0 + t] - baz)
                acc[t] = 0.0
            for p in range(n_p):
                dl = parts.contrast[p]
                ah_p, s0_p, s1_p = ah[p, t0:t1], s0[p, t0:t1], s1[p, t0:t1]
                for t in range(m):
                    dd = blk[t]
                    a = ah_p[t]
                    ov_az = max(min(dd + a, bh) - max(dd - a, -bh), 0.0)
                    ov_el = max(min(s1_p[t], bhi) - max(s0_p[t], blo), 0.0)
                    acc[t] += ov_az * ov_el * dl
            for j in range(n_a):  # each arm segment has its own azimuth
                dl = parts.arm_contrast[j]
                for t in range(m):
                    dd = _wrap(az_a[j, t0 + t] - baz)
                    a = ah_a[j, t0 + t]
                    ov_az = max(min(dd + a, bh) - max(dd - a, -bh), 0.0)
                    ov_el = max(min(s1_a[j, t0 + t], bhi) - max(s0_a[j, t0 + t], blo), 0.0)
                    acc[t] += ov_az * ov_el * dl
            wb = b_w[b]
            out_k = out[b_out[b], t0:t1]
            for t in range(m):
                out_k[t] += wb * acc[t]
    return math.sqrt(step2), r_min_walk
