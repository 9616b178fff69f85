"""Noise and temperature of real parts, each check against an outside source:

* ngspice (Debian package, a general-purpose circuit simulator) ``.noise`` on the exported
  netlist, with the JFET's KF/AF and the op-amps' flicker noise set to the same values;
* van der Ziel's JFET channel noise i_d² = 4kT (2/3) g_m (Proc. IRE 50, 1808, 1962) with the
  Shockley square law solved here by scipy's root finder;
* Welch's PSD estimate (scipy.signal.welch) of synthesised 1/f noise;
* the mean-field (Landau–Devonshire) temperature law of a ferroelectric below its Curie point
  (Lines and Glass 1977, ch. 3; TGS T_C = 49 °C, from memory);
* Nyquist's 4kTR (Phys. Rev. 32, 110, 1928) at 0 °C and 50 °C;
* leakage of a reverse-biased junction doubling every 10 K (common practice);
* ngspice's DC operating point with the op-amp offsets, C1 leakage and gate leakage;
* the op-amp DC analysis of Horowitz & Hill (the margin arithmetic of the ambient cases).
"""

import dataclasses
import math

import control
import numpy as np
import pytest
from scipy import constants, optimize, signal

from pirchain.analysis.ambient import ambient_study
from pirchain.analysis.sweep import check_sweep_path, set_path
from pirchain.circuit.follower import Jfet, SourceFollower
from pirchain.circuit.netlist import ngspice_noise, run_ngspice
from pirchain.circuit.noise import NoiseSource, noise_sources, sensor_sources, total_psd
from pirchain.circuit.synthesis import NoiseSynthesizer
from pirchain.errors import DesignError
from pirchain.interface.demo import demo_design, demo_detector
from pirchain.interface.demo_text import DEMO_TOML
from pirchain.interface.design_file import loads
from pirchain.physics.sensor import MATERIALS, PyroSensor

K = constants.k


def flicker_design(temperature_c, route="kf"):
    """The demo with JFET noise from its operating point, JFET flicker (SPICE's KF, AF, or
    a datasheet corner, which the netlist turns into KF) and op-amp flicker corners large
    enough to matter at 0.1 Hz."""
    det = demo_detector()
    flicker = dict(kf=2e-13, af=1.1, e_n_corner=0.0) if route == "kf" else dict(e_n_corner=2e5)
    jfet = dataclasses.replace(det.follower.jfet, e_n=None, i_n=None, **flicker)
    amp = dataclasses.replace(det.stages[0].opamp, e_n=150e-9, e_n_corner=100.0, i_n_corner=5.0)
    stages = tuple(dataclasses.replace(st, opamp=amp) for st in det.stages)
    det = dataclasses.replace(
        det, follower=dataclasses.replace(det.follower, jfet=jfet), stages=stages
    )
    return det.at_temperature(temperature_c + 273.15)


@pytest.mark.parametrize(("temperature_c", "route"), [(0.0, "kf"), (50.0, "kf"), (25.0, "corner")])
def test_output_noise_matches_ngspice_noise_analysis(temperature_c, route):
    det = flicker_design(temperature_c, route)
    f, theirs = ngspice_noise(det, 0.01, 100.0, 10)
    src = [s for s in noise_sources(det) if s.electrical]
    ours = np.sqrt(total_psd(src, f))
    flicker = np.sqrt(total_psd([s for s in src if s.slope == -1], f))
    for f0 in (0.1, 1.0, 10.0):
        k = int(np.argmin(np.abs(f - f0)))
        assert f[k] == pytest.approx(f0, rel=1e-6)
        assert ours[k] == pytest.approx(theirs[k], rel=0.05), f0
    k = int(np.argmin(np.abs(f - 0.1)))
    assert flicker[k] ** 2 > 0.1 * ours[k] ** 2  # the 1/f sources matter in this check


def _drain_current(idss, vp, r_s, v_g=0.0):
    # Shockley: I = IDSS (1 + (v_g − I R_S)/|V_P|)², root with the JFET on (Sedra & Smith)
    return optimize.brentq(
        lambda i: idss * (1 + (v_g - i * r_s) / vp) ** 2 - i, 0.0, min(idss, (v_g + vp) / r_s)
    )


@pytest.mark.parametrize("r_s", [4.7e3, 47e3, 470e3])
def test_channel_noise_follows_transconductance(r_s):
    fol = SourceFollower(Jfet(0.5e-3, 1.5, gate_leakage=0.0), r_s)
    i_d = _drain_current(0.5e-3, 1.5, r_s)
    assert fol.drain_current == pytest.approx(i_d, rel=1e-9)
    g_m = 2 * math.sqrt(i_d * 0.5e-3) / 1.5
    assert fol.transconductance == pytest.approx(g_m, rel=1e-9)
    t = 300.0
    white, flicker = fol.voltage_noise(t)
    assert white == pytest.approx(4 * K * t * (2 / 3) / g_m**2 * g_m, rel=1e-12)  # i_d²/g_m²
    assert flicker == 0.0
    # the datasheet figure overrides the operating point
    fixed = SourceFollower(Jfet(0.5e-3, 1.5, e_n=20e-9), r_s)
    assert fixed.voltage_noise(t)[0] == pytest.approx(400e-18)


def test_drain_current_sets_channel_noise_in_the_right_direction():
    # more drain current, more g_m, less gate-referred channel noise
    dens = [SourceFollower(Jfet(), r).voltage_noise(300.0)[0] for r in (470e3, 47e3, 4.7e3)]
    assert dens[0] > dens[1] > dens[2]


def test_synthesised_flicker_has_slope_minus_one_and_its_level():
    level = 4e-14  # V²/Hz at 1 Hz
    src = NoiseSource("1/f", level, control.tf([1.0], [1.0]), slope=-1)
    fs = 100.0
    x = NoiseSynthesizer([src], fs, streams=8, seed=11, stationary=True).next(int(3000 * fs))
    f, p = signal.welch(x, fs, nperseg=2**16, axis=-1)
    p = p.mean(axis=0)
    band = (f >= 0.05) & (f <= 5.0)  # two decades
    slope = np.polyfit(np.log10(f[band]), np.log10(p[band]), 1)[0]
    assert slope == pytest.approx(-1.0, abs=0.1)
    assert np.mean(p[band] * f[band]) == pytest.approx(level, rel=0.10)


def test_gate_leakage_doubles_every_ten_kelvin_and_lifts_the_gate():
    det = demo_detector()
    i25 = det.at_temperature(298.15).follower.jfet.gate_leakage
    assert det.at_temperature(308.15).follower.jfet.gate_leakage == pytest.approx(2 * i25)
    hot = det.at_temperature(333.15)
    assert hot.follower.gate_bias == pytest.approx(
        hot.follower.jfet.gate_leakage * hot.sensor.gate_resistance
    )
    assert hot.follower.offset > det.at_temperature(298.15).follower.offset


def test_pyroelectric_coefficient_follows_the_mean_field_law():
    s = PyroSensor.from_material("TGS", thermal_time_constant=0.15)
    tc = 49.0 + 273.15
    for t_c in (35.0, 45.0):
        t = t_c + 273.15
        hot = s.at_temperature(t)
        expect = math.sqrt((tc - 298.15) / (tc - t))  # p ∝ (T_C − T)^−½
        assert hot.current_responsivity / s.current_responsivity == pytest.approx(expect)
        assert hot.element_capacitance / s.element_capacitance == pytest.approx(expect**2)
    with pytest.raises(Exception, match="Curie point"):
        s.at_temperature(50.0 + 273.15)
    # LiTaO3 far below its ≈ 610 °C Curie point moves well under 0.2 %/K near room
    # temperature (from memory, Glass 1968: about 0.1 %/K)
    lt = PyroSensor.from_material("LiTaO3", thermal_time_constant=0.15)
    ratio = lt.at_temperature(323.15).current_responsivity / lt.current_responsivity
    assert 1.0 < ratio < 1.0 + 0.002 * 25
    assert MATERIALS["PVDF"].curie_temperature is None


@pytest.mark.parametrize("temperature_c", [0.0, 50.0])
def test_thermal_noise_is_four_kt_r_at_the_parts_temperature(temperature_c):
    t = temperature_c + 273.15
    det = demo_detector().at_temperature(t)
    rg = next(s for s in sensor_sources(det) if s.name.startswith("gate resistor"))
    assert rg.psd(np.array([1e-7]))[0] == pytest.approx(
        4 * K * t * det.sensor.gate_resistance, rel=1e-6
    )
    st = det.stages[0]
    rf = next(s for s in noise_sources(det) if s.name == "stage 1 Rf (Johnson)")
    assert rf.level == pytest.approx(4 * K * t / st.rf, rel=1e-12)


def test_offsets_leakage_and_gate_bias_match_ngspice_operating_point():
    # ngspice's DC operating point of the exported netlist (offset sources, C1 leakage
    # resistors, the gate-leakage current source) against the model's rest levels, hot
    det = demo_detector()
    amp = dataclasses.replace(det.stages[0].opamp, offset=3e-3, offset_drift=10e-6)
    stages = tuple(
        dataclasses.replace(st, opamp=amp, c1_leakage=20e6, r_tempco=200e-6) for st in det.stages
    )
    hot = dataclasses.replace(det, stages=stages).at_temperature(323.15)
    _, v = run_ngspice(hot, None, 100.0, 1.0)
    levels = hot.rest_levels()
    for node, ours in zip(("src", "out1", "out2"), levels, strict=True):
        assert v[node][0] == pytest.approx(ours, abs=1e-4), node
    assert v["gate"][0] == pytest.approx(hot.follower.gate_bias, rel=1e-3)
    # the leakage lifts stage 1 by (v_− − v_ref) Rf/(R1 + R_L) on top of the offset
    assert levels[1] - levels[0] > 2 * hot.stages[0].opamp.offset


def test_room_temperature_sweep_moves_the_parts():
    base = demo_design()
    warm = set_path(base, "environment.air_c", 31.0)
    assert warm.operating.temperature == pytest.approx(base.operating.temperature + 10.0)
    ratio = warm.operating.follower.jfet.gate_leakage / base.operating.follower.jfet.gate_leakage
    assert ratio == pytest.approx(2.0)  # doubles per 10 K
    assert warm.operating.follower.gate_bias > base.operating.follower.gate_bias
    # the parts' own temperature can differ from the room's
    hot = dataclasses.replace(base, detector_c=50.0)
    assert hot.operating.temperature == pytest.approx(323.15)
    assert hot.environment == base.environment


def test_datasheet_noise_entry_in_the_design_file():
    text = DEMO_TOML.replace('e_n = "50n"', 'e_n = "100n"\ne_n_at = 10').replace(
        "e_n_corner = 20", "e_n_corner = 10"
    )
    amp = loads(text).detector.stages[0].opamp
    # e(f) = e_w √(1 + f_c/f): 100 nV read at 10 Hz with a 10 Hz corner is 70.7 nV white
    assert amp.e_n == pytest.approx(100e-9 / math.sqrt(2.0))
    assert amp.e_n_corner == 10.0
    with pytest.raises(DesignError, match="kf"):
        loads(DEMO_TOML.replace("e_n_corner = 200", "e_n_corner = 200\nkf = 1e-15"))


def test_ambient_cases_count_turn_ons_and_margins():
    d = demo_design()
    cases = dataclasses.replace(d.ambient, ramp_rates=(0.5,), hvac_amplitudes=(0.5, 20.0))
    study = ambient_study(d.operating, d.environment, cases, d.draught)
    lo, hi = study.window
    for c in study.cases:
        assert c.margin == pytest.approx(
            min(hi - study.rest - c.excursion_up, study.rest - lo - c.excursion_down)
        )
        assert c.margin_sigma == pytest.approx(c.margin / study.sigma)
    big = study.cases[-1]
    # a 20 K burst crosses the window once per cycle: a pulse each time, but the logic wants
    # two pulses within its count window, so no turn-on
    assert big.margin < 0 and big.pulses >= cases.hvac_cycles and big.turn_ons == 0
    assert study.worst is big
    assert study.cases[1].pulses == 0 and study.cases[1].margin > 0


def test_parts_temperature_is_a_sweep_path():
    base = demo_design()
    assert check_sweep_path(base, "detector_c") == pytest.approx(21.0)  # unset: the room's
    hot = set_path(base, "detector_c", 50.0)
    # hotter parts: the leakage lifts the gate (more drain current), C1 leaks more
    assert hot.operating.supply_budget().total > base.operating.supply_budget().total
    assert hot.environment == base.environment
