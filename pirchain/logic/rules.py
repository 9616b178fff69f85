"""Decision logic: pulse counting, blanking, hold timer, re-arm lockout and daylight
inhibit, sampled at a stated logic rate; their parameters, the logic clock, and the
typed results.

The rules run on each pulse as it ends, in the chain's compiled pass
(:func:`pirchain.kernels.logic.logic_walk`), so their cost scales with the number of
threshold events, not with the number of samples. They follow common practice for
occupancy and intrusion detectors (pulse count 1–4 within 2–10 s, blanking, a
retriggerable hold timer, a re-arm lockout after the output turns off, daylight inhibit
with hysteresis; docs/validation.md lists the sources).
"""

from __future__ import annotations

from dataclasses import dataclass, field, fields

import numpy as np

from ..errors import DesignError, check_nonnegative, check_positive, check_range


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
        Output on from / to [s]; "to" is the last trigger plus the hold time, so it may
        lie beyond the end of the walk.
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


@dataclass(frozen=True)
class Pulses:
    """Excursions outside the window, flattened over walks (arrays over pulses, in walk and
    time order).

    Attributes
    ----------
    walk : numpy.ndarray of int
        Walk index of each pulse.
    start, end : numpy.ndarray
        Start and end times [s] (end is the first logic tick back inside).
    sign : numpy.ndarray of int
        +1 above the window, −1 below.
    peak : numpy.ndarray
        Largest |v − centre| during the pulse, in units of the threshold.
    counted : numpy.ndarray of bool
        The rules counted the pulse (not blanked, locked out or rejected by alternation).
    fired : numpy.ndarray of bool
        The rules fired at this pulse and turned the output on or retriggered it.
    """

    walk: np.ndarray
    start: np.ndarray
    end: np.ndarray
    sign: np.ndarray
    peak: np.ndarray
    counted: np.ndarray
    fired: np.ndarray

    def _select(self, k) -> Pulses:
        return Pulses(*(getattr(self, f.name)[k] for f in fields(self)))

    def slice(self, a: int, b: int) -> Pulses:
        """Pulses a to b (exclusive) of the flattened list."""
        return self._select(slice(a, b))

    def of_walk(self, w: int) -> Pulses:
        """The pulses of one walk."""
        return self._select(self.walk == w)


@dataclass(frozen=True)
class LogicClock:
    """Where the logic clock reads the analog waveform.

    Attributes
    ----------
    ticks : numpy.ndarray
        Tick times [s].
    index : numpy.ndarray of int
        Analog sample read at each tick (the lower one when interpolating).
    frac : numpy.ndarray
        Weight of the next analog sample (all zero when not interpolating).
    interpolate : bool
        The logic rate is above the analog rate.
    """

    ticks: np.ndarray
    index: np.ndarray
    frac: np.ndarray
    interpolate: bool


def logic_clock(n_samples: int, sample_rate: float, logic_rate: float) -> LogicClock:
    """Ticks of a logic clock at ``logic_rate`` over ``n_samples`` analog samples.

    Below the analog rate a tick reads the last analog sample at or before it (a sampled
    input); above it the two neighbouring samples are interpolated linearly.
    """
    t_end = (n_samples - 1) / sample_rate
    ticks = np.arange(int(np.floor(t_end * logic_rate + 1e-9)) + 1) / logic_rate
    pos = ticks * sample_rate
    interpolate = logic_rate > sample_rate and n_samples > 1
    if interpolate:
        index = np.minimum(np.floor(pos).astype(np.int64), n_samples - 2)
        frac = pos - index
    else:
        index = np.minimum(np.floor(pos + 1e-9).astype(np.int64), n_samples - 1)
        frac = np.zeros(ticks.size)
    return LogicClock(ticks, index, frac, bool(interpolate))
