"""How often a design fires with nobody there: analytic (Rice) and Monte Carlo.

Analytic: the comparator-input PSD is the sum of every noise source and the stationary
draught; Rice's formula gives the rate of up-crossings of the upper window edge and
down-crossings of the lower one (the pulse rate); pulse counting, the count window and the
blanking dead time are applied with a Poisson approximation
(:func:`pirchain.rice.clustered_alarm_rate`). Monte Carlo: independent noise streams are
synthesised chunk by chunk with stateful filters (seeded) and run through the real
comparator and decision logic; output turn-ons are counted and every rate has an exact 95 %
Poisson interval. Noise is added at the comparator input (superposition of the linear
chain), valid while it stays far from the rails. The logic restarts at chunk boundaries
(chunks of ≥ 10 min make the edge effect < (T_w + hold)/chunk).

References
----------
.. [1] Rice, S. O., Bell Syst. Tech. J. 23, 282 (1944); 24, 46 (1945).
"""

from __future__ import annotations

import dataclasses
import functools
import math
from dataclasses import dataclass

from scipy import optimize

from ..circuit.comparator import FixedWindow, WindowComparator
from ..circuit.noise import NoiseSource, band_grid, noise_sources, total_psd
from ..circuit.synthesis import NoiseSynthesizer, dominant_sources
from ..errors import DesignError, check_positive
from ..logic.rules import PulseLogic
from ..physics.disturbance import Draught, draught_parts, draught_transfer
from .rice import clustered_alarm_rate, poisson_interval, spectral_moment, upcrossing_rate

HOUR, DAY, YEAR = 3600.0, 86400.0, 365.25 * 86400.0
DRAUGHT_SOURCE = "HVAC draught"  # the name of the draught's noise source


def comparator_sources(detector, env, draught: Draught | None = None) -> list[NoiseSource]:
    """Noise sources plus the draught (as one shaped source) at the comparator input.

    The sources of one (detector, room, draught) are built once and remembered (a report
    asks for them from several analyses; each build multiplies transfer functions); a new
    list is returned each time. Parts that cannot be hashed are built afresh."""
    try:
        return list(_remembered_sources(detector, env, draught))
    except TypeError:  # an unhashable part: nothing to remember it by
        return _build_sources(detector, env, draught)


@functools.lru_cache(maxsize=16)
def _remembered_sources(detector, env, draught) -> tuple[NoiseSource, ...]:
    return tuple(_build_sources(detector, env, draught))


def _build_sources(detector, env, draught) -> list[NoiseSource]:
    src = noise_sources(detector)
    if draught is not None and draught.rms > 0:
        diff, common = draught_parts(detector, env, draught)
        level = 4 * draught.rms**2 * draught.correlation_time * (diff + common)
        if level > 0:
            src.append(
                NoiseSource(
                    DRAUGHT_SOURCE, level, draught_transfer(detector, draught), electrical=False
                )
            )
    return src


@dataclass(frozen=True)
class RateEstimate:
    """False-trigger rates.

    Attributes
    ----------
    sigma : float
        rms of the comparator-input noise [V].
    nu0 : float
        Zero up-crossing rate √(m2/m0) [s⁻¹].
    pulse_rate : float
        Rice rate of excursions outside the window [s⁻¹].
    alarm_rate : float
        Rate of output turn-ons with the pulse-count logic (Poisson approximation) and the
        dead time of the hold and lockout after each turn-on [s⁻¹].
    counted_rate : float
        Rate of counted alarms before that dead time (rises monotonically as the threshold
        falls, where the turn-on rate falls again once the output is held on) [s⁻¹].
    """

    sigma: float
    nu0: float
    pulse_rate: float
    alarm_rate: float
    counted_rate: float = math.nan

    def per(self, unit: float = YEAR) -> float:
        """Alarm rate per ``unit`` seconds."""
        return self.alarm_rate * unit


# Below about once in a thousand years a rate is a Gaussian tail read many standard
# deviations out: real parts have bursts (popcorn noise, supply transients, radio pickup)
# that no Gaussian noise budget holds, so the model cannot claim less.
RATE_FLOOR_PER_YEAR = 1e-3
FLOOR_REASON = (
    "a Gaussian tail far beyond what the noise model can claim: bursts and rare events of "
    "real parts are not in it"
)


def format_rate(per_year: float) -> str:
    """Human form of a rate ("below 0.001 per year" under :data:`RATE_FLOOR_PER_YEAR`)."""
    if not per_year >= RATE_FLOOR_PER_YEAR:
        return f"below {RATE_FLOOR_PER_YEAR:g} per year ({FLOOR_REASON})"
    if per_year < 365.25:
        return f"{per_year:.3g} per year"
    return f"{per_year / 365.25:.3g} per day"


def rate_fields(per_year: float, prefix: str = "alarms") -> dict:
    """The JSON form of a rate: the number, and beside it whether it is under the floor."""
    return {
        f"{prefix}_per_year": per_year,
        f"{prefix}_below_floor": bool(not per_year >= RATE_FLOOR_PER_YEAR),
        "rate_floor_per_year": RATE_FLOOR_PER_YEAR,
    }


def _edges(detector):
    lo, hi = detector.window()
    rest = detector.rest_levels()[-1]
    return hi - rest, rest - lo


def turn_on_rate(alarm_rate: float, logic: PulseLogic) -> float:
    """Output turn-ons per second for counted alarms arriving at ``alarm_rate`` [s⁻¹].

    After a turn-on the output holds; a retriggerable hold is extended by every alarm that
    comes while it is on (a paralysable dead time), a fixed one is not (non-paralysable);
    then the lockout keeps the output from re-arming (non-paralysable). Dead-time models of
    Knoll, *Radiation Detection and Measurement*, ch. 4: m = n e^(−nτ) and m = n/(1 + nτ).
    """
    a = alarm_rate
    if logic.retrigger:
        a = a * math.exp(-a * logic.hold)
        return a / (1.0 + a * logic.lockout)
    return a / (1.0 + a * (logic.hold + logic.lockout))


def analytic_rate(
    detector, env, draught: Draught | None = None, sources=None, f=None
) -> RateEstimate:
    """Rice pulse rate and the pulse-count alarm rate of a design."""
    sources = comparator_sources(detector, env, draught) if sources is None else sources
    f = band_grid(1e-3, 1e3, 6000) if f is None else f
    psd = total_psd(sources, f)
    m0, m2 = spectral_moment(f, psd, 0), spectral_moment(f, psd, 2)
    u_hi, u_lo = _edges(detector)
    pulse = float(upcrossing_rate(u_hi, m0, m2) + upcrossing_rate(u_lo, m0, m2))
    logic = detector.logic or PulseLogic()
    mean_width = 1.0 / (4.0 * math.sqrt(m2 / m0))  # crude: a quarter of a mean period
    counted = clustered_alarm_rate(
        pulse, logic.pulses_required, logic.count_window, logic.blanking + mean_width
    )
    alarm = turn_on_rate(counted, logic)
    return RateEstimate(math.sqrt(m0), math.sqrt(m2 / m0), pulse, alarm, counted)


@dataclass(frozen=True)
class MonteCarloRate:
    """Counted false triggers.

    Attributes
    ----------
    duration : float
        Simulated time over all streams [s].
    pulses, alarms : int
        Comparator pulses and output turn-ons counted.
    pulse_interval, alarm_interval : tuple of float
        95 % intervals of the rates [s⁻¹].
    """

    duration: float
    pulses: int
    alarms: int
    pulse_interval: tuple[float, float]
    alarm_interval: tuple[float, float]

    @property
    def pulse_rate(self) -> float:
        """[s⁻¹]."""
        return self.pulses / self.duration

    @property
    def alarm_rate(self) -> float:
        """[s⁻¹]."""
        return self.alarms / self.duration


def monte_carlo_rate(
    detector,
    env,
    duration: float,
    draught: Draught | None = None,
    seed: int = 0,
    streams: int = 8,
    chunk: float = 900.0,
    sample_rate: float = 100.0,
    sources=None,
    min_share: float = 1e-4,
    progress=None,
) -> MonteCarloRate:
    """Count false triggers over ``duration`` seconds of simulated time (all streams).

    Parameters
    ----------
    duration : float
        Total simulated time, split over ``streams`` parallel realisations [s].
    seed : int
        Seed; the same seed gives the same counts.
    chunk : float
        Length of each chunk per stream [s].
    min_share : float
        Sources below this share of the total variance are not synthesised (speed).
    progress : callable, optional
        Called with the fraction done after every chunk.
    """
    check_positive("duration", duration, "s")
    sources = comparator_sources(detector, env, draught) if sources is None else sources
    keep = dominant_sources(sources, min_share)
    synth = NoiseSynthesizer(keep, sample_rate, streams, seed)
    rest = detector.rest_levels()[-1]
    per_stream = duration / streams
    n_chunks = max(1, int(math.ceil(per_stream / chunk)))
    n = int(round(per_stream / n_chunks * sample_rate))
    warm = int(min(60.0, per_stream / 10) * sample_rate)
    synth.next(warm)  # start the filters in their stationary state
    chain = detector.compile(sample_rate, n)
    pulses = alarms = 0
    for c in range(n_chunks):
        out = chain.drive("comparator", rest + synth.next(n)).outcomes
        pulses += int(out.pulses.sum())
        alarms += int(out.turn_ons.sum())
        if progress is not None:
            progress((c + 1) / n_chunks)
    total = n_chunks * n / sample_rate * streams
    return MonteCarloRate(
        total, pulses, alarms, poisson_interval(pulses, total), poisson_interval(alarms, total)
    )


def with_threshold(detector, threshold: float):
    """The design with its window replaced by a fixed ±``threshold`` around the rest level."""
    rest = detector.rest_levels()[-1]
    comp = WindowComparator(
        FixedWindow(rest, threshold), min(detector.comparator.hysteresis, 0.5 * threshold)
    )
    return dataclasses.replace(detector, comparator=comp)


def threshold_for_rate(detector, env, target_rate: float, draught: Draught | None = None):
    """Threshold (symmetric half-width) whose analytic alarm rate equals ``target_rate``.

    Returns
    -------
    threshold : float
        [V].
    sensitivity_resistor : float or None
        The ladder's middle resistor that gives this threshold (None if the window does not
        come from a ladder) [Ω].
    """
    check_positive("target_rate", target_rate, "/s")
    sources = comparator_sources(detector, env, draught)
    sigma = analytic_rate(detector, env, sources=sources).sigma

    def gap(log_th):  # on the counted rate, monotonic in the threshold; at budget-like
        # rates the hold and lockout change it by less than rate × (hold + lockout)
        est = analytic_rate(with_threshold(detector, math.exp(log_th)), env, sources=sources)
        return math.log(max(est.counted_rate, 1e-300)) - math.log(target_rate)

    lo, hi = math.log(0.5 * sigma), math.log(40.0 * sigma)
    if gap(lo) < 0:
        raise DesignError("target_rate", target_rate, "a rate below that of a 0.5 σ threshold")
    th = math.exp(optimize.brentq(gap, lo, hi, xtol=1e-6))
    return th, sensitivity_resistor_for(detector, th)


def sensitivity_resistor_for(detector, threshold: float):
    """The resistor of the detector's window that sets the half-width ``threshold`` [Ω],
    or None (a window no resistor sets, or a threshold it cannot reach)."""
    return detector.comparator.window.resistor_for_threshold(threshold)
