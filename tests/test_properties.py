"""Sources named below.

Property-based tests (hypothesis) on the public physics functions and the chain's pass:
finite outputs for valid inputs and the invariants of the earlier checks — the inverse-square
law (Boyd 1983), linearity of the sensor in power (Putley 1970), antisymmetry of the radiance
contrast, element power proportional to the contrast, op-amp outputs bounded by the rails."""

import dataclasses
import math
import warnings

import numpy as np
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

from pirchain.circuit.comparator import FixedWindow, WindowComparator
from pirchain.circuit.opamp import OpAmp
from pirchain.circuit.opamp_stages import NonInvertingBandPass
from pirchain.errors import ValidityWarning
from pirchain.interface.demo import demo_detector
from pirchain.physics.optics import Facet, Lens, Mount, make_beams
from pirchain.physics.radiometry import band_exitance, radiance_contrast
from pirchain.physics.scene import BodyPart, Environment, Target, straight_walks
from pirchain.physics.sensor import PyroSensor, dual_elements, single_element

BASE = demo_detector()

FAST = settings(
    max_examples=40, deadline=None, derandomize=True, suppress_health_check=[HealthCheck.too_slow]
)
temps = st.floats(150.0, 1200.0)


@FAST
@given(temps, st.floats(1e-6, 10e-6), st.floats(1.5, 10.0))
def test_band_exitance_finite_positive_monotone(t, lam1, ratio):
    band = (lam1, lam1 * ratio)
    m1, m2 = band_exitance(t, band), band_exitance(t * 1.01, band)
    assert np.isfinite(m1) and 0 < m1 < m2


@FAST
@given(temps, temps, st.floats(0.05, 1.0), temps)
def test_contrast_antisymmetric(t1, t2, eps, ts):
    a = radiance_contrast(t1, eps, t2, eps, ts)
    b = radiance_contrast(t2, eps, t1, eps, ts)
    assert math.isclose(a, -b, rel_tol=1e-9, abs_tol=1e-12)


@FAST
@given(
    st.floats(0.02, 2.0),
    st.floats(1e9, 2e11),
    st.floats(-0.2, 0.2),
    st.floats(-50.0, 50.0),
    st.integers(0, 10**6),
)
def test_sensor_linear_in_power(tau_t, r_g, mismatch, gain, seed):
    s = PyroSensor.from_material(
        thermal_time_constant=tau_t, gate_resistance=r_g, mismatch=mismatch
    )
    det = dataclasses.replace(BASE, sensor=s)
    p = np.random.default_rng(seed).normal(size=(2, 300)) * 1e-7
    v1 = det.drive("equivalent_power", p, 100.0, ("gate",)).gate_voltage
    v2 = det.drive("equivalent_power", gain * p, 100.0, ("gate",)).gate_voltage
    assert np.all(np.isfinite(v1))
    np.testing.assert_allclose(v2, gain * v1, rtol=1e-9, atol=1e-18)


def _box(size, h, temp_c):
    part = BodyPart("box", h - size / 2, h + size / 2, size, size, "fixed", 1.0, temp_c)
    return Target("box", (part,))


@FAST
@given(st.floats(10e-3, 40e-3), st.floats(0.5e-3, 3e-3), st.floats(0.5, 2.0), st.floats(0.5, 15.0))
def test_inverse_square_and_linear_in_contrast_for_small_targets(f, el_w, h, dt):
    lens = Lens((Facet(0.0, 0.0, f, 1e-4, 1.0),))
    mount = Mount("wall", h)
    sensor = dataclasses.replace(
        BASE.sensor, elements=single_element(el_w, el_w), connection="single"
    )
    det = dataclasses.replace(BASE, lens=lens, mount=mount, sensor=sensor)
    env = Environment(air_c=20.0)
    d = np.linspace(5.0, 20.0, 6)
    size = 0.02 * 5.0 * el_w / f  # a fifth of the beam width at 5 m
    walks = straight_walks(np.stack([d, 0 * d], 1), [[0.0, 1.0]] * 6, 1.0, 0.02, 100.0, 10.0)

    def power(temp):
        with warnings.catch_warnings():
            warnings.simplefilter("ignore", ValidityWarning)
            run = det.run(_box(size, h, temp), env, walks, ("element_power",))
        return run.element_power[:, 0, 0], _box(size, h, temp).radiance_contrast(env)[0]

    warm, dl_w = power(20.0 + dt)
    cool, dl_c = power(20.0 - dt)
    pd2 = warm * d**2
    assert np.all(np.isfinite(warm)) and np.all(warm > 0) and np.all(cool < 0)
    assert np.ptp(pd2) / pd2.mean() < 0.02  # ∝ 1/d² (Boyd 1983)
    np.testing.assert_allclose(cool / warm, dl_c / dl_w, rtol=1e-12)  # ∝ ΔL


@FAST
@given(st.floats(1e-4, 0.5), st.floats(0.1, 30.0), st.integers(0, 10**6), st.booleans())
def test_stage_output_within_rails(amplitude, freq, seed, discharged):
    amp = OpAmp(v_low=0.05, v_high=3.25)
    stage = NonInvertingBandPass(10e3, 22e-6, 560e3, 27e-9, amp)
    det = dataclasses.replace(BASE, stages=(stage,))
    rest = det.rest_levels()[-1]
    det = dataclasses.replace(det, comparator=WindowComparator(FixedWindow(rest, 0.5)))
    rng = np.random.default_rng(seed)
    t = np.arange(800) / 100.0
    gate = amplitude * np.sin(2 * np.pi * freq * t + rng.uniform(0, 6))[None, :]
    start = "discharged" if discharged else "steady"
    y = det.drive("gate", gate, 100.0, ("stages",), start=start).stage_outputs[0]
    assert np.all(np.isfinite(y))
    assert y.min() >= 0.05 - 1e-12 and y.max() <= 3.25 + 1e-12


def test_on_axis_dual_beams_are_mirror_images():
    # symmetry: an on-axis facet images the two elements into equal, mirrored beams (an
    # off-axis facet sees them at different obliquities, so their solid angles differ)
    beams = make_beams(Lens((Facet(0.0, 0.0, 20e-3, 1e-4),)), Mount(), dual_elements())
    np.testing.assert_allclose(beams.solid_angle[0], beams.solid_angle[1], rtol=1e-12)
    assert beams.azimuth[0] == -beams.azimuth[1]
