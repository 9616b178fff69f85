"""The sensor's gate node and the JFET follower, one walk at a time, in place.

The sensor's discrete section (:meth:`pirchain.physics.sensor.PyroSensor.sos`, the bilinear
transform of V_gate/P_eq) runs in parallel form H(z) = Σ r_i/(1 − p_i z⁻¹) + k when it is one
section with two distinct real poles (each state one multiply-add deep), else in direct
form II transposed as ``scipy.signal.sosfilt``; either way from rest with the first
sample's power taken as having been there for ever (the sensor's DC response is zero).
The follower applies :func:`pirchain.circuit.follower.source_voltage_at` to every sample.

References
----------
.. [1] Oppenheim, A. V. and Schafer, R. W., *Discrete-Time Signal Processing*, 3rd ed.,
   Pearson (2010), §6.3–6.5: direct, cascade and parallel forms of IIR systems.
"""

from __future__ import annotations

import numba

from ..circuit import follower as _follower
from .jit import JIT, rule

source_voltage_at = rule(_follower.source_voltage_at)


@numba.njit(**JIT)
def gate_walk(sig, sensor):
    """Equivalent power (samples,) [W] → gate voltage change [V], in place (or, with the
    gate node's impedance as the section, an element current [A] → the same).

    ``sensor`` is a :class:`pirchain.chain.tables.SensorTable`; the first sample is taken as
    having been there for ever: its response is ``sensor.dc_gain`` times it (zero for power,
    R_G for a current), added to the response to the change.
    """
    n_t = sig.shape[0]
    p0 = sig[0]
    for t in range(n_t):
        sig[t] -= p0
    if sensor.parallel:
        p1, p2, r1, r2, k0 = sensor.pole1, sensor.pole2, sensor.residue1, sensor.residue2, sensor.k
        w1 = w2 = 0.0
        for t in range(n_t):  # two first-order recursions, each one multiply-add deep
            x = sig[t]
            w1 = p1 * w1 + x
            w2 = p2 * w2 + x
            sig[t] = k0 * x + r1 * w1 + r2 * w2 + p0 * sensor.dc_gain
        return
    sos = sensor.sos
    for k in range(sos.shape[0]):  # one section at a time, state in registers
        b0, b1, b2 = sos[k, 0], sos[k, 1], sos[k, 2]
        a1, a2 = sos[k, 4], sos[k, 5]
        z0 = z1 = 0.0
        for t in range(n_t):  # direct form II transposed, as scipy.signal.sosfilt
            x = sig[t]
            y = b0 * x + z0
            z0 = b1 * x - a1 * y + z1
            z1 = b2 * x - a2 * y
            sig[t] = y
    if sensor.dc_gain != 0.0:
        for t in range(n_t):
            sig[t] += p0 * sensor.dc_gain


@numba.njit(**JIT)
def source_walk(sig, follower):
    """Gate voltage change (samples,) [V] → absolute source voltage [V], in place.

    ``follower`` is a :class:`pirchain.chain.tables.FollowerTable`; the change rides on the
    gate's DC bias.
    """
    a, k4, bias = follower.pinch_off, follower.k4, follower.gate_bias
    for t in range(sig.shape[0]):
        sig[t] = source_voltage_at(sig[t] + bias, a, k4)
