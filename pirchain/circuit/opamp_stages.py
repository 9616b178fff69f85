"""The two op-amp band-pass stages: non-inverting and AC-coupled inverting.

Both have R1 + C1 in series as the gain leg and Rf ∥ Cf as feedback; everything about them
(transfer function, state equations per rail mode, noise, netlist, drawing) is here. The
op-amp's input offset sits at its non-inverting input; an electrolytic C1's leakage is a
resistance across it (R_L = V_rated / I_leak of its datasheet), in the transfer function and
the state equations alike, so it both lifts the stage's DC level and draws supply current.
With temperature (25 °C reference) the resistors and capacitors move by their stated
coefficients and the leakage doubles every 20 K (aluminium electrolytics, common practice,
from memory).

References
----------
.. [1] Horowitz, P. and Hill, W., *The Art of Electronics*: non-inverting and inverting
   op-amp stages, H = 1 + Z_f/Z_1 and −Z_f/Z_1; finite gain-bandwidth closed loop
   H_ideal / (1 + (1/β)/A(s)).
.. [2] Motchenbacher, C. D. and Connelly, J. A., *Low-Noise Electronic System Design* (1993):
   op-amp and resistor noise referred through the noise gain.
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from typing import TYPE_CHECKING

import numpy as np

from ..errors import check_positive, check_range, check_real
from .noise import K_B, NoiseSource, amplifier_sources
from .opamp import OpAmp
from .rails import Section, StateModel
from .stage import Stage, poly_tf

if TYPE_CHECKING:  # python-control loads on first use (start-up time)
    import control

ELECTROLYTIC_DOUBLING = 20.0  # K per doubling of an electrolytic's leakage (from memory)


class _OpAmpBandPass(Stage):
    """Shared algebra of the two band-pass op-amp stages (R1 + C1 in series, Rf ∥ Cf)."""

    def _check(self, where):
        check_positive(where + ".r1", self.r1, "Ω")
        check_positive(where + ".c1", self.c1, "F")
        check_positive(where + ".rf", self.rf, "Ω")
        check_positive(where + ".cf", self.cf, "F")
        check_real(where + ".v_ref", self.v_ref)
        if self.c1_leakage is not None:
            check_positive(where + ".c1_leakage", self.c1_leakage, "Ω")
        check_range(where + ".r_tempco", self.r_tempco, -5e-3, 5e-3, "1/K")
        check_range(where + ".c_tempco", self.c_tempco, -5e-3, 5e-3, "1/K")

    resistors = ("r1", "rf")
    capacitors = ("c1", "cf")

    @property
    def _g_leak(self) -> float:
        """Conductance across C1 [S] (0: no leakage)."""
        return 0.0 if self.c1_leakage is None else 1.0 / self.c1_leakage

    def _moved(self, delta: float) -> dict:
        if self.c1_leakage is None:
            return {}
        return {"c1_leakage": self.c1_leakage * 2.0 ** (-delta / ELECTROLYTIC_DOUBLING)}

    def steady_state(self, u_dc: float) -> np.ndarray:
        """Capacitor voltages with a constant input (linear mode)."""
        m = self.state_model()
        return np.linalg.solve(m.A, -(m.B * u_dc + m.e))

    def output_dc(self, u_dc: float) -> float:
        """DC output for a constant input, offset and C1 leakage included [V]."""
        m = self.state_model()
        return float(m.C @ self.steady_state(u_dc) + m.D * u_dc + m.f)

    def leakage_current(self, u_dc: float) -> float:
        """DC current through C1's leakage for a constant input [A]."""
        return abs(self._g_leak * float(self.steady_state(u_dc)[0]))

    @property
    def low_corner(self) -> float:
        """f_L = 1/(2π R1 C1) [Hz]."""
        return 1.0 / (2 * math.pi * self.r1 * self.c1)

    @property
    def high_corner(self) -> float:
        """f_H = 1/(2π Rf Cf) [Hz]."""
        return 1.0 / (2 * math.pi * self.rf * self.cf)

    def _ratio_polys(self):
        """Z_f/Z_1 = Rf (s C1 + g) / ((1 + s Rf Cf)(1 + R1 g + s R1 C1)) as (num, den)
        polynomials, g the leakage conductance across C1 (0: s Rf C1 / ((1 + s Rf Cf)
        (1 + s R1 C1)))."""
        g = self._g_leak
        den = np.polymul([self.rf * self.cf, 1.0], [self.r1 * self.c1, 1.0 + self.r1 * g])
        return np.array([self.rf * self.c1, self.rf * g]), den

    def _with_gbw(self, ideal_num, den):
        """H_ideal · A / (A + NG), NG = 1 + Z_f/Z_1 the noise gain."""
        zn, zd = self._ratio_polys()
        ng_num = np.polyadd(zd, zn)
        a0 = self.opamp.open_loop_gain
        a_num, a_den = np.array([a0]), np.array([a0 / (2 * math.pi * self.opamp.gbw), 1.0])
        num = np.polymul(ideal_num, a_num)
        den_total = np.polyadd(np.polymul(den, a_num), np.polymul(ng_num, a_den))
        return poly_tf(num, den_total)

    def noise_gain(self) -> control.TransferFunction:
        """1 + Z_f/Z_1: gain from the op-amp's input noise to its output (ideal op-amp)."""
        zn, zd = self._ratio_polys()
        return poly_tf(np.polyadd(zd, zn), zd)

    def sections(self) -> tuple[Section, ...]:
        """One section: the two capacitors, linear and pinned at either rail."""
        amp = self.opamp
        rest = self.steady_state(0.0)
        return (
            Section(
                self.state_model(),
                self.state_model(amp.v_high),
                self.state_model(amp.v_low),
                amp.v_high,
                amp.v_low,
                True,
                rest,
                self.steady_state(1.0) - rest,
            ),
        )

    def _impedances(self):
        import control

        s = control.tf("s")
        return self.r1 + 1 / (self.c1 * s), 1 / (1 / self.rf + self.cf * s)

    def noise_sources(self, index, temperature, downstream) -> list[NoiseSource]:
        """Op-amp e_n through the noise gain 1 + Z_f/Z_1, i_n through Z_f; R1 (4kTR1)
        through Z_f/Z_1; Rf (4kT/Rf) through Z_f."""
        kt4 = 4 * K_B * temperature
        tag = f"stage {index}"
        z1, zf = self._impedances()
        out = amplifier_sources(tag, self.opamp, (1 + zf / z1) * downstream, zf * downstream)
        out.append(NoiseSource(f"{tag} R1 (Johnson)", kt4 * self.r1, zf / z1 * downstream))
        out.append(NoiseSource(f"{tag} Rf (Johnson)", kt4 / self.rf, zf * downstream))
        return out

    def _leakage_lines(self, p, a, b, writer):
        if self.c1_leakage is None:
            return []
        return [f"R{p}L {a} {b} {writer.num(self.c1_leakage)}"]

    def _feedback_lines(self, p, out, n, writer):
        g = writer.num
        return [f"R{p}F {out} {n} {g(self.rf)}", f"C{p}F {out} {n} {g(self.cf)}"]


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
    c1_leakage: float | None = None
    r_tempco: float = 0.0
    c_tempco: float = 0.0

    def __post_init__(self):
        self._check("stage")

    def transfer_function(self, gbw: bool = False) -> control.TransferFunction:
        """(v_out − v_ref)/(v_in − v_ref); with ``gbw`` the op-amp's finite A(s) is included."""
        zn, zd = self._ratio_polys()
        num = np.polyadd(zd, zn)
        return self._with_gbw(num, zd) if gbw else poly_tf(num, zd)

    def state_model(self, pinned: float | None = None) -> StateModel:
        """States [v_C1 − v_ref, v_out − v_−]; ``pinned`` is the rail voltage, or None (linear).

        Linear: v_− = u + V_os; pinned: v_− = rail − v_Cf. C1 leaks g v_C1.
        """
        r1, c1, rf, cf, ref = self.r1, self.c1, self.rf, self.cf, self.v_ref
        vos, leak = self.opamp.offset, self._g_leak / c1
        if pinned is None:
            a = np.array([[-1 / (r1 * c1) - leak, 0.0], [-1 / (r1 * cf), -1 / (rf * cf)]])
            b = np.array([1 / (r1 * c1), 1 / (r1 * cf)])
            e = (vos - ref) * b
            return StateModel(a, b, e, np.array([0.0, 1.0]), 1.0, vos)
        a = np.array(
            [[-1 / (r1 * c1) - leak, -1 / (r1 * c1)],
             [-1 / (r1 * cf), -1 / (r1 * cf) - 1 / (rf * cf)]]
        )  # fmt: skip
        e = (pinned - ref) * np.array([1 / (r1 * c1), 1 / (r1 * cf)])
        return StateModel(a, np.zeros(2), e, np.array([0.0, 1.0]), 1.0, 0.0)

    def netlist_lines(self, index, inp, out, writer) -> list[str]:
        """Op-amp macromodel with the signal on +, R1 and C1 from − to v_ref, Rf ∥ Cf."""
        p, g = f"S{index}", writer.num
        sub = writer.opamp(index, self.opamp)
        n, a, ref = f"{p}n", f"{p}a", writer.reference(self.v_ref)
        return [
            f"* stage {index}: {self.name}",
            f"R{p}1 {n} {a} {g(self.r1)}",
            f"C{p}1 {a} {ref} {g(self.c1)}",
            *self._leakage_lines(p, a, ref, writer),
            f"X{p} {inp} {n} {out} {sub}",
            *self._feedback_lines(p, out, n, writer),
        ]

    def draw(self, pen, index) -> None:
        """Op-amp with the signal on +, the gain leg R1, C1 to ground below, Rf ∥ Cf."""
        d, elm = pen.drawing, pen.elm
        d += elm.Line().right(0.6)
        op = d.add(elm.Opamp(leads=True, flip=True).anchor("in2"))
        d += elm.Line().at(op.in1).left(0.6)
        tap = pen.feedback_below(d.here, op, self.rf, self.cf, index, 1.2)
        d += elm.Line().at(tap).left(1.5)
        d += elm.Resistor().down().label(pen.value(f"R{index}1", self.r1, "Ω"), loc="top")
        d += elm.Capacitor().down().label(pen.value(f"C{index}1", self.c1, "F"), loc="top")
        d += elm.Ground()
        pen.output(op, index)


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
    c1_leakage: float | None = None
    r_tempco: float = 0.0
    c_tempco: float = 0.0

    def __post_init__(self):
        self._check("stage")

    def transfer_function(self, gbw: bool = False) -> control.TransferFunction:
        """(v_out − v_ref)/(v_in − v_ref)."""
        zn, zd = self._ratio_polys()
        return self._with_gbw(-zn, zd) if gbw else poly_tf(-zn, zd)

    def state_model(self, pinned: float | None = None) -> StateModel:
        """States [v_in − v_between(C1, R1), v_out − v_−].

        i1 = (u − v_c1 − v_n)/r1; dv_c1 = (i1 − g v_c1)/c1; dv_cf = (−i1 − v_cf/rf)/cf, with
        v_n = v_ref + V_os (linear) or rail − v_cf (pinned).
        """
        r1, c1, rf, cf = self.r1, self.c1, self.rf, self.cf
        ref, leak = self.v_ref + self.opamp.offset, self._g_leak / c1
        b = np.array([1 / (r1 * c1), -1 / (r1 * cf)])
        if pinned is None:
            a = np.array([[-1 / (r1 * c1) - leak, 0.0], [1 / (r1 * cf), -1 / (rf * cf)]])
            return StateModel(a, b, -ref * b, np.array([0.0, 1.0]), 0.0, ref)
        a = np.array(
            [[-1 / (r1 * c1) - leak, 1 / (r1 * c1)],
             [1 / (r1 * cf), -1 / (r1 * cf) - 1 / (rf * cf)]]
        )  # fmt: skip
        return StateModel(a, b, -pinned * b, np.array([0.0, 1.0]), 0.0, ref)

    def netlist_lines(self, index, inp, out, writer) -> list[str]:
        """Op-amp macromodel with + at v_ref, C1 and R1 into −, Rf ∥ Cf."""
        p, g = f"S{index}", writer.num
        sub = writer.opamp(index, self.opamp)
        n, a, ref = f"{p}n", f"{p}a", writer.reference(self.v_ref)
        return [
            f"* stage {index}: {self.name}",
            f"C{p}1 {inp} {a} {g(self.c1)}",
            *self._leakage_lines(p, inp, a, writer),
            f"R{p}1 {a} {n} {g(self.r1)}",
            f"X{p} {ref} {n} {out} {sub}",
            *self._feedback_lines(p, out, n, writer),
        ]

    def draw(self, pen, index) -> None:
        """C1 and R1 into −, + to v_ref above, Rf ∥ Cf below."""
        d, elm = pen.drawing, pen.elm
        d += elm.Capacitor().right().label(pen.value(f"C{index}1", self.c1, "F"))
        d += elm.Resistor().right().label(pen.value(f"R{index}1", self.r1, "Ω"))
        node = d.here
        d += elm.Line().right(0.6)
        op = d.add(elm.Opamp(leads=True, flip=True).anchor("in1"))
        d += elm.Line().at(op.in2).left(0.6)
        d += elm.Line().up(0.6)
        d += (
            elm.Ground()
            if self.v_ref == 0
            else elm.Vdd().label(f"v_ref {self.v_ref:.3g} V", fontsize=10)
        )
        pen.feedback_below(node, op, self.rf, self.cf, index, 1.2)
        pen.output(op, index)
