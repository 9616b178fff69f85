"""Environmental disturbances mapped to element power through the same optics as a target.

Each beam of element k ends on background surfaces of emissivity ε_b. A temperature change
δT of the surfaces that fill a fraction α of the beams changes the element power by
K_k α δT, with K_k = τ_window ε_b (dL/dT)(T_b) Σ_{beams of k} τ A cos θ Ω_beam. The gate
responds to P_eq = Σ c_k P_k, so for the + and − elements (sums a = Σ₊ c_k K_k,
b = Σ₋ c_k K_k; a = −b at zero mismatch):

* HVAC draught: stationary surface-temperature fluctuation with rms σ, exponential
  correlation time τ_c (PSD 4σ²τ_c/(1 + (2π f τ_c)²)) and correlation ρ between what the + and
  − beams see: S_Peq = α² S_T [(1 − ρ)(a² + b²) + ρ (a + b)²] — a differential part and a
  common part that only the mismatch lets through.
* Slow drift: every surface in view ramps at r K/min; only a + b (the mismatch) leaks, and
  the sensor's and amplifier's high-pass corners shape it.
* Periodic HVAC cycling: a warm-air burst on a surface seen by fractions α₊, α₋ of the + and
  − beams, rising and decaying exponentially, repeating every period.

References
----------
.. [1] IEC 60839-2-6 (1990): background disturbance test with a non-uniform background
   change of ≤ 0.5 °C (a secondary source; see docs/validation.md).
.. [2] ASHRAE practice: diffuser throw rated to 0.25 m/s at the occupied zone.
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from typing import TYPE_CHECKING

import numpy as np

from ..errors import DesignError, check_nonnegative, check_positive, check_range
from .radiometry import band_exitance_derivative

if TYPE_CHECKING:  # python-control loads on first use (start-up time)
    import control


@dataclass(frozen=True)
class Draught:
    """Stationary background temperature fluctuation from an HVAC draught.

    Attributes
    ----------
    rms : float
        Surface temperature fluctuation rms σ [K].
    correlation_time : float
        τ_c of the exponential autocorrelation [s].
    beam_correlation : float
        ρ between what the + and − beams see, in [0, 1].
    fov_fraction : float
        α, fraction of each beam's solid angle that sees the fluctuating surfaces.
    """

    rms: float = 0.01
    correlation_time: float = 5.0
    beam_correlation: float = 0.7
    fov_fraction: float = 0.2

    def __post_init__(self):
        check_nonnegative("draught.rms", self.rms, "K")
        check_positive("draught.correlation_time", self.correlation_time, "s")
        check_range("draught.beam_correlation", self.beam_correlation, 0.0, 1.0)
        check_range("draught.fov_fraction", self.fov_fraction, 0.0, 1.0)

    def temperature_psd(self, f) -> np.ndarray:
        """One-sided PSD of the surface temperature [K² Hz⁻¹]."""
        f = np.asarray(f, dtype=float)
        tc = self.correlation_time
        return 4.0 * self.rms**2 * tc / (1.0 + (2 * math.pi * f * tc) ** 2)


@dataclass(frozen=True)
class AmbientRamp:
    """Every surface in view warming (or cooling) at a constant rate.

    Attributes
    ----------
    rate : float
        [K min⁻¹].
    start : float
        Start time [s].
    duration : float
        Ramp length [s] (then the temperature stays).
    """

    rate: float = 1.0
    start: float = 5.0
    duration: float = 600.0

    def __post_init__(self):
        check_range("ramp.rate", self.rate, -60.0, 60.0, "K/min")
        check_nonnegative("ramp.start", self.start, "s")
        check_positive("ramp.duration", self.duration, "s")

    def temperature(self, t) -> np.ndarray:
        """Surface temperature change [K] at times ``t``."""
        t = np.asarray(t, dtype=float)
        return self.rate / 60.0 * np.clip(t - self.start, 0.0, self.duration)


@dataclass(frozen=True)
class HvacCycle:
    """A warm-air burst on a surface in view, repeated every period.

    Attributes
    ----------
    amplitude : float
        Surface temperature rise it tends to [K].
    rise, decay : float
        Exponential time constants while on and after [s].
    on_time : float
        How long the air blows [s].
    period : float
        Repeat interval [s].
    fraction_plus, fraction_minus : float
        Fractions of the + and − beams' solid angles that see the surface.
    """

    amplitude: float = 0.5
    rise: float = 20.0
    decay: float = 60.0
    on_time: float = 120.0
    period: float = 600.0
    fraction_plus: float = 0.3
    fraction_minus: float = 0.1

    def __post_init__(self):
        check_range("hvac.amplitude", self.amplitude, -20.0, 20.0, "K")
        check_positive("hvac.rise", self.rise, "s")
        check_positive("hvac.decay", self.decay, "s")
        check_positive("hvac.on_time", self.on_time, "s")
        if check_positive("hvac.period", self.period, "s") <= self.on_time:
            raise DesignError("hvac.period", self.period, f"longer than on_time = {self.on_time} s")
        check_range("hvac.fraction_plus", self.fraction_plus, 0.0, 1.0)
        check_range("hvac.fraction_minus", self.fraction_minus, 0.0, 1.0)

    def temperature(self, t) -> np.ndarray:
        """Surface temperature change [K] at times ``t`` (starting cold at t = 0)."""
        t = np.asarray(t, dtype=float)
        ph = np.mod(t, self.period)
        peak = self.amplitude * (1 - math.exp(-self.on_time / self.rise))
        on = self.amplitude * (1 - np.exp(-ph / self.rise))
        off = peak * np.exp(-(ph - self.on_time) / self.decay)
        return np.where(ph < self.on_time, on, off)


def element_gains(detector, env) -> np.ndarray:
    """K_k: element power per kelvin of all background surfaces in its beams [W K⁻¹]."""
    s = detector.sensor
    beams = detector.beams()
    t_b = env.surfaces_k
    dl_dt = float(band_exitance_derivative(t_b, s.band)) / math.pi
    per_beam = beams.weight * beams.solid_angle
    k = np.bincount(beams.element, per_beam, minlength=len(s.elements))
    return s.window_transmittance * env.background_emissivity * dl_dt * k


def polarity_sums(detector, env) -> tuple[float, float]:
    """(a, b) = (Σ₊ c_k K_k, Σ₋ c_k K_k) [W K⁻¹] for the gate source P_eq."""
    s = detector.sensor
    ck = s.coupling * element_gains(detector, env)
    pol = np.array([e.polarity for e in s.elements])
    return float(ck[pol > 0].sum()), float(ck[pol < 0].sum())


def draught_parts(detector, env, draught: Draught):
    """Level multipliers of the draught's (differential, common) parts of S_Peq [W² K⁻²]."""
    a, b = polarity_sums(detector, env)
    rho, al2 = draught.beam_correlation, draught.fov_fraction**2
    return al2 * (1 - rho) * (a * a + b * b), al2 * rho * (a + b) ** 2


def draught_transfer(detector, draught: Draught) -> control.TransferFunction:
    """Shaping from white noise (level 4σ²τ_c) to the comparator input: 1/(1+sτ_c) × H_chain."""
    import control

    return control.tf([1.0], [draught.correlation_time, 1.0]) * detector.transfer_function(True)


def ramp_power(detector, env, ramp: AmbientRamp, t) -> np.ndarray:
    """P_eq(t) of a uniform background ramp (only the mismatch leaks) [W]."""
    a, b = polarity_sums(detector, env)
    return (a + b) * ramp.temperature(t)


def hvac_power(detector, env, hvac: HvacCycle, t) -> np.ndarray:
    """P_eq(t) of periodic warm-air bursts [W]."""
    a, b = polarity_sums(detector, env)
    return (hvac.fraction_plus * a + hvac.fraction_minus * b) * hvac.temperature(t)


@dataclass(frozen=True)
class LampInView:
    """The switched lamp as the detector sees it: its warm glass or heat sink in part of the
    beams, and its light on the daylight sensor.

    Attributes
    ----------
    fraction_plus, fraction_minus : float
        Fractions of the + and − beams' background the lamp fills (0–1).
    warm_k : float
        The lamp's surface above the room while it is on [K] (a filament bulb's glass is
        tens of kelvin warmer, an LED lamp's heat sink ten or twenty: from memory).
    cooling_s : float
        Its cooling time constant after switch-off [s] (a minute or so: from memory).
    lux : float
        Illuminance the lamp adds at the daylight sensor while on [lux].
    """

    fraction_plus: float = 0.0
    fraction_minus: float = 0.0
    warm_k: float = 30.0
    cooling_s: float = 60.0
    lux: float = 0.0

    def __post_init__(self):
        check_range("lamp_in_view.fraction_plus", self.fraction_plus, 0.0, 1.0)
        check_range("lamp_in_view.fraction_minus", self.fraction_minus, 0.0, 1.0)
        check_range("lamp_in_view.warm_k", self.warm_k, 0.0, 500.0, "K")
        check_range("lamp_in_view.cooling_s", self.cooling_s, 0.1, 3600.0, "s")
        check_range("lamp_in_view.lux", self.lux, 0.0, 1e5, "lux")

    def temperature(self, t) -> np.ndarray:
        """Change of the lamp's surface from its on-state temperature, t [s] after
        switch-off [K] (first-order cooling)."""
        t = np.asarray(t, dtype=float)
        return -self.warm_k * (1.0 - np.exp(-np.clip(t, 0.0, None) / self.cooling_s))


def lamp_power(detector, env, view: LampInView, t) -> np.ndarray:
    """P_eq(t) of the lamp cooling after switch-off [W] (a background patch in the beams,
    as :func:`hvac_power`)."""
    a, b = polarity_sums(detector, env)
    return (view.fraction_plus * a + view.fraction_minus * b) * view.temperature(t)


MAX_CASE_SAMPLES = 1e6  # per ambient case (a run's memory; the kept figure is decimated)


def _values(field: str, values, low: float, high: float, unit: str) -> tuple[float, ...]:
    values = tuple(values)
    if not 1 <= len(values) <= 50:
        raise DesignError(field, len(values), "between 1 and 50 values")
    return tuple(check_range(f"{field}[{i}]", v, low, high, unit) for i, v in enumerate(values))


@dataclass(frozen=True)
class AmbientCases:
    """The stated set of ambient cases a design is judged on.

    Attributes
    ----------
    ramp_rates : tuple of float
        Rates of uniform room-temperature ramps [K min⁻¹] (illustrative defaults: HVAC
        switching and sun on a wall give a few tenths to a few K/min, common practice).
    ramp_minutes : float
        How long each ramp lasts [min].
    hvac_amplitudes : tuple of float
        Surface temperature rise of each HVAC case [K].
    hvac_period, hvac_on_time, hvac_rise, hvac_decay : float
        Cycle of the warm-air bursts [s] (:class:`pirchain.physics.disturbance.HvacCycle`).
    hvac_fraction_plus, hvac_fraction_minus : float
        Fractions of the + and − beams that see the warmed surface.
    hvac_cycles : int
        Cycles simulated per case.
    sample_rate : float
        Sample rate of these slow simulations [Hz].
    """

    ramp_rates: tuple[float, ...] = (-2.0, -1.0, -0.5, 0.5, 1.0, 2.0)
    ramp_minutes: float = 10.0
    hvac_amplitudes: tuple[float, ...] = (0.25, 0.5, 1.0)
    hvac_period: float = 600.0
    hvac_on_time: float = 120.0
    hvac_rise: float = 20.0
    hvac_decay: float = 60.0
    hvac_fraction_plus: float = 0.3
    hvac_fraction_minus: float = 0.1
    hvac_cycles: int = 3
    sample_rate: float = 20.0

    def __post_init__(self):
        rates = _values("ambient.ramp_rates", self.ramp_rates, -60.0, 60.0, "K/min")
        object.__setattr__(self, "ramp_rates", rates)
        amps = _values("ambient.hvac_amplitudes", self.hvac_amplitudes, -20.0, 20.0, "K")
        object.__setattr__(self, "hvac_amplitudes", amps)
        check_range("ambient.ramp_minutes", self.ramp_minutes, 0.1, 600.0, "min")
        if isinstance(self.hvac_cycles, bool) or not isinstance(self.hvac_cycles, int):
            raise DesignError("ambient.hvac_cycles", self.hvac_cycles, "an integer")
        check_range("ambient.hvac_cycles", self.hvac_cycles, 1, 100)
        check_range("ambient.sample_rate", self.sample_rate, 1.0, 1000.0, "Hz")
        self.hvac(1.0)  # checks the cycle's own fields
        # bound each case's run (its waveform is simulated whole, then decimated)
        for field, seconds in (
            ("ambient.ramp_minutes", self.ramp_minutes * 60.0 + 65.0),
            ("ambient.hvac_cycles", self.hvac_cycles * self.hvac_period),
        ):
            n = seconds * self.sample_rate
            if n > MAX_CASE_SAMPLES:
                raise DesignError(
                    f"{field} × sample_rate", f"{n:.3g} samples",
                    f"at most {MAX_CASE_SAMPLES:.0e} samples per case",
                )  # fmt: skip

    def ramps(self) -> list[AmbientRamp]:
        """The ramp cases."""
        return [AmbientRamp(r, 5.0, self.ramp_minutes * 60.0) for r in self.ramp_rates]

    def hvac(self, amplitude: float) -> HvacCycle:
        """The HVAC case of one amplitude [K]."""
        return HvacCycle(
            amplitude, self.hvac_rise, self.hvac_decay, self.hvac_on_time, self.hvac_period,
            self.hvac_fraction_plus, self.hvac_fraction_minus,
        )  # fmt: skip
