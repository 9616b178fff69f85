"""False-trigger rates: Rice's formula (Rice 1944/1945) against its check values in
docs/references.md (derived), the seeded Monte Carlo against Rice, disturbance invariants, and a
ramp against python-control's forced response of the chain's transfer function."""

import dataclasses
import math

import control
import numpy as np
import pytest
from scipy import signal

from pirchain.analysis.drift import ramp_response
from pirchain.analysis.false_triggers import (
    HOUR,
    YEAR,
    analytic_rate,
    comparator_sources,
    monte_carlo_rate,
    sensitivity_resistor_for,
    threshold_for_rate,
    with_threshold,
)
from pirchain.analysis.rice import (
    poisson_interval,
    spectral_moment,
    upcrossing_rate,
    zero_crossing_rate,
)
from pirchain.circuit.comparator import LadderWindow
from pirchain.interface.demo import demo_detector, demo_environment
from pirchain.logic.rules import PulseLogic
from pirchain.physics.disturbance import AmbientRamp, Draught, draught_parts

ENV = demo_environment()


def test_rice_butterworth_zero_crossing_rate():
    # second-order Butterworth low-pass of corner f_c: ν₀⁺ = f_c exactly
    # (docs/references.md, derived)
    fc = 3.0
    b, a = signal.butter(2, 2 * math.pi * fc, analog=True)
    f = np.linspace(0.0, 2e5, 4_000_001)
    _, h = signal.freqs(b, a, worN=2 * math.pi * f)
    assert zero_crossing_rate(f, np.abs(h) ** 2) == pytest.approx(fc, rel=0.01)


def test_rice_ideal_band_pass_table():
    # docs/references.md (derived): 0.4–10 Hz: ν₀⁺ = 5.8924 /s; mean time between crossings of ±u:
    # 7.638 s (3σ), 252.95 s (4σ), 2.2770e4 s (5σ), 5.5716e6 s (6σ); 0.3–3.5 Hz: 2.1127, 705.50 s.
    f = np.linspace(0.4, 10.0, 200_001)
    s = np.ones_like(f)
    m0, m2 = spectral_moment(f, s, 0), spectral_moment(f, s, 2)
    assert math.sqrt(m2 / m0) == pytest.approx(5.8924, rel=1e-4)
    for k, t in ((3, 7.638), (4, 252.95), (5, 2.2770e4), (6, 5.5716e6)):
        assert 1 / (2 * upcrossing_rate(k * math.sqrt(m0), m0, m2)) == pytest.approx(t, rel=0.01)
    f = np.linspace(0.3, 3.5, 100_001)
    s = np.ones_like(f)
    m0, m2 = spectral_moment(f, s, 0), spectral_moment(f, s, 2)
    assert math.sqrt(m2 / m0) == pytest.approx(2.1127, rel=1e-4)
    assert 1 / (2 * upcrossing_rate(4 * math.sqrt(m0), m0, m2)) == pytest.approx(705.50, rel=0.01)


def _single_pulse(det, k, rate=400.0, **kw):
    sigma = analytic_rate(det, ENV).sigma
    d = with_threshold(det, k * sigma)
    # Rice counts every up-crossing; a comparator with hysteresis h merges the re-crossings
    # of one excursion that do not first fall back by h (≈ 5 % fewer at h = 1.6 σ): keep h
    # far below σ so that the count is Rice's
    d = dataclasses.replace(
        d, comparator=dataclasses.replace(d.comparator, hysteresis=0.02 * sigma)
    )
    logic = PulseLogic(rate=rate, pulses_required=1, blanking=0.0, hold=0.01, lockout=0.0, **kw)
    return dataclasses.replace(d, logic=logic)


@pytest.mark.parametrize("k,hours", [(3.5, 20.0), (4.2, 40.0)])
def test_monte_carlo_single_pulse_rate_agrees_with_rice(k, hours):
    # Rates between one per minute and one per hour; the logic samples at 400 Hz so that
    # sampling misses a negligible share of crossings (at 100 Hz it misses ≈ 13 %).
    det = _single_pulse(demo_detector(), k)
    rice = analytic_rate(det, ENV).pulse_rate
    assert 1 / 3600 < rice < 1 / 60
    mc = monte_carlo_rate(det, ENV, hours * 3600, seed=11, streams=8, sample_rate=400.0)
    # exact Poisson interval at 99 %: seeds 11–14 at 3.5 σ give MC/Rice 0.93, 0.98, 1.01,
    # 0.98 (docs/validation.md), a residual ≈ 2 % below Rice (sampling at 400 Hz, the small
    # hysteresis) inside the counting spread of ≈ 3 % per run
    lo, hi = poisson_interval(mc.pulses, mc.duration, 0.99)
    assert lo <= rice <= hi
    assert mc.pulses > 50


def test_two_pulse_counting_ratio_is_bounded():
    # Two pulses within 4 s, 0.3 s blanking. The analytic figure treats pulses as Poisson
    # (docs/references.md: Rice + a counting approximation). Real crossings cluster — raising the
    # rate — while blanking swallows cluster members — lowering it; measured ratios are
    # 0.7–0.8, and we bound MC/analytic within a factor of 3 either way.
    det = _single_pulse(demo_detector(), 3.0)
    det = dataclasses.replace(
        det,
        logic=PulseLogic(
            rate=400.0, pulses_required=2, count_window=4.0, blanking=0.3, hold=1.0, lockout=0.0
        ),
    )
    est = analytic_rate(det, ENV)
    mc = monte_carlo_rate(det, ENV, 10 * 3600, seed=5, streams=8, sample_rate=400.0)
    assert mc.alarms > 100
    assert 1 / 3 < mc.alarm_rate / est.alarm_rate < 3
    assert est.alarm_rate < est.pulse_rate and mc.alarm_rate < mc.pulse_rate


def test_monte_carlo_is_reproducible_from_seed():
    det = _single_pulse(
        demo_detector(),
        3.0,
    )
    a = monte_carlo_rate(det, ENV, 1800, seed=3, streams=2, sample_rate=100.0)
    b = monte_carlo_rate(det, ENV, 1800, seed=3, streams=2, sample_rate=100.0)
    c = monte_carlo_rate(det, ENV, 1800, seed=4, streams=2, sample_rate=100.0)
    assert (a.pulses, a.alarms) == (b.pulses, b.alarms)
    assert a.pulses != c.pulses


def test_poisson_interval():
    # Garwood (1936): 10 events → [4.795, 18.39]; 0 events → [0, 3.689]
    lo, hi = poisson_interval(10, 1.0)
    assert (lo, hi) == pytest.approx((4.7954, 18.390), rel=1e-3)
    assert poisson_interval(0, 1.0)[1] == pytest.approx(3.6889, rel=1e-3)


def test_ramp_leaks_through_mismatch_as_the_transfer_function_predicts():
    # 1 K/min with 10 % mismatch: peak within 2 % of python-control's forced response of the
    # chain transfer function to the same P_eq ramp; with zero mismatch nothing at all.
    base = demo_detector()
    d10 = dataclasses.replace(base, sensor=dataclasses.replace(base.sensor, mismatch=0.1))
    r = ramp_response(d10, ENV, AmbientRamp(1.0, 5.0, 600.0), 700.0, 20.0)
    ref = control.forced_response(d10.transfer_function(gbw=False), r.time, r.equivalent_power)
    peak_ref = np.max(np.abs(ref.outputs))
    assert r.peak_excursion == pytest.approx(peak_ref, rel=0.02)
    assert peak_ref > 1e-3
    d0 = dataclasses.replace(base, sensor=dataclasses.replace(base.sensor, mismatch=0.0))
    r0 = ramp_response(d0, ENV, AmbientRamp(1.0, 5.0, 600.0), 700.0, 20.0)
    # no input at all, and a response of zero to the rounding of the modal state basis
    assert np.all(r0.equivalent_power == 0.0) and r0.peak_excursion < 1e-9


def test_correlated_draught_without_mismatch_is_invisible():
    base = demo_detector()
    d0 = dataclasses.replace(base, sensor=dataclasses.replace(base.sensor, mismatch=0.0))
    diff, common = draught_parts(d0, ENV, Draught(0.05, 3.0, 1.0, 0.3))
    assert diff == 0.0 and common == pytest.approx(0.0, abs=1e-30)
    names = [s.name for s in comparator_sources(d0, ENV, Draught(0.05, 3.0, 1.0, 0.3))]
    assert "HVAC draught" not in names


def test_uncorrelated_draught_rate_rises_as_predicted():
    det = demo_detector()
    quiet = analytic_rate(det, ENV, Draught(0.01, 5.0, 0.95, 0.2))
    loud = analytic_rate(det, ENV, Draught(0.01, 5.0, 0.0, 0.2))
    assert loud.sigma > quiet.sigma
    # Monte Carlo with the uncorrelated draught at a threshold where Rice gives ~1/min
    th = 3.6 * loud.sigma
    d = dataclasses.replace(
        with_threshold(det, th),
        logic=PulseLogic(rate=400.0, pulses_required=1, blanking=0.0, hold=0.01, lockout=0.0),
    )
    dr = Draught(0.01, 5.0, 0.0, 0.2)
    rice = analytic_rate(d, ENV, dr).pulse_rate
    mc = monte_carlo_rate(d, ENV, 20 * 3600, draught=dr, seed=9, streams=8, sample_rate=400.0)
    lo, hi = mc.pulse_interval
    assert lo <= rice <= hi
    assert (
        analytic_rate(with_threshold(det, th), ENV, Draught(0.01, 5.0, 0.95, 0.2)).pulse_rate < rice
    )


def test_threshold_for_one_false_trigger_per_year():
    det = demo_detector()
    th, r_sens = threshold_for_rate(det, ENV, 1.0 / YEAR, Draught())
    est = analytic_rate(with_threshold(det, th), ENV, Draught())
    assert est.alarm_rate * YEAR == pytest.approx(1.0, rel=1e-3)
    # the resistor gives the same window back through the ladder (Ohm's law)
    lad = det.comparator.window
    lo, hi = LadderWindow(lad.supply, lad.r_top, r_sens, lad.r_bottom).edges()
    assert (hi - lo) / 2 == pytest.approx(th, rel=1e-9)
    assert sensitivity_resistor_for(det, th) == pytest.approx(r_sens)


def _noisy(k_sigma, hold, retrigger=True):
    """The demo with a fixed window k_sigma noise rms from rest: it fires often."""
    from pirchain.circuit.comparator import FixedWindow, WindowComparator

    det, env = demo_detector(), demo_environment()
    sigma = analytic_rate(det, env).sigma
    cmp = WindowComparator(FixedWindow(det.supply.reference, k_sigma * sigma), 0.0)
    logic = dataclasses.replace(det.logic, hold=hold, retrigger=retrigger, daylight=None)
    return dataclasses.replace(det, comparator=cmp, logic=logic), env


@pytest.mark.parametrize(
    ("k_sigma", "hold", "retrigger"),
    [(2.5, 5.0, True), (3.0, 5.0, True), (3.0, 60.0, True), (3.0, 60.0, False)],
)
def test_analytic_turn_ons_respect_the_hold_and_lockout(k_sigma, hold, retrigger):
    # Dead-time models (Knoll, Radiation Detection and Measurement, ch. 4): a fixed hold and
    # the lockout are non-paralysable (rate ≤ 1/(hold + lockout)), a retriggered hold is
    # paralysable. Checked against the seeded Monte Carlo of the real logic: within the
    # factor the Poisson counting approximation is known for (docs/model.md §11: 0.7–0.8).
    det, env = _noisy(k_sigma, hold, retrigger)
    est = analytic_rate(det, env)
    cap = 1.0 / (det.logic.hold + det.logic.lockout)
    assert est.alarm_rate <= cap
    mc = monte_carlo_rate(det, env, 4 * HOUR, None, 3)
    assert mc.alarms >= 20
    assert 0.5 <= mc.alarm_rate / est.alarm_rate <= 1.5, (mc.alarm_rate, est.alarm_rate)


def test_rates_below_the_floor_are_said_so():
    from pirchain.analysis.false_triggers import RATE_FLOOR_PER_YEAR, format_rate, rate_fields

    assert format_rate(2.25e-311).startswith(f"below {RATE_FLOOR_PER_YEAR:g} per year")
    assert "Gaussian tail" in format_rate(1e-219)
    assert format_rate(0.5) == "0.5 per year"
    assert rate_fields(1e-219)["alarms_below_floor"] is True
    assert rate_fields(0.5)["alarms_below_floor"] is False


def test_remembered_sources_are_the_ones_built_afresh():
    """Issue 17: the comparator-input sources of one design are built once per run. The
    remembered ones must give the same total PSD as a fresh build (trapezoid of the summed
    densities, numpy), come back as a new list each call (a caller's append must not reach
    the next caller), and follow a changed design."""
    from pirchain.analysis.false_triggers import _build_sources

    det, env = demo_detector(), demo_environment()
    draught = Draught(rms=0.05, correlation_time=2.0)
    first = comparator_sources(det, env, draught)
    first.append(None)
    again = comparator_sources(det, env, draught)
    fresh = _build_sources(det, env, draught)
    assert len(again) == len(fresh) == len(first) - 1
    f = np.geomspace(0.01, 100.0, 400)
    total = [np.trapezoid(sum(s.psd(f) for s in src), f) for src in (again, fresh)]
    assert total[0] == pytest.approx(total[1], rel=1e-12) and total[0] > 0
    other = dataclasses.replace(det)  # an equal copy: the same remembered sources
    assert other is not det and comparator_sources(other, env, draught)[0] is again[0]
    quieter = comparator_sources(det, env, Draught(rms=0.01, correlation_time=2.0))
    q = np.trapezoid(sum(s.psd(f) for s in quieter), f)
    assert q < total[0]  # a smaller draught: not the remembered sources of the other one
