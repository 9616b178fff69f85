"""Each stage of the compiled pass against its numpy oracle (tests/oracles.py), on random
parameters and inputs drawn by hypothesis, then the tapped pass against the oracles
chained. The oracles follow the published equations named in their docstring (Boyd 1983
for the optics, the bilinear transform via scipy.signal.bilinear for the sensor and the
linear stages, the trapezoidal rule per rail mode after Ascher & Petzold 1998, the
Shockley square law after Sedra & Smith, the decision rules of docs/model.md).
"""

import dataclasses
import warnings

import numpy as np
import oracles
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

from pirchain.circuit.comparator import FixedWindow, WindowComparator
from pirchain.circuit.follower import Jfet, SourceFollower
from pirchain.circuit.opamp import OpAmp
from pirchain.circuit.opamp_stages import InvertingBandPass, NonInvertingBandPass
from pirchain.circuit.passive_stages import RCHighPass, RCLowPass
from pirchain.circuit.transfer_stage import TransferStage
from pirchain.errors import ValidityWarning
from pirchain.interface.demo import demo_detector, demo_environment
from pirchain.logic.rules import PulseLogic
from pirchain.physics.optics import LensRing, LensTier, Mount, ceiling_lens, wall_lens
from pirchain.physics.scene import adult, child, minor_motion_arm, small_pet, straight_walks
from pirchain.physics.sensor import PyroSensor, dual_elements, quad_elements, single_element

FAST = settings(
    max_examples=25,
    deadline=None,
    derandomize=True,
    suppress_health_check=[HealthCheck.too_slow, HealthCheck.data_too_large],
)
ENV = demo_environment()
BASE = demo_detector()
FS = 100.0


def random_walks(seed, n=12, duration=6.0, d_max=20.0, ring=False):
    rng = np.random.default_rng(seed)
    d = rng.uniform(0.3, d_max, n)
    b = rng.uniform(-np.pi, np.pi, n) if ring else rng.uniform(-1.2, 1.2, n)
    head = rng.normal(size=(n, 2))
    v = rng.uniform(0.2, 3.0, n)
    c = np.stack([d * np.cos(b), d * np.sin(b)], axis=1)
    return straight_walks(c - 2.0 * head, head, v, duration, FS)


def _quiet(fn):
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", ValidityWarning)
        return fn()


def _window_at_rest(det, half=0.3):
    rest = det.rest_levels()[-1]
    return dataclasses.replace(det, comparator=WindowComparator(FixedWindow(rest, half)))


TARGETS = [adult(), child(), small_pet(), minor_motion_arm(),
           dataclasses.replace(adult(), swing=minor_motion_arm().swing)]  # fmt: skip


@FAST
@given(
    st.integers(0, len(TARGETS) - 1),
    st.booleans(),
    st.integers(1, 12),
    st.floats(-60.0, -3.0),
    st.floats(8e-3, 30e-3),
    st.floats(0.5, 4.0),
    st.integers(0, 10**6),
    st.sampled_from(["dual", "quad", "single"]),
)
def test_optics_kernel_equals_oracle(k, ceiling, count, angle, focal, height, seed, layout):
    if ceiling:
        lens = ceiling_lens([LensRing(90.0 + angle, count, focal, 2e-5)])
        mount = Mount("ceiling", height + 1.0)
    else:
        lens = wall_lens([LensTier(angle, count, focal, 2e-5)], 100.0)
        mount = Mount("wall", height, tilt_deg=5.0)
    elements = {"dual": dual_elements(), "quad": quad_elements(), "single": single_element()}
    sensor = dataclasses.replace(
        BASE.sensor,
        elements=elements[layout],
        connection="single" if layout == "single" else "series",
    )
    det = dataclasses.replace(BASE, lens=lens, mount=mount, sensor=sensor)
    walks = random_walks(seed, ring=ceiling)
    run = _quiet(lambda: det.run(TARGETS[k], ENV, walks, ("element_power",)))
    s = det.sensor
    ref = oracles.element_power(det.beams(), TARGETS[k], ENV, walks, mount.height,
                                len(s.elements), s.window_transmittance, s.band)  # fmt: skip
    scale = np.abs(ref).max() + 1e-300
    np.testing.assert_allclose(run.element_power, ref, rtol=0, atol=1e-12 * scale)


@FAST
@given(
    st.floats(0.02, 3.0),
    st.floats(1e9, 2e11),
    st.floats(-0.3, 0.3),
    st.sampled_from(["series", "parallel"]),
    st.integers(0, 10**6),
)
def test_sensor_section_equals_oracle(tau_t, r_g, mismatch, connection, seed):
    sensor = PyroSensor.from_material(
        thermal_time_constant=tau_t, gate_resistance=r_g, mismatch=mismatch,
        connection=connection,
    )  # fmt: skip
    det = dataclasses.replace(BASE, sensor=sensor)
    p = np.cumsum(np.random.default_rng(seed).normal(size=(3, 800)), axis=1) * 1e-9
    run = _quiet(lambda: det.drive("equivalent_power", p, FS, ("gate",)))
    ref = oracles.gate_voltage(sensor, p, FS)
    np.testing.assert_allclose(run.gate_voltage, ref, rtol=0, atol=1e-9 * np.abs(ref).max())


@FAST
@given(st.floats(5e-5, 5e-3), st.floats(0.3, 3.0), st.floats(1e3, 5e5), st.integers(0, 10**6))
def test_follower_square_law_equals_oracle(idss, pinch_off, r_s, seed):
    fol = SourceFollower(Jfet(idss, pinch_off), r_s)
    det = _window_at_rest(dataclasses.replace(BASE, follower=fol))
    # gate swings beyond pinch-off (cut-off) and up to 0.5 V
    v = np.random.default_rng(seed).uniform(-1.3 * pinch_off, 0.5, (4, 300))
    run = _quiet(lambda: det.drive("gate", v, FS, ("source",)))
    np.testing.assert_allclose(
        run.source_voltage, oracles.source_voltage(det.follower, v), atol=1e-13
    )


AMP = OpAmp(gbw=1e6, v_low=0.05, v_high=3.25)


def stage_of(kind, a, b, v_ref):
    # a, b ∈ [0, 1]: component values spread over their practical decades
    r1, c1 = 10 ** (3 + 2 * a), 10 ** (-6 - 2 * b)
    rf, cf = r1 * 10 ** (1 + 2 * b), 10 ** (-9 + a)
    if kind == 0:
        return NonInvertingBandPass(r1, 10 ** (-5 - b), rf, cf, AMP, 0.0)
    if kind == 1:
        return InvertingBandPass(r1, c1, rf, cf, AMP, v_ref)
    if kind == 2:
        return RCHighPass(r1, c1 * 100, v_ref)
    if kind == 3:
        return RCLowPass(r1, c1, v_ref)
    tau = 10 ** (-2 + a)
    num = (0.0, 50.0 * (1 + 10 * b), 0.0)
    return TransferStage(num, (tau * 0.01, tau + 0.01, 1.0), v_ref, AMP)


@FAST
@given(
    st.lists(st.tuples(st.integers(0, 4), st.floats(0, 1), st.floats(0, 1)), min_size=1,
             max_size=3),
    st.floats(1.0, 2.3),
    st.floats(1e-5, 3e-2),
    st.integers(0, 10**6),
)  # fmt: skip
def test_every_stage_equals_its_oracle_rails_included(specs, v_ref, amplitude, seed):
    stages = tuple(stage_of(k, a, b, v_ref) for k, a, b in specs)
    det = _window_at_rest(dataclasses.replace(BASE, stages=stages))
    rng = np.random.default_rng(seed)
    t = np.arange(1200) / FS
    f = rng.uniform(0.2, 8.0, (5, 1))
    gate = amplitude * np.sin(2 * np.pi * f * t) * (t > 1.0) * rng.uniform(0.1, 1.0, (5, 1))
    run = _quiet(lambda: det.drive("gate", gate, FS, ("source", "stages")))
    u = run.source_voltage
    for st_, out, pin in zip(stages, run.stage_outputs, run.pinned, strict=True):
        ref, ref_pin = oracles.run_stage(st_, u, FS)  # this stage alone, on the engine's input
        np.testing.assert_allclose(out, ref, rtol=0, atol=1e-9)
        np.testing.assert_array_equal(pin, ref_pin)
        u = out


@FAST
@given(
    st.sampled_from([5.0, 20.0, 50.0, 100.0, 333.0]),
    st.integers(1, 5),
    st.floats(0.2, 6.0),
    st.booleans(),
    st.one_of(st.none(), st.floats(1.0, 3.0)),
    st.floats(0.0, 1.0),
    st.floats(0.1, 8.0),
    st.booleans(),
    st.floats(0.0, 3.0),
    st.floats(0.0, 0.9),
    st.integers(0, 10**6),
)
def test_comparator_and_rules_equal_oracle(rate, n, window, alt, big, blank, hold, retrig,
                                           lockout, hyst, seed):  # fmt: skip
    logic = PulseLogic(rate, n, window, alt, big, blank, hold, retrig, lockout)
    comp = WindowComparator(FixedWindow(1.65, 0.2), hyst * 0.2)
    det = dataclasses.replace(BASE, logic=logic, comparator=comp)
    rng = np.random.default_rng(seed)
    x = rng.standard_normal((6, 2000))
    v = 1.65 + 0.25 * np.apply_along_axis(np.convolve, 1, x, np.ones(9) / 3, "same")
    run = _quiet(lambda: det.drive("comparator", v, FS, ("events",)))
    pulses, dec = oracles.run_logic(v, FS, comp, logic)
    np.testing.assert_array_equal(run.pulses.walk, pulses.walk)
    np.testing.assert_array_equal(run.pulses.start, pulses.start)
    np.testing.assert_array_equal(run.pulses.end, pulses.end)
    np.testing.assert_array_equal(run.pulses.sign, pulses.sign)
    np.testing.assert_allclose(run.pulses.peak, pulses.peak, rtol=1e-12)
    for a, b in zip(run.decisions, dec, strict=True):
        assert a.on_intervals == b.on_intervals
        np.testing.assert_array_equal(a.triggers, b.triggers)
        np.testing.assert_array_equal(a.counted, b.counted)


@settings(max_examples=10, deadline=None, derandomize=True)
@given(st.integers(0, len(TARGETS) - 1), st.integers(0, 10**6))
def test_tapped_pass_equals_oracles_chained(k, seed):
    from test_engine import both

    both(BASE, TARGETS[k], random_walks(seed, n=16, duration=8.0))
