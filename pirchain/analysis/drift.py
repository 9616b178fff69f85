"""Deterministic disturbances through the whole chain: ambient ramps and HVAC cycling.

The disturbance's equivalent gate power (:mod:`pirchain.physics.disturbance`) is driven
into the chain at that node, so the sensor, the stages with their rails and the logic all
act on it.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

from ..physics.disturbance import AmbientRamp, HvacCycle, hvac_power, ramp_power


@dataclass(frozen=True)
class DisturbanceResponse:
    """Comparator input under a deterministic disturbance.

    Attributes
    ----------
    time : numpy.ndarray
        [s].
    equivalent_power : numpy.ndarray
        P_eq(t) [W].
    comparator_input : numpy.ndarray
        Absolute comparator input [V].
    peak_excursion : float
        Largest |v − rest| [V].
    turn_ons : int
        Output turn-ons the logic produced.
    pulses : int
        Comparator pulses (excursions outside the window) the logic saw.
    """

    time: np.ndarray
    equivalent_power: np.ndarray
    comparator_input: np.ndarray
    peak_excursion: float
    turn_ons: int
    pulses: int = 0


def _respond(detector, t, p_eq, sample_rate) -> DisturbanceResponse:
    run = detector.drive("equivalent_power", p_eq[None, :], sample_rate, ("comparator",))
    out = run.outcomes
    return DisturbanceResponse(
        t, p_eq, run.comparator_input[0], float(out.peak[0]), int(out.turn_ons[0]),
        int(out.pulses[0]),
    )  # fmt: skip


def ramp_response(
    detector, env, ramp: AmbientRamp, duration: float | None = None, sample_rate: float = 20.0
) -> DisturbanceResponse:
    """The chain's response to a uniform background ramp (leaks through the mismatch)."""
    duration = ramp.start + ramp.duration + 60.0 if duration is None else duration
    t = np.arange(int(math.ceil(duration * sample_rate))) / sample_rate
    return _respond(detector, t, ramp_power(detector, env, ramp, t), sample_rate)


def hvac_response(
    detector, env, hvac: HvacCycle, cycles: int = 3, sample_rate: float = 20.0
) -> DisturbanceResponse:
    """The chain's response to ``cycles`` periods of warm-air bursts."""
    t = np.arange(int(math.ceil(cycles * hvac.period * sample_rate))) / sample_rate
    return _respond(detector, t, hvac_power(detector, env, hvac, t), sample_rate)
