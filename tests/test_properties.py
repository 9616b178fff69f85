"""Sources named below.

Property-based tests (hypothesis) on the public physics functions: finite outputs for valid
inputs and the invariants of the earlier checks — the inverse-square law (Boyd 1983), linearity
of the sensor in power (Putley 1970), antisymmetry of the radiance contrast, sign flip of the
element power with the contrast, op-amp outputs bounded by the rails."""

import math

import numpy as np
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

from pirchain.frontend import NonInvertingBandPass, OpAmp
from pirchain.physics.optics import Facet, Lens, Mount, element_power, make_beams, part_angles
from pirchain.physics.radiometry import band_exitance, radiance_contrast
from pirchain.saturation import piecewise, run_stage
from pirchain.physics.sensor import PyroSensor, dual_elements, gate_voltage, single_element

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
    p = np.random.default_rng(seed).normal(size=(2, 300, 2)) * 1e-7
    v1 = gate_voltage(s, p, 100.0)
    v2 = gate_voltage(s, gain * p, 100.0)
    assert np.all(np.isfinite(v1))
    np.testing.assert_allclose(v2, gain * v1, rtol=1e-9, atol=1e-18)


@FAST
@given(st.floats(10e-3, 40e-3), st.floats(0.5e-3, 3e-3), st.floats(0.5, 2.0), st.floats(-1.0, 1.0))
def test_inverse_square_for_small_targets(f, el_w, h, contrast):
    if abs(contrast) < 1e-3:
        contrast = 1.0
    lens = Lens((Facet(0.0, 0.0, f, 1e-4, 1.0),))
    mount = Mount("wall", h)
    beams = make_beams(lens, mount, single_element(el_w, el_w))
    d = np.linspace(5.0, 20.0, 6)
    size = 0.02 * 5.0 * el_w / f  # a fifth of the beam width at 5 m
    ang = part_angles(
        d[:, None, None], 0.0 * d[:, None, None], size / 2, h - size / 2, h + size / 2, h
    )
    p = element_power(beams, ang, [contrast], 1)[:, 0, 0]
    pd2 = p * d**2
    assert np.all(np.isfinite(p)) and np.sign(p[0]) == np.sign(contrast)
    assert np.ptp(pd2) / abs(pd2.mean()) < 0.02
    flipped = element_power(beams, ang, [-contrast], 1)[:, 0, 0]
    np.testing.assert_array_equal(flipped, -p)


@FAST
@given(st.floats(1e-4, 1.0), st.floats(0.1, 30.0), st.integers(0, 10**6))
def test_stage_output_within_rails(amplitude, freq, seed):
    amp = OpAmp(v_low=0.05, v_high=3.25)
    stage = NonInvertingBandPass(10e3, 22e-6, 560e3, 27e-9, amp)
    rng = np.random.default_rng(seed)
    t = np.arange(800) / 100.0
    u = 1.0 + amplitude * np.sin(2 * np.pi * freq * t + rng.uniform(0, 6))[None, :]
    run = run_stage(stage, u, 100.0)
    assert np.all(np.isfinite(run.output))
    assert run.output.min() >= 0.05 - 1e-12 and run.output.max() <= 3.25 + 1e-12
    y, _ = piecewise(stage, u, 100.0, np.zeros((1, 2)))
    assert np.all(np.isfinite(y)) and y.min() >= 0.05 - 1e-12 and y.max() <= 3.25 + 1e-12


def test_on_axis_dual_beams_are_mirror_images():
    # symmetry: an on-axis facet images the two elements into equal, mirrored beams (an
    # off-axis facet sees them at different obliquities, so their solid angles differ)
    beams = make_beams(Lens((Facet(0.0, 0.0, 20e-3, 1e-4),)), Mount(), dual_elements())
    np.testing.assert_allclose(beams.solid_angle[0], beams.solid_angle[1], rtol=1e-12)
    assert beams.azimuth[0] == -beams.azimuth[1]
