"""Detection range, coverage and sweeps against physical invariants: linearity of the chain
below saturation, the inverse-square law, zero contrast at equal temperatures, beam
geometry, monotonic thresholds, and the pass band (crossing fundamental v f / (2 d s),
DESIGN.md §3.3); plus US UFC 4-021-02: detectors are far more sensitive to crossing than to
approach."""

import dataclasses
import math

import numpy as np
import pytest
from scipy import optimize

from pirchain.analysis.coverage import side_view, top_view
from pirchain.analysis.detection_range import detection_range, probability_of_detection
from pirchain.analysis.sweep import (
    evaluate,
    get_path,
    log_values,
    set_path,
    sweep,
    trade_off,
)
from pirchain.analysis.walk_tests import detect, make_walks
from pirchain.chain.detector import Detector
from pirchain.circuit.comparator import FixedWindow, WindowComparator
from pirchain.circuit.transfer_stage import TransferStage
from pirchain.design import Design
from pirchain.errors import DesignError
from pirchain.interface.demo import demo_detector, demo_environment
from pirchain.logic.rules import PulseLogic
from pirchain.physics.disturbance import Draught
from pirchain.physics.optics import Facet, Lens, LensTier, Mount, wall_lens
from pirchain.physics.radiometry import celsius_to_kelvin, radiance_contrast
from pirchain.physics.scene import BodyPart, Environment, Target, adult, small_pet
from pirchain.physics.sensor import PyroSensor, dual_elements
from pirchain.settings import AnalysisSettings as S

ENV = demo_environment()
SINGLE = PulseLogic(rate=100.0, pulses_required=1, blanking=0.0, hold=1.0, lockout=0.0)


def fixed_target(temp_c, width=0.3, z0=0.0, z1=1.8):
    return Target("slab", (BodyPart("slab", z0, z1, width, width, "fixed", 0.98, temp_c),))


def single_pulse(det, threshold):
    rest = det.rest_levels()[-1]
    return dataclasses.replace(
        det, comparator=WindowComparator(FixedWindow(rest, threshold)), logic=SINGLE
    )


def nf_range(det, target, **kw):
    args = dict(trials=1, noise=False, d_max=40.0, step=1.0, refine=5)
    args.update(kw)
    return detection_range(det, target, ENV, settings=S(**args), jitter=0.0).range


def test_linearity_contrast_threshold_gain():
    det = single_pulse(demo_detector(), 0.4)
    t1 = 26.0
    dl1 = radiance_contrast(celsius_to_kelvin(t1), 0.98, celsius_to_kelvin(21.0), 0.95)

    def gap(t):
        return (
            radiance_contrast(celsius_to_kelvin(t), 0.98, celsius_to_kelvin(21.0), 0.95) - 2 * dl1
        )

    t2 = optimize.brentq(gap, t1, 60.0)
    base = nf_range(single_pulse(demo_detector(), 0.8), fixed_target(t1))
    double_contrast = nf_range(single_pulse(demo_detector(), 0.8), fixed_target(t2))
    half_threshold = nf_range(det, fixed_target(t1))
    st2 = det.stages[1]
    louder = dataclasses.replace(
        det, stages=(det.stages[0], dataclasses.replace(st2, rf=2 * st2.rf, cf=st2.cf / 2))
    )
    double_gain = nf_range(single_pulse(louder, 0.8), fixed_target(t1))
    res = 1.0 / 2**5
    assert base < double_contrast
    assert double_contrast == pytest.approx(half_threshold, abs=2 * res)
    assert double_gain == pytest.approx(half_threshold, abs=2 * res)


def test_noise_free_range_is_where_the_peak_falls_to_threshold():
    th = 0.5
    det = single_pulse(demo_detector(), th)
    rng = nf_range(det, adult())
    d = np.linspace(rng - 3, rng + 3, 61)
    walks = make_walks(d, 0.0, 1.0, "tangential", 3.0, 1, 0.0)
    hit, peak = detect(det, adult(), ENV, walks)
    np.testing.assert_array_equal(hit, peak > th)  # single-pulse logic fires iff peak > V
    cross = d[np.flatnonzero(peak > th)[-1]]
    assert rng == pytest.approx(cross, abs=0.1 + 1 / 32)


def flat_detector():
    # Sensor flat between 1/(2π τ_E) = 16 µHz and 1/(2π τ_T) = 160 Hz, a flat gain stage.
    sensor = PyroSensor.from_datasheet(
        5000.0, 1e-3, 1e4, elements=dual_elements(), reference_frequency=1.0
    )
    lens = Lens((Facet(0.0, 0.0, 20e-3, 1e-4, 1.0),))
    det = demo_detector()
    # a gate resistor of ~10^14 Ω: no leakage, or it would lift the gate by hundreds of volts
    jfet = dataclasses.replace(det.follower.jfet, gate_leakage=0.0)
    return Detector(
        lens,
        Mount("wall", 1.0),
        sensor,
        dataclasses.replace(det.follower, jfet=jfet),
        (TransferStage((1000.0,), (1.0,)),),
        None,
        SINGLE,
        det.supply,
    )


def test_inverse_square_with_flat_chain_and_small_target():
    det = flat_detector()
    det = dataclasses.replace(
        det, comparator=WindowComparator(FixedWindow(det.rest_levels()[-1], 1.0))
    )
    d = np.array([2.0, 3.0, 4.0, 6.0, 8.0, 10.0])
    walks = make_walks(d, 0.0, 1.0, "tangential", 2.0, 1, 0.0)
    _, peak = detect(det, fixed_target(40.0, 0.02, 0.99, 1.01), ENV, walks, sample_rate=1000.0)
    pd2 = peak * d**2
    assert np.ptp(pd2) / pd2.mean() < 0.05


def test_tangential_exceeds_radial_range():
    det = demo_detector()
    kw = S(trials=4, noise=False, d_max=30.0, step=1.0, refine=2)
    tang = detection_range(det, adult(), ENV, 0.0, kind="tangential", settings=kw)
    rad = detection_range(det, adult(), ENV, 0.0, kind="radial", settings=kw)
    assert tang.range > 2 * rad.range > 0


def test_range_vanishes_at_equal_temperature_and_returns():
    det = single_pulse(demo_detector(), 0.3)
    ranges = {}
    for room in (20.0, 26.0, 29.0, 30.0, 31.0, 34.0, 40.0):
        env = Environment(air_c=room)
        ranges[room] = detection_range(
            det,
            fixed_target(30.0),
            env,
            settings=S(trials=1, noise=False, d_max=30.0, step=1.0, refine=2),
            jitter=0.0,
        ).range
    assert ranges[30.0] == 0.0
    assert ranges[20.0] > ranges[26.0] > ranges[29.0]
    assert ranges[40.0] > ranges[34.0] > ranges[31.0]


def test_pet_passes_under_high_beams():
    lens = wall_lens([LensTier(-2.0, 9, 22e-3, 0.3e-4)], 110.0)
    det = dataclasses.replace(demo_detector(), lens=lens)
    sv = side_view(det, 0.0, tolerance_deg=10.0)
    assert sv.el_lo.size > 0
    assert np.all(sv.lowest_height([6.0, 8.0, 12.0]) > 0.5)  # beams above pet height there
    d = np.array([6.0, 8.0, 12.0])
    p_pet = probability_of_detection(det, small_pet(), ENV, d, trials=4, noise=False)
    p_adult = probability_of_detection(det, adult(), ENV, d, trials=4, noise=False)
    assert np.all(p_pet == 0.0) and np.all(p_adult == 1.0)


def test_range_monotonic_in_sensitivity_resistor():
    st = Design(demo_detector(), ENV, draught=Draught(), analysis=S(trials=2, noise=False))
    values = log_values(100e3, 1e6, 4)
    table = sweep(st, "detector.comparator.window.r_middle", values)
    th = table.column("threshold_v")
    rng = table.column("tangential_range_m")
    assert np.all(np.diff(th) > 0)  # the ladder threshold rises with the resistor
    assert np.all(np.diff(rng) <= 1e-9)
    assert np.all(np.diff(table.column("false_triggers_per_year")) <= 0)


def test_out_of_band_walks_are_missed():
    det = demo_detector()
    s, f = 2e-3, 22e-3  # element spacing, top-tier focal length

    def crossing_gain(v, d):
        # relative |H| at the crossing fundamental v f / (2 d s)
        h = det.transfer_function(True)
        fr = np.geomspace(0.01, 100, 2000)
        mag = np.abs(h(2j * math.pi * fr))
        return abs(h(2j * math.pi * v * f / (2 * d * s))) / mag.max()

    cases = [(8.0, 1.0, True), (1.0, 8.0, False), (12.0, 0.05, False)]
    for d, v, expect in cases:
        p = probability_of_detection(det, adult(), ENV, [d], speed=v, trials=4, noise=False)
        assert (p[0] >= 0.9) == expect, (d, v)
        assert (crossing_gain(v, d) > 0.5) == expect


def test_top_view_and_side_view():
    det = demo_detector()
    cov = S(coverage_cell=2.0, coverage_x_max=10.0, coverage_trials=2, noise=False)
    m = top_view(det, adult(), ENV, "tangential", cov)
    assert m.probability.shape == (m.y.size, m.x.size) and m.walks == m.x.size * m.y.size * 2
    # straight ahead at 4–8 m every walk is detected; far outside the 110° field none is
    ahead = m.probability[np.argmin(np.abs(m.y)), (m.x > 4) & (m.x < 8)]
    assert np.all(ahead == 1.0)
    edge = m.probability[np.abs(m.y) > 8.5][:, m.x < 2.0]
    assert np.all(edge == 0.0)


def test_paths_and_trade_off():
    st = Design(
        demo_detector(),
        ENV,
        draught=Draught(),
        analysis=S(trials=2, noise=False, d_max=25.0, step=2.0),
    )
    assert get_path(st, "detector.stages[1].rf") == 1e6
    s2 = set_path(st, "detector.stages[1].rf", 2e6)
    assert s2.detector.stages[1].rf == 2e6 and st.detector.stages[1].rf == 1e6
    assert set_path(st, "target", "child").target.name == "child"
    assert set_path(st, "analysis.trials", 3).analysis.trials == 3
    with pytest.raises(DesignError, match="analysis.trials"):
        set_path(st, "analysis.trials", 0)
    with pytest.raises(DesignError, match="sweep.path"):
        get_path(st, "detector.stages[0].nonsense")
    tr = trade_off(st, "detector.comparator.window.r_middle", [60e3, 200e3, 600e3], 1.0)
    fy = tr.table.column("false_triggers_per_year")
    assert tr.best is not None and fy[tr.best] <= 1.0
    better = tr.table.column("tangential_range_m") > tr.table.column("tangential_range_m")[tr.best]
    assert np.all(fy[better] > 1.0)
    row = evaluate(st)
    assert row["settling_s"] > 0 and row["supply_a"] > 0
