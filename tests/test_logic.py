"""Decision logic on constructed waveforms driven into the chain at the comparator input.
The rules are those of common practice for occupancy and intrusion detectors (pulse count
1–4 within 2–10 s, blanking, retriggerable hold, re-arm lockout, daylight inhibit with
hysteresis); the ladder is Ohm's law."""

import dataclasses

import numpy as np
import pytest

from pirchain.circuit.comparator import FixedWindow, LadderWindow, MappedWindow, WindowComparator
from pirchain.errors import DesignError
from pirchain.interface.demo import demo_detector
from pirchain.logic.rules import DaylightInhibit, PulseLogic

FS = 100.0
CENTRE, TH = 1.65, 0.3
COMP = WindowComparator(FixedWindow(CENTRE, TH))


def wave(pulses, duration=30.0, width=0.2, amp=0.5):
    """Comparator input with rectangular excursions: [(start time, sign), ...]."""
    t = np.arange(int(duration * FS)) / FS
    v = np.full(t.size, CENTRE)
    for start, sign in pulses:
        v[(t >= start) & (t < start + width)] = CENTRE + sign * amp
    return v


def drive(v, logic, comp=COMP, lux=None):
    """The chain run from its comparator input ``v`` (walks, samples) with these rules."""
    det = dataclasses.replace(demo_detector(), comparator=comp, logic=logic)
    return det.drive("comparator", np.atleast_2d(v), FS, ("events",), lux=lux)


def run(v, **kw):
    logic = PulseLogic(**{"rate": 50.0, "blanking": 0.0, "lockout": 0.0, **kw})
    return drive(v, logic).decisions[0]


def test_ladder_window_formula():
    lad = LadderWindow(3.3, 1e6, 470e3, 1e6)
    lo, hi = lad.edges()
    assert hi - CENTRE == pytest.approx(1.65 * 470e3 / 2.47e6, rel=1e-12)
    assert CENTRE - lo == pytest.approx(1.65 * 470e3 / 2.47e6, rel=1e-12)
    assert lad.current() == pytest.approx(3.3 / 2.47e6, rel=1e-12)
    m = MappedWindow(1.65, (0.0, 10.0), (0.1, 0.5), 2.5)
    assert m.edges()[1] - 1.65 == pytest.approx(0.2)


def test_pulses_found_with_sign_and_peak():
    v = wave([(1.0, 1), (3.0, -1), (5.0, 1)], amp=0.6)
    p = drive(v, PulseLogic(rate=FS)).pulses
    np.testing.assert_allclose(p.start, [1.0, 3.0, 5.0])
    np.testing.assert_allclose(p.end, [1.2, 3.2, 5.2], atol=1e-9)
    np.testing.assert_array_equal(p.sign, [1, -1, 1])
    np.testing.assert_allclose(p.peak, 2.0)


@pytest.mark.parametrize("n", [1, 2, 3, 4])
def test_n_pulses_fire_and_n_minus_one_do_not(n):
    times = [(1.0 + 0.8 * k, (-1) ** k) for k in range(n)]
    assert run(wave(times), pulses_required=n, count_window=4.0).detected
    if n > 1:
        assert not run(wave(times[:-1]), pulses_required=n, count_window=4.0).detected
    # the same pulses spread beyond the count window do not fire
    spread = [(1.0 + 4.5 * k, (-1) ** k) for k in range(n)]
    assert run(wave(spread), pulses_required=n, count_window=4.0).detected == (n == 1)


def test_blanking_swallows_pulses():
    v = wave([(1.0, 1), (1.5, -1), (4.0, 1)])
    d = run(v, pulses_required=2, count_window=2.0, blanking=0.5)
    assert not d.detected  # the second pulse starts 0.3 s after the first ends: swallowed
    np.testing.assert_allclose(d.counted, [1.0, 4.0])
    assert run(v, pulses_required=2, count_window=2.0, blanking=0.2).detected


def test_retrigger_extends_hold():
    v = wave([(1.0, 1), (6.0, 1)], duration=20.0)
    re = run(v, pulses_required=1, hold=8.0, retrigger=True)
    assert re.on_intervals == [(1.0, 14.0)]
    once = run(v, pulses_required=1, hold=8.0, retrigger=False)
    assert once.on_intervals == [(1.0, 9.0)]


def test_lockout_stops_switch_off_retrigger():
    # output off at 9 s; a pulse at 9.5 s (the lamp switching off) must not turn it on again
    v = wave([(1.0, 1), (9.5, 1), (13.0, 1)], duration=30.0)
    locked = run(v, pulses_required=1, hold=8.0, lockout=2.0)
    assert locked.on_intervals == [(1.0, 9.0), (13.0, 21.0)]
    free = run(v, pulses_required=1, hold=8.0, lockout=0.0)
    assert free.on_intervals[1][0] == pytest.approx(9.5)


def test_alternation_rejects_same_sign():
    same = wave([(1.0, 1), (2.0, 1), (3.0, 1)])
    alt = wave([(1.0, 1), (2.0, -1)])
    assert not run(same, pulses_required=2, count_window=4.0, alternate=True).detected
    assert run(same, pulses_required=2, count_window=4.0, alternate=False).detected
    assert run(alt, pulses_required=2, count_window=4.0, alternate=True).detected


def test_single_pulse_alarm_above_k_threshold():
    big = wave([(1.0, 1)], amp=3.5 * TH)
    small = wave([(1.0, 1)], amp=2.5 * TH)
    assert run(big, pulses_required=3, single_pulse_factor=3.0).detected
    assert not run(small, pulses_required=3, single_pulse_factor=3.0).detected


def test_daylight_inhibit_with_hysteresis():
    # a pulse every 0.2 s, each turning the output on for 0.05 s unless inhibited, while
    # the light rises from 10 to 2000 lux and falls back: turn-ons stop where the sense
    # node passes v_on and resume where it falls below v_on − hysteresis
    day = DaylightInhibit(3.3, 100e3, 1e6, 0.7, v_on=1.65, hysteresis=0.3)
    logic = PulseLogic(rate=50.0, pulses_required=1, blanking=0.0, hold=0.05, lockout=0.0,
                       daylight=day)  # fmt: skip
    t = np.arange(int(40 * FS)) / FS
    v = np.where((t % 0.2) < 0.1, CENTRE + 0.5, CENTRE)
    ticks = np.arange(2000) / 50.0  # 4000 analog samples: ticks 0 … 39.98 s
    lux = np.where(ticks < 20, 10 + 99.5 * ticks, 10 + 99.5 * (40 - ticks))
    ons = np.array([a for a, _ in drive(v, logic, lux=lux).decisions[0].on_intervals])
    gap = np.argmax(np.diff(ons))

    def node(time):  # sense-node voltage at a pulse start (a tick)
        return day.node_voltage(lux[int(round(time * 50.0))])

    # the last pulse let through was read at or below v_on, the next one above it ...
    assert node(ons[gap]) <= 1.65 < node(ons[gap] + 0.2)
    # ... and the first let through again below v_on − hysteresis, the one before not
    assert node(ons[gap + 1]) < 1.35 <= node(ons[gap + 1] - 0.2)
    assert 0 < ons[gap] < 20 < ons[gap + 1] < 40  # inhibited around the bright middle
    # a pulse while inhibited does not turn the output on
    logic = PulseLogic(rate=50.0, pulses_required=1, blanking=0.0, lockout=0.0, daylight=day)
    one = wave([(1.0, 1)])
    assert not drive(one, logic, lux=2000.0).detected[0]
    assert drive(one, logic, lux=5.0).detected[0]


def test_comparator_hysteresis_counts_one_pulse():
    t = np.arange(1000) / FS
    noisy = CENTRE + TH + 0.01 * np.sign(np.sin(2 * np.pi * 7 * t)) * (t > 2) * (t < 4)
    no_h = WindowComparator(FixedWindow(CENTRE, TH), 0.0)
    with_h = WindowComparator(FixedWindow(CENTRE, TH), 0.02)
    logic = PulseLogic(rate=FS)
    assert drive(noisy, logic, no_h).outcomes.pulses[0] == 14
    assert drive(noisy, logic, with_h).outcomes.pulses[0] == 1


def test_logic_rate_sampling():
    v = wave([(1.013, 1), (2.507, -1)])
    for rate in (20.0, 50.0, 1000.0):
        logic = PulseLogic(rate=rate, pulses_required=2, blanking=0.0, lockout=0.0)
        r = drive(v, logic)
        p = r.pulses
        # a sampled detector sees each crossing at its next tick
        assert np.all(p.start >= [1.01, 2.5]) and np.all(p.start - [1.013, 2.507] < 1 / rate + 0.01)
        assert r.decisions[0].detected


def test_batch_equals_single_walks():
    a, b = wave([(1.0, 1), (2.0, -1)]), wave([(5.0, -1)])
    logic = PulseLogic(rate=50.0, pulses_required=2, blanking=0.0)
    dec = drive(np.stack([a, b]), logic).decisions
    assert [d.detected for d in dec] == [True, False]
    assert drive(a, logic).decisions[0].on_intervals == dec[0].on_intervals
    assert drive(b, logic).outcomes.pulses[0] == 1


def test_bad_logic_values_are_named():
    with pytest.raises(DesignError, match="logic.pulses_required"):
        PulseLogic(pulses_required=0)
    with pytest.raises(DesignError, match="comparator.hysteresis"):
        WindowComparator(FixedWindow(1.65, 0.1), hysteresis=0.2)
