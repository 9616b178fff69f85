"""Front end: stage transfer functions against python-control's interconnection of the same
elements and the textbook formulas (Horowitz & Hill), the JFET follower against the
Shockley square law worked example (Sedra & Smith; numbers derived from that law,
docs/validation.md)."""

import dataclasses
import math

import control
import numpy as np
import oracles
import pytest
from scipy import signal

from pirchain.circuit.comparator import FixedWindow, WindowComparator
from pirchain.circuit.follower import Jfet, SourceFollower
from pirchain.circuit.opamp import OpAmp
from pirchain.circuit.opamp_stages import InvertingBandPass, NonInvertingBandPass
from pirchain.circuit.passive_stages import RCHighPass, RCLowPass
from pirchain.circuit.transfer_stage import TransferStage
from pirchain.errors import DesignError
from pirchain.interface.demo import demo_detector

FREQS = np.geomspace(0.01, 1e4, 60)
AMP = OpAmp(gbw=1e6, v_low=0.0, v_high=3.3, open_loop_gain=2e5)


def freq_resp(sys, f=FREQS):
    return np.array([complex(sys(2j * math.pi * x)) for x in f])


def impedances(st):
    s = control.tf("s")
    z1 = st.r1 + 1 / (st.c1 * s)
    zf = 1 / (1 / st.rf + st.cf * s)
    return z1, zf


def test_non_inverting_equals_control_interconnection():
    st = NonInvertingBandPass(10e3, 47e-6, 1e6, 10e-9, AMP)
    z1, zf = impedances(st)
    beta = z1 / (z1 + zf)
    ideal = 1 + zf / z1
    real = control.feedback(AMP.open_loop(), beta)  # y = A (u − β y)
    np.testing.assert_allclose(freq_resp(st.transfer_function()), freq_resp(ideal), rtol=1e-9)
    np.testing.assert_allclose(
        freq_resp(st.transfer_function(gbw=True)), freq_resp(real), rtol=1e-9
    )


def test_inverting_equals_control_interconnection():
    st = InvertingBandPass(22e3, 10e-6, 1e6, 15e-9, AMP, 1.65)
    z1, zf = impedances(st)
    beta = z1 / (z1 + zf)
    real = -(zf / (z1 + zf)) * control.feedback(AMP.open_loop(), beta)
    np.testing.assert_allclose(freq_resp(st.transfer_function()), freq_resp(-zf / z1), rtol=1e-9)
    np.testing.assert_allclose(
        freq_resp(st.transfer_function(gbw=True)), freq_resp(real), rtol=1e-9
    )


def test_passive_and_general_stages():
    s = control.tf("s")
    hp, lp = RCHighPass(100e3, 1e-6), RCLowPass(10e3, 1e-6)
    np.testing.assert_allclose(
        freq_resp(hp.transfer_function()), freq_resp(s * 0.1 / (1 + s * 0.1)), rtol=1e-9
    )
    np.testing.assert_allclose(
        freq_resp(lp.transfer_function()), freq_resp(1 / (1 + s * 0.01)), rtol=1e-9
    )
    gen = TransferStage((0.0, 2.0, 0.0), (0.01, 1.1, 1.0))
    np.testing.assert_allclose(
        freq_resp(gen.transfer_function()),
        freq_resp(2 * s / (0.01 * s**2 + 1.1 * s + 1)),
        rtol=1e-9,
    )


def test_textbook_corners_and_gain():
    # Horowitz & Hill: f_L = 1/(2π R1 C1), f_H = 1/(2π Rf Cf), mid-band gain 1 + Rf/R1.
    # docs/references.md: 10 kΩ, 47 µF → 0.3386 Hz; 1 MΩ, 10 nF → 15.92 Hz (0.1 %).
    st = NonInvertingBandPass(10e3, 47e-6, 1e6, 10e-9, AMP)
    assert st.low_corner == pytest.approx(0.3386, rel=1e-3)
    assert st.high_corner == pytest.approx(15.92, rel=1e-3)
    poles = np.sort(-np.real(control.poles(st.transfer_function()))) / (2 * math.pi)
    np.testing.assert_allclose(poles, [st.low_corner, st.high_corner], rtol=1e-9)
    wide = NonInvertingBandPass(10e3, 47e-6, 1e6, 1e-12, AMP)  # corners 5 decades apart
    f_mid = math.sqrt(wide.low_corner * wide.high_corner)
    assert abs(wide.transfer_function()(2j * math.pi * f_mid)) == pytest.approx(101.0, rel=1e-3)
    inv = InvertingBandPass(10e3, 47e-6, 1e6, 1e-12, AMP)
    assert abs(inv.transfer_function()(2j * math.pi * f_mid)) == pytest.approx(100.0, rel=1e-3)


def test_jfet_worked_example():
    # docs/references.md (derived from the Shockley law): I_DSS 0.5 mA, |V_P| 1.5 V, R_S 47 kΩ →
    # V_S 1.1659 V, I_D 24.81 µA, g_m 148.5 µS, gain 0.8747 (0.1 %).
    f = SourceFollower(Jfet(idss=0.5e-3, pinch_off=1.5), 47e3)
    assert f.offset == pytest.approx(1.1659, rel=1e-3)
    assert f.drain_current == pytest.approx(24.81e-6, rel=1e-3)
    assert f.transconductance == pytest.approx(148.5e-6, rel=1e-3)
    assert f.gain == pytest.approx(0.8747, rel=1e-3)
    assert f.output_impedance == pytest.approx(1 / (1 / 47e3 + f.transconductance), rel=1e-12)
    # the large-signal curve obeys the square law exactly and its slope is the gain
    vg = np.linspace(-0.05, 0.05, 11)
    vs = np.array([f.source_voltage(x) for x in vg])
    np.testing.assert_allclose(vs / 47e3, 0.5e-3 * (1 + (vg - vs) / 1.5) ** 2, rtol=1e-12)
    slope = (f.source_voltage(1e-6) - f.source_voltage(-1e-6)) / 2e-6
    assert slope == pytest.approx(f.gain, rel=1e-6)


def one_stage(stage):
    det = dataclasses.replace(demo_detector(), stages=(stage,))
    rest = det.rest_levels()[-1]
    return dataclasses.replace(det, comparator=WindowComparator(FixedWindow(rest, 0.5)))


def test_stage_integration_is_the_bilinear_transform_without_saturation():
    # Trapezoidal integration of the state equations is the bilinear transform of H(s):
    # the engine's stage output equals scipy.signal.bilinear + sosfilt of the stage's H
    fs = 100.0
    t = np.arange(1500) / fs
    for st in (
        NonInvertingBandPass(10e3, 22e-6, 560e3, 27e-9, AMP),
        InvertingBandPass(22e3, 10e-6, 1e6, 15e-9, AMP, 1.65),
        RCHighPass(1e6, 1e-6, 1.0),
        RCLowPass(1e5, 1e-6),
        TransferStage((0.0, 2.0, 0.0), (0.01, 1.1, 1.0), 1.0),
        TransferStage((0.0, 0.0, 40.0, 0.0), (3.2e-5, 0.0248, 3.0216, 1.0), 1.0),
    ):
        gate = (2e-3 * np.sin(2 * math.pi * 1.3 * t) * (t > 1))[None, :]
        run = one_stage(st).drive("gate", gate, fs, ("source", "stages"))
        u = run.source_voltage
        tf = st.transfer_function()
        bz, az = signal.bilinear(tf.num[0][0], tf.den[0][0], fs)
        h0 = float(np.real(tf(0.0)))
        ref = st.v_ref + h0 * (u[:, :1] - st.v_ref) + signal.lfilter(bz, az, u - u[:, :1])
        np.testing.assert_allclose(run.stage_outputs[0], ref, atol=1e-10)
        assert not run.pinned[0].any()


def test_pinned_stage_recovers_through_the_feedback_resistor():
    # Circuit analysis: with the output pinned, C1 charges through R1 + Rf, so the slow time
    # constant of the pinned state equations is det/trace ≈ (R1 + Rf) C1 + Rf Cf, not R1 C1.
    st = NonInvertingBandPass(10e3, 22e-6, 560e3, 27e-9, AMP)
    slow_pinned = np.min(np.abs(np.linalg.eigvals(st.state_model(3.3).A)))
    slow_linear = np.min(np.abs(np.linalg.eigvals(st.state_model().A)))
    assert 1 / slow_pinned == pytest.approx((10e3 + 560e3) * 22e-6 + 560e3 * 27e-9, rel=1e-3)
    assert 1 / slow_linear == pytest.approx(10e3 * 22e-6, rel=1e-3)


def test_bad_stage_values_name_the_field():
    with pytest.raises(DesignError, match=r"stage.rf"):
        NonInvertingBandPass(10e3, 22e-6, 0.0, 27e-9)
    with pytest.raises(DesignError, match="opamp.v_high"):
        OpAmp(v_low=3.0, v_high=1.0)
    with pytest.raises(DesignError, match="stable"):
        TransferStage((1.0,), (1.0, -1.0))


def test_hard_saturation_both_ways_equals_the_oracle():
    # rail to rail within a step included, from discharged capacitors: the engine's pass
    # against the oracle's whole-state trapezoidal integration (tests/oracles.py), 1e-9 V
    # and identical rail flags
    rng = np.random.default_rng(0)
    t = np.arange(2000) / 100.0
    gate = rng.uniform(0, 0.4, (40, 1)) * np.sin(2 * math.pi * rng.uniform(0.2, 30, (40, 1)) * t)
    stages = (
        NonInvertingBandPass(10e3, 22e-6, 560e3, 27e-9, AMP),
        InvertingBandPass(22e3, 10e-6, 1e6, 15e-9, AMP, 1.65),
        TransferStage((0.0, 40.0, 0.0), (0.01, 1.1, 1.0), 1.65, AMP),
        RCHighPass(1e5, 1e-6),
    )
    for st in stages:
        run = one_stage(st).drive("gate", gate, 100.0, ("source", "stages"), start="discharged")
        n = st.state_model().A.shape[0]
        ref, pins = oracles.piecewise(st, run.source_voltage, 100.0, np.zeros((40, n)))
        np.testing.assert_allclose(run.stage_outputs[0], ref, atol=1e-9)
        np.testing.assert_array_equal(run.pinned[0], pins)
        if st.opamp is not None:
            assert pins.any() and not pins.all()
