"""Pyroelectric sensor against the responsivity formula of Putley (1970), Porter (1981) and
Whatmore (1986), with a worked vector derived from that formula (docs/validation.md); the
time-domain checks drive the chain's pass at the equivalent-power node."""

import dataclasses
import math

import numpy as np
import pytest
from scipy import constants

from pirchain.errors import DesignError
from pirchain.interface.demo import demo_detector
from pirchain.physics.sensor import (
    MATERIALS,
    PyroSensor,
    dual_elements,
    quad_elements,
    single_element,
)


def gate_voltage(sensor, power, fs):
    """Gate-voltage change from the pass for element powers (walks, samples, elements) [V];
    the sensor responds to P_eq = Σ c_k P_k (docs/model.md §4)."""
    det = dataclasses.replace(demo_detector(), sensor=sensor)
    p_eq = np.asarray(power) @ sensor.coupling
    return det.drive("equivalent_power", p_eq, fs, ("gate",)).gate_voltage


def worked_sensor():
    # η=0.8, p=230 µC m^-2 K^-1, 2×1 mm, 25 µm, c'=3.2 MJ m^-3 K^-1, ε_r=47, τ_T=1 s, R=50 GΩ
    return PyroSensor.from_material(
        "LiTaO3",
        elements=single_element(2e-3, 1e-3),
        thickness=25e-6,
        absorptance=0.8,
        thermal_time_constant=1.0,
        gate_resistance=50e9,
        input_capacitance=0.0,
        connection="single",
    )


def test_worked_vector_intermediates():
    s = worked_sensor()
    assert s.heat_capacity == pytest.approx(1.6e-4, rel=1e-6)
    assert s.element_capacitance == pytest.approx(33.29e-12, rel=2e-4)
    assert s.electrical_time_constant == pytest.approx(1.6646, rel=1e-4)


def test_worked_responsivity_vector():
    # docs/references.md: 42 281 / 10 809 / 1 099.35 V/W at 0.1 / 1 / 10 Hz, within 0.1 %.
    got = np.abs(worked_sensor().responsivity([0.1, 1.0, 10.0]))
    np.testing.assert_allclose(got, [42281.0, 10809.0, 1099.35], rtol=1e-3)


def test_high_frequency_limit_and_peak():
    s = worked_sensor()
    mat = MATERIALS["LiTaO3"]
    area = 2e-6
    # η p / (ω c' ε0 ε_r A): 1 099.54 V/W at 10 Hz (docs/references.md, derived)
    hf = (
        0.8
        * mat.pyro_coefficient
        / (2 * math.pi * 10 * mat.heat_capacity * constants.epsilon_0 * mat.permittivity * area)
    )
    assert hf == pytest.approx(1099.54, rel=1e-4)
    assert abs(s.responsivity(1e4)) * 1e4 / 10 == pytest.approx(hf, rel=1e-5)
    # peak at ω = 1/√(τ_T τ_E), R_V,max = η p A R / (G (τ_T + τ_E))
    f = np.linspace(0.01, 1.0, 200001)
    rv = np.abs(s.responsivity(f))
    assert f[np.argmax(rv)] == pytest.approx(s.peak_frequency, rel=1e-4)
    g = s.heat_capacity / s.thermal_time_constant
    rmax = 0.8 * mat.pyro_coefficient * area * 50e9 / (g * (1.0 + s.electrical_time_constant))
    assert abs(s.responsivity(s.peak_frequency)) == pytest.approx(rmax, rel=1e-9)


@pytest.mark.parametrize("freq,fs", [(0.1, 100.0), (1.0, 200.0), (10.0, 2000.0)])
def test_time_domain_sinusoid_reproduces_responsivity(freq, fs):
    # Driving the simulated sensor with sinusoidal power gives |R_V| once settled (1 %).
    s = worked_sensor()
    t = np.arange(int(60.0 * fs)) / fs
    p0 = 1e-7
    power = (p0 * np.sin(2 * math.pi * freq * t))[None, :, None]
    v = gate_voltage(s, power, fs)[0]  # sin starts at 0: the settled start changes nothing
    keep = t >= 40.0  # > 20 τ_E after the start; 20 s holds whole cycles of every frequency
    basis = np.stack(
        [np.sin(2 * math.pi * freq * t[keep]), np.cos(2 * math.pi * freq * t[keep])], 1
    )
    coef, *_ = np.linalg.lstsq(basis, v[keep], rcond=None)
    amplitude = math.hypot(*coef)
    assert amplitude / p0 == pytest.approx(abs(s.responsivity(freq)), rel=0.01)


def test_transfer_function_matches_formula():
    s = PyroSensor.from_material(thermal_time_constant=0.3, gate_resistance=75e9)
    f = np.array([0.05, 0.3, 1.0, 4.0, 20.0])
    h = np.array([s.transfer_function()(2j * math.pi * x) for x in f])
    np.testing.assert_allclose(h * s.coupling[0], s.responsivity(f), rtol=1e-12)


def test_series_opposition_uniform_illumination():
    # Uniform illumination: exactly zero at zero mismatch, m × one-element response otherwise.
    fs = 100.0
    t = np.arange(2000) / fs
    ramp = 1e-7 * np.clip(t - 2.0, 0, 1.0)  # a step with a 1 s rise
    for elements in (dual_elements(), quad_elements()):
        n = len(elements)
        nominal = PyroSensor.from_material(
            elements=elements, thermal_time_constant=0.5, gate_resistance=50e9
        )
        uniform = np.repeat(ramp[None, :, None], n, axis=2)
        assert np.all(gate_voltage(nominal, uniform, fs) == 0.0)
        one_lit = np.zeros_like(uniform)
        one_lit[..., 0] = ramp
        v_one = gate_voltage(nominal, one_lit, fs)
        for m in (0.02, 0.1, -0.07):
            mism = PyroSensor.from_material(
                elements=elements, thermal_time_constant=0.5, gate_resistance=50e9, mismatch=m
            )
            v_u = gate_voltage(mism, uniform, fs)
            scale = np.abs(v_one).max()  # linear to rounding of the recursion, 1e-12 of it
            np.testing.assert_allclose(v_u, m * (n // 2) * v_one, rtol=1e-9, atol=1e-12 * scale)
    # datasheet balance |V_A − V_B| / (V_A + V_B) is m/2
    s = PyroSensor.from_material(thermal_time_constant=0.5, gate_resistance=50e9, mismatch=0.1)
    va, vb = abs(s.responsivity(1.0, 0)), abs(s.responsivity(1.0, 1))
    assert abs(va - vb) / (va + vb) == pytest.approx(0.05, rel=1e-12)


def test_series_dual_one_element_equals_single_at_high_frequency():
    # Series opposition (docs/model.md §4) acts as (i_A − i_B)/2 into C_el/2, so one lit
    # element gives the single-element voltage at high frequency.
    kw = dict(thermal_time_constant=0.5, gate_resistance=50e9, input_capacitance=0.0)
    dual = PyroSensor.from_material(elements=dual_elements(), **kw)
    single = PyroSensor.from_material(
        elements=single_element(1e-3, 2e-3), connection="single", **kw
    )
    assert abs(dual.responsivity(1e3)) == pytest.approx(abs(single.responsivity(1e3)), rel=1e-6)
    par = PyroSensor.from_material(elements=dual_elements(), connection="parallel", **kw)
    assert par.gate_capacitance == pytest.approx(4 * dual.gate_capacitance)


def test_datasheet_route_gives_same_model():
    mat = PyroSensor.from_material(
        "LiTaO3", thermal_time_constant=0.25, gate_resistance=60e9, mismatch=0.04
    )
    rv1 = abs(mat.responsivity(1.0))
    sheet = PyroSensor.from_datasheet(
        rv1,
        0.25,
        mat.electrical_time_constant,
        element_capacitance=mat.element_capacitance,
        mismatch=0.04,
    )
    assert sheet.gate_resistance == pytest.approx(mat.gate_resistance, rel=1e-12)
    assert sheet.current_responsivity == pytest.approx(mat.current_responsivity, rel=1e-12)
    f = np.geomspace(0.01, 100, 50)
    np.testing.assert_allclose(sheet.responsivity(f), mat.responsivity(f), rtol=1e-12)
    # common practice: a dual sensor has a few kV/W at 1 Hz
    assert 1e3 < rv1 < 2e4


def test_bad_sensor_values_name_the_field():
    with pytest.raises(DesignError, match="sensor.gate_resistance"):
        PyroSensor.from_material(thermal_time_constant=0.3, gate_resistance=-1.0)
    with pytest.raises(DesignError, match="thermal_time_constant"):
        PyroSensor.from_material(gate_resistance=50e9)
    with pytest.raises(DesignError, match="sensor.material"):
        PyroSensor.from_material("unobtainium", thermal_time_constant=0.3)
