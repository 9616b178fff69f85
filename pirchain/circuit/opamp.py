"""The op-amp of an analog stage: gain-bandwidth, rails, supply current and noise.

References
----------
.. [1] Horowitz, P. and Hill, W., *The Art of Electronics*: single-pole open-loop model
   A(s) = A0 / (1 + s A0/(2π GBW)).
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import control

from ..errors import DesignError, check_nonnegative, check_positive, check_range, check_real


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
    """

    gbw: float = 200e3
    v_low: float = 0.05
    v_high: float = 3.25
    quiescent_current: float = 10e-6
    e_n: float = 60e-9
    i_n: float = 1e-15
    open_loop_gain: float = 1e5

    def __post_init__(self):
        check_positive("opamp.gbw", self.gbw, "Hz")
        check_real("opamp.v_low", self.v_low)
        if check_real("opamp.v_high", self.v_high) <= self.v_low:
            raise DesignError("opamp.v_high", self.v_high, f"a level above v_low = {self.v_low} V")
        check_nonnegative("opamp.quiescent_current", self.quiescent_current, "A")
        check_nonnegative("opamp.e_n", self.e_n, "V/√Hz")
        check_nonnegative("opamp.i_n", self.i_n, "A/√Hz")
        check_range("opamp.open_loop_gain", self.open_loop_gain, 10.0, 1e9)

    def open_loop(self) -> control.TransferFunction:
        """A(s) = A0 / (1 + s A0 / (2π GBW))."""
        a0 = self.open_loop_gain
        return control.tf([a0], [a0 / (2 * math.pi * self.gbw), 1.0])
