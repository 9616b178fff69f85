"""Compiled optics kernel: pose, angular rectangles and beam overlaps fused per sample.

Computes exactly what :func:`pirchain.target_pose.pose`, :func:`pirchain.optics.part_angles`
and :func:`pirchain.optics.element_power` compute for targets made of static body parts
(every preset except the swinging arm, which keeps the array path), without building any
(walks × samples × parts) temporaries. Beams are sorted by azimuth and only those whose
azimuth interval can touch a part are visited (binary search). numba compiles it once and
caches the machine code; the walks are split over the CPU cores.
"""

from __future__ import annotations

import math

import numba
import numpy as np

_MIN_RANGE = 0.01


@numba.njit(cache=True, parallel=True, fastmath=False)
def _kernel(
    pos, head, wf, ws, z0, z1, dl, h, b_az, b_ha, b_slo, b_shi, b_w, b_k, ha_max, n_el, out
):
    n_w, n_t = pos.shape[0], pos.shape[1]
    n_p = wf.shape[0]
    n_b = b_az.shape[0]
    two_pi = 2 * math.pi
    for w in numba.prange(n_w):
        ah = np.empty(n_p)
        s0 = np.empty(n_p)
        s1 = np.empty(n_p)
        for t in range(n_t):
            x = pos[w, t, 0]
            y = pos[w, t, 1]
            r_true = math.hypot(x, y)
            if r_true > 0:
                lx, ly = x / r_true, y / r_true
            else:
                lx, ly = 1.0, 0.0
            rho = max(r_true, _MIN_RANGE)
            az = math.atan2(y, x)
            th = t if head.shape[1] > 1 else 0
            c = abs(head[w, th, 0] * lx + head[w, th, 1] * ly)
            sn = math.sqrt(max(1.0 - c * c, 0.0))
            ah_max = 0.0
            for p in range(n_p):
                hw = 0.5 * math.sqrt((wf[p] * c) ** 2 + (ws[p] * sn) ** 2)
                ah[p] = math.atan(hw / rho)
                ah_max = max(ah_max, ah[p])
                d0 = z0[p] - h
                d1 = z1[p] - h
                s0[p] = d0 / math.sqrt(rho * rho + d0 * d0)
                s1[p] = d1 / math.sqrt(rho * rho + d1 * d1)
            reach = ah_max + ha_max
            for sweep in range(3):
                if reach >= math.pi:
                    if sweep > 0:
                        break
                    i0, i1 = 0, n_b
                elif sweep == 0:
                    i0 = np.searchsorted(b_az, az - reach)
                    i1 = np.searchsorted(b_az, az + reach, side="right")
                elif sweep == 1:
                    if az - reach >= -math.pi:
                        continue
                    i0 = np.searchsorted(b_az, az - reach + two_pi)
                    i1 = n_b
                else:
                    if az + reach <= math.pi:
                        continue
                    i0 = 0
                    i1 = np.searchsorted(b_az, az + reach - two_pi, side="right")
                for b in range(i0, i1):
                    dd = az - b_az[b]
                    if dd > math.pi:
                        dd -= two_pi
                    elif dd < -math.pi:
                        dd += two_pi
                    bh = b_ha[b]
                    if abs(dd) >= ah_max + bh:
                        continue
                    acc = 0.0
                    for p in range(n_p):
                        ov_az = min(dd + ah[p], bh) - max(dd - ah[p], -bh)
                        if ov_az <= 0:
                            continue
                        ov_el = min(s1[p], b_shi[b]) - max(s0[p], b_slo[b])
                        if ov_el <= 0:
                            continue
                        acc += ov_az * ov_el * dl[p]
                    out[w, t, b_k[b]] += b_w[b] * acc


def element_power_static(
    beams, target, contrast, walks, lens_height: float, n_elements: int, window_transmittance: float
) -> np.ndarray:
    """Element power [W] of a static-part target, shape (walks, samples, elements)."""
    order = np.argsort(beams.azimuth, kind="stable")
    b_az = np.ascontiguousarray(beams.azimuth[order])
    b_ha = np.ascontiguousarray(beams.half_azimuth[order])
    lo = np.maximum(beams.elevation - beams.half_elevation, -math.pi / 2)[order]
    hi = np.minimum(beams.elevation + beams.half_elevation, math.pi / 2)[order]
    b_w = np.ascontiguousarray(beams.weight[order])
    b_k = np.ascontiguousarray(beams.element[order]).astype(np.int64)
    parts = target.parts
    out = np.zeros((walks.n_walks, walks.n_samples, n_elements))
    head = walks.heading
    if head.ndim == 3 and head.shape[1] > 1 and head.strides[1] == 0:
        head = head[:, :1, :]  # one heading per walk (a broadcast view): no copy
    _kernel(
        np.ascontiguousarray(walks.position, dtype=float),
        np.ascontiguousarray(head, dtype=float),
        np.array([p.width_front for p in parts]),
        np.array([p.width_side for p in parts]),
        np.array([p.z_bottom for p in parts]),
        np.array([p.z_top for p in parts]),
        np.ascontiguousarray(contrast, dtype=float),
        float(lens_height),
        b_az,
        b_ha,
        np.ascontiguousarray(np.sin(lo)),
        np.ascontiguousarray(np.sin(hi)),
        b_w,
        b_k,
        float(b_ha.max()) if b_ha.size else 0.0,
        n_elements,
        out,
    )
    return window_transmittance * out
