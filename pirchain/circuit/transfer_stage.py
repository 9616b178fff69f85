"""A stage given only as a transfer function: any proper, stable H(s)."""

from __future__ import annotations

import math
from dataclasses import dataclass
from typing import TYPE_CHECKING

import numpy as np

from ..errors import DesignError
from .noise import amplifier_sources
from .opamp import OpAmp
from .rails import Section, StateModel
from .stage import Stage

if TYPE_CHECKING:  # python-control loads on first use (start-up time)
    import control


def _canonical(num, den) -> tuple[np.ndarray, np.ndarray, np.ndarray, float]:
    """(A, B, C, D) of num/den in controllable canonical form (leading den coefficient ≠ 0)."""
    num, den = np.asarray(num, float), np.asarray(den, float)
    n = den.size - 1
    if n == 0:  # a pure gain: no states
        return np.zeros((0, 0)), np.zeros(0), np.zeros(0), float(num[-1] / den[0])
    num = np.concatenate([np.zeros(den.size - num.size), num]) / den[0]
    den = den / den[0]
    d = num[0]
    a = np.zeros((n, n))
    a[0, :] = -den[1:]
    a[1:, :-1] = np.eye(n - 1)
    b = np.zeros(n)
    b[0] = 1.0
    c = num[1:] - d * den[1:]
    return a, b, c, float(d)


@dataclass(frozen=True)
class TransferStage(Stage):
    """Any stage given as a proper transfer function (v_out − v_ref)/(v_in − v_ref).

    Its internal network is unknown, so with an op-amp its saturation is modelled by
    clamping the output at the rails (states keep evolving linearly). For the time
    simulation H is split into sections of at most two poles (its poles and zeros paired as
    in ``scipy.signal.zpk2sos(analog=True)``), each in controllable canonical form; the
    cascade of their bilinear transforms is the bilinear transform of H.
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
        if not np.any(num):
            raise DesignError("stage.num", self.num, "a non-zero numerator")
        if np.any(np.real(np.roots(den)) >= 0):
            raise DesignError(
                "stage.den", self.den, "a stable denominator (poles in the left half-plane)"
            )
        object.__setattr__(self, "num", tuple(num.tolist()))
        object.__setattr__(self, "den", tuple(den.tolist()))

    def transfer_function(self, gbw: bool = False) -> control.TransferFunction:
        """The given H(s)."""
        import control

        return control.tf(list(self.num), list(self.den))

    def state_model(self, pinned=None) -> StateModel:
        """Controllable canonical state equations of the whole H (in deviation from v_ref)."""
        num = np.trim_zeros(np.asarray(self.num), "f")
        den = np.trim_zeros(np.asarray(self.den), "f")
        a, b, c, d = _canonical(num, den)
        return StateModel(a, b, -self.v_ref * b, c, d, self.v_ref * (1.0 - d))

    def sections(self) -> tuple[Section, ...]:
        """H as a cascade of ≤ 2-pole sections; only the last is limited by the op-amp."""
        from scipy import signal

        z, p, k = signal.tf2zpk(
            np.trim_zeros(np.asarray(self.num), "f"), np.trim_zeros(np.asarray(self.den), "f")
        )
        sos = signal.zpk2sos(z, p, k, analog=True) if p.size else np.array([[0, 0, k, 0, 0, 1]])
        out = []
        for i, row in enumerate(sos):
            num, den = np.trim_zeros(row[:3], "f"), np.trim_zeros(row[3:], "f")
            last = i == len(sos) - 1
            limited = last and self.opamp is not None
            a, b, c, d = _canonical(num if num.size else [0.0], den)
            m = StateModel(a, b, -self.v_ref * b, c, d, self.v_ref * (1.0 - d))
            rest = self._steady(m, 0.0)
            out.append(
                Section(
                    m, None, None,
                    self.opamp.v_high if limited else math.inf,
                    self.opamp.v_low if limited else -math.inf,
                    limited, rest, self._steady(m, 1.0) - rest,
                )
            )  # fmt: skip
        return tuple(out)

    @staticmethod
    def _steady(m: StateModel, u_dc: float) -> np.ndarray:
        return np.linalg.solve(m.A, -(m.B * u_dc + m.e)) if m.A.size else np.zeros(0)

    def steady_state(self, u_dc: float) -> np.ndarray:
        """State of the whole canonical form with a constant input."""
        return self._steady(self.state_model(), u_dc)

    def noise_sources(self, index, temperature, downstream) -> list:
        """The op-amp's e_n (white and flicker) through the stage's own H (its network is
        unknown)."""
        if self.opamp is None:
            return []
        return amplifier_sources(
            f"stage {index} (through H)", self.opamp, self.transfer_function(True) * downstream
        )

    def netlist_lines(self, index, inp, out, writer) -> list[str]:
        """The canonical state equations on 1 F behavioural integrators, output clamped."""
        p, g = f"S{index}", writer.num
        m = self.state_model()
        lines = [f"* stage {index}: {self.name} (state equations, 1 F integrators)"]
        n = m.A.shape[0]
        du = f"(V({inp})-{g(self.v_ref)})"
        for i in range(n):
            terms = [f"{g(m.A[i, j])}*V({p}x{j})" for j in range(n)] + [f"{g(m.B[i])}*{du}"]
            lines += [
                f"C{p}x{i} {p}x{i} 0 1",
                f"R{p}x{i} {p}x{i} 0 1e15",
                f"B{p}x{i} 0 {p}x{i} I = {' + '.join(terms)}",
            ]
        expr = " + ".join(
            [g(self.v_ref)] + [f"{g(m.C[j])}*V({p}x{j})" for j in range(n)] + [f"{g(m.D)}*{du}"]
        )
        if self.opamp is not None:
            expr = f"max(min({expr}, {g(self.opamp.v_high)}), {g(self.opamp.v_low)})"
        return lines + [f"B{p}out {out} 0 V = {expr}"]

    def draw(self, pen, index) -> None:
        """A box labelled H(s)."""
        d, elm = pen.drawing, pen.elm
        d += elm.Line().right(0.5)
        d += elm.Box(w=2.4, h=1.2).anchor("W").label(f"stage {index}\nH(s)", fontsize=11)
