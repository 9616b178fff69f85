"""The one engine (Detector.run / simulate / outcomes / drive) against the numpy oracles of
tests/oracles.py chained together, against ngspice and against numpy.

References: tests/oracles.py (each rule written directly from its published equation,
see its docstring), which test_ngspice.py and the published checks validate in turn;
ngspice (Debian package, a general-purpose circuit simulator) on pirchain's own exported
netlist; ``numpy.arctan``/``numpy.arctan2`` (the C library) for the branch-free arctangent
(Cephes rational form, Moshier 1989).
"""

import dataclasses
import math
import warnings

import numpy as np
import oracles
import pytest
from walk_sets import mixed_walks

from pirchain.chain.detector import Detector
from pirchain.chain.engine import TAPS
from pirchain.circuit.comparator import FixedWindow, WindowComparator
from pirchain.circuit.netlist import run_ngspice
from pirchain.circuit.passive_stages import RCHighPass, RCLowPass
from pirchain.circuit.transfer_stage import TransferStage
from pirchain.errors import DesignError, ValidityWarning
from pirchain.interface.demo import demo_detector, demo_environment
from pirchain.kernels.optics import atan, atan2
from pirchain.logic.rules import DaylightInhibit, PulseLogic
from pirchain.physics.scene import (
    Path,
    adult,
    child,
    minor_motion_arm,
    straight_walks,
    walks_from_paths,
)
from pirchain.physics.sensor import gate_current

ENV = demo_environment()
FS = 100.0


def assert_matches_oracle(run, ref, det, atol=1e-9):
    """Every tapped node and event of an engine run equal to the oracle chain's."""
    scale = np.abs(ref.element_power).max() + 1e-300
    np.testing.assert_allclose(run.element_power, ref.element_power, rtol=0, atol=1e-12 * scale)
    scale = np.abs(ref.equivalent_power).max() + 1e-300
    np.testing.assert_allclose(
        run.equivalent_power, ref.equivalent_power, rtol=0, atol=1e-12 * scale
    )
    g = np.abs(ref.gate_voltage).max() + 1e-300
    np.testing.assert_allclose(run.gate_voltage, ref.gate_voltage, rtol=0, atol=1e-10 * g)
    np.testing.assert_allclose(run.source_voltage, ref.source_voltage, rtol=0, atol=atol)
    for a, b in zip(run.stage_outputs, ref.stage_outputs, strict=True):
        np.testing.assert_allclose(a, b, rtol=0, atol=atol)
    for a, b in zip(run.pinned, ref.pinned, strict=True):
        np.testing.assert_array_equal(a, b)
    np.testing.assert_allclose(run.comparator_input, ref.comparator_input, rtol=0, atol=atol)
    p, q = run.pulses, ref.pulses
    np.testing.assert_array_equal(p.walk, q.walk)
    np.testing.assert_array_equal(p.start, q.start)
    np.testing.assert_array_equal(p.end, q.end)
    np.testing.assert_array_equal(p.sign, q.sign)
    np.testing.assert_allclose(p.peak, q.peak, rtol=1e-9)
    for d, e in zip(run.decisions, ref.decisions, strict=True):
        np.testing.assert_array_equal(d.triggers, e.triggers)
        np.testing.assert_array_equal(d.counted, e.counted)
        assert d.on_intervals == e.on_intervals
    oc = run.outcomes
    n = run.comparator_input.shape[0]
    np.testing.assert_array_equal(oc.detected, [bool(d.on_intervals) for d in ref.decisions])
    first = [d.on_intervals[0][0] if d.on_intervals else np.nan for d in ref.decisions]
    np.testing.assert_array_equal(oc.first_on, first)
    np.testing.assert_array_equal(oc.pulses, np.bincount(q.walk, minlength=n))
    np.testing.assert_array_equal(oc.triggers, [len(d.triggers) for d in ref.decisions])
    np.testing.assert_array_equal(oc.turn_ons, [len(d.on_intervals) for d in ref.decisions])
    rest = det.rest_levels()[-1]
    peak = np.max(np.abs(ref.comparator_input - rest), axis=1, initial=0.0)
    np.testing.assert_allclose(oc.peak, peak, rtol=0, atol=atol)


def both(det, target, walks, lux=None, extra=None, atol=1e-9):
    """Engine and chained oracles on the same batch, checked equal; returns both."""
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", ValidityWarning)
        run = det.simulate(target, ENV, walks, lux=lux, extra=extra)
        ref = oracles.chain(det, target, ENV, walks, lux=lux, extra=extra)
    assert_matches_oracle(run, ref, det, atol)
    return run, ref


def test_arctangent_within_one_ulp_of_the_c_library():
    rng = np.random.default_rng(0)
    x = np.concatenate(
        [
            rng.standard_normal(20000) * 0.3,
            np.tan(rng.uniform(-1.5707, 1.5707, 20000)),
            [0.0, -0.0, 1e-300, -1e-300, 0.66, -0.66, 2.414213562373095, 1e300, np.inf, -np.inf],
        ]
    )
    ref = np.arctan(x)
    err = np.abs(atan(x) - ref)
    assert np.all(err <= np.spacing(np.abs(ref)) + 1e-300)  # ≤ 1 unit in the last place
    y, z = rng.standard_normal(20000), rng.standard_normal(20000)
    np.testing.assert_allclose(atan2(y, z), np.arctan2(y, z), rtol=0, atol=5e-16)
    edges = np.array([[0.0, 1.0], [0.0, -1.0], [-0.0, -1.0], [1.0, 0.0], [-1.0, 0.0], [0, 0]])
    np.testing.assert_array_equal(
        atan2(edges[:, 0], edges[:, 1]), np.arctan2(edges[:, 0], edges[:, 1])
    )


def test_demo_batch_equals_oracles_including_rail_walks():
    det = demo_detector()
    run, ref = both(det, adult(), mixed_walks(240))
    railed = np.array([p.any(axis=1) for p in ref.pinned]).any(axis=0)
    assert 20 < railed.sum() < 220  # both regimes are in the batch
    assert 0.2 < run.detected.mean() < 1.0


def test_taps_change_nothing_but_what_is_kept():
    # outcomes only (stages two at a time, beams summed straight into Σ c_k P_k) and every
    # tap (stages one at a time and recorded, power per element) are the same pass: the
    # same decisions, and voltages equal to rounding (the compiler may fuse a multiply and
    # an add differently in the two loop bodies: measured 1e-12 V)
    det = demo_detector()
    walks = mixed_walks(120, seed=21)
    full = det.simulate(adult(), ENV, walks)
    bare = det.outcomes(adult(), ENV, walks)
    for name in ("detected", "first_on", "pulses", "triggers", "turn_ons"):
        np.testing.assert_array_equal(getattr(bare, name), getattr(full.outcomes, name))
    np.testing.assert_allclose(bare.peak, full.outcomes.peak, rtol=0, atol=1e-10)
    only = det.run(adult(), ENV, walks, ("comparator",))
    np.testing.assert_allclose(only.comparator_input, full.comparator_input, rtol=0, atol=1e-10)
    assert only.gate_voltage is None and only.stage_outputs is None and only.pulses is None


def test_comparator_input_within_one_percent_of_ngspice():
    det = demo_detector()
    walks = straight_walks([[20.0, -3.0]], [[0.0, 1.0]], [1.0], 10.0, FS, lengths=6.0)
    run = det.run(adult(), ENV, walks, ("equivalent_power", "comparator"))
    cur = gate_current(det.sensor, run.equivalent_power, FS)[0]
    t, v = run_ngspice(det, cur, FS)
    n = min(t.size, walks.n_samples)
    ours = run.comparator_input[0, :n]
    peak = np.max(np.abs(ours - det.rest_levels()[-1]))
    assert peak > 0.1
    assert np.max(np.abs(v["out2"][:n] - ours)) < 0.01 * peak


def other_stages(det):
    # passive RC stages (no op-amp), a third-order transfer stage with an op-amp (output
    # clamp, split into two sections) and an odd number of stages
    amp = det.stages[0].opamp
    rc = (RCHighPass(1e6, 1e-6, v_ref=0.0), det.stages[0], RCLowPass(10e3, 2e-6, v_ref=0.0))
    tf3 = TransferStage(
        (0.0, 0.0, 40.0, 0.0),
        (0.02 * 0.0016, 0.02 + 0.0016 * 3.0, 3.0 + 0.02 + 0.0016, 1.0),
        v_ref=1.65,
        opamp=amp,
    )
    return [rc, (det.stages[0], tf3), (det.stages[0], det.stages[1], det.stages[1])]


@pytest.mark.parametrize("k", [0, 1, 2])
def test_other_stage_types_equal_oracles(k):
    base = demo_detector()
    det = dataclasses.replace(base, stages=other_stages(base)[k])
    rest = det.rest_levels()[-1]
    det = dataclasses.replace(det, comparator=WindowComparator(FixedWindow(rest, 0.3), 0.02))
    # the transfer stage runs as two sections in the engine and as one canonical form of
    # order three in the oracle (measured 1.8e-12 V apart)
    run, ref = both(det, adult(), mixed_walks(60, seed=10 + k))
    if k == 1:
        assert any(p.any() for p in ref.pinned)  # the clamp is exercised


@pytest.mark.parametrize(
    "logic",
    [
        PulseLogic(rate=50.0, pulses_required=1, hold=5.0, lockout=1.0),
        PulseLogic(rate=200.0, pulses_required=3, count_window=3.0, alternate=True, hold=2.0),
        PulseLogic(rate=20.0, pulses_required=4, single_pulse_factor=1.5, retrigger=False),
        PulseLogic(rate=100.0, pulses_required=2, blanking=0.0, lockout=0.0, hold=0.5),
    ],
)
def test_logic_rules_equal_oracles(logic):
    # rate 200 Hz > the 100 Hz analog rate exercises the interpolating clock
    det = dataclasses.replace(demo_detector(), logic=logic)
    run, ref = both(det, child(), mixed_walks(80, seed=5))


def test_daylight_inhibit_per_walk_and_tick():
    base = demo_detector()
    logic = dataclasses.replace(base.logic, daylight=DaylightInhibit(3.3, 100e3, 1e6))
    det = dataclasses.replace(base, logic=logic)
    walks = mixed_walks(40, seed=8)
    ticks = int(math.floor((walks.n_samples - 1) / FS * logic.rate + 1e-9)) + 1
    lux = np.where(np.arange(40)[:, None] % 2 == 0, 5.0, 3000.0) * np.ones((1, ticks))
    run, ref = both(det, adult(), walks, lux=lux)
    assert not run.detected[1::2].any()  # bright walks never turn the output on
    assert run.detected[0::2].any()
    # a dimming history within one walk: inhibited at first, free later
    dim = np.linspace(3000.0, 1.0, ticks)
    run, ref = both(det, adult(), walks, lux=dim)
    with pytest.raises(DesignError, match="lux"):
        det.outcomes(adult(), ENV, walks, lux=np.ones(ticks + 3))
    with pytest.raises(DesignError, match="lux"):
        det.outcomes(adult(), ENV, walks, lux=-1.0)


def test_swinging_arm_runs_through_the_same_optics():
    det = demo_detector()
    walks = walks_from_paths([Path(((3.0, 0.0),), 1.0), Path(((6.0, 1.0),), 1.0)], 6.0, FS)
    run, ref = both(det, minor_motion_arm(), walks)
    assert run.detected[0]
    # a person with a swinging arm: static parts and arm segments in one target
    person = dataclasses.replace(adult(), swing=minor_motion_arm().swing)
    run, ref = both(det, person, mixed_walks(20, seed=4))


def test_added_noise_reaches_peak_and_bad_shapes_are_named():
    det = demo_detector()
    walks = mixed_walks(10, seed=2)
    noise = 0.05 * np.random.default_rng(1).standard_normal((10, walks.n_samples))
    quiet = det.run(adult(), ENV, walks, ("comparator",))
    noisy = det.run(adult(), ENV, walks, ("comparator",), extra=noise)
    np.testing.assert_allclose(noisy.comparator_input, quiet.comparator_input + noise)
    run, ref = both(det, adult(), walks, extra=noise)
    with pytest.raises(DesignError, match="extra"):
        det.outcomes(adult(), ENV, walks, extra=noise[:, :5])
    with pytest.raises(DesignError, match="extra"):
        det.outcomes(adult(), ENV, walks, extra=np.full_like(noise, np.nan))


def test_needs_follower_stages_and_comparator_and_known_taps():
    det = demo_detector()
    with pytest.raises(DesignError, match="stages"):
        Detector(det.lens, det.mount, det.sensor).outcomes(adult(), ENV, mixed_walks(2))
    with pytest.raises(DesignError, match="taps"):
        det.run(adult(), ENV, mixed_walks(2), ("nonsense",))
    with pytest.raises(DesignError, match="taps"):  # the gate comes before the comparator
        det.drive("comparator", np.zeros((1, 50)), FS, ("gate",))
    with pytest.raises(DesignError, match="node"):
        det.drive("lens", np.zeros((1, 50)), FS)
    assert set(TAPS) >= {"element_power", "gate", "stages", "comparator", "events"}


def test_driven_logic_equals_oracle_on_random_waveforms():
    # seeded random comparator inputs (filtered noise around the window) through both
    det = demo_detector()
    rng = np.random.default_rng(11)
    centre, th = det.comparator.centre, det.comparator.threshold
    for trial in range(12):
        logic = PulseLogic(
            rate=float(rng.choice([10.0, 50.0, 100.0, 250.0])),
            pulses_required=int(rng.integers(1, 5)),
            count_window=float(rng.uniform(0.5, 6.0)),
            alternate=bool(rng.integers(0, 2)),
            single_pulse_factor=None if trial % 3 else float(rng.uniform(1.0, 2.0)),
            blanking=float(rng.uniform(0.0, 0.5)),
            hold=float(rng.uniform(0.2, 5.0)),
            retrigger=bool(rng.integers(0, 2)),
            lockout=float(rng.uniform(0.0, 2.0)),
        )
        d = dataclasses.replace(det, logic=logic)
        x = rng.standard_normal((30, 3000))
        k = np.ones(15) / 15
        v = centre + 1.3 * th * np.apply_along_axis(np.convolve, 1, x, k, "same") * 3.0
        pulses, dec = oracles.run_logic(v, FS, d.comparator, logic)
        run = d.drive("comparator", v, FS, ("events",))
        assert pulses.start.size > 30
        np.testing.assert_array_equal(run.pulses.start, pulses.start)
        np.testing.assert_array_equal(run.pulses.sign, pulses.sign)
        np.testing.assert_array_equal(run.outcomes.pulses, np.bincount(pulses.walk, minlength=30))
        np.testing.assert_array_equal(run.outcomes.triggers, [len(x.triggers) for x in dec])
        np.testing.assert_array_equal(run.outcomes.turn_ons, [len(x.on_intervals) for x in dec])
        for a, b in zip(run.decisions, dec, strict=True):
            assert a.on_intervals == b.on_intervals
            np.testing.assert_array_equal(a.counted, b.counted)


def test_polyline_paths_short_and_empty_batches():
    # per-sample headings (corners), two-sample walks and an empty batch
    det = demo_detector()
    corners = Path(((6.0, -3.0), (6.0, 0.0), (3.0, 0.0), (3.0, 2.0)), 1.0)
    walks = walks_from_paths([corners, Path(((10.0, 4.0), (2.0, -1.0)), 1.5)], 10.0, FS)
    assert walks.heading.strides[1] != 0  # the heading changes along the walk
    run, ref = both(det, adult(), walks)
    assert run.detected.all()
    run, ref = both(det, adult(), straight_walks([[5.0, -1.0]], [[0.0, 1.0]], [1.0], 0.01, FS))
    empty = straight_walks(np.zeros((0, 2)), np.ones((0, 2)), np.ones(0), 2.0, FS)
    assert det.outcomes(adult(), ENV, empty).detected.shape == (0,)
    assert det.simulate(adult(), ENV, empty).decisions == []


def test_power_up_equals_the_oracle_from_discharged_capacitors():
    det = demo_detector()
    n = 3001
    run = det.drive("gate", np.zeros((1, n)), 50.0, ("source", "stages"), start="discharged")
    source, outs, pins = oracles.analog(det, np.zeros((1, n)), 50.0, discharged=True)
    np.testing.assert_allclose(run.source_voltage, source, atol=1e-12)
    for a, b in zip(run.stage_outputs, outs, strict=True):
        np.testing.assert_allclose(a, b, atol=1e-9)
    for a, b in zip(run.pinned, pins, strict=True):
        np.testing.assert_array_equal(a, b)
    assert run.pinned[0].any()  # the first stage starts at its rail
