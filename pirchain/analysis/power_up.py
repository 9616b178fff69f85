"""Power-up: the comparator input after switch-on with every capacitor discharged, and the
warm-up time until it stays inside the window.

A non-inverting band-pass stage pinned at its rail charges its gain-leg capacitor through
Rf + R1 instead of R1, so warm-up lasts seconds to tens of seconds; the rail-pinned stage
model of :mod:`pirchain.circuit.rails` gives it, and ngspice agrees (docs/validation.md).
"""

from __future__ import annotations

import dataclasses
import math
from dataclasses import dataclass

import numpy as np

from ..chain.engine import ChainRun
from ..errors import check_range, warn_validity


@dataclass(frozen=True)
class PowerUp:
    """A power-up run.

    Attributes
    ----------
    time : numpy.ndarray
        [s].
    run : ChainRun
        Its waveforms (source, stages, comparator input; one walk).
    settling : float
        Time after which the comparator input stays inside the window [s]; ``inf`` if it
        never settles within the run.
    """

    time: np.ndarray
    run: ChainRun
    settling: float


def settling_time(t: np.ndarray, v: np.ndarray, window: tuple[float, float]) -> float:
    """First time after which ``v`` stays inside ``window`` to the end [s] (inf if never)."""
    lo, hi = window
    outside = np.flatnonzero((v <= lo) | (v >= hi))
    if outside.size == 0:
        return float(t[0])
    if outside[-1] == v.size - 1:
        return math.inf
    return float(t[outside[-1] + 1])


def power_up(
    detector, duration: float = 120.0, sample_rate: float = 50.0, gate_leakage=None,
    initial_gate=None,
) -> PowerUp:  # fmt: skip
    """Switch the detector on at t = 0 with every stage capacitor discharged.

    Parameters
    ----------
    detector : Detector
        At its operating temperature (``Design.operating``).
    duration : float
        Simulated time [s] (``AnalysisSettings.settle_duration``).
    sample_rate : float
        [Hz] (``AnalysisSettings.settle_sample_rate``; the signals are slow).
    gate_leakage : float, optional
        The JFET's gate leakage at this temperature [A], instead of the design's; it lifts
        the gate by I_G R_G (:attr:`pirchain.circuit.follower.SourceFollower.gate_bias`).
    initial_gate : float, optional
        Gate voltage at switch-on [V] (0: the gate capacitor discharged too). The gate
        then charges towards its bias I_G R_G through R_G ∥ C_gate (τ_E), driven through the
        engine's element-current node (a current whose first sample lifts the gate to this
        voltage, then none). Default: the gate starts at its bias.
    """
    check_range("power_up.duration", duration, 0.1, 1e5, "s")
    check_range("power_up.sample_rate", sample_rate, 1.0, 1e5, "Hz")
    if gate_leakage is not None:
        check_range("power_up.gate_leakage", gate_leakage, 0.0, 1e-6, "A")
        jfet = dataclasses.replace(detector.follower.jfet, gate_leakage=float(gate_leakage))
        follower = dataclasses.replace(detector.follower, jfet=jfet)
        detector = dataclasses.replace(detector, follower=follower)
    n = int(math.ceil(duration * sample_rate)) + 1
    taps = ("source", "stages", "comparator")
    if initial_gate is None:
        run = detector.drive("gate", np.zeros((1, n)), sample_rate, taps, start="discharged")
    else:
        check_range("power_up.initial_gate", initial_gate, -50.0, 50.0, "V")
        r_g = detector.sensor.gate_resistance
        current = np.zeros((1, n))
        current[0, 0] = (float(initial_gate) - detector.follower.gate_bias) / r_g
        run = detector.drive("element_current", current, sample_rate, taps, start="discharged")
    settle = settling_time(run.time, run.comparator_input[0], run.window)
    if not math.isfinite(settle):
        warn_validity(f"the chain has not settled inside the window after {duration:g} s")
    return PowerUp(run.time, run, settle)
