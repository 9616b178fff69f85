"""Analog front end: JFET source follower and op-amp stages with real component values.

Every stage maps an input voltage to an output voltage, both absolute [V], as
``v_out − v_ref = H(s) (v_in − v_ref)`` in its linear region, with its own reference
voltage ``v_ref`` (ground for a non-inverting stage whose gain leg returns to ground, mid-rail
for an AC-coupled inverting stage of a single-supply design). Op-amp stages also give the
affine state equations of their capacitor voltages in the linear mode and with the output
pinned at either rail, which :mod:`pirchain.saturation` integrates.

References
----------
.. [1] Sedra, A. S. and Smith, K. C., *Microelectronic Circuits*: Shockley square law
   I_D = I_DSS (1 − V_GS/V_P)², source follower gain g_m R_S / (1 + g_m R_S).
.. [2] Horowitz, P. and Hill, W., *The Art of Electronics*: non-inverting and inverting
   op-amp stages, H = 1 + Z_f/Z_1 and −Z_f/Z_1; finite gain-bandwidth closed loop
   H_ideal / (1 + (1/β)/A(s)).
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import control
import numpy as np

from .errors import DesignError, check_nonnegative, check_positive, check_range, check_real


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

    Notes
    -----
    The JFET's gate capacitance is part of the sensor's gate node
    (:attr:`pirchain.sensor.PyroSensor.input_capacitance`): the JFET sits inside the can.
    i_n : float
        Gate current noise density [A/√Hz].
    """

    idss: float = 0.5e-3
    pinch_off: float = 1.5
    e_n: float = 20e-9
    i_n: float = 1e-16

    def __post_init__(self):
        check_positive("follower.jfet.idss", self.idss, "A")
        check_positive("follower.jfet.pinch_off", self.pinch_off, "V (magnitude)")
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

    def source_voltage(self, gate_voltage=0.0):
        """Large-signal source voltage for a gate voltage (exact square law) [V].

        Solves R_S I_DSS (1 + (v_g − v_s)/|V_P|)² = v_s in closed form, vectorised; a gate
        below pinch-off gives v_s = 0 (cut off).
        """
        a = self.jfet.pinch_off
        k = self.source_resistance * self.jfet.idss / a**2
        g = np.asarray(gate_voltage, dtype=float)
        drive = np.atleast_1d(g) + a  # a fresh array, worked in place
        np.maximum(drive, 0.0, out=drive)
        root = drive * (4.0 * k)
        root += 1.0
        np.sqrt(root, out=root)
        root += 1.0  # w = 2 d / (1 + √(1 + 4 k d)), the stable root of k w² + w = d
        np.divide(drive, root, out=root)
        root *= 2.0
        np.subtract(drive, root, out=drive)
        return drive if g.ndim else float(drive[0])

    @property
    def offset(self) -> float:
        """DC source voltage with the gate at 0 V [V]."""
        return float(self.source_voltage(0.0))

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


def _poly_tf(num, den) -> control.TransferFunction:
    return control.tf(np.atleast_1d(np.asarray(num, float)), np.atleast_1d(np.asarray(den, float)))


@dataclass(frozen=True)
class StateModel:
    """Affine state equations of a stage in one operating mode.

    dx/dt = A x + B u + e ;  y = C x + D u + f (linear mode; pinned modes output the rail).
    """

    A: np.ndarray
    B: np.ndarray
    e: np.ndarray
    C: np.ndarray
    D: float
    f: float


class _OpAmpBandPass:
    """Shared algebra of the two band-pass op-amp stages (R1 + C1 in series, Rf ∥ Cf)."""

    def _check(self, where):
        check_positive(where + ".r1", self.r1, "Ω")
        check_positive(where + ".c1", self.c1, "F")
        check_positive(where + ".rf", self.rf, "Ω")
        check_positive(where + ".cf", self.cf, "F")
        check_real(where + ".v_ref", self.v_ref)

    @property
    def low_corner(self) -> float:
        """f_L = 1/(2π R1 C1) [Hz]."""
        return 1.0 / (2 * math.pi * self.r1 * self.c1)

    @property
    def high_corner(self) -> float:
        """f_H = 1/(2π Rf Cf) [Hz]."""
        return 1.0 / (2 * math.pi * self.rf * self.cf)

    def _ratio_polys(self):
        """Z_f/Z_1 = s Rf C1 / ((1 + s Rf Cf)(1 + s R1 C1)) as (num, den) polynomials."""
        den = np.polymul([self.rf * self.cf, 1.0], [self.r1 * self.c1, 1.0])
        return np.array([self.rf * self.c1, 0.0]), den

    def _with_gbw(self, ideal_num, den):
        """H_ideal · A / (A + NG), NG = 1 + Z_f/Z_1 the noise gain."""
        zn, zd = self._ratio_polys()
        ng_num = np.polyadd(zd, zn)
        a0 = self.opamp.open_loop_gain
        a_num, a_den = np.array([a0]), np.array([a0 / (2 * math.pi * self.opamp.gbw), 1.0])
        num = np.polymul(ideal_num, a_num)
        den_total = np.polyadd(np.polymul(den, a_num), np.polymul(ng_num, a_den))
        return _poly_tf(num, den_total)

    def noise_gain(self) -> control.TransferFunction:
        """1 + Z_f/Z_1: gain from the op-amp's input noise to its output (ideal op-amp)."""
        zn, zd = self._ratio_polys()
        return _poly_tf(np.polyadd(zd, zn), zd)


@dataclass(frozen=True)
class NonInvertingBandPass(_OpAmpBandPass):
    """Non-inverting stage: signal on +; R1 + C1 from − to v_ref sets f_L; Rf ∥ Cf feedback.

    Mid-band gain 1 + Rf/R1, DC gain 1, f_L = 1/(2π R1 C1), f_H = 1/(2π Rf Cf).
    """

    r1: float
    c1: float
    rf: float
    cf: float
    opamp: OpAmp = OpAmp()
    v_ref: float = 0.0
    name: str = "non-inverting band-pass"

    def __post_init__(self):
        self._check("stage")

    def transfer_function(self, gbw: bool = False) -> control.TransferFunction:
        """(v_out − v_ref)/(v_in − v_ref); with ``gbw`` the op-amp's finite A(s) is included."""
        zn, zd = self._ratio_polys()
        num = np.polyadd(zd, zn)
        return self._with_gbw(num, zd) if gbw else _poly_tf(num, zd)

    def state_model(self, pinned: float | None = None) -> StateModel:
        """States [v_C1 − v_ref, v_out − v_−]; ``pinned`` is the rail voltage, or None (linear)."""
        r1, c1, rf, cf, ref = self.r1, self.c1, self.rf, self.cf, self.v_ref
        if pinned is None:  # v_− = u
            a = np.array([[-1 / (r1 * c1), 0.0], [-1 / (r1 * cf), -1 / (rf * cf)]])
            b = np.array([1 / (r1 * c1), 1 / (r1 * cf)])
            e = -ref * b
        else:  # v_− = rail − v_Cf
            a = np.array(
                [[-1 / (r1 * c1), -1 / (r1 * c1)], [-1 / (r1 * cf), -1 / (r1 * cf) - 1 / (rf * cf)]]
            )
            b = np.zeros(2)
            e = (pinned - ref) * np.array([1 / (r1 * c1), 1 / (r1 * cf)])
        return StateModel(a, b, e, np.array([0.0, 1.0]), 1.0, 0.0)

    def steady_state(self, u_dc: float) -> np.ndarray:
        """Capacitor voltages with a constant input (linear mode)."""
        return np.array([u_dc - self.v_ref, 0.0])


@dataclass(frozen=True)
class InvertingBandPass(_OpAmpBandPass):
    """AC-coupled inverting stage: C1 + R1 into −, + at v_ref, Rf ∥ Cf feedback.

    Mid-band gain −Rf/R1, DC gain 0 (output rests at v_ref).
    """

    r1: float
    c1: float
    rf: float
    cf: float
    opamp: OpAmp = OpAmp()
    v_ref: float = 1.65
    name: str = "inverting band-pass"

    def __post_init__(self):
        self._check("stage")

    def transfer_function(self, gbw: bool = False) -> control.TransferFunction:
        """(v_out − v_ref)/(v_in − v_ref)."""
        zn, zd = self._ratio_polys()
        return self._with_gbw(-zn, zd) if gbw else _poly_tf(-zn, zd)

    def state_model(self, pinned: float | None = None) -> StateModel:
        """States [v_in − v_between(C1, R1), v_out − v_−]."""
        r1, c1, rf, cf, ref = self.r1, self.c1, self.rf, self.cf, self.v_ref
        # i1 = (u − v_c1 − v_n)/r1;  dv_c1 = i1/c1;  dv_cf = (−i1 − v_cf/rf)/cf
        if pinned is None:  # v_n = ref
            a = np.array([[-1 / (r1 * c1), 0.0], [1 / (r1 * cf), -1 / (rf * cf)]])
            b = np.array([1 / (r1 * c1), -1 / (r1 * cf)])
            e = -ref * b
        else:  # v_n = rail − v_cf
            a = np.array(
                [[-1 / (r1 * c1), 1 / (r1 * c1)], [1 / (r1 * cf), -1 / (r1 * cf) - 1 / (rf * cf)]]
            )
            b = np.array([1 / (r1 * c1), -1 / (r1 * cf)])
            e = -pinned * b
        return StateModel(a, b, e, np.array([0.0, 1.0]), 0.0, ref)

    def steady_state(self, u_dc: float) -> np.ndarray:
        """Capacitor voltages with a constant input (linear mode)."""
        return np.array([u_dc - self.v_ref, 0.0])


class _PassiveRC:
    """Shared checks and corner of the passive RC stages (no op-amp)."""

    opamp = None

    def __post_init__(self):
        check_positive("stage.r", self.r, "Ω")
        check_positive("stage.c", self.c, "F")
        check_real("stage.v_ref", self.v_ref)

    @property
    def corner(self) -> float:
        """1/(2π R C) [Hz]."""
        return 1.0 / (2 * math.pi * self.r * self.c)

    def steady_state(self, u_dc: float) -> np.ndarray:
        """Capacitor voltage with a constant input."""
        return np.array([u_dc - self.v_ref])


@dataclass(frozen=True)
class RCHighPass(_PassiveRC):
    """Passive RC high-pass: series C, R to v_ref. Driven by a low-impedance source."""

    r: float
    c: float
    v_ref: float = 0.0
    name: str = "RC high-pass"

    def transfer_function(self, gbw: bool = False) -> control.TransferFunction:
        """s R C / (1 + s R C)."""
        return control.tf([self.r * self.c, 0.0], [self.r * self.c, 1.0])

    def state_model(self, pinned=None) -> StateModel:
        """State v_in − v_out (the capacitor voltage)."""
        k = 1.0 / (self.r * self.c)
        return StateModel(
            np.array([[-k]]), np.array([k]), np.array([-k * self.v_ref]), np.array([-1.0]), 1.0, 0.0
        )


@dataclass(frozen=True)
class RCLowPass(_PassiveRC):
    """Passive RC low-pass: series R, C to v_ref. Driven by a low-impedance source."""

    r: float
    c: float
    v_ref: float = 0.0
    name: str = "RC low-pass"

    def transfer_function(self, gbw: bool = False) -> control.TransferFunction:
        """1 / (1 + s R C)."""
        return control.tf([1.0], [self.r * self.c, 1.0])

    def state_model(self, pinned=None) -> StateModel:
        """State v_out − v_ref."""
        k = 1.0 / (self.r * self.c)
        return StateModel(
            np.array([[-k]]),
            np.array([k]),
            np.array([-k * self.v_ref]),
            np.array([1.0]),
            0.0,
            self.v_ref,
        )


@dataclass(frozen=True)
class TransferStage:
    """Any stage given as a proper transfer function (v_out − v_ref)/(v_in − v_ref).

    Its internal network is unknown, so with an op-amp its saturation is modelled by
    clamping the output at the rails (states keep evolving linearly).
    """

    num: tuple[float, ...]
    den: tuple[float, ...]
    v_ref: float = 0.0
    opamp: OpAmp | None = None
    name: str = "transfer function"

    def __post_init__(self):
        num = np.atleast_1d(np.asarray(self.num, dtype=float))
        den = np.atleast_1d(np.asarray(self.den, dtype=float))
        if not (np.all(np.isfinite(num)) and np.all(np.isfinite(den))) or not np.any(den):
            raise DesignError("stage.den", self.den, "finite polynomial coefficients, den ≠ 0")
        if len(np.trim_zeros(num, "f")) > len(np.trim_zeros(den, "f")):
            raise DesignError(
                "stage.num", self.num, "a proper transfer function (deg num <= deg den)"
            )
        if np.any(np.real(np.roots(den)) >= 0):
            raise DesignError(
                "stage.den", self.den, "a stable denominator (poles in the left half-plane)"
            )
        object.__setattr__(self, "num", tuple(num.tolist()))
        object.__setattr__(self, "den", tuple(den.tolist()))

    def transfer_function(self, gbw: bool = False) -> control.TransferFunction:
        """The given H(s)."""
        return control.tf(list(self.num), list(self.den))

    def state_model(self, pinned=None) -> StateModel:
        """Controllable canonical state equations of H (in deviation from v_ref)."""
        ss = control.tf2ss(self.transfer_function())
        a, b = np.asarray(ss.A), np.asarray(ss.B)[:, 0]
        c, d = np.asarray(ss.C)[0], float(np.asarray(ss.D)[0, 0])
        return StateModel(a, b, -self.v_ref * b, c, d, self.v_ref * (1.0 - d))

    def steady_state(self, u_dc: float) -> np.ndarray:
        """State with a constant input."""
        m = self.state_model()
        return np.linalg.solve(m.A, -(m.B * u_dc + m.e)) if m.A.size else np.zeros(0)


STAGE_TYPES = {
    "non_inverting_band_pass": NonInvertingBandPass,
    "inverting_band_pass": InvertingBandPass,
    "rc_high_pass": RCHighPass,
    "rc_low_pass": RCLowPass,
    "transfer_function": TransferStage,
}


def stage_output_dc(stage, u_dc: float) -> float:
    """DC output of a stage for a constant input [V]."""
    h0 = float(np.real(stage.transfer_function()(0.0)))
    return stage.v_ref + h0 * (u_dc - stage.v_ref)


def chain_transfer_function(stages, gbw: bool = False) -> control.TransferFunction:
    """Product of the stages' transfer functions (deviations from each stage's DC level)."""
    tf = control.tf([1.0], [1.0])
    for st in stages:
        tf = tf * st.transfer_function(gbw)
    return tf
