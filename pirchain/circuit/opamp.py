"""The op-amp of an analog stage: gain-bandwidth, rails, supply current, noise and offset.

Noise is entered as a datasheet gives it: the white (high-frequency) densities e_n and i_n
and their flicker corners f_ce, f_ci, so that e_n²(f) = e_n² (1 + f_ce/f) (and likewise
for i_n); :func:`white_density` turns a density read at one frequency into the white level.
The input offset moves with temperature at its stated drift.

References
----------
.. [1] Horowitz, P. and Hill, W., *The Art of Electronics*: single-pole open-loop model
   A(s) = A0 / (1 + s A0/(2π GBW)).
.. [2] Motchenbacher, C. D. and Connelly, J. A., *Low-Noise Electronic System Design* (1993),
   ch. 2: the flicker corner, e_n²(f) = e_n,w² (1 + f_c/f).
.. [3] Gray, P. R., Hurst, P. J., Lewis, S. H. and Meyer, R. G., *Analysis and Design of
   Analog Integrated Circuits*, 5th ed. (2009), §11.4–11.6: input-pair white noise
   ∝ 1/g_m with g_m ∝ I in weak inversion; input-referred flicker set by device area.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, replace
from typing import TYPE_CHECKING

from ..errors import DesignError, check_nonnegative, check_positive, check_range, check_real

if TYPE_CHECKING:  # python-control loads on first use (start-up time)
    import control


@dataclass(frozen=True)
class OpAmp:
    """Op-amp parameters.

    Attributes
    ----------
    gbw : float
        Gain-bandwidth product [Hz].
    v_low, v_high : float
        Output swing limits [V].
    quiescent_current : float
        Supply current [A].
    e_n : float
        Input voltage noise density [V/√Hz].
    i_n : float
        Input current noise density [A/√Hz].
    open_loop_gain : float
        DC open-loop gain A0 (dimensionless).
    e_n_corner, i_n_corner : float
        Flicker (1/f) corners of the voltage and current noise [Hz] (0: white only).
    offset : float
        Input offset voltage at 25 °C, as seen at the non-inverting input [V].
    offset_drift : float
        Its temperature coefficient [V K⁻¹].
    """

    gbw: float = 200e3
    v_low: float = 0.05
    v_high: float = 3.25
    quiescent_current: float = 10e-6
    e_n: float = 60e-9
    i_n: float = 1e-15
    open_loop_gain: float = 1e5
    e_n_corner: float = 0.0
    i_n_corner: float = 0.0
    offset: float = 0.0
    offset_drift: float = 0.0

    def __post_init__(self):
        check_positive("opamp.gbw", self.gbw, "Hz")
        check_real("opamp.v_low", self.v_low)
        if check_real("opamp.v_high", self.v_high) <= self.v_low:
            raise DesignError("opamp.v_high", self.v_high, f"a level above v_low = {self.v_low} V")
        check_nonnegative("opamp.quiescent_current", self.quiescent_current, "A")
        check_nonnegative("opamp.e_n", self.e_n, "V/√Hz")
        check_nonnegative("opamp.i_n", self.i_n, "A/√Hz")
        check_range("opamp.open_loop_gain", self.open_loop_gain, 10.0, 1e9)
        check_range("opamp.e_n_corner", self.e_n_corner, 0.0, 1e6, "Hz")
        check_range("opamp.i_n_corner", self.i_n_corner, 0.0, 1e6, "Hz")
        check_range("opamp.offset", self.offset, -0.1, 0.1, "V")
        check_range("opamp.offset_drift", self.offset_drift, -1e-3, 1e-3, "V/K")

    def at_temperature(self, delta: float) -> OpAmp:
        """This op-amp ``delta`` kelvin above 25 °C: the offset moved by its drift."""
        return replace(self, offset=self.offset + self.offset_drift * delta)

    def scaled_to_current(self, quiescent_current: float) -> OpAmp:
        """The same op-amp design run at another supply current (a family law).

        GBW scales as I_q and the white voltage-noise power as 1/I_q (input pair in weak
        inversion, g_m ∝ I, Gray et al. §11.6); the input-referred flicker density stays
        (it is set by the input devices' area), so the flicker corner scales as I_q.
        """
        ratio = check_positive("opamp.quiescent_current", quiescent_current, "A") / max(
            self.quiescent_current, 1e-15
        )
        return replace(
            self,
            quiescent_current=quiescent_current,
            gbw=self.gbw * ratio,
            e_n=self.e_n / ratio**0.5,
            e_n_corner=self.e_n_corner * ratio,
        )

    def open_loop(self) -> control.TransferFunction:
        """A(s) = A0 / (1 + s A0 / (2π GBW))."""
        import control

        a0 = self.open_loop_gain
        return control.tf([a0], [a0 / (2 * math.pi * self.gbw), 1.0])


def white_density(density: float, frequency: float, corner: float) -> float:
    """White noise density from a density read at ``frequency`` with flicker ``corner``:
    e_w = e(f) / √(1 + f_c/f) [unit/√Hz]."""
    check_positive("noise frequency", frequency, "Hz")
    return density / math.sqrt(1.0 + corner / frequency)
