"""The compiled whole-chain pass (Detector.outcomes) against the array path, ngspice and
numpy.

References: ngspice (Debian package, a general-purpose circuit simulator) on pirchain's own
exported netlist; ``numpy.arctan``/``numpy.arctan2`` (the C library) for the branch-free
arctangent (Cephes rational form, Moshier 1989); the array path of Detector.simulate, which
test_ngspice.py checks against ngspice, for every other stage type and logic rule.
"""

import dataclasses
import math
import warnings

import numpy as np
import pytest

from pirchain.chain import Detector
from pirchain.comparator import FixedWindow, WindowComparator
from pirchain.demo import demo_detector, demo_environment
from pirchain.errors import DesignError, ValidityWarning
from pirchain.frontend import RCHighPass, RCLowPass, TransferStage
from pirchain.logic import DaylightInhibit, PulseLogic, run_logic
from pirchain.logic_kernel import logic_counts
from pirchain.netlist import run_ngspice
from pirchain.optics_kernel import atan, atan2
from pirchain.scene import Path, adult, child, minor_motion_arm, straight_walks, walks_from_paths
from pirchain.sensor import gate_current

ENV = demo_environment()
FS = 100.0


def mixed_walks(n, seed=3, rate=FS, duration=8.0):
    # distances 0.8–22 m, all bearings of the lens, headings at random: close walks rail
    rng = np.random.default_rng(seed)
    d = rng.uniform(0.8, 22.0, n)
    b = rng.uniform(-1.0, 1.0, n)
    c = np.stack([d * np.cos(b), d * np.sin(b)], axis=1)
    head = rng.normal(size=(n, 2))
    head /= np.linalg.norm(head, axis=1)[:, None]
    v = rng.uniform(0.3, 2.0, n)
    return straight_walks(c - head * (2.0 * v)[:, None], head, v, duration, rate)


def assert_same(det, target, walks, lux=None, atol=1e-9):
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", ValidityWarning)
        out = det.outcomes(target, ENV, walks, lux=lux, keep_waveform=True)
        ref = det.simulate(target, ENV, walks, lux=lux)
    vc = ref.analog.comparator_input
    np.testing.assert_allclose(out.comparator_input, vc, rtol=0, atol=atol)
    np.testing.assert_array_equal(out.detected, ref.detected)
    first = np.array([d.first_on for d in ref.decisions])
    np.testing.assert_array_equal(out.first_on, first)
    n = walks.n_walks
    np.testing.assert_array_equal(out.pulses, np.bincount(ref.pulses.walk, minlength=n))
    np.testing.assert_array_equal(out.triggers, [len(d.triggers) for d in ref.decisions])
    np.testing.assert_array_equal(out.turn_ons, [len(d.on_intervals) for d in ref.decisions])
    rest = det.rest_levels()[-1]
    np.testing.assert_allclose(out.peak, np.max(np.abs(vc - rest), axis=1), atol=atol)
    return out, ref


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


def test_demo_batch_equals_array_path_including_rail_walks():
    det = demo_detector()
    walks = mixed_walks(240)
    out, ref = assert_same(det, adult(), walks)
    railed = np.array([p.any(axis=1) for p in ref.analog.pinned]).any(axis=0)
    assert 20 < railed.sum() < 220  # both regimes are in the batch
    assert 0.2 < out.detected.mean() < 1.0


def test_comparator_input_within_one_percent_of_ngspice():
    # the compiled pass's own waveform against ngspice on the same walk (linear regime)
    det = demo_detector()
    walks = straight_walks([[20.0, -3.0]], [[0.0, 1.0]], [1.0], 10.0, FS, lengths=6.0)
    out = det.outcomes(adult(), ENV, walks, keep_waveform=True)
    cur = gate_current(det.sensor, det.element_power(adult(), ENV, walks), FS)[0]
    t, v = run_ngspice(det, cur, FS)
    n = min(t.size, walks.n_samples)
    ours = out.comparator_input[0, :n]
    peak = np.max(np.abs(ours - det.rest_levels()[-1]))
    assert peak > 0.1
    assert np.max(np.abs(v["out2"][:n] - ours)) < 0.01 * peak


def other_stages(det):
    # passive RC stages (no op-amp), a third-order transfer stage with an op-amp (output
    # clamp, more than two states: the general integration) and an odd number of stages
    amp = det.stages[0].opamp
    rc = (
        RCHighPass(1e6, 1e-6, v_ref=0.0),
        det.stages[0],
        RCLowPass(10e3, 2e-6, v_ref=0.0),
    )
    tf3 = TransferStage(
        (0.0, 0.0, 40.0, 0.0),
        (0.02 * 0.0016, 0.02 + 0.0016 * 3.0, 3.0 + 0.02 + 0.0016, 1.0),
        v_ref=1.65,
        opamp=amp,
    )
    return [rc, (det.stages[0], tf3), (det.stages[0], det.stages[1], det.stages[1])]


@pytest.mark.parametrize("k", [0, 1, 2])
def test_other_stage_types_equal_array_path(k):
    base = demo_detector()
    stages = other_stages(base)[k]
    det = dataclasses.replace(base, stages=stages)
    rest = det.rest_levels()[-1]
    det = dataclasses.replace(det, comparator=WindowComparator(FixedWindow(rest, 0.3), 0.02))
    assert_same(det, adult(), mixed_walks(60, seed=10 + k))


@pytest.mark.parametrize(
    "logic",
    [
        PulseLogic(rate=50.0, pulses_required=1, hold=5.0, lockout=1.0),
        PulseLogic(rate=200.0, pulses_required=3, count_window=3.0, alternate=True, hold=2.0),
        PulseLogic(rate=20.0, pulses_required=4, single_pulse_factor=1.5, retrigger=False),
        PulseLogic(rate=100.0, pulses_required=2, blanking=0.0, lockout=0.0, hold=0.5),
    ],
)
def test_logic_rules_equal_array_path(logic):
    # rate 200 Hz > the 100 Hz analog rate exercises the interpolating resampler
    det = dataclasses.replace(demo_detector(), logic=logic)
    assert_same(det, child(), mixed_walks(80, seed=5))


def test_daylight_inhibit_per_walk_and_tick():
    base = demo_detector()
    logic = dataclasses.replace(base.logic, daylight=DaylightInhibit(3.3, 100e3, 1e6))
    det = dataclasses.replace(base, logic=logic)
    walks = mixed_walks(40, seed=8)
    ticks = int(math.floor((walks.n_samples - 1) / FS * logic.rate + 1e-9)) + 1
    lux = np.where(np.arange(40)[:, None] % 2 == 0, 5.0, 3000.0) * np.ones((1, ticks))
    out, _ = assert_same(det, adult(), walks, lux=lux)
    assert not out.detected[1::2].any()  # bright walks never turn the output on
    assert out.detected[0::2].any()


def test_swinging_arm_takes_the_array_optics_and_agrees():
    det = demo_detector()
    walks = walks_from_paths([Path(((3.0, 0.0),), 1.0), Path(((6.0, 1.0),), 1.0)], 6.0, FS)
    out, _ = assert_same(det, minor_motion_arm(), walks)
    assert out.detected[0]


def test_added_noise_reaches_peak_and_bad_shapes_are_named():
    det = demo_detector()
    walks = mixed_walks(10, seed=2)
    noise = 0.05 * np.random.default_rng(1).standard_normal((10, walks.n_samples))
    quiet = det.outcomes(adult(), ENV, walks, keep_waveform=True)
    noisy = det.outcomes(adult(), ENV, walks, extra=noise, keep_waveform=True)
    np.testing.assert_allclose(noisy.comparator_input, quiet.comparator_input + noise)
    with pytest.raises(DesignError, match="extra"):
        det.outcomes(adult(), ENV, walks, extra=noise[:, :5])
    with pytest.raises(DesignError, match="extra"):
        det.outcomes(adult(), ENV, walks, extra=np.full_like(noise, np.nan))


def test_needs_follower_stages_and_comparator():
    det = demo_detector()
    with pytest.raises(DesignError, match="stages"):
        Detector(det.lens, det.mount, det.sensor).outcomes(adult(), ENV, mixed_walks(2))


def test_compiled_logic_equals_decide_on_random_waveforms():
    # seeded random comparator inputs (filtered noise around the window) through both paths
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
        x = rng.standard_normal((30, 3000))
        k = np.ones(15) / 15
        v = centre + 1.3 * th * np.apply_along_axis(np.convolve, 1, x, k, "same") * 3.0
        pulses, dec = run_logic(v, FS, det.comparator, logic)
        counts, first = logic_counts(v, FS, det.comparator, logic)
        assert pulses.start.size > 30
        np.testing.assert_array_equal(counts[:, 0], np.bincount(pulses.walk, minlength=30))
        np.testing.assert_array_equal(counts[:, 1], [len(d.triggers) for d in dec])
        np.testing.assert_array_equal(counts[:, 2], [len(d.on_intervals) for d in dec])
        np.testing.assert_array_equal(first, [d.first_on for d in dec])


def test_polyline_paths_short_and_empty_batches():
    # per-sample headings (corners), two-sample walks and an empty batch: same as the arrays
    det = demo_detector()
    corners = Path(((6.0, -3.0), (6.0, 0.0), (3.0, 0.0), (3.0, 2.0)), 1.0)
    walks = walks_from_paths([corners, Path(((10.0, 4.0), (2.0, -1.0)), 1.5)], 10.0, FS)
    assert walks.heading.strides[1] != 0  # the heading changes along the walk
    out, _ = assert_same(det, adult(), walks)
    assert out.detected.all()
    assert_same(det, adult(), straight_walks([[5.0, -1.0]], [[0.0, 1.0]], [1.0], 0.01, FS))
    empty = straight_walks(np.zeros((0, 2)), np.ones((0, 2)), np.ones(0), 2.0, FS)
    out = det.outcomes(adult(), ENV, empty)
    assert out.detected.shape == (0,) and det.simulate(adult(), ENV, empty).detected.shape == (0,)
