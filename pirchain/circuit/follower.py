"""The JFET source follower behind the sensor's gate.

References
----------
.. [1] Sedra, A. S. and Smith, K. C., *Microelectronic Circuits*: Shockley square law
   I_D = I_DSS (1 − V_GS/V_P)², source follower gain g_m R_S / (1 + g_m R_S).
"""

from __future__ import annotations

import math
from dataclasses import dataclass

from ..errors import check_nonnegative, check_positive, check_range, check_real


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
    e_n : float
        Input voltage noise density (white) [V/√Hz].
    i_n : float
        Gate current noise density [A/√Hz].

    Notes
    -----
    The JFET's gate capacitance is part of the sensor's gate node
    (:attr:`pirchain.physics.sensor.PyroSensor.input_capacitance`): the JFET sits in the can.
    """

    idss: float = 0.5e-3
    pinch_off: float = 1.5
    e_n: float = 20e-9
    i_n: float = 1e-16

    def __post_init__(self):
        # small-signal JFETs: I_DSS of µA to tens of mA, |V_P| of tenths of a volt to a few
        # volts (common practice); generous bounds keep the square law finite
        check_range("follower.jfet.idss", self.idss, 1e-7, 1.0, "A")
        check_range("follower.jfet.pinch_off", self.pinch_off, 0.01, 50.0, "V (magnitude)")
        check_nonnegative("follower.jfet.e_n", self.e_n, "V/√Hz")
        check_nonnegative("follower.jfet.i_n", self.i_n, "A/√Hz")


@dataclass(frozen=True)
class SourceFollower:
    """JFET source follower with its gate returned to ground through the gate resistor.

    Attributes
    ----------
    jfet : Jfet
    source_resistance : float
        R_S from source to ground [Ω].
    """

    jfet: Jfet = Jfet()
    source_resistance: float = 47e3

    def __post_init__(self):
        check_positive("follower.source_resistance", self.source_resistance, "Ω")

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
        """DC source voltage with the gate at 0 V [V]."""
        return self.source_voltage(0.0)

    @property
    def drain_current(self) -> float:
        """Quiescent drain current V_S / R_S [A]."""
        return self.offset / self.source_resistance

    @property
    def transconductance(self) -> float:
        """g_m = 2 I_DSS/|V_P| (1 − V_S/|V_P|) at the operating point [S]."""
        a = self.jfet.pinch_off
        return 2.0 * self.jfet.idss / a * (1.0 - self.offset / a)

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
