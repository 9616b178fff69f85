"""Noise budget: every source as a PSD referred to the comparator input.

Each source is a white spectral density S0 (times f for dielectric loss) shaped by the
transfer function from where it enters to the comparator input, built with python-control
(op-amp gain-bandwidth included). One-sided PSDs throughout [unit² Hz⁻¹].

Sources: Johnson noise of the gate resistor (a current 4kT/R_G into R_G ∥ C_gate);
dielectric-loss noise of the elements (a current 4kT ω C tan δ, so ≈ 4kT tan δ/(ωC) in
voltage where ωC dominates); the JFET's gate current noise, channel noise and flicker
noise from its operating point, and the source resistor (the follower states them,
:meth:`pirchain.circuit.follower.SourceFollower.noise_sources`); temperature-fluctuation
noise of each element (power 4kT²G); and each stage's own sources, white and flicker,
which the stage class states (:meth:`pirchain.circuit.stage.Stage.noise_sources`). Every
thermal source is at the temperature of the parts.

References
----------
.. [1] Whatmore, R. W., Rep. Prog. Phys. 49, 1335 (1986); Porter, S. G., Ferroelectrics 33,
   193 (1981): pyroelectric detector noise sources, NEP and D*.
.. [2] Motchenbacher, C. D. and Connelly, J. A., *Low-Noise Electronic System Design* (1993):
   op-amp and resistor noise referred through the noise gain.
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from typing import TYPE_CHECKING

import numpy as np

from ..errors import DesignError
from ..physics.constants import K_B
from .stage import chain_transfer_function

if TYPE_CHECKING:  # python-control loads on first use (start-up time)
    import control


@dataclass(frozen=True)
class NoiseSource:
    """One noise source referred to the comparator input.

    Attributes
    ----------
    name : str
        Label.
    level : float
        White spectral density S0 of the source where it enters [A² Hz⁻¹, V² Hz⁻¹ or W² Hz⁻¹].
    transfer : control.TransferFunction
        From the source to the comparator input.
    slope : {-1, 0, 1}
        The source density is S0 · (f / 1 Hz)^slope: 0 white, +1 rising as f (dielectric
        loss), −1 flicker (1/f, ``level`` is then its density at 1 Hz).
    electrical : bool
        An electrical source the exported SPICE netlist carries too (not the dielectric
        loss, the elements' temperature fluctuation or a draught).
    """

    name: str
    level: float
    transfer: control.TransferFunction
    slope: int = 0
    electrical: bool = True

    def __post_init__(self):
        if self.slope not in (-1, 0, 1):
            raise ValueError(f"noise source slope {self.slope!r}: expected -1, 0 or 1")

    @property
    def rising(self) -> bool:
        """The density rises as f (dielectric loss)."""
        return self.slope == 1

    def psd(self, f) -> np.ndarray:
        """PSD at the comparator input [V² Hz⁻¹]."""
        f = np.asarray(f, dtype=float)
        h = np.abs(self.transfer(2j * math.pi * f)) ** 2
        if not self.slope:
            return self.level * h
        with np.errstate(divide="ignore"):  # a 1/f density is infinite at f = 0, as it is
            return self.level * h * f**self.slope


@dataclass(frozen=True)
class NoiseScale:
    """Multipliers of the detector's noise densities, fitted to a quiet-room recording
    (:mod:`pirchain.calibration.quiet`): ``flicker`` for the 1/f sources, ``white`` for every
    other source of the detector (white, and the dielectric loss rising as f); a draught is
    not the detector's and is fitted on its own. 1 and 1: the parts' own figures."""

    white: float = 1.0
    flicker: float = 1.0

    def __post_init__(self):
        for name in ("white", "flicker"):
            v = getattr(self, name)
            if not (isinstance(v, (int, float)) and 1e-6 <= v <= 1e6):
                raise DesignError(f"calibration.{name}_noise_scale", v,
                                  "a multiplier between 1e-6 and 1e6")  # fmt: skip

    def applied(self, src: NoiseSource) -> NoiseSource:
        """``src`` with its level scaled."""
        k = self.flicker if src.slope == -1 else self.white
        if k == 1.0:
            return src
        return NoiseSource(src.name, src.level * k, src.transfer, src.slope, src.electrical)


def amplifier_sources(tag: str, amp, voltage_path, current_path=None) -> list[NoiseSource]:
    """An op-amp's voltage noise through ``voltage_path`` and current noise through
    ``current_path`` (None: not modelled), each white plus its flicker part
    e_n² f_ce / f (:class:`pirchain.circuit.opamp.OpAmp`)."""
    out = []
    parts = [("e_n", amp.e_n, amp.e_n_corner, voltage_path)]
    if current_path is not None:
        parts.append(("i_n", amp.i_n, amp.i_n_corner, current_path))
    for label, density, corner, path in parts:
        if density > 0:
            out.append(NoiseSource(f"{tag} op-amp {label}", density**2, path))
            if corner > 0:
                out.append(
                    NoiseSource(f"{tag} op-amp {label} 1/f", density**2 * corner, path, slope=-1)
                )
    return out


def _gate_parts(detector, temperature):
    import control

    s = detector.sensor
    kt4 = 4 * K_B * temperature
    z_gate = control.tf([s.gate_resistance], [s.electrical_time_constant, 1.0])
    c_el = s.gate_capacitance - s.input_capacitance
    out = [
        NoiseSource("gate resistor R_G (Johnson)", kt4 / s.gate_resistance, z_gate),
        NoiseSource(
            "element dielectric loss (tan δ)", kt4 * 2 * math.pi * c_el * s.loss_tangent, z_gate,
            slope=1, electrical=False,
        ),
    ]  # fmt: skip
    if s.heat_capacity is not None:
        g = s.heat_capacity / s.thermal_time_constant
        out.append(
            NoiseSource(
                "temperature fluctuation",
                4 * K_B * temperature**2 * g * float(np.sum(s.coupling**2)),
                s.transfer_function(),
                electrical=False,
            )
        )
    return out, z_gate


def _then(src: NoiseSource, after) -> NoiseSource:
    return NoiseSource(src.name, src.level, src.transfer * after, src.slope, src.electrical)


def noise_sources(
    detector, temperature: float | None = None, upto: int | None = None
) -> list[NoiseSource]:
    """Every noise source of ``detector`` referred to its comparator input.

    Parameters
    ----------
    detector : Detector
        With sensor, follower and stages.
    temperature : float, optional
        Temperature of the parts [K] (default: the detector's own,
        :attr:`pirchain.chain.detector.Detector.temperature`).
    upto : int, optional
        Refer them to the output of stage ``upto`` instead (0: the follower's source), with
        the stages after it left out.
    """
    detector.require_analog()
    temperature = detector.temperature if temperature is None else temperature
    fol = detector.follower
    stages = detector.stages if upto is None else detector.stages[:upto]
    after_source = chain_transfer_function(stages, gbw=True)
    after_gate = fol.gain * after_source
    gate, z_gate = _gate_parts(detector, temperature)
    out = [_then(src, after_gate) for src in gate]
    out[2:2] = fol.noise_sources(temperature, z_gate, after_gate, after_source)
    for k, st in enumerate(stages, start=1):
        downstream = chain_transfer_function(stages[k:], gbw=True)
        out += st.noise_sources(k, temperature, downstream)
    return [detector.noise_scale.applied(src) for src in out]


def sensor_sources(detector, temperature: float | None = None) -> list[NoiseSource]:
    """The sensor's own sources (and the JFET's) referred to the gate node [V² Hz⁻¹]."""
    import control

    temperature = detector.temperature if temperature is None else temperature
    out, z_gate = _gate_parts(detector, temperature)
    if detector.follower is not None:
        one = control.tf([1.0], [1.0])
        out[2:2] = detector.follower.noise_sources(temperature, z_gate, one, one, False)
    return [detector.noise_scale.applied(src) for src in out]


def band_grid(f_lo: float = 1e-3, f_hi: float = 1e3, n: int = 4000) -> np.ndarray:
    """Log-spaced frequency grid for band integrals [Hz]."""
    return np.geomspace(f_lo, f_hi, n)


def band_variance(f: np.ndarray, psd: np.ndarray) -> float:
    """∫ S df by the trapezoidal rule [V²]."""
    return float(np.trapezoid(psd, f))


@dataclass(frozen=True)
class NoiseBudget:
    """Contributions to the comparator-input noise over a band.

    Attributes
    ----------
    names : tuple of str
    rms : numpy.ndarray
        rms of each source over the band [V].
    band : tuple of float
        Integration band [Hz].
    """

    names: tuple[str, ...]
    rms: np.ndarray
    band: tuple[float, float]

    @property
    def total_rms(self) -> float:
        """rms of all sources together (uncorrelated) [V]."""
        return float(np.sqrt(np.sum(self.rms**2)))

    @property
    def share(self) -> np.ndarray:
        """Share of the total variance of each source."""
        return self.rms**2 / self.total_rms**2

    def table(self) -> str:
        """Plain-text table, largest first."""
        order = np.argsort(-self.rms)
        rows = [f"{'source':<36s} {'rms':>12s} {'share':>7s}"]
        rows += [
            f"{self.names[i]:<36s} {self.rms[i] * 1e3:9.4f} mV {100 * self.share[i]:6.2f}%"
            for i in order
        ]
        rows.append(f"{'total':<36s} {self.total_rms * 1e3:9.4f} mV {100.0:6.2f}%")
        return "\n".join(rows)


def noise_budget(sources, band=(1e-3, 1e3), n: int = 4000) -> NoiseBudget:
    """rms of each source over ``band`` and the total."""
    f = band_grid(band[0], band[1], n)
    rms = np.array([math.sqrt(band_variance(f, src.psd(f))) for src in sources])
    return NoiseBudget(tuple(src.name for src in sources), rms, (float(band[0]), float(band[1])))


def total_psd(sources, f) -> np.ndarray:
    """Sum of the sources' PSDs [V² Hz⁻¹]."""
    return np.sum([src.psd(f) for src in sources], axis=0)


def nep(detector, f, temperature: float | None = None):
    """Noise-equivalent power of the sensor (with its JFET) for one lit element [W Hz⁻¹ᐟ²]."""
    gate = total_psd(sensor_sources(detector, temperature), f)
    return np.sqrt(gate) / np.abs(detector.sensor.responsivity(f))


def specific_detectivity(detector, f, temperature: float | None = None):
    """D* = √A / NEP [m Hz¹ᐟ² W⁻¹] (× 100 for the customary cm Hz¹ᐟ² W⁻¹)."""
    return math.sqrt(detector.sensor.elements[0].area) / nep(detector, f, temperature)
