"""The named tables the compiled pass reads, built from the domain objects.

Every coefficient the kernels need is a named field of a flat record (a ``NamedTuple``,
which numba compiles like a struct): no positional packing. The detector's tables depend
on the detector, the sample rate and the walk length and are built once for them
(:func:`pirchain.chain.engine.compile_chain`); the target's and the run's tables are built
per run.
"""

from __future__ import annotations

import math
from typing import NamedTuple

import numpy as np

from ..circuit.rails import modal_form, pad2
from ..logic.rules import logic_clock


class WalkTable(NamedTuple):
    """Walker positions (walks, samples, 2) [m] and unit headings (walks, samples or 1, 2)."""

    position: np.ndarray
    heading: np.ndarray


class PartTable(NamedTuple):
    """A target: static body parts (arrays over parts) and an optional swinging arm."""

    half_front_sq: np.ndarray  # (w_front/2)² [m²]
    half_side_sq: np.ndarray  # (w_side/2)² [m²]
    z_bottom: np.ndarray  # [m]
    z_top: np.ndarray  # [m]
    contrast: np.ndarray  # radiance contrast ΔL [W m⁻² sr⁻¹]
    stacked: np.ndarray  # bool: the part's bottom edge is the top edge of the one before
    half_width_max: float  # largest half width of any static part [m]
    arm_segments: int  # 0: no arm
    arm_segment_length: float  # [m]
    arm_width: float  # [m]
    arm_pivot: float  # pivot height [m]
    arm_contrast: np.ndarray  # ΔL of each segment [W m⁻² sr⁻¹]
    arm_angle: np.ndarray  # arm angle above horizontal at each sample [rad]


class OpticsTable(NamedTuple):
    """Beams (arrays over beams) and where their power goes."""

    azimuth: np.ndarray  # [rad]
    half_azimuth: np.ndarray  # [rad]
    sin_low: np.ndarray  # sin of the lower elevation edge
    sin_high: np.ndarray  # sin of the upper elevation edge
    weight: np.ndarray  # τ A cos θ × window (× element coupling when summed) [m²]
    output: np.ndarray  # int: row of the output the beam adds to
    coupling: np.ndarray  # c_k of each element (summing per-element outputs)
    lens_height: float  # [m]
    n_outputs: int  # 1: equivalent gate power directly; else one per element


class SensorTable(NamedTuple):
    """The sensor's discrete section V_gate/P_eq."""

    sos: np.ndarray  # normalised second-order sections (direct form)
    parallel: bool  # use the parallel form below
    pole1: float
    pole2: float
    residue1: float
    residue2: float
    k: float  # direct term of the parallel form
    dc_gain: float  # response to the first sample held for ever (0 for power, R_G for current)


class FollowerTable(NamedTuple):
    """The JFET follower's square law."""

    pinch_off: float  # |V_P| [V]
    k4: float  # 4 R_S I_DSS / V_P² [V⁻¹]
    gate_bias: float  # DC gate voltage from the gate leakage [V]


class StageTable(NamedTuple):
    """Every stage section, padded to two states (leading axis: sections in signal order)."""

    n_sections: int
    stage_of: np.ndarray  # int: the stage a section belongs to
    last_of_stage: np.ndarray  # bool: the section carries its stage's output
    p: np.ndarray  # (sections, mode, 2, 2) trapezoidal P of the modes linear, high, low
    q: np.ndarray  # (sections, mode, 2)
    r: np.ndarray  # (sections, mode, 2)
    c: np.ndarray  # (sections, 2) output row
    d: np.ndarray  # direct term
    f: np.ndarray  # output offset [V]
    v_high: np.ndarray  # rails [V] (±inf: not limited)
    v_low: np.ndarray
    limited: np.ndarray  # bool: an op-amp limits the output
    switches: np.ndarray  # bool: pinned modes have their own equations
    x_rest: np.ndarray  # (sections, 2) steady state at 0 V input
    x_per_volt: np.ndarray  # (sections, 2) its change per volt of input
    modal_p: np.ndarray  # (sections, 2, 2) linear mode in modal coordinates
    modal_q: np.ndarray
    modal_r: np.ndarray
    modal_c: np.ndarray
    basis: np.ndarray  # (sections, 2, 2) V
    basis_inverse: np.ndarray  # V⁻¹
    diagonal: np.ndarray  # bool


class LogicTable(NamedTuple):
    """Logic clock, window comparator and rules."""

    tick_time: np.ndarray  # [s]
    tick_index: np.ndarray  # int: analog sample read at each tick
    tick_frac: np.ndarray  # weight of the next sample
    interpolate: bool
    v_low: float  # window [V]
    v_high: float
    hysteresis: float
    centre: float
    threshold: float
    pulses_required: int
    count_window: float  # [s]
    alternate: bool
    big: float  # single-pulse factor (inf: none)
    blanking: float  # [s]
    hold: float  # [s]
    retrigger: bool
    lockout: float  # [s]
    has_daylight: bool
    daylight_on: float  # sense-node voltage that sets the inhibit [V]
    daylight_off: float  # and that clears it [V]


class DriveTable(NamedTuple):
    """Where a run starts and what it adds."""

    start: int  # a START_* node of pirchain.kernels.chain
    signal: np.ndarray  # (walks, samples) input at that node (none when starting at optics)
    extra: np.ndarray  # (walks, samples) added at the comparator input, or no columns
    discharged: bool  # every capacitor starts discharged (power-up)
    first_section: int  # a run started at a stage's input: that stage's first section
    daylight: np.ndarray  # (rows, ticks or 1) daylight sense-node voltage [V]; no rows: none


class TapArrays(NamedTuple):
    """Waveforms and events kept by a run (a zero-sized array: not kept)."""

    element_power: np.ndarray  # (walks, samples, elements) [W]
    equivalent_power: np.ndarray  # (walks, samples) [W]
    gate: np.ndarray  # (walks, samples) gate voltage change [V]
    source: np.ndarray  # (walks, samples) [V]
    stages: np.ndarray  # (stages, walks, samples) [V]
    pinned: np.ndarray  # (stages, walks, samples) bool
    comparator: np.ndarray  # (walks, samples) [V]
    pulse_start: np.ndarray  # (walks, capacity) [s]
    pulse_end: np.ndarray
    pulse_sign: np.ndarray  # int8
    pulse_peak: np.ndarray  # in units of the threshold
    pulse_counted: np.ndarray  # bool
    pulse_fired: np.ndarray  # bool
    on_start: np.ndarray  # (walks, capacity) [s]
    on_end: np.ndarray


class OutcomeArrays(NamedTuple):
    """Per-walk outcomes filled by the pass."""

    counts: np.ndarray  # (walks, 3) int: pulses, rule firings, turn-ons
    first_on: np.ndarray  # (walks,) [s], NaN: never
    peak: np.ndarray  # (walks,) largest |comparator input − rest| [V]
    step: np.ndarray  # (walks,) largest distance between successive samples [m]
    closest: np.ndarray  # (walks,) shortest horizontal range [m]
    rest: float  # comparator input at rest [V]
    n_samples: int


def _f(a) -> np.ndarray:
    return np.ascontiguousarray(a, dtype=np.float64)


def _i(a) -> np.ndarray:
    return np.ascontiguousarray(a, dtype=np.int64)


def _b(a) -> np.ndarray:
    return np.ascontiguousarray(a, dtype=np.bool_)


def walk_table(walks) -> WalkTable:
    """Positions and headings; one heading row per walk when the heading is a broadcast view."""
    head = walks.heading
    if head.ndim == 3 and head.shape[1] > 1 and head.strides[1] == 0:
        head = head[:, :1, :]  # one heading per walk: no copy of the broadcast
    return WalkTable(_f(walks.position), _f(head))


def part_table(target, contrast, time) -> PartTable:
    """The target's table; ``contrast`` = ΔL of the static parts then the arm segments."""
    parts = target.parts
    n = len(parts)
    dl = np.asarray(contrast, dtype=float)
    wf = np.array([p.width_front for p in parts], dtype=float)
    ws = np.array([p.width_side for p in parts], dtype=float)
    z0 = np.array([p.z_bottom for p in parts], dtype=float)
    z1 = np.array([p.z_top for p in parts], dtype=float)
    stacked = np.zeros(n, dtype=bool)
    stacked[1:] = z0[1:] == z1[:-1]
    arm = target.swing
    hw_max = float(np.max(0.5 * np.maximum(wf, ws))) if n else 0.0
    return PartTable(
        _f((0.5 * wf) ** 2), _f((0.5 * ws) ** 2), _f(z0), _f(z1), _f(dl[:n]), _b(stacked),
        hw_max,
        0 if arm is None else int(arm.segments),
        0.0 if arm is None else arm.length / arm.segments,
        0.0 if arm is None else float(arm.width),
        0.0 if arm is None else float(arm.pivot_height),
        _f(dl[n:]),
        _f(np.zeros(0) if arm is None else arm.angle(time)),
    )  # fmt: skip


def optics_table(beams, sensor, lens_height: float, per_element: bool) -> OpticsTable:
    """Beams with their weights; summed into Σ c_k P_k, or kept per element."""
    lo, hi = beams.sin_edges
    coupling = np.asarray(sensor.coupling, dtype=float)
    weight = beams.weight * sensor.window_transmittance
    if per_element:
        output, n_out = beams.element, len(sensor.elements)
    else:
        weight = beams.weight * coupling[beams.element] * sensor.window_transmittance
        output, n_out = np.zeros(beams.azimuth.size), 1
    return OpticsTable(
        _f(beams.azimuth), _f(beams.half_azimuth), _f(lo), _f(hi), _f(weight), _i(output),
        _f(coupling), float(lens_height), int(n_out),
    )  # fmt: skip


def sensor_table(sensor, sample_rate: float, current: bool = False) -> SensorTable:
    """The sensor's sections V_gate/P_eq, and their parallel form when usable; with
    ``current``, the gate node's impedance V_gate/i instead (an injected element current)."""
    from scipy import signal

    sos = np.array(
        sensor.impedance_sos(sample_rate) if current else sensor.sos(sample_rate), dtype=float
    )
    sos = sos / sos[:, 3:4]
    par = (0.0,) * 5
    ok = False
    if sos.shape[0] == 1:  # one section: partial fractions (scipy.signal.residuez)
        r, p, k = signal.residuez(sos[0, :3], sos[0, 3:])
        ok = bool(
            p.size == 2
            and k.size == 1
            and np.all(np.imag(p) == 0)
            and abs(p[0] - p[1]) > 1e-6
            and np.max(np.abs(r)) < 1e6 * max(np.max(np.abs(sos[0, :3])), 1e-300)
        )
        if ok:
            par = (*np.real(p), *np.real(r), float(np.real(k[0])))
    dc = float(sensor.gate_resistance) if current else 0.0
    return SensorTable(_f(sos), ok, *(float(x) for x in par), dc)


def follower_table(follower) -> FollowerTable:
    """The follower's square law."""
    return FollowerTable(
        float(follower.jfet.pinch_off), float(follower.k4), float(follower.gate_bias)
    )


def stage_table(stages, sample_rate: float) -> StageTable:
    """Every stage's sections at ``sample_rate``, in signal order."""
    rows = []
    for k, st in enumerate(stages):
        tabs = st.tables(sample_rate)
        for i, t in enumerate(tabs):
            rows.append((k, i == len(tabs) - 1, t, modal_form(t)))
    n = len(rows)

    def stack(fn, shape, dtype=np.float64):
        out = np.zeros((n, *shape), dtype=dtype)
        for j, row in enumerate(rows):
            out[j] = fn(*row)
        return np.ascontiguousarray(out)

    return StageTable(
        n,
        stack(lambda k, last, t, m: k, (), np.int64),
        stack(lambda k, last, t, m: last, (), np.bool_),
        stack(lambda k, last, t, m: [pad2(x) for x in t.P], (3, 2, 2)),
        stack(lambda k, last, t, m: [pad2(x) for x in t.Q], (3, 2)),
        stack(lambda k, last, t, m: [pad2(x) for x in t.R], (3, 2)),
        stack(lambda k, last, t, m: pad2(t.C), (2,)),
        stack(lambda k, last, t, m: t.D, ()),
        stack(lambda k, last, t, m: t.F, ()),
        stack(lambda k, last, t, m: t.section.v_high, ()),
        stack(lambda k, last, t, m: t.section.v_low, ()),
        stack(lambda k, last, t, m: t.section.limited, (), np.bool_),
        stack(lambda k, last, t, m: t.section.switches, (), np.bool_),
        stack(lambda k, last, t, m: pad2(t.section.x_rest), (2,)),
        stack(lambda k, last, t, m: pad2(t.section.x_per_volt), (2,)),
        stack(lambda k, last, t, m: m.P, (2, 2)),
        stack(lambda k, last, t, m: m.Q, (2,)),
        stack(lambda k, last, t, m: m.R, (2,)),
        stack(lambda k, last, t, m: m.C, (2,)),
        stack(lambda k, last, t, m: m.basis, (2, 2)),
        stack(lambda k, last, t, m: m.basis_inverse, (2, 2)),
        stack(lambda k, last, t, m: m.diagonal, (), np.bool_),
    )


def logic_table(comparator, logic, n_samples: int, sample_rate: float) -> LogicTable:
    """Clock, window and rules for walks of ``n_samples`` at ``sample_rate``."""
    clock = logic_clock(n_samples, sample_rate, logic.rate)
    lo, hi = comparator.edges()
    day = logic.daylight
    return LogicTable(
        _f(clock.ticks), _i(clock.index), _f(clock.frac), bool(clock.interpolate),
        float(lo), float(hi), float(comparator.hysteresis), float(comparator.centre),
        float(comparator.threshold), int(logic.pulses_required), float(logic.count_window),
        bool(logic.alternate),
        math.inf if logic.single_pulse_factor is None else float(logic.single_pulse_factor),
        float(logic.blanking), float(logic.hold), bool(logic.retrigger), float(logic.lockout),
        day is not None,
        0.0 if day is None else float(day.v_on),
        0.0 if day is None else float(day.v_on - day.hysteresis),
    )  # fmt: skip
