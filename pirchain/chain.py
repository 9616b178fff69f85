"""The one object that wires the stages of a detector together.

``Detector`` holds the frozen parameter objects of every stage and runs a batch of walks
through them; each stage is a pure function from :mod:`pirchain.optics`,
:mod:`pirchain.sensor`, :mod:`pirchain.frontend`, :mod:`pirchain.saturation` and
:mod:`pirchain.logic`.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import control
import numpy as np

from .comparator import WindowComparator
from .errors import DesignError, warn_validity
from .frontend import SourceFollower, chain_transfer_function, stage_output_dc
from .logic import Decision, PulseLogic, Pulses, run_logic
from .optics import Beams, Lens, Mount, element_power, make_beams, part_angles
from .saturation import run_stage
from .scene import Environment, Target, Walks
from .sensor import PyroSensor, gate_voltage
from .supply import PowerSupply, SupplyBudget, supply_budget
from .target_pose import pose


@dataclass(frozen=True)
class FrontEndResult:
    """Signals of a batch of walks up to the sensor's gate.

    Attributes
    ----------
    time : numpy.ndarray
        Sample times, shape (samples,) [s].
    element_power : numpy.ndarray
        Radiant power change on each element, shape (walks, samples, elements) [W].
    equivalent_power : numpy.ndarray
        Σ c_k P_k, the power the gate node responds to, shape (walks, samples) [W].
    gate_voltage : numpy.ndarray
        Gate voltage change, shape (walks, samples) [V].
    """

    time: np.ndarray
    element_power: np.ndarray
    equivalent_power: np.ndarray
    gate_voltage: np.ndarray


@dataclass(frozen=True)
class AnalogResult:
    """Analog waveforms (absolute voltages) of a batch.

    Attributes
    ----------
    source_voltage : numpy.ndarray
        JFET source, shape (walks, samples) [V].
    stage_outputs : tuple of numpy.ndarray
        Output of every stage [V]; the last is the comparator input.
    pinned : tuple of numpy.ndarray of bool
        Where each stage's op-amp sits at a rail.
    """

    source_voltage: np.ndarray
    stage_outputs: tuple[np.ndarray, ...]
    pinned: tuple[np.ndarray, ...]

    @property
    def comparator_input(self) -> np.ndarray:
        """The last stage's output [V]."""
        return self.stage_outputs[-1]


@dataclass(frozen=True)
class ChainResult:
    """Everything a batch of walks produced, from optics to decisions.

    Attributes
    ----------
    front : FrontEndResult
    analog : AnalogResult
    window : tuple of float
        Comparator window (v_lo, v_hi) [V].
    pulses : Pulses
    decisions : list of Decision
    """

    front: FrontEndResult
    analog: AnalogResult
    window: tuple[float, float]
    pulses: Pulses
    decisions: list[Decision]

    @property
    def time(self) -> np.ndarray:
        """Sample times [s]."""
        return self.front.time

    @property
    def detected(self) -> np.ndarray:
        """Whether each walk turned the output on, shape (walks,)."""
        return np.array([d.detected for d in self.decisions])


@dataclass(frozen=True)
class Detector:
    """A PIR detector design: lens, mounting, sensor, front end, comparator and logic.

    Attributes
    ----------
    lens : Lens
    mount : Mount
    sensor : PyroSensor
    follower : SourceFollower or None
    stages : tuple
        Op-amp and passive stages in signal order.
    comparator : WindowComparator or None
    logic : PulseLogic or None
    supply : PowerSupply or None
    name : str
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

    def __post_init__(self):
        object.__setattr__(self, "stages", tuple(self.stages))
        if self.supply is not None and self.follower is not None:
            need = self.follower.minimum_drain_voltage()
            if self.supply.voltage < need:
                raise DesignError(
                    "supply.voltage",
                    self.supply.voltage,
                    f"at least {need:.3g} V to keep the JFET saturated",
                )

    # -- optics and sensor ---------------------------------------------------------------
    def beams(self) -> Beams:
        """Beams of this lens, mounting and sensor in the room frame."""
        return make_beams(self.lens, self.mount, self.sensor.elements)

    def element_power(
        self,
        target: Target,
        env: Environment,
        walks: Walks,
        beams: Beams | None = None,
        method: str = "compiled",
    ) -> np.ndarray:
        """Radiant power change on each element, shape (walks, samples, elements) [W].

        ``method="compiled"`` uses the fused kernel of :mod:`pirchain.optics_kernel` for
        targets of static parts; ``"reference"`` (and any swinging-arm target) uses the
        array path of :mod:`pirchain.target_pose` and :mod:`pirchain.optics`. Both give the
        same result to rounding (tested).
        """
        beams = self.beams() if beams is None else beams
        if method == "compiled" and target.swing is None and target.parts:
            from .optics_kernel import element_power_static

            contrast = target.radiance_contrast(env, self.sensor.band)
            return element_power_static(
                beams,
                target,
                contrast,
                walks,
                self.mount.height,
                len(self.sensor.elements),
                self.sensor.window_transmittance,
            )
        pp = pose(target, walks)
        angles = part_angles(pp.x, pp.y, pp.half_width, pp.z_bottom, pp.z_top, self.mount.height)
        contrast = target.radiance_contrast(env, self.sensor.band)
        return element_power(
            beams, angles, contrast, len(self.sensor.elements), self.sensor.window_transmittance
        )

    def front_end(self, target: Target, env: Environment, walks: Walks) -> FrontEndResult:
        """Run a batch of walks from the scene to the sensor's gate."""
        power = self.element_power(target, env, walks)
        p_eq = self.sensor.equivalent_power(power)
        v_g = gate_voltage(self.sensor, power, walks.sample_rate)
        return FrontEndResult(walks.time, power, p_eq, v_g)

    # -- analog chain --------------------------------------------------------------------
    def _need_analog(self):
        if self.follower is None or not self.stages:
            raise DesignError(
                "design.stages",
                self.stages,
                "a source follower and at least one stage for this analysis",
            )

    def analog(self, gate: np.ndarray, sample_rate: float, power_up: bool = False) -> AnalogResult:
        """Gate-voltage change (walks, samples) → every stage's absolute output.

        Parameters
        ----------
        gate : numpy.ndarray
            Gate voltage change from rest [V].
        sample_rate : float
            [Hz].
        power_up : bool
            Start with every capacitor discharged (the supply switching on at t = 0) instead
            of from the quiescent operating point.
        """
        self._need_analog()
        u = self.follower.source_voltage(np.atleast_2d(gate))
        source = u
        outs, pins = [], []
        for st in self.stages:
            x0 = None
            if power_up:
                n = st.state_model().A.shape[0]
                x0 = np.zeros((u.shape[0], n))
            run = run_stage(st, u, sample_rate, x0)
            outs.append(run.output)
            pins.append(run.pinned)
            u = run.output
        return AnalogResult(source, tuple(outs), tuple(pins))

    def rest_levels(self) -> list[float]:
        """Quiescent DC level at the source and after every stage [V]."""
        self._need_analog()
        levels = [self.follower.offset]
        for st in self.stages:
            levels.append(stage_output_dc(st, levels[-1]))
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

    def simulate(self, target: Target, env: Environment, walks: Walks, lux=None) -> ChainResult:
        """Run a batch of walks through the whole chain, from the scene to decisions."""
        self._check_sampling(walks)
        front = self.front_end(target, env, walks)
        ana = self.analog(front.gate_voltage, walks.sample_rate)
        win = self.window()
        pulses, decisions = run_logic(
            ana.comparator_input,
            walks.sample_rate,
            self.comparator,
            self.logic or PulseLogic(),
            lux,
        )
        return ChainResult(front, ana, win, pulses, decisions)

    def outcomes(
        self,
        target: Target,
        env: Environment,
        walks: Walks,
        lux=None,
        extra=None,
        keep_waveform: bool = False,
    ):
        """Run a batch through the whole chain and keep per-walk outcomes, not waveforms.

        The same model as :meth:`simulate` (tested equal), in one compiled pass per walk
        (:mod:`pirchain.compiled_chain`) for targets of static parts; a swinging-arm target
        takes the array optics and the compiled analog chain and logic.

        Parameters
        ----------
        lux : float or numpy.ndarray, optional
            Illuminance for the daylight inhibit (scalar or (walks, logic ticks)) [lux].
        extra : numpy.ndarray, optional
            Voltage added at the comparator input, shape (walks, samples) [V] (noise).
        keep_waveform : bool
            Also return the comparator input (walks, samples) [V].

        Returns
        -------
        WalkOutcomes
        """
        from .compiled_chain import WalkOutcomes, run_compiled, supports
        from .logic_kernel import logic_counts

        self._need_analog()
        self._check_sampling(walks)
        self.window()  # warns if the rest level is outside the window
        if supports(target):
            return run_compiled(self, target, env, walks, lux, extra, keep_waveform)
        gate = self.front_end(target, env, walks).gate_voltage
        vc = self.analog(gate, walks.sample_rate).comparator_input
        if extra is not None:
            vc = vc + extra
        counts, first = logic_counts(
            vc, walks.sample_rate, self.comparator, self.logic or PulseLogic(), lux
        )
        peak = np.max(np.abs(vc - self.rest_levels()[-1]), axis=1)
        return WalkOutcomes(
            counts[:, 2] > 0,
            first,
            counts[:, 0],
            counts[:, 1],
            counts[:, 2],
            peak,
            vc if keep_waveform else None,
        )

    def _check_sampling(self, walks: Walks) -> None:
        """Warn when the fastest beam crossing comes near the sample rate."""
        if walks.n_samples < 2 or walks.n_walks == 0 or walks.sample_rate <= 0:
            return
        k = max(1, walks.n_samples // 100)  # a speed estimate needs no more than ~100 points
        pos = walks.position[:, ::k]
        step = np.hypot(*np.moveaxis(np.diff(pos, axis=1), -1, 0)) if pos.shape[1] > 1 else 0
        v_max = float(np.max(step)) * walks.sample_rate / k
        rho = float(np.hypot(pos[..., 0], pos[..., 1]).min())
        if v_max == 0:
            return
        xs = np.array([e.x for e in self.sensor.elements])
        spacing = float(np.ptp(xs)) or self.sensor.elements[0].width
        focal = max(f.focal_length for f in self.lens.facets)
        f_cross = v_max * focal / (2 * max(rho, 0.3) * spacing)
        if f_cross > walks.sample_rate / 10:
            warn_validity(
                f"beam crossings reach {f_cross:.3g} Hz, above a tenth of the "
                f"{walks.sample_rate:g} Hz sample rate: raise the sample rate for "
                "accurate waveforms"
            )

    def power_up(self, duration: float = 120.0, sample_rate: float = 50.0):
        """Comparator input after switch-on with all capacitors discharged.

        Returns
        -------
        time : numpy.ndarray
            [s].
        analog : AnalogResult
            Waveforms of one run (walk axis of length 1).
        settling : float
            Time after which the comparator input stays inside the window [s]; ``inf`` if it
            never settles within ``duration``.
        """
        n = int(math.ceil(duration * sample_rate)) + 1
        t = np.arange(n) / sample_rate
        ana = self.analog(np.zeros((1, n)), sample_rate, power_up=True)
        settle = settling_time(t, ana.comparator_input[0], self.window())
        if not math.isfinite(settle):
            warn_validity(f"the chain has not settled inside the window after {duration:g} s")
        return t, ana, settle

    def transfer_function(self, gbw: bool = True) -> control.TransferFunction:
        """Comparator-input change per equivalent element power, V/W (python-control)."""
        self._need_analog()
        return (
            self.sensor.transfer_function()
            * self.follower.gain
            * chain_transfer_function(self.stages, gbw)
        )

    def supply_budget(self) -> SupplyBudget:
        """Supply current of every part and the total."""
        self._need_analog()
        return supply_budget(
            self.supply or PowerSupply(), self.follower, self.stages, self.comparator, self.logic
        )


def settling_time(t: np.ndarray, v: np.ndarray, window: tuple[float, float]) -> float:
    """First time after which ``v`` stays inside ``window`` to the end [s] (inf if never)."""
    lo, hi = window
    outside = np.flatnonzero((v <= lo) | (v >= hi))
    if outside.size == 0:
        return float(t[0])
    if outside[-1] == v.size - 1:
        return float("inf")
    return float(t[outside[-1] + 1])
