"""The one engine: a detector compiled for a sample rate and walk length, and its runs.

:func:`compile_chain` builds the detector's named tables once (cached);
:meth:`CompiledChain.walk` runs a batch of walks from the scene, :meth:`CompiledChain.drive`
runs a signal driven in at a node (the equivalent gate power, the gate, or the comparator
input). Either way the same compiled pass (:func:`pirchain.kernels.chain.run_batch`) runs
the whole chain; ``taps`` says which nodes' waveforms to keep:

``element_power``  power on each element (walks, samples, elements) [W]
``equivalent_power``  Σ c_k P_k (walks, samples) [W]
``gate``  gate-voltage change (walks, samples) [V]
``source``  JFET source (walks, samples) [V]
``stages``  every stage's output and where its op-amp sits at a rail
``comparator``  comparator input, added noise included (walks, samples) [V]
``events``  every pulse and output on-interval
"""

from __future__ import annotations

import dataclasses
import functools
import re
from dataclasses import dataclass

import numpy as np

from ..errors import DesignError
from ..logic.rules import Decision, PulseLogic, Pulses
from . import tables as tb

TAPS = ("element_power", "equivalent_power", "gate", "source", "stages", "comparator", "events")
#: Where a driven signal may enter (besides ``stage<k>_input``), and the kernel's start node.
DRIVE_NODES = {"element_current": 1, "equivalent_power": 1, "gate": 2, "comparator": 3}
_FIRST_TAP = {0: 0, 1: 1, 2: 2, 3: 5, 4: 4}  # start node → index in TAPS of the first tap it has
_STAGE_INPUT = re.compile(r"stage([1-9][0-9]?)_input")


@dataclass(frozen=True)
class WalkOutcomes:
    """Per-walk outcomes of a batch.

    Attributes
    ----------
    detected : numpy.ndarray of bool
        The output turned on.
    first_on : numpy.ndarray
        First turn-on time [s], NaN where never.
    pulses, triggers, turn_ons : numpy.ndarray of int
        Pulses outside the window, rule firings (retriggers included), output turn-ons.
    peak : numpy.ndarray
        Largest |comparator input − rest level| [V] (added noise included).
    """

    detected: np.ndarray
    first_on: np.ndarray
    pulses: np.ndarray
    triggers: np.ndarray
    turn_ons: np.ndarray
    peak: np.ndarray


@dataclass(frozen=True)
class ChainRun:
    """What a run produced: per-walk outcomes, and the waveforms and events it tapped
    (None where not tapped).

    Attributes
    ----------
    time : numpy.ndarray
        Sample times (samples,) [s].
    sample_rate : float
        [Hz].
    window : tuple of float
        Comparator window (v_lo, v_hi) [V].
    outcomes : WalkOutcomes
    element_power : numpy.ndarray or None
        (walks, samples, elements) [W].
    equivalent_power : numpy.ndarray or None
        Σ c_k P_k (walks, samples) [W].
    gate_voltage : numpy.ndarray or None
        Gate-voltage change (walks, samples) [V].
    source_voltage : numpy.ndarray or None
        JFET source (walks, samples) [V].
    stage_outputs : tuple of numpy.ndarray or None
        Every stage's output (walks, samples) [V].
    pinned : tuple of numpy.ndarray or None
        Where each stage's op-amp sits at a rail (walks, samples) bool.
    comparator_input : numpy.ndarray or None
        (walks, samples) [V].
    pulses : Pulses or None
        Every pulse, flattened over walks.
    decisions : list of Decision or None
        Triggers, on-intervals and counted pulses of each walk.
    crossing_frequency : numpy.ndarray or None
        Fastest beam-pair crossing of each walk, v f/(2 d s) with its largest speed and
        shortest range (at least 0.3 m) [Hz]; None for a driven run.
    """

    time: np.ndarray
    sample_rate: float
    window: tuple[float, float]
    outcomes: WalkOutcomes
    element_power: np.ndarray | None = None
    equivalent_power: np.ndarray | None = None
    gate_voltage: np.ndarray | None = None
    source_voltage: np.ndarray | None = None
    stage_outputs: tuple | None = None
    pinned: tuple | None = None
    comparator_input: np.ndarray | None = None
    pulses: Pulses | None = None
    decisions: list | None = None
    crossing_frequency: np.ndarray | None = None

    @property
    def detected(self) -> np.ndarray:
        """Whether each walk turned the output on, shape (walks,)."""
        return self.outcomes.detected


@dataclass(frozen=True, eq=False)
class CompiledChain:
    """A detector's tables for one sample rate and walk length (see :func:`compile_chain`).

    Attributes
    ----------
    detector : Detector
    sample_rate : float
        [Hz].
    n_samples : int
        Samples per walk.
    time : numpy.ndarray
        Sample times [s].
    optics_summed, optics_per_element : OpticsTable
        Beams summed straight into Σ c_k P_k, or kept per element.
    sensor : SensorTable
    sensor_current : SensorTable
        The gate node's impedance, for an injected element current.
    follower : FollowerTable
    stages : StageTable
    logic : LogicTable
    rest : float
        Comparator input at rest [V].
    window : tuple of float
        (v_lo, v_hi) [V].
    """

    detector: object
    sample_rate: float
    n_samples: int
    time: np.ndarray
    optics_summed: tb.OpticsTable
    optics_per_element: tb.OpticsTable
    sensor: tb.SensorTable
    sensor_current: tb.SensorTable
    follower: tb.FollowerTable
    stages: tb.StageTable
    logic: tb.LogicTable
    rest: float
    window: tuple[float, float]

    def walk(self, target, environment, walks, taps=(), lux=None, extra=None) -> ChainRun:
        """Run a batch of walks from the scene through the chain.

        Parameters
        ----------
        target : Target
        environment : Environment
        walks : Walks
            Sampled at this chain's sample rate and length.
        taps : sequence of str
            Nodes whose waveforms to keep (module docstring); default: outcomes only.
        lux : float or array_like, optional
            Illuminance for the daylight inhibit: a scalar, per tick (ticks,) or per walk
            and tick (walks, ticks) [lux].
        extra : numpy.ndarray, optional
            Voltage added at the comparator input (walks, samples) [V] (noise).
        """
        if walks.n_samples != self.n_samples or walks.sample_rate != self.sample_rate:
            raise DesignError(
                "walks", (walks.n_samples, walks.sample_rate),
                f"{self.n_samples} samples at {self.sample_rate:g} Hz (the compiled chain's)",
            )  # fmt: skip
        contrast = _contrast(target, environment, self.detector.sensor.band)
        parts = tb.part_table(target, contrast, walks.time)
        return self._run(0, walks.n_walks, tb.walk_table(walks), parts, None, taps, lux, extra)

    def drive(self, node: str, signal, taps=(), lux=None, extra=None, start="steady"):
        """Run a signal driven in at ``node`` through the rest of the chain.

        Parameters
        ----------
        node : str
            Where the signal enters: ``"element_current"``, the pyroelectric current into
            the gate node R_G ∥ C_gate [A] (what a bench injects and the exported netlist's
            current source carries; for one element of a pair, its current times its
            :attr:`~pirchain.physics.sensor.PyroSensor.coupling`), the first sample taken as
            flowing for ever (it lifts the gate by i R_G); ``"equivalent_power"``, Σ c_k P_k
            [W] (the sensor responds to its change from the first sample);
            ``"gate"``, the gate-voltage change from its bias [V]; ``"stage<k>_input"``, the
            absolute voltage at stage k's input [V] (``stage1_input`` is the follower's
            source); ``"comparator"``, the comparator input [V].
        signal : array_like, shape (walks, samples)
            The input.
        start : {"steady", "discharged"}
            Every stage in steady state with its first input, or every capacitor
            discharged (the supply switching on at t = 0).

        Returns
        -------
        ChainRun
            As a walk's, from the node driven on; stage outputs before a driven stage
            input are NaN.
        """
        first = 0
        m = _STAGE_INPUT.fullmatch(node) if isinstance(node, str) else None
        n_st = len(self.detector.stages)
        if m is not None and 1 <= int(m.group(1)) <= n_st:
            k = int(m.group(1))
            first = int(np.flatnonzero(self.stages.stage_of == k - 1)[0])
        elif node not in DRIVE_NODES:
            names = ", ".join((*DRIVE_NODES, f"stage1_input … stage{n_st}_input"))
            raise DesignError("node", node, "one of " + names)
        if start not in ("steady", "discharged"):
            raise DesignError("start", start, "'steady' or 'discharged'")
        sig = _finite_batch("signal", signal, self.n_samples)
        begin = 4 if m is not None else DRIVE_NODES[node]
        sensor = self.sensor_current if node == "element_current" else self.sensor
        run = self._run(
            begin, sig.shape[0], None, None, (sig, start == "discharged", first), taps, lux,
            extra, sensor, 2 if node == "element_current" else None,
        )  # fmt: skip
        if m is None or run.stage_outputs is None:
            return run
        k = int(m.group(1))
        nan = tuple(np.full_like(x, np.nan) for x in run.stage_outputs[: k - 1])
        return dataclasses.replace(run, stage_outputs=nan + run.stage_outputs[k - 1 :])

    def _run(self, start, n_w, walks, parts, drive, taps, lux, extra, sensor=None,
             first_tap=None) -> ChainRun:  # fmt: skip
        taps = _check_taps(taps, start if first_tap is None else first_tap)
        n_t = self.n_samples
        sig, discharged, first = drive if drive is not None else (np.zeros((0, 0)), False, 0)
        if extra is None:
            extra = np.zeros((n_w, 0))
        else:
            extra = _finite_batch("extra", extra, n_t)
            if extra.shape[0] != n_w:
                raise DesignError("extra", extra.shape, f"finite values of shape ({n_w}, {n_t})")
        dt = tb.DriveTable(int(start), tb._f(sig), tb._f(extra), bool(discharged), int(first),
                           self._daylight(lux, n_w))  # fmt: skip
        per_element = "element_power" in taps
        optics = self.optics_per_element if per_element else self.optics_summed
        arrays = self._tap_arrays(taps, n_w)
        out = tb.OutcomeArrays(
            np.zeros((n_w, 3), dtype=np.int64), np.zeros(n_w), np.zeros(n_w), np.zeros(n_w),
            np.full(n_w, np.inf), float(self.rest), int(n_t),
        )  # fmt: skip
        if walks is None:
            walks = tb.WalkTable(np.zeros((0, 0, 2)), np.zeros((0, 0, 2)))
        if parts is None:
            parts = tb.part_table(_NO_TARGET, np.zeros(0), np.zeros(0))
        from ..kernels.chain import run_batch

        sensor = self.sensor if sensor is None else sensor
        run_batch(walks, parts, optics, sensor, self.follower, self.stages, self.logic,
                  dt, arrays, out)  # fmt: skip
        crossing = None
        if start == 0:
            crossing = self.detector.crossing_frequency(out.step * self.sample_rate, out.closest)
        return self._result(taps, arrays, out, crossing)

    def _daylight(self, lux, n_w):
        day = (self.detector.logic or PulseLogic()).daylight
        n_k = self.logic.tick_time.size
        if day is None or lux is None:
            return np.zeros((0, 1))
        try:
            lx = np.asarray(lux, dtype=float)
            rows = n_w if lx.ndim == 2 else 1
            lx = np.broadcast_to(lx, (rows, n_k))
        except (TypeError, ValueError):
            raise DesignError(
                "lux", np.shape(lux), f"a scalar, ({n_k},) or ({n_w}, {n_k}) illuminances"
            ) from None
        if not np.all(np.isfinite(lx)) or np.any(lx < 0):
            raise DesignError("lux", "values", "finite illuminances >= 0 lux")
        return tb._f(day.node_voltage(lx))

    def _tap_arrays(self, taps, n_w):
        n_t, det = self.n_samples, self.detector
        n_el, n_st = len(det.sensor.elements), len(det.stages)
        cap = self.logic.tick_time.size + 1 if "events" in taps else 0

        def wave(name, *shape):
            return np.zeros(shape if name in taps else (0,) * len(shape))

        return tb.TapArrays(
            wave("element_power", n_w, n_t, n_el),
            wave("equivalent_power", n_w, n_t),
            wave("gate", n_w, n_t),
            wave("source", n_w, n_t),
            wave("stages", n_st, n_w, n_t),
            wave("stages", n_st, n_w, n_t).astype(np.bool_),
            wave("comparator", n_w, n_t),
            np.zeros((n_w, cap)),
            np.zeros((n_w, cap)),
            np.zeros((n_w, cap), dtype=np.int8),
            np.zeros((n_w, cap)),
            np.zeros((n_w, cap), dtype=np.bool_),
            np.zeros((n_w, cap), dtype=np.bool_),
            np.zeros((n_w, cap)),
            np.zeros((n_w, cap)),
        )

    def _result(self, taps, a: tb.TapArrays, out: tb.OutcomeArrays, crossing) -> ChainRun:
        counts = out.counts
        oc = WalkOutcomes(
            counts[:, 2] > 0, out.first_on, counts[:, 0], counts[:, 1], counts[:, 2], out.peak
        )

        def get(name, arr):
            return arr if name in taps else None

        pulses = decisions = None
        if "events" in taps:
            pulses, decisions = _events(a, counts)
        return ChainRun(
            self.time, self.sample_rate, self.window, oc,
            get("element_power", a.element_power),
            get("equivalent_power", a.equivalent_power),
            get("gate", a.gate),
            get("source", a.source),
            tuple(a.stages) if "stages" in taps else None,
            tuple(a.pinned) if "stages" in taps else None,
            get("comparator", a.comparator),
            pulses,
            decisions,
            crossing,
        )  # fmt: skip


@functools.lru_cache(maxsize=64)
def _contrast(target, environment, band):
    """Radiance contrast of each part (static, then arm segments) [W m⁻² sr⁻¹] (cached:
    the two-node body model is stepped through an hour for each room)."""
    return target.radiance_contrast(environment, band)


def _events(a: tb.TapArrays, counts):
    """Pulses and decisions from the event records."""
    n_w = counts.shape[0]
    n_p, n_on = counts[:, 0], counts[:, 2]
    keep = np.arange(a.pulse_start.shape[1])[None, :] < n_p[:, None]
    walk = np.broadcast_to(np.arange(n_w)[:, None], keep.shape)[keep]
    pulses = Pulses(
        walk, a.pulse_start[keep], a.pulse_end[keep], a.pulse_sign[keep].astype(int),
        a.pulse_peak[keep], a.pulse_counted[keep], a.pulse_fired[keep],
    )  # fmt: skip
    bounds = np.concatenate([[0], np.cumsum(n_p)])
    decisions = []
    for w in range(n_w):
        mine = pulses.slice(bounds[w], bounds[w + 1])
        starts, ends = a.on_start[w, : n_on[w]], a.on_end[w, : n_on[w]]
        on = [(float(s), float(e)) for s, e in zip(starts, ends, strict=True)]
        decisions.append(Decision(mine.start[mine.fired], on, mine.start[mine.counted]))
    return pulses, decisions


def _check_taps(taps, start):
    if isinstance(taps, str):
        taps = (taps,)
    taps = tuple(taps)
    for t in taps:
        if t not in TAPS:
            raise DesignError("taps", t, "one of " + ", ".join(TAPS))
        if TAPS.index(t) < _FIRST_TAP[start] and t != "events":
            raise DesignError("taps", t, "a node at or after the one the signal is driven into")
    return frozenset(taps)


def _finite_batch(name, x, n_t):
    try:
        arr = np.asarray(x, dtype=float)
    except (TypeError, ValueError):
        raise DesignError(name, type(x).__name__, "an array of numbers") from None
    if arr.ndim != 2 or arr.shape[1] != n_t or not np.all(np.isfinite(arr)):
        raise DesignError(name, arr.shape, f"finite values of shape (walks, {n_t})")
    return np.ascontiguousarray(arr)


class _NoTarget:
    parts = ()
    swing = None


_NO_TARGET = _NoTarget()


@functools.lru_cache(maxsize=32)
def compile_chain(detector, sample_rate: float, n_samples: int) -> CompiledChain:
    """The detector's tables for walks of ``n_samples`` at ``sample_rate`` (cached).

    Raises
    ------
    DesignError
        If the detector lacks a follower, stages or a comparator.
    """
    detector.require_analog()
    if detector.comparator is None:
        raise DesignError("design.comparator", None, "a window comparator for this analysis")
    fs = float(sample_rate)
    n = int(n_samples)
    if n < 1:
        raise DesignError("samples", n, "at least one sample per walk")
    beams = detector.beams()
    sensor = detector.sensor
    h = detector.mount.height
    return CompiledChain(
        detector, fs, n, np.arange(n) / fs,
        tb.optics_table(beams, sensor, h, False),
        tb.optics_table(beams, sensor, h, True),
        tb.sensor_table(sensor, fs),
        tb.sensor_table(sensor, fs, current=True),
        tb.follower_table(detector.follower),
        tb.stage_table(detector.stages, fs),
        tb.logic_table(detector.comparator, detector.logic or PulseLogic(), n, fs),
        float(detector.rest_levels()[-1]),
        detector.comparator.edges(),
    )  # fmt: skip
