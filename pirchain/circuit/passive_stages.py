"""Passive RC high-pass and low-pass stages (no op-amp), driven from a low-impedance output."""

from __future__ import annotations

import math
from dataclasses import dataclass
from typing import TYPE_CHECKING

import numpy as np

from ..errors import check_positive, check_range, check_real
from .noise import K_B, NoiseSource
from .rails import Section, StateModel
from .stage import Stage

if TYPE_CHECKING:  # python-control loads on first use (start-up time)
    import control


class _PassiveRC(Stage):
    """Shared checks, corner, section, noise and drawing of the passive RC stages."""

    opamp = None
    resistors = ("r",)
    capacitors = ("c",)

    def __post_init__(self):
        check_positive("stage.r", self.r, "Ω")
        check_positive("stage.c", self.c, "F")
        check_real("stage.v_ref", self.v_ref)
        check_range("stage.r_tempco", self.r_tempco, -5e-3, 5e-3, "1/K")
        check_range("stage.c_tempco", self.c_tempco, -5e-3, 5e-3, "1/K")

    @property
    def corner(self) -> float:
        """1/(2π R C) [Hz]."""
        return 1.0 / (2 * math.pi * self.r * self.c)

    def steady_state(self, u_dc: float) -> np.ndarray:
        """Capacitor voltage with a constant input."""
        return np.array([u_dc - self.v_ref])

    def sections(self) -> tuple[Section, ...]:
        """One section of one state; nothing limits the output."""
        rest = self.steady_state(0.0)
        return (
            Section(
                self.state_model(), None, None, math.inf, -math.inf, False, rest,
                self.steady_state(1.0) - rest,
            ),
        )  # fmt: skip

    def noise_sources(self, index, temperature, downstream) -> list[NoiseSource]:
        """The resistor's Johnson noise 4kTR through 1/(1 + sRC)."""
        import control

        lp = control.tf([1.0], [self.r * self.c, 1.0])
        return [
            NoiseSource(
                f"stage {index} R (Johnson)", 4 * K_B * temperature * self.r, lp * downstream
            )
        ]

    def _draw(self, pen, series, shunt) -> None:
        d = pen.drawing
        d += series[0]().right().label(series[1])
        node = d.here
        pen.to_ground(shunt[0], shunt[1], "top")
        d += pen.elm.Line().at(node).right(1)


@dataclass(frozen=True)
class RCHighPass(_PassiveRC):
    """Passive RC high-pass: series C, R to v_ref. Driven by a low-impedance source."""

    r: float
    c: float
    v_ref: float = 0.0
    name: str = "RC high-pass"
    r_tempco: float = 0.0
    c_tempco: float = 0.0

    def transfer_function(self, gbw: bool = False) -> control.TransferFunction:
        """s R C / (1 + s R C)."""
        import control

        return control.tf([self.r * self.c, 0.0], [self.r * self.c, 1.0])

    def state_model(self, pinned=None) -> StateModel:
        """State v_in − v_out (the capacitor voltage)."""
        k = 1.0 / (self.r * self.c)
        return StateModel(
            np.array([[-k]]), np.array([k]), np.array([-k * self.v_ref]), np.array([-1.0]), 1.0, 0.0
        )

    def netlist_lines(self, index, inp, out, writer) -> list[str]:
        """Series C, R to the reference."""
        p, g = f"S{index}", writer.num
        return [
            f"* stage {index}: {self.name}",
            f"C{p} {inp} {out} {g(self.c)}",
            f"R{p} {out} {writer.reference(self.v_ref)} {g(self.r)}",
        ]

    def draw(self, pen, index) -> None:
        """Series capacitor, resistor to ground."""
        elm = pen.elm
        self._draw(pen, (elm.Capacitor, pen.value("", self.c, "F")),
                   (elm.Resistor, pen.value("", self.r, "Ω")))  # fmt: skip


@dataclass(frozen=True)
class RCLowPass(_PassiveRC):
    """Passive RC low-pass: series R, C to v_ref. Driven by a low-impedance source."""

    r: float
    c: float
    v_ref: float = 0.0
    name: str = "RC low-pass"
    r_tempco: float = 0.0
    c_tempco: float = 0.0

    def transfer_function(self, gbw: bool = False) -> control.TransferFunction:
        """1 / (1 + s R C)."""
        import control

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

    def netlist_lines(self, index, inp, out, writer) -> list[str]:
        """Series R, C to the reference."""
        p, g = f"S{index}", writer.num
        return [
            f"* stage {index}: {self.name}",
            f"R{p} {inp} {out} {g(self.r)}",
            f"C{p} {out} {writer.reference(self.v_ref)} {g(self.c)}",
        ]

    def draw(self, pen, index) -> None:
        """Series resistor, capacitor to ground."""
        elm = pen.elm
        self._draw(pen, (elm.Resistor, pen.value("", self.r, "Ω")),
                   (elm.Capacitor, pen.value("", self.c, "F")))  # fmt: skip
