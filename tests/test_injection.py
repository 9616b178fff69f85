"""Signals injected at any node through the engine (issue 19, part 3), and power-up with a
stated gate leakage and gate charge.

Outside references: ngspice (Debian package, a general-purpose circuit simulator) on
pirchain's exported netlist, where the element current is a current source into the gate
node and GMIN is set explicitly (``.options gmin=1e-20``: the default 1e-12 S across the
junctions would leak pA into a 60 GΩ gate node); ``scipy.signal.lsim`` of a stage's own
transfer function (python-control), and the JFET square law (Sedra & Smith, *Microelectronic
Circuits*: I_D = I_DSS (1 − V_GS/V_P)², the follower's source voltage) for the gate
leakage's lift I_G R_G.
"""

from __future__ import annotations

import dataclasses
import math

import numpy as np
import pytest
from scipy import signal

from pirchain.analysis.power_up import power_up
from pirchain.circuit.netlist import netlist, run_ngspice
from pirchain.errors import DesignError
from pirchain.interface.demo import demo_design
from pirchain.physics.scene import tangential_path, walks_from_paths
from pirchain.physics.sensor import gate_current

FS = 100.0


@pytest.fixture(scope="module")
def det():
    return demo_design().operating


def _bench_current(n, amplitude=1.2e-13):
    """A two-lobed current burst like a person crossing a pair of beams [A]."""
    t = np.arange(n) / FS
    env = np.exp(-(((t - 3.0) / 0.6) ** 2))
    return amplitude * env * np.sin(2 * np.pi * 0.8 * (t - 3.0))


def test_element_current_through_the_engine_agrees_with_ngspice(det):
    # issue 19, item 3: a current source at the gate in ngspice against the engine's
    # element-current node, every node within 1 % of its peak, gmin set explicitly
    n = int(10 * FS)
    cur = _bench_current(n)
    ours = det.drive("element_current", cur[None, :], FS, ("gate", "source", "stages",
                                                            "comparator"))  # fmt: skip
    assert not any(p.any() for p in ours.pinned), "this injection must stay linear"
    text = netlist(det, cur, FS)
    assert "gmin=1e-20" in text and "IPYRO 0 gate PWL" in text
    t, v = run_ngspice(det, cur, FS)
    k = min(t.size, n)
    rest = det.rest_levels()[-1]
    peak = np.max(np.abs(ours.comparator_input[0] - rest))
    assert peak > 0.05  # a real signal at the comparator
    assert np.max(np.abs(v["out2"][:k] - ours.comparator_input[0, :k])) < 0.01 * peak
    gate = v["gate"][:k] - det.follower.gate_bias
    g_peak = np.max(np.abs(ours.gate_voltage[0]))
    assert np.max(np.abs(gate - ours.gate_voltage[0, :k])) < 0.01 * g_peak


def test_element_current_and_equivalent_power_routes_agree(det):
    # the bilinear transform of V/P is that of (i/P)(V/i): power → current (the sensor's
    # current responsivity) then current → gate gives the power route's gate voltage
    walks = walks_from_paths([tangential_path(12.0, 0.0, 1.0, 6.0)], 10.0, FS)
    d = demo_design()
    run = det.run(d.target, d.environment, walks, ("equivalent_power", "gate", "comparator",
                                                   "events"))  # fmt: skip
    cur = gate_current(det.sensor, run.equivalent_power, FS)
    via = det.drive("element_current", cur, FS, ("gate", "comparator", "events"))
    scale = np.max(np.abs(run.gate_voltage))
    np.testing.assert_allclose(via.gate_voltage, run.gate_voltage, atol=1e-9 * scale)
    np.testing.assert_allclose(via.comparator_input, run.comparator_input, atol=1e-9)
    assert via.decisions[0].detected == run.decisions[0].detected
    # a steady current lifts the gate by i R_G (Ohm's law through R_G; C_gate charged)
    dc = det.drive("element_current", np.full((1, 50), 2e-13), FS, ("gate",))
    np.testing.assert_allclose(dc.gate_voltage, 2e-13 * det.sensor.gate_resistance, rtol=1e-12)


def test_a_stage_input_drive_matches_the_stage_transfer_function(det):
    # a small sine at stage 2's input, steady start: the output is lsim of stage 2's H(s)
    # (scipy) from its steady state, in the linear regime
    n = int(20 * FS)
    t = np.arange(n) / FS
    rest_in = det.rest_levels()[1]
    x = 2e-3 * np.sin(2 * np.pi * 1.0 * t) * (t > 2.0)
    run = det.drive("stage2_input", (rest_in + x)[None, :], FS, ("stages", "comparator"))
    assert np.all(np.isnan(run.stage_outputs[0]))  # nothing computed before the input
    tf = det.stages[1].transfer_function()
    num, den = np.asarray(tf.num[0][0], float), np.asarray(tf.den[0][0], float)
    _, y, _ = signal.lsim((num, den), x, t)
    ours = run.comparator_input[0] - det.rest_levels()[-1]
    assert not run.pinned[1].any()
    assert np.max(np.abs(ours - y)) < 0.01 * np.max(np.abs(y))
    # and the walk's own stage-1 output driven into stage 2 gives the walk's comparator input
    d = demo_design()
    walks = walks_from_paths([tangential_path(9.0, 10.0, 1.0, 6.0)], 10.0, FS)
    full = det.run(d.target, d.environment, walks, ("stages", "comparator", "events"))
    again = det.drive("stage2_input", full.stage_outputs[0], FS, ("comparator", "events"))
    np.testing.assert_array_equal(again.comparator_input, full.comparator_input)
    assert again.decisions[0].on_intervals == full.decisions[0].on_intervals


def test_bad_injection_nodes_are_refused(det):
    with pytest.raises(DesignError, match="stage1_input"):
        det.drive("stage7_input", np.zeros((1, 10)), FS)
    with pytest.raises(DesignError, match="node"):
        det.drive("drain", np.zeros((1, 10)), FS)
    with pytest.raises(DesignError, match="taps"):
        det.drive("element_current", np.zeros((1, 10)), FS, ("equivalent_power",))


def test_power_up_with_a_stated_gate_leakage_lifts_the_source_by_the_square_law(det):
    # issue 19, item 3: I_G through R_G lifts the gate by I_G R_G; the source follows by the
    # follower's square law (Sedra & Smith), by its small-signal slope for a small change
    r_g = det.sensor.gate_resistance
    low, high = 0.3e-12, 0.4e-12
    a = power_up(det, 40.0, 20.0, gate_leakage=low)
    b = power_up(det, 40.0, 20.0, gate_leakage=high)
    shift = b.run.source_voltage[0, -1] - a.run.source_voltage[0, -1]
    fol = det.follower
    exact = fol.source_voltage(high * r_g) - fol.source_voltage(low * r_g)
    assert shift == pytest.approx(exact, rel=1e-9)
    assert shift == pytest.approx((high - low) * r_g * fol.gain, rel=0.01)
    # ngspice, power-up with every capacitor (the gate's too) discharged and the netlist's
    # gate leakage source at the stated value: the same settled source voltage
    for leak, ours in ((low, a), (high, b)):
        jfet = dataclasses.replace(det.follower.jfet, gate_leakage=leak)
        d2 = dataclasses.replace(det, follower=dataclasses.replace(det.follower, jfet=jfet))
        assert d2.follower.gate_bias == pytest.approx(leak * r_g)
        ts, v = run_ngspice(d2, None, 20.0, 40.0, power_up=True)
        assert v["src"][-1] == pytest.approx(ours.run.source_voltage[0, -1], abs=2e-4)


def test_power_up_from_a_discharged_gate_charges_it_through_r_g(det):
    # the gate starts at 0 V and charges to its bias I_G R_G with τ_E = R_G C_gate
    up = power_up(det, 20.0, 50.0, initial_gate=0.0)
    fol = det.follower
    src = up.run.source_voltage[0]
    assert src[0] == pytest.approx(fol.source_voltage(0.0), abs=2e-4)
    assert src[-1] == pytest.approx(fol.source_voltage(fol.gate_bias), abs=1e-6)
    tau = det.sensor.electrical_time_constant
    k = int(round(tau * 50.0))
    lift = (src[k] - src[0]) / (src[-1] - src[0])
    assert lift == pytest.approx(1 - math.exp(-1), abs=0.03)  # one time constant: 63 %
    with pytest.raises(DesignError, match="gate_leakage"):
        power_up(det, 20.0, 50.0, gate_leakage=-1e-12)


def test_inject_command_reads_a_bench_file_and_runs_the_same_engine(det, tmp_path, capsys):
    import json

    from pirchain.interface.cli import main

    n = int(10 * FS)
    cur = _bench_current(n)
    t = np.arange(n) / FS
    path = tmp_path / "bench.csv"
    body = "\n".join(f"{a:.4f};{b * 1e12:.9g}" for a, b in zip(t, cur, strict=True))
    path.write_text("# scope export\ntime [s];current [pA]\n" + body + "\n", encoding="utf-8")
    out = tmp_path / "w.csv"
    code = main(["inject", "--signal", str(path), "--node", "element_current", "--scale", "1p",
                 "--tail", "0", "--json", "--csv", str(out)])  # fmt: skip
    assert code == 0
    data = json.loads(capsys.readouterr().out)
    api = det.drive("element_current", cur[None, :], FS, ("comparator", "events"))
    rest = det.rest_levels()[-1]
    peak = float(np.max(np.abs(api.comparator_input[0] - rest)))
    assert data["detected"] == api.decisions[0].detected and data["unit"] == "A"
    assert data["peak_comparator_excursion_v"] == pytest.approx(peak, rel=1e-6)
    assert out.read_text(encoding="utf-8").startswith("time_s,gate_v,source_v,stage1_v")
    # a node the design does not have, and an existing output, are refused in one line
    assert main(["inject", "--signal", str(path), "--node", "stage9_input"]) == 2
    assert main(["inject", "--signal", str(path), "--node", "gate", "--csv", str(out)]) == 2
    err = capsys.readouterr().err
    assert "stage9_input" in err and "--csv" in err
