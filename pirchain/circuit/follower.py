"""The JFET source follower behind the sensor's gate: operating point, noise, temperature.

The JFET's noise follows from its operating point unless a datasheet figure overrides it:
channel thermal noise i_d² = 4kT (2/3) g_m, referred to the gate e_n² = 8kT/(3 g_m), with
g_m = 2√(I_D I_DSS)/|V_P| at the actual drain current; flicker noise of the drain current
KF I_D^AF / f (the SPICE JFET form), referred to the gate as KF I_D^AF/(g_m² f); and the
shot noise 2qI_G of the gate leakage. The leakage also flows through the gate resistor and
lifts the gate by I_G R_G (:attr:`SourceFollower.gate_bias`, set by the detector).

With temperature (25 °C reference): the gate leakage doubles every 10 K (a reverse-biased
silicon junction, common practice); I_DSS falls as the channel mobility, ∝ T^−1.5, and
|V_P| rises about 2.2 mV/K as the built-in potential falls (common practice, from memory;
the two make the JFET's zero-temperature-coefficient bias point).

References
----------
.. [1] Sedra, A. S. and Smith, K. C., *Microelectronic Circuits*: Shockley square law
   I_D = I_DSS (1 − V_GS/V_P)², source follower gain g_m R_S / (1 + g_m R_S).
.. [2] van der Ziel, A., "Thermal noise in field-effect transistors", Proc. IRE 50, 1808
   (1962); *Noise in Solid State Devices and Circuits* (1986): i_d² = 4kT (2/3) g_m.
.. [3] Motchenbacher, C. D. and Connelly, J. A., *Low-Noise Electronic System Design*
   (1993), ch. 7: JFET noise model, gate shot noise 2qI_G.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, replace

from ..errors import DesignError, check_nonnegative, check_positive, check_range, check_real
from ..physics.constants import K_B, Q_E
from .noise import NoiseSource

LEAKAGE_DOUBLING = 10.0  # K per doubling of a junction's reverse leakage (common practice)
IDSS_EXPONENT = -1.5  # I_DSS ∝ T^−1.5 (channel mobility; common practice, from memory)
PINCH_OFF_TEMPCO = 2.2e-3  # d|V_P|/dT [V/K] (common practice, from memory)
REFERENCE_K = 298.15  # the temperature part values are given at [K] (25 °C)


def source_voltage_at(gate_voltage: float, pinch_off: float, k4: float) -> float:
    """Source voltage of a self-biased JFET follower for a gate voltage, exact square law [V].

    Solves R_S I_DSS (1 + (v_g − v_s)/|V_P|)² = v_s in closed form: with d = v_g + |V_P| and
    k = R_S I_DSS/V_P², v_s = d − w where w = 2d/(1 + √(1 + 4kd)) is the stable root of
    k w² + w = d; a gate below pinch-off (d ≤ 0) cuts the JFET off (v_s = 0). A plain
    scalar function: the chain's compiled pass runs this same function per sample.

    Parameters
    ----------
    gate_voltage : float
        v_g [V].
    pinch_off : float
        |V_P| [V].
    k4 : float
        4 R_S I_DSS / V_P² [V⁻¹].
    """
    d = max(gate_voltage + pinch_off, 0.0)
    return d - 2.0 * d / (1.0 + math.sqrt(1.0 + k4 * d))


@dataclass(frozen=True)
class Jfet:
    """N-channel JFET, Shockley square law.

    Attributes
    ----------
    idss : float
        Drain saturation current at V_GS = 0 [A].
    pinch_off : float
        Magnitude of the pinch-off voltage |V_P| [V].
    e_n : float or None
        Datasheet input voltage noise density (white) [V/√Hz]; None: from the operating
        point, √(8kT/(3 g_m)).
    i_n : float or None
        Datasheet gate current noise density [A/√Hz]; None: the gate leakage's shot
        noise √(2qI_G).
    gate_leakage : float
        Gate leakage current I_G at 25 °C [A] (out of the gate into the gate resistor).
    kf, af : float
        Flicker noise of the drain current, KF I_D^AF / f [A² Hz⁻¹] (SPICE's JFET form).
    e_n_corner : float
        Or, datasheet style, the flicker corner of the voltage noise [Hz]: flicker density
        e_n² f_c / f on the white e_n (give this or ``kf``, not both).

    Notes
    -----
    The JFET's gate capacitance is part of the sensor's gate node
    (:attr:`pirchain.physics.sensor.PyroSensor.input_capacitance`): the JFET sits in the can.
    """

    idss: float = 0.5e-3
    pinch_off: float = 1.5
    e_n: float | None = None
    i_n: float | None = None
    gate_leakage: float = 0.5e-12
    kf: float = 0.0
    af: float = 1.0
    e_n_corner: float = 0.0

    def __post_init__(self):
        # small-signal JFETs: I_DSS of µA to tens of mA, |V_P| of tenths of a volt to a few
        # volts (common practice); generous bounds keep the square law finite
        check_range("follower.jfet.idss", self.idss, 1e-7, 1.0, "A")
        check_range("follower.jfet.pinch_off", self.pinch_off, 0.01, 50.0, "V (magnitude)")
        if self.e_n is not None:
            check_nonnegative("follower.jfet.e_n", self.e_n, "V/√Hz")
        if self.i_n is not None:
            check_nonnegative("follower.jfet.i_n", self.i_n, "A/√Hz")
        check_range("follower.jfet.gate_leakage", self.gate_leakage, 0.0, 1e-6, "A")
        check_range("follower.jfet.kf", self.kf, 0.0, 1e-6, "A (SPICE KF)")
        check_range("follower.jfet.af", self.af, 0.5, 2.5)
        check_range("follower.jfet.e_n_corner", self.e_n_corner, 0.0, 1e6, "Hz")
        if self.kf > 0 and self.e_n_corner > 0:
            raise DesignError(
                "follower.jfet.e_n_corner", self.e_n_corner,
                "0 when kf is given (flicker noise as KF/AF or as a corner, not both)",
            )  # fmt: skip

    def at_temperature(self, delta: float) -> Jfet:
        """This JFET ``delta`` kelvin above 25 °C (leakage, I_DSS and |V_P| moved)."""
        t = REFERENCE_K + delta
        return replace(
            self,
            idss=self.idss * (t / REFERENCE_K) ** IDSS_EXPONENT,
            pinch_off=self.pinch_off + PINCH_OFF_TEMPCO * delta,
            gate_leakage=self.gate_leakage * 2.0 ** (delta / LEAKAGE_DOUBLING),
        )


@dataclass(frozen=True)
class SourceFollower:
    """JFET source follower with its gate returned to ground through the gate resistor.

    Attributes
    ----------
    jfet : Jfet
    source_resistance : float
        R_S from source to ground [Ω].
    gate_bias : float
        DC gate voltage [V]: the gate leakage through the gate resistor, I_G R_G. The
        :class:`pirchain.chain.detector.Detector` sets it from its sensor and JFET.
    """

    jfet: Jfet = Jfet()
    source_resistance: float = 47e3
    gate_bias: float = 0.0

    def __post_init__(self):
        check_positive("follower.source_resistance", self.source_resistance, "Ω")
        check_range("follower.gate_bias", self.gate_bias, -50.0, 50.0, "V")

    @property
    def k4(self) -> float:
        """4 R_S I_DSS / V_P² [V⁻¹], the square law's one parameter besides |V_P|."""
        return 4.0 * self.source_resistance * self.jfet.idss / self.jfet.pinch_off**2

    def source_voltage(self, gate_voltage: float = 0.0) -> float:
        """Large-signal source voltage for a gate voltage (:func:`source_voltage_at`) [V]."""
        return source_voltage_at(
            check_real("gate_voltage", gate_voltage), self.jfet.pinch_off, self.k4
        )

    @property
    def offset(self) -> float:
        """DC source voltage with the gate at its bias [V]."""
        return self.source_voltage(self.gate_bias)

    @property
    def drain_current(self) -> float:
        """Quiescent drain current V_S / R_S [A]."""
        return self.offset / self.source_resistance

    @property
    def transconductance(self) -> float:
        """g_m = 2 I_DSS/|V_P| (1 + V_GS/|V_P|) = 2√(I_D I_DSS)/|V_P| at the operating
        point [S] (0 when cut off)."""
        a = self.jfet.pinch_off
        return max(2.0 * self.jfet.idss / a * (1.0 + (self.gate_bias - self.offset) / a), 0.0)

    @property
    def gain(self) -> float:
        """Small-signal voltage gain g_m R_S / (1 + g_m R_S)."""
        gr = self.transconductance * self.source_resistance
        return gr / (1.0 + gr)

    @property
    def output_impedance(self) -> float:
        """R_S ∥ 1/g_m [Ω]."""
        return self.source_resistance / (1.0 + self.transconductance * self.source_resistance)

    def minimum_drain_voltage(self) -> float:
        """Lowest drain voltage that keeps the JFET saturated [V].

        V_D ≥ V_S + (V_GS − V_P) with V_GS = −V_S, i.e. |V_P|.
        """
        return self.jfet.pinch_off

    def at_temperature(self, delta: float) -> SourceFollower:
        """This follower ``delta`` kelvin above 25 °C (its JFET moved; R_S by the design's
        resistor tempco is not known here and stays)."""
        return replace(self, jfet=self.jfet.at_temperature(delta))

    def voltage_noise(self, temperature: float) -> tuple[float, float]:
        """Gate-referred (white density², flicker density² at 1 Hz) [V² Hz⁻¹]."""
        gm = self.transconductance
        if gm <= 0:
            return 0.0, 0.0
        j = self.jfet
        white = 8.0 * K_B * temperature / (3.0 * gm) if j.e_n is None else j.e_n**2
        flicker = j.kf * self.drain_current**j.af / gm**2 + white * j.e_n_corner
        return white, flicker

    def spice_kf(self, temperature: float) -> float:
        """KF that gives this follower's flicker noise at its operating point in SPICE's
        KF I_D^AF/f form [SPICE units]."""
        flicker = self.voltage_noise(temperature)[1]
        i_d = self.drain_current
        return flicker * self.transconductance**2 / i_d**self.jfet.af if i_d > 0 else 0.0

    def current_noise(self) -> float:
        """Gate current noise density² [A² Hz⁻¹]: 2qI_G, or the datasheet i_n²."""
        j = self.jfet
        return 2.0 * Q_E * j.gate_leakage if j.i_n is None else j.i_n**2

    def noise_sources(self, temperature, z_gate, after_gate, after_source, source_resistor=True):
        """The follower's sources referred to where ``after_gate`` (from the gate) and
        ``after_source`` (from the source) lead; ``z_gate`` is the gate node's impedance.

        Returns
        -------
        list of pirchain.circuit.noise.NoiseSource
        """
        import control

        white, flicker = self.voltage_noise(temperature)
        i2 = self.current_noise()
        out = []
        if i2 > 0:
            out.append(NoiseSource("JFET gate current (i_n)", i2, z_gate * after_gate))
        if white > 0:
            out.append(NoiseSource("JFET channel (e_n)", white, after_gate))
        if flicker > 0:
            out.append(NoiseSource("JFET flicker (1/f)", flicker, after_gate, slope=-1))
        if source_resistor:
            out.append(
                NoiseSource(
                    "source resistor R_S (Johnson)",
                    4 * K_B * temperature / self.source_resistance,
                    control.tf([self.output_impedance], [1.0]) * after_source,
                )
            )
        return out
