"""Decision logic: pulses from the window comparator, pulse counting, blanking, hold timer,
re-arm lockout and daylight inhibit, sampled at a stated logic rate.

Pulses are found for all walks at once with array operations; the sequential rules then
run over the pulse events of each walk, so their cost scales with the number of threshold
events, not with the number of samples. The rules follow common practice for occupancy
and intrusion detectors (REFERENCES.md: pulse count 1–4 within 2–10 s, blanking, a
retriggerable hold timer, a re-arm lockout after the output turns off, daylight inhibit
with hysteresis).
"""

from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np

from .comparator import WindowComparator, latch
from .errors import DesignError, check_nonnegative, check_positive, check_range


@dataclass(frozen=True)
class Pulses:
    """Excursions outside the window, flattened over walks (arrays over pulses).

    Attributes
    ----------
    walk : numpy.ndarray of int
        Walk index of each pulse.
    start, end : numpy.ndarray
        Start and end times [s] (end is the first logic sample back inside).
    sign : numpy.ndarray of int
        +1 above the window, −1 below.
    peak : numpy.ndarray
        Largest |v − centre| during the pulse, in units of the threshold.
    """

    walk: np.ndarray
    start: np.ndarray
    end: np.ndarray
    sign: np.ndarray
    peak: np.ndarray

    def slice(self, a: int, b: int) -> Pulses:
        """Pulses a to b (exclusive) of the flattened list."""
        return Pulses(
            self.walk[a:b], self.start[a:b], self.end[a:b], self.sign[a:b], self.peak[a:b]
        )

    def of_walk(self, w: int) -> Pulses:
        """The pulses of one walk."""
        k = self.walk == w
        return Pulses(self.walk[k], self.start[k], self.end[k], self.sign[k], self.peak[k])


def resample(v: np.ndarray, sample_rate: float, logic_rate: float):
    """Comparator input seen at the logic clock: (times, values) of shape (walks, ticks).

    Below the analog rate the last analog sample before each tick is taken (a sampled
    input); above it the analog samples are linearly interpolated.
    """
    t_end = (v.shape[-1] - 1) / sample_rate
    ticks = np.arange(int(np.floor(t_end * logic_rate + 1e-9)) + 1) / logic_rate
    pos = ticks * sample_rate
    if logic_rate <= sample_rate:
        return ticks, v[..., np.minimum(np.floor(pos + 1e-9).astype(int), v.shape[-1] - 1)]
    i0 = np.minimum(np.floor(pos).astype(int), v.shape[-1] - 2)
    frac = pos - i0
    return ticks, v[..., i0] * (1 - frac) + v[..., i0 + 1] * frac


def find_pulses(v: np.ndarray, times: np.ndarray, comparator: WindowComparator) -> Pulses:
    """All pulses of a batch of comparator-input waveforms sampled at ``times``.

    A pulse is a run of logic ticks outside the window on one side; a direct jump from
    above to below ends one pulse and starts the next.
    """
    state = comparator.states(v)
    w, t = state.shape
    pad = np.zeros((w, 1), dtype=np.int8)
    padded = np.concatenate([pad, state, pad], axis=1)  # padded[:, c + 1] = state[:, c]
    before, after = padded[:, :-1], padded[:, 1:]
    changed = before != after
    s_rows, s_cols = np.nonzero(changed & (after != 0))  # row-major: sorted by walk, time
    _, e_cols = np.nonzero(changed & (before != 0))
    sign = state[s_rows, s_cols].astype(int)
    dev = np.abs(v - comparator.centre) / comparator.threshold
    flat = np.append(dev.ravel(), -np.inf)
    bounds = np.empty(2 * s_rows.size, dtype=np.intp)
    bounds[0::2] = s_rows * t + s_cols
    bounds[1::2] = s_rows * t + e_cols
    peak = np.maximum.reduceat(flat, bounds)[0::2] if s_rows.size else np.zeros(0)
    step = times[1] - times[0] if times.size > 1 else 0.0
    t_ext = np.append(times, times[-1] + step)
    return Pulses(s_rows, times[s_cols], t_ext[e_cols], sign, peak)


@dataclass(frozen=True)
class DaylightInhibit:
    """Light-dependent-resistor divider that stops the output turning on in daylight.

    The LDR sits between the supply and the sense node, R_fixed from the node to ground, so
    brighter light raises the node voltage. R_LDR = R_10 (lux/10)^(−γ) (common practice,
    γ ≈ 0.7). Inhibit sets above ``v_on`` and clears below ``v_on − hysteresis``.
    """

    supply: float
    r_fixed: float
    r_ldr_10lux: float = 50e3
    gamma: float = 0.7
    v_on: float = 1.65
    hysteresis: float = 0.2

    def __post_init__(self):
        check_positive("logic.daylight.supply", self.supply, "V")
        check_positive("logic.daylight.r_fixed", self.r_fixed, "Ω")
        check_positive("logic.daylight.r_ldr_10lux", self.r_ldr_10lux, "Ω")
        check_range("logic.daylight.gamma", self.gamma, 0.1, 2.0)
        check_range("logic.daylight.v_on", self.v_on, 0.0, self.supply, "V")
        check_nonnegative("logic.daylight.hysteresis", self.hysteresis, "V")

    def node_voltage(self, lux):
        """Sense-node voltage for an illuminance [lux] (> 0)."""
        lx = np.clip(np.asarray(lux, dtype=float), 1e-6, None)
        r_ldr = self.r_ldr_10lux * (lx / 10.0) ** (-self.gamma)
        return self.supply * self.r_fixed / (self.r_fixed + r_ldr)

    def inhibited(self, lux) -> np.ndarray:
        """Inhibit state along the last axis of a lux history."""
        v = self.node_voltage(lux)
        return latch(v > self.v_on, v < self.v_on - self.hysteresis)

    def current(self, lux: float = 1000.0) -> float:
        """Divider current at an illuminance [A]."""
        return float(self.node_voltage(lux)) / self.r_fixed


@dataclass(frozen=True)
class PulseLogic:
    """Pulse-count and timer rules.

    Attributes
    ----------
    rate : float
        Logic sample rate [Hz].
    pulses_required : int
        N pulses within ``count_window`` trigger the output.
    count_window : float
        T_w [s].
    alternate : bool
        Successive counted pulses must alternate in sign (a same-sign pulse is rejected).
    single_pulse_factor : float or None
        A single pulse reaching this multiple of the threshold triggers at once.
    blanking : float
        After each counted pulse ends, pulses starting within this time are ignored [s].
    hold : float
        Output on-time after the last trigger [s].
    retrigger : bool
        A trigger while on restarts the hold timer.
    lockout : float
        After the output turns off, pulses are ignored for this time [s].
    daylight : DaylightInhibit or None
        Optional inhibit of turning on.
    """

    rate: float = 50.0
    pulses_required: int = 2
    count_window: float = 4.0
    alternate: bool = False
    single_pulse_factor: float | None = None
    blanking: float = 0.3
    hold: float = 60.0
    retrigger: bool = True
    lockout: float = 2.0
    daylight: DaylightInhibit | None = field(default=None)

    def __post_init__(self):
        check_range("logic.rate", self.rate, 0.5, 1e5, "Hz")
        if not isinstance(self.pulses_required, int) or not 1 <= self.pulses_required <= 16:
            raise DesignError("logic.pulses_required", self.pulses_required, "an integer 1–16")
        check_positive("logic.count_window", self.count_window, "s")
        if self.single_pulse_factor is not None:
            check_range("logic.single_pulse_factor", self.single_pulse_factor, 1.0, 100.0)
        check_nonnegative("logic.blanking", self.blanking, "s")
        check_positive("logic.hold", self.hold, "s")
        check_nonnegative("logic.lockout", self.lockout, "s")


@dataclass(frozen=True)
class Decision:
    """Output of the logic for one walk.

    Attributes
    ----------
    triggers : numpy.ndarray
        Times at which the rules fired (including retriggers) [s].
    on_intervals : list of (float, float)
        Output on from / to [s] (``inf`` if still on at the end).
    counted : numpy.ndarray
        Start times of the pulses that were counted [s].
    """

    triggers: np.ndarray
    on_intervals: list
    counted: np.ndarray

    @property
    def detected(self) -> bool:
        """True if the output turned on."""
        return bool(self.on_intervals)

    @property
    def first_on(self) -> float:
        """Time the output first turned on [s], NaN if never."""
        return self.on_intervals[0][0] if self.on_intervals else float("nan")


def decide(pulses: Pulses, logic: PulseLogic, inhibit=None, ticks=None) -> Decision:
    """Run the rules over the pulses of one walk (time order).

    Parameters
    ----------
    pulses : Pulses
        Pulses of a single walk.
    logic : PulseLogic
        The rules.
    inhibit : numpy.ndarray of bool, optional
        Daylight-inhibit state at each logic tick.
    ticks : numpy.ndarray, optional
        Logic tick times matching ``inhibit``.
    """
    order = np.argsort(pulses.start, kind="stable")
    counted, triggers, intervals, kept = [], [], [], []
    last_sign = 0
    blank_until = -np.inf
    lockout_until = -np.inf
    on, on_start, on_until = False, 0.0, 0.0
    for i in order:
        t, sign, end, peak = pulses.start[i], pulses.sign[i], pulses.end[i], pulses.peak[i]
        if on and t >= on_until:
            intervals.append((on_start, on_until))
            on, lockout_until = False, on_until + logic.lockout
        if t < blank_until or (not on and t < lockout_until):
            continue
        counted = [c for c in counted if c > t - logic.count_window]
        if not counted:
            last_sign = 0
        if logic.alternate and last_sign == sign:
            continue
        blank_until = end + logic.blanking
        counted.append(t)
        kept.append(t)
        last_sign = sign
        big = logic.single_pulse_factor is not None and peak >= logic.single_pulse_factor
        if len(counted) < logic.pulses_required and not big:
            continue
        counted, last_sign = [], 0
        if not on:
            if inhibit is not None and inhibit[min(np.searchsorted(ticks, t), len(ticks) - 1)]:
                continue
            on, on_start, on_until = True, t, t + logic.hold
            triggers.append(t)
        elif logic.retrigger:
            on_until = t + logic.hold
            triggers.append(t)
    if on:
        intervals.append((on_start, on_until))
    return Decision(np.array(triggers), intervals, np.array(kept))


def run_logic(
    v: np.ndarray, sample_rate: float, comparator: WindowComparator, logic: PulseLogic, lux=None
) -> tuple[Pulses, list[Decision]]:
    """Comparator and rules for a batch of comparator-input waveforms.

    Parameters
    ----------
    v : numpy.ndarray, shape (walks, samples)
        Comparator input [V] at ``sample_rate``.
    lux : float or numpy.ndarray, optional
        Illuminance, scalar or per logic tick (walks, ticks), for the daylight inhibit.
    """
    ticks, vl = resample(np.atleast_2d(v), sample_rate, logic.rate)
    pulses = find_pulses(vl, ticks, comparator)
    inhibit = None
    if logic.daylight is not None and lux is not None:
        inhibit = np.broadcast_to(
            logic.daylight.inhibited(np.broadcast_to(np.asarray(lux, float), vl.shape)), vl.shape
        )
    # pulses come sorted by walk: cut them into per-walk slices once
    bounds = np.searchsorted(pulses.walk, np.arange(vl.shape[0] + 1))
    decisions = [
        decide(
            pulses.slice(bounds[w], bounds[w + 1]),
            logic,
            None if inhibit is None else inhibit[w],
            ticks,
        )
        for w in range(vl.shape[0])
    ]
    return pulses, decisions
