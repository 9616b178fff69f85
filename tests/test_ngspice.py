"""The analog chain against ngspice (Debian package ``ngspice``, a general-purpose circuit
simulator; docs/references.md) running pirchain's own exported netlist. CI installs ngspice, so
these tests run there; they fail, not skip, when it is missing."""

import math

import numpy as np
import pytest
from scipy import signal

from pirchain.analysis.power_up import power_up, settling_time
from pirchain.circuit.netlist import netlist, ngspice_available, run_ngspice
from pirchain.interface.demo import demo_detector, demo_environment
from pirchain.physics.scene import adult, tangential_path, walks_from_paths
from pirchain.physics.sensor import gate_current

FS = 100.0


def test_ngspice_is_installed():
    assert ngspice_available(), "install ngspice (apt-get install ngspice): .ci/run does"


def walk_run(distance):
    det = demo_detector()
    walks = walks_from_paths([tangential_path(distance, 0.0, 1.0, length=6.0)], 10.0, FS)
    res = det.simulate(adult(), demo_environment(), walks)
    cur = gate_current(det.sensor, res.equivalent_power, FS)[0]
    t, v = run_ngspice(det, cur, FS)
    return det, res, t, v


def test_walk_waveform_matches_ngspice_in_linear_regime():
    det, res, t, v = walk_run(20.0)
    assert not any(p.any() for p in res.pinned), "this walk must stay linear"
    n = min(t.size, res.time.size)
    ours = res.comparator_input[0, :n]
    rest = det.rest_levels()[-1]
    peak = np.max(np.abs(ours - rest))
    assert peak > 0.1  # a real signal, a good fraction of the window
    # every node: gate, source, stage outputs within 1 % of the comparator-input peak
    assert np.max(np.abs(v["out2"][:n] - ours)) < 0.01 * peak
    assert np.max(np.abs(v["out1"][:n] - res.stage_outputs[0][0, :n])) < 0.01 * np.ptp(
        res.stage_outputs[0][0]
    )
    # the gate tap is the change on the gate's DC bias (its leakage through R_G)
    gate = v["gate"][:n] - det.follower.gate_bias
    assert np.max(np.abs(gate - res.gate_voltage[0, :n])) < 0.01 * np.max(
        np.abs(res.gate_voltage[0])
    )


def test_recovery_after_rail_matches_ngspice():
    det = demo_detector()
    n = int(40 * FS)
    t = np.arange(n) / FS
    # a 1 s half-sine current burst that drives both stages into their rails
    cur = 15e-12 * np.sin(math.pi * (t - 2.0)) * ((t > 2.0) & (t < 3.0))
    s = det.sensor
    gate_sos = signal.zpk2sos(
        *signal.bilinear_zpk([], [-1 / s.electrical_time_constant], 1 / s.gate_capacitance, FS)
    )
    gate = signal.sosfilt(gate_sos, cur)
    ana = det.drive("gate", gate[None, :], FS, ("stages", "comparator"))
    assert ana.pinned[0].any() and ana.pinned[1].any(), "both stages must reach a rail"
    ts, v = run_ngspice(det, cur, FS)
    win = det.window()
    ours = settling_time(t, ana.comparator_input[0], win)
    theirs = settling_time(ts, v["out2"], win)
    assert math.isfinite(ours) and ours > 4.0
    assert ours == pytest.approx(theirs, rel=0.10)


def test_power_up_settling_matches_ngspice():
    det = demo_detector()
    settle = power_up(det, 60.0, FS).settling
    ts, v = run_ngspice(det, None, FS, 60.0, power_up=True)
    theirs = settling_time(ts, v["out2"], det.window())
    assert math.isfinite(settle) and settle > 2.0
    assert settle == pytest.approx(theirs, rel=0.10)


def test_netlist_contents():
    det = demo_detector()
    text = netlist(det, np.zeros(3), FS)
    for token in (
        "RG gate 0 6e+10",
        "RS src 0 47000",
        "NJF(VTO=-1.2",
        "IPYRO 0 gate PWL(",
        ".subckt OPAMP1",
        "RS1F out1 S1n 560000",
        "CS2F out2 S2n 1.5e-08",
        ".end",
    ):
        assert token in text
