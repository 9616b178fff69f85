"""A two-wire switch across the change between its states, and what its own supply and lamp
do to the detector.

Change: the power stage steps through off → on → off at the low mains limit with the chain's
draw and the switch's own (indicator, relay coil, gate pulses); the chain's rail is the
storage capacitor less the regulator's dropout, up to the nominal rail. The rail's movement
reaches the comparator through every stage whose reference is the supply's divider
(ratiometric): a stage's output obeys v_out − v_ref = H(s)(v_in − v_ref), so with its
reference moving by r(t) its output moves by r + H(v_in − r); the window, cut from the same
rail, moves by its centre's share. The result is clipped to the rails (the linear response
of a deep dip is far beyond them). The difference is driven into the engine's comparator
input (:meth:`pirchain.chain.detector.Detector.drive`) with nobody walking: pulses and
turn-ons it causes are the supply's own (linear in the rail's movement; the op-amps' rails
moving with the supply are not modelled).

Lamp: after switch-off the lamp's warm glass or heat sink, where it lies in the beams,
cools; its equivalent power (:func:`pirchain.physics.disturbance.lamp_power`) is driven
through the whole chain, and the last time the comparator input leaves the window is the
re-arm lockout that covers it. Its light at the daylight sensor is compared with the
inhibit's threshold.
"""

from __future__ import annotations

import math
import warnings
from dataclasses import dataclass, replace

import numpy as np
from scipy import signal

from ..chain.power_stage import initial_state, run_power_stage
from ..errors import ValidityWarning
from ..physics.disturbance import lamp_power

OFF_BEFORE, OFF_AFTER = 2.0, 4.0
KEEP_RATE = 1000.0  # samples per second kept of the storage capacitor


@dataclass(frozen=True)
class ChangeStudy:
    """The storage capacitor and the chain's rail through off → on → off.

    Attributes
    ----------
    lamp : str
    time, v_store, rail : numpy.ndarray
        [s], [V], [V] (kept at 1 kHz).
    on_from, on_until : float
        [s].
    rail_nominal, rail_minimum : float
        The regulated rail and the lowest at which the chain works [V].
    rail_min, v_store_min : float
        Lowest rail and storage voltage reached [V].
    below_s : float
        Time the rail spent below its minimum [s].
    comparator_peak : float
        Largest movement of the comparator input against its window the rail causes [V].
    window_half : float
        The window's half-width [V].
    supply_pulses, supply_turn_ons : int
        Comparator pulses and output turn-ons the rail's movement causes by itself.
    """

    lamp: str
    time: np.ndarray
    v_store: np.ndarray
    rail: np.ndarray
    on_from: float
    on_until: float
    rail_nominal: float
    rail_minimum: float
    rail_min: float
    v_store_min: float
    below_s: float
    comparator_peak: float
    window_half: float
    supply_pulses: int
    supply_turn_ons: int

    @property
    def dips_below(self) -> bool:
        return self.rail_min < self.rail_minimum


def rail_minimum(design) -> float:
    """The lowest rail at which the chain works [V] (the design's, or 90 % of the rail)."""
    sw = design.two_wire.switch
    v = design.operating.supply.voltage
    return sw.rail_minimum if sw.rail_minimum is not None else 0.9 * v


def reference_response(detector, delta, fs) -> np.ndarray:
    """Comparator input against its window's centre [V] when the rail moves by the fraction
    ``delta`` (samples at ``fs`` Hz), every stage's reference that is the supply's divider
    moving with it."""
    ref = detector.supply.reference
    d = np.zeros_like(delta)
    for st in detector.stages:
        r = st.v_ref * delta if st.v_ref and math.isclose(st.v_ref, ref, rel_tol=1e-9) else 0.0
        tf = st.transfer_function(False)
        z, p, k = tf.zeros(), tf.poles(), float(np.real(tf.num[0][0][0] / tf.den[0][0][0]))
        zd, pd, kd = signal.bilinear_zpk(z, p, k, fs)
        d = r + signal.sosfilt(signal.zpk2sos(zd, pd, kd), d - r)  # from rest: δ(0) = 0
    return d - detector.comparator.centre * delta


def change_study(design, lamp=None, storage=None) -> ChangeStudy:
    """Off → on → off of the design's first lamp (or ``lamp``) at the low mains limit."""
    tw = design.two_wire
    sw = tw.switch if storage is None else replace(tw.switch, storage_capacitance=storage)
    lamp = lamp or tw.lamps[0]
    det = design.operating
    draw = det.supply_budget().total
    on_from, on_until = OFF_BEFORE, OFF_BEFORE + tw.on_time
    duration = on_until + OFF_AFTER
    keep = max(1, int(round(2000 * sw.mains.frequency / KEEP_RATE)))
    v_cap = 0.0
    if lamp.kind == "led":  # the lamp's input capacitor where the off state leaves it
        from .two_wire import off_state

        off = off_state(sw, lamp, draw)
        v_cap = off.settles_at if math.isfinite(off.settles_at) else lamp.stop_voltage
    st = initial_state(sw, lamp, v_cap=v_cap)
    run = run_power_stage(sw, lamp, draw, duration, on=(on_from, on_until), state=st, keep=keep,
                          mains_voltage=sw.mains.low)  # fmt: skip
    v_rail = det.supply.voltage
    rail = np.minimum(v_rail, np.maximum(run.v_store - sw.ldo_dropout, 0.0))
    step = float(run.time[1] - run.time[0]) if run.time.size > 1 else 1.0 / KEEP_RATE
    minimum = rail_minimum(design)
    fs = design.analysis.sample_rate
    block = max(1, int(round(1.0 / (fs * step))))
    n = rail.size // block
    delta = rail[: n * block].reshape(n, block).mean(axis=1) / v_rail - 1.0
    lo, hi = det.window()
    rest = det.rest_levels()[-1]  # the comparator input cannot leave the rails
    extra = np.clip(reference_response(det, delta, fs), -rest, v_rail - rest)
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", ValidityWarning)
        out = det.drive("equivalent_power", np.zeros((1, n)), fs, extra=extra[None, :]).outcomes
    return ChangeStudy(
        lamp.label, run.time, run.v_store, rail, on_from, on_until, v_rail, minimum,
        float(min(rail.min(), max(run.vs_min - sw.ldo_dropout, 0.0))), run.vs_min,
        float(np.sum(rail < minimum) * step), float(np.max(np.abs(extra))) if n else 0.0,
        0.5 * (hi - lo), int(out.pulses[0]), int(out.turn_ons[0]),
    )  # fmt: skip


def recommended_storage(design, lamp=None, margin: float = 1.5) -> tuple[float, float]:
    """(minimum, recommended) storage capacitance [F]: the charge the change takes from a
    capacitor too large to move (100 × the design's) over the span from its steady off-state
    level down to the rail minimum plus the regulator's dropout; recommended with ``margin``
    (electrolytics lose 20 % to tolerance and more to age: common practice)."""
    tw = design.two_wire
    big = 100.0 * tw.switch.storage_capacitance
    study = change_study(design, lamp, storage=big)
    before = float(np.interp(study.on_from, study.time, study.v_store))  # steady off level
    deficit = big * max(before - study.v_store_min, 0.0)
    span = before - rail_minimum(design) - tw.switch.ldo_dropout
    if span <= 0:
        return math.inf, math.inf
    c_min = deficit / span
    return c_min, float(f"{margin * c_min:.2g}") if c_min > 0 else 0.0


@dataclass(frozen=True)
class LampSelfTrigger:
    """The lamp's heat and light at the detector after switch-off.

    Attributes
    ----------
    pulses, turn_ons : int
        What the cooling lamp causes with no lockout.
    last_outside_s : float
        Last time after switch-off the comparator input is outside the window [s] (0: never).
    lockout_s : float
        The design's re-arm lockout [s].
    lux_on : float
        Illuminance at the daylight sensor with the lamp on [lux].
    inhibits_itself : bool or None
        The lamp's own light sets the daylight inhibit (None: no inhibit).
    """

    pulses: int
    turn_ons: int
    last_outside_s: float
    lockout_s: float
    lux_on: float
    inhibits_itself: bool | None

    @property
    def covered(self) -> bool:
        """The lockout outlasts the lamp's own signal."""
        return self.last_outside_s <= self.lockout_s


def lamp_self_trigger(design) -> LampSelfTrigger | None:
    """What the design's lamp in view does at switch-off (None: no lamp in view)."""
    view = design.two_wire.view
    if view is None:
        return None
    det = design.operating
    fs = design.ambient.sample_rate
    duration = min(max(6.0 * view.cooling_s, 20.0), 900.0)
    t = np.arange(int(math.ceil(duration * fs))) / fs
    p = lamp_power(det, design.environment, view, t)
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", ValidityWarning)
        run = det.drive("equivalent_power", p[None, :], fs, ("comparator",))
    lo, hi = det.window()
    v = run.comparator_input[0]
    out = np.flatnonzero((v < lo) | (v > hi))
    last = float(t[out[-1]]) if out.size else 0.0
    logic = det.logic
    lux_on = (design.lux or 0.0) + view.lux
    inhibit = None
    if logic is not None and logic.daylight is not None:
        inhibit = bool(float(logic.daylight.node_voltage(lux_on)) >= logic.daylight.v_on)
    return LampSelfTrigger(int(run.outcomes.pulses[0]), int(run.outcomes.turn_ons[0]), last,
                           logic.lockout if logic else 0.0, lux_on, inhibit)  # fmt: skip
