"""The interface every analog stage implements once.

A stage maps an input voltage to an output voltage, both absolute [V], as
``v_out − v_ref = H(s) (v_in − v_ref)`` in its linear region, with its own reference
voltage ``v_ref``. A stage type is one class derived from :class:`Stage`; it says, once,

* its transfer function (optionally with the op-amp's finite gain-bandwidth),
* its sections: the state equations of its capacitors in every rail mode
  (:class:`pirchain.circuit.rails.Section`), from which :meth:`Stage.tables` makes the
  discrete tables the chain's compiled pass runs,
* its noise sources referred to the comparator input,
* its SPICE netlist lines, and
* its schematic drawing.

Nothing outside a stage's own module tells stage types apart. Add a stage type by writing
one new class and registering it in :data:`pirchain.circuit.stages.STAGE_TYPES`.
"""

from __future__ import annotations

from abc import ABC, abstractmethod
from dataclasses import replace
from typing import TYPE_CHECKING

import numpy as np

from .rails import SectionTables, discretise

if TYPE_CHECKING:  # python-control loads on first use (start-up time)
    import control


def poly_tf(num, den) -> control.TransferFunction:
    """A python-control transfer function from polynomial coefficients (s^n first)."""
    import control

    return control.tf(np.atleast_1d(np.asarray(num, float)), np.atleast_1d(np.asarray(den, float)))


class Stage(ABC):
    """Base class of the analog stages (frozen dataclasses with ``name``, ``v_ref`` and
    ``opamp`` fields)."""

    name: str
    v_ref: float
    opamp: object

    @abstractmethod
    def transfer_function(self, gbw: bool = False) -> control.TransferFunction:
        """(v_out − v_ref)/(v_in − v_ref); with ``gbw`` the op-amp's finite A(s) included."""

    def noise_gain(self) -> control.TransferFunction:
        """Gain from the op-amp's input to its output (default: the stage's own H)."""
        return self.transfer_function()

    @abstractmethod
    def sections(self) -> tuple:
        """The stage as sections of ≤ 2 states in signal order (tuple of
        :class:`pirchain.circuit.rails.Section`); the last one carries the output."""

    def tables(self, sample_rate: float) -> tuple[SectionTables, ...]:
        """Discrete (trapezoidal) tables of every section at ``sample_rate`` [Hz]."""
        return tuple(discretise(s, sample_rate) for s in self.sections())

    def output_dc(self, u_dc: float) -> float:
        """DC output for a constant input [V]: v_ref + H(0) (u − v_ref)."""
        h0 = float(np.real(self.transfer_function()(0.0)))
        return self.v_ref + h0 * (u_dc - self.v_ref)

    #: Field names of the stage's resistors and capacitors (moved by ``r_tempco`` and
    #: ``c_tempco`` [1/K] when the stage has them).
    resistors: tuple = ()
    capacitors: tuple = ()

    def at_temperature(self, delta: float):
        """The stage ``delta`` kelvin above 25 °C: resistors and capacitors moved by their
        temperature coefficients, the op-amp's offset by its drift, and whatever else the
        stage type moves (:meth:`_moved`)."""
        changes = self._moved(delta)
        for names, coeff in ((self.resistors, "r_tempco"), (self.capacitors, "c_tempco")):
            k = 1.0 + getattr(self, coeff, 0.0) * delta
            if k != 1.0:
                changes.update({n: getattr(self, n) * k for n in names})
        if self.opamp is not None:
            changes["opamp"] = self.opamp.at_temperature(delta)
        return replace(self, **changes) if changes else self

    def _moved(self, delta: float) -> dict:
        """Stage-specific fields at ``delta`` kelvin above 25 °C (default: none)."""
        return {}

    def leakage_current(self, u_dc: float) -> float:
        """Supply current lost in the stage's capacitor leakage for a DC input [A]."""
        return 0.0

    @property
    def quiescent_current(self) -> float:
        """Supply current of the stage's op-amp [A] (0 for a passive stage)."""
        return 0.0 if self.opamp is None else self.opamp.quiescent_current

    @abstractmethod
    def noise_sources(self, index: int, temperature: float, downstream) -> list:
        """Noise sources inside the stage, referred to the comparator input.

        Parameters
        ----------
        index : int
            1-based position of the stage (for labels).
        temperature : float
            Temperature of the electronics [K].
        downstream : control.TransferFunction
            From this stage's output to the comparator input.

        Returns
        -------
        list of pirchain.circuit.noise.NoiseSource
        """

    @abstractmethod
    def netlist_lines(self, index: int, inp: str, out: str, writer) -> list[str]:
        """SPICE lines of the stage between nodes ``inp`` and ``out``.

        ``writer`` (:class:`pirchain.circuit.netlist.NetlistWriter`) provides reference
        nodes, op-amp macromodels and number formatting.
        """

    @abstractmethod
    def draw(self, pen, index: int) -> None:
        """Draw the stage rightwards from the current point of ``pen``
        (:class:`pirchain.circuit.schematic.SchematicPen`), ending at its output."""


def chain_transfer_function(stages, gbw: bool = False) -> control.TransferFunction:
    """Product of the stages' transfer functions (deviations from each stage's DC level)."""
    import control

    tf = control.tf([1.0], [1.0])
    for st in stages:
        tf = tf * st.transfer_function(gbw)
    return tf
