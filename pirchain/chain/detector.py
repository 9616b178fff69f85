"""The one object that wires the stages of a detector together.

``Detector`` holds the frozen parameter objects of every stage; it answers the static
questions of a design (beams, rest levels, window, transfer function, supply budget) and
hands every time-domain run to the one engine (:mod:`pirchain.chain.engine`), which it
compiles for a sample rate and walk length with :meth:`Detector.compile`.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field, replace
from typing import TYPE_CHECKING

import numpy as np

from ..circuit.comparator import WindowComparator
from ..circuit.follower import SourceFollower
from ..circuit.noise import NoiseScale
from ..circuit.stage import chain_transfer_function
from ..circuit.supply import PowerSupply, SupplyBudget, supply_budget
from ..errors import DesignError, check_range, warn_validity
from ..logic.rules import PulseLogic
from ..physics.optics import Beams, Lens, Mount, crossing_frequency, make_beams
from ..physics.sensor import REFERENCE_K, PyroSensor
from .engine import TAPS, ChainRun, CompiledChain, WalkOutcomes, compile_chain

if TYPE_CHECKING:  # python-control loads on first use (start-up time)
    import control

MAX_GATE_LIFT = 5.0  # V: beyond, the gate junction would be forward-biased long before


@dataclass(frozen=True)
class Detector:
    """A PIR detector design: lens, mounting, sensor, front end, comparator and logic.

    Attributes
    ----------
    lens : Lens
    mount : Mount
    sensor : PyroSensor
    follower : SourceFollower or None
    stages : tuple of Stage
        Op-amp and passive stages in signal order.
    comparator : WindowComparator or None
    logic : PulseLogic or None
        None: the defaults of :class:`PulseLogic`.
    supply : PowerSupply or None
    name : str
    temperature : float
        Temperature of the parts [K]. The part values are those at 25 °C; use
        :meth:`at_temperature` for the unit at another temperature (a
        :class:`pirchain.design.Design` does, at its room's or its stated temperature).
    nominal : Detector or None
        The 25 °C design this one was moved from (None: this one is).
    noise_scale : NoiseScale
        Multipliers of the electrical noise densities fitted to a bench recording (1, 1:
        the parts' own figures).

    Notes
    -----
    The follower's gate bias is set here: the JFET's gate leakage through R_G.
    """

    lens: Lens
    mount: Mount
    sensor: PyroSensor
    follower: SourceFollower | None = None
    stages: tuple = ()
    comparator: WindowComparator | None = None
    logic: PulseLogic | None = None
    supply: PowerSupply | None = None
    name: str = "detector"
    temperature: float = REFERENCE_K
    nominal: Detector | None = field(default=None, compare=False, repr=False)
    noise_scale: NoiseScale = field(default_factory=NoiseScale)

    def __post_init__(self):
        object.__setattr__(self, "stages", tuple(self.stages))
        if self.follower is not None:
            bias = self.follower.jfet.gate_leakage * self.sensor.gate_resistance
            if bias > MAX_GATE_LIFT:
                raise DesignError(
                    "follower.jfet.gate_leakage", self.follower.jfet.gate_leakage,
                    f"a leakage that lifts the gate through R_G = {self.sensor.gate_resistance:.3g}"
                    f" Ω by at most {MAX_GATE_LIFT:g} V (it lifts it {bias:.3g} V here)",
                )  # fmt: skip
            if bias != self.follower.gate_bias:
                object.__setattr__(self, "follower", replace(self.follower, gate_bias=bias))
        if self.supply is not None and self.follower is not None:
            need = self.follower.minimum_drain_voltage()
            if self.supply.voltage < need:
                raise DesignError(
                    "supply.voltage",
                    self.supply.voltage,
                    f"at least {need:.3g} V to keep the JFET saturated",
                )

    def at_temperature(self, temperature: float) -> Detector:
        """The same design with every part at ``temperature`` [K] (from the 25 °C values).

        Moves the sensor (p, ε_r, R_G), the JFET (leakage, I_DSS, |V_P|), every stage
        (resistor and capacitor coefficients, op-amp offset drift, C1 leakage); thermal
        noise is then taken at this temperature.
        """
        check_range("detector temperature", temperature - 273.15, -55.0, 125.0, "°C")
        base = self.nominal or self
        delta = temperature - REFERENCE_K
        return replace(
            base,
            sensor=base.sensor.at_temperature(temperature),
            follower=None if base.follower is None else base.follower.at_temperature(delta),
            stages=tuple(st.at_temperature(delta) for st in base.stages),
            temperature=float(temperature),
            nominal=base,
        )

    # -- static answers -------------------------------------------------------------------
    def beams(self) -> Beams:
        """Beams of this lens, mounting and sensor in the room frame."""
        return make_beams(self.lens, self.mount, self.sensor.elements)

    def require_analog(self) -> None:
        """Raise a :class:`DesignError` unless the design has a follower and stages."""
        if self.follower is None or not self.stages:
            raise DesignError(
                "design.stages",
                self.stages,
                "a source follower and at least one stage for this analysis",
            )

    def rest_levels(self) -> list[float]:
        """Quiescent DC level at the source and after every stage [V]."""
        self.require_analog()
        levels = [self.follower.offset]
        for k, st in enumerate(self.stages):
            with np.errstate(all="ignore"):
                levels.append(float(st.output_dc(levels[-1])))
            if not math.isfinite(levels[-1]):
                raise DesignError(
                    f"stages[{k}]", st.name, "part values that give a finite rest level"
                )
        return levels

    def window(self) -> tuple[float, float]:
        """Comparator window (v_lo, v_hi) [V]; warns if the rest level is not inside."""
        if self.comparator is None:
            raise DesignError("design.comparator", None, "a window comparator for this analysis")
        lo, hi = self.comparator.edges()
        if self.stages and self.follower is not None:
            rest = self.rest_levels()[-1]
            if not lo < rest < hi:
                warn_validity(
                    f"the comparator input rests at {rest:.3g} V, outside the window "
                    f"[{lo:.3g}, {hi:.3g}] V: the output would fire for ever"
                )
        return lo, hi

    def crossing_frequency(self, speed, distance) -> np.ndarray:
        """Fundamental of the fastest beam-pair crossing of a walk at ``speed`` [m s⁻¹] and
        horizontal ``distance`` [m] (at least 0.3 m) [Hz], by the thin-lens rule of
        :func:`pirchain.physics.optics.crossing_frequency` with the lens's longest focal
        length and the sensor's element spacing."""
        xs = np.array([e.x for e in self.sensor.elements])
        spacing = float(np.ptp(xs)) or self.sensor.elements[0].width
        focal = max(f.focal_length for f in self.lens.facets)
        return crossing_frequency(speed, np.maximum(distance, 0.3), focal, spacing)

    def sample_rate_for(self, speed, distance, base: float, ceiling: float = 1e4):
        """Sample rate [Hz] of each walk: ``base`` doubled until the walk's fastest crossing
        (:meth:`crossing_frequency`) is at most a tenth of it, but no more than ``ceiling``
        (the waveforms need ten samples per period; the decisions need fewer)."""
        need = 10.0 * np.atleast_1d(self.crossing_frequency(speed, distance))
        k = np.ceil(np.log2(np.maximum(need / base, 1.0)))
        return np.minimum(base * 2.0**k, max(base, ceiling))

    def transfer_function(self, gbw: bool = True) -> control.TransferFunction:
        """Comparator-input change per equivalent element power, V/W (python-control)."""
        self.require_analog()
        return (
            self.sensor.transfer_function()
            * self.follower.gain
            * chain_transfer_function(self.stages, gbw)
        )

    def supply_budget(self) -> SupplyBudget:
        """Supply current of every part and the total."""
        self.require_analog()
        return supply_budget(
            self.supply or PowerSupply(), self.follower, self.stages, self.comparator, self.logic
        )

    # -- the engine -----------------------------------------------------------------------
    def compile(self, sample_rate: float, n_samples: int) -> CompiledChain:
        """This design's tables for walks of ``n_samples`` at ``sample_rate`` [Hz] (cached)."""
        return compile_chain(self, float(sample_rate), int(n_samples))

    def run(self, target, env, walks, taps=(), lux=None, extra=None) -> ChainRun:
        """Run a batch of walks through the whole chain, keeping the nodes in ``taps``.

        Parameters
        ----------
        target : Target
        env : Environment
        walks : Walks
        taps : sequence of str
            Nodes whose waveforms to keep (:data:`pirchain.chain.engine.TAPS`).
        lux : float or array_like, optional
            Illuminance for the daylight inhibit (scalar, (ticks,) or (walks, ticks)) [lux].
        extra : numpy.ndarray, optional
            Voltage added at the comparator input, shape (walks, samples) [V] (noise).

        Returns
        -------
        ChainRun
        """
        self.require_analog()
        self.window()  # warns if the rest level is outside the window
        chain = self.compile(walks.sample_rate, walks.n_samples)
        run = chain.walk(target, env, walks, taps, lux, extra)
        _check_sampling(run)
        return run

    def simulate(self, target, env, walks, lux=None, extra=None) -> ChainRun:
        """:meth:`run` keeping every node's waveform and every event."""
        return self.run(target, env, walks, TAPS, lux, extra)

    def outcomes(self, target, env, walks, lux=None, extra=None) -> WalkOutcomes:
        """:meth:`run` keeping only the per-walk outcomes (what range and coverage use)."""
        return self.run(target, env, walks, (), lux, extra).outcomes

    def drive(self, node, signal, sample_rate, taps=(), lux=None, extra=None, start="steady"):
        """Drive a signal (walks, samples) in at ``node`` and run the rest of the chain.

        See :meth:`pirchain.chain.engine.CompiledChain.drive`; ``sample_rate`` [Hz].
        """
        self.require_analog()
        self.window()
        sig = np.atleast_2d(np.asarray(signal, dtype=float))
        chain = self.compile(sample_rate, sig.shape[-1])
        return chain.drive(node, sig, taps, lux, extra, start)


def _check_sampling(run) -> None:
    """Warn when the fastest beam crossing of a run comes near its sample rate."""
    f = run.crossing_frequency
    if f is None or f.size == 0 or run.time.size < 2:
        return
    f_cross = float(np.max(f))
    if f_cross > run.sample_rate / 10:
        warn_validity(
            f"beam crossings reach {f_cross:.3g} Hz, above a tenth of the "
            f"{run.sample_rate:g} Hz sample rate: raise the sample rate for accurate waveforms"
        )
