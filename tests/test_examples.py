"""Every example runs as a user would run it, and its printed numbers are checked against
outside relations: the Shockley square law (Sedra & Smith), the RC corner 1/(2πRC)
(Horowitz & Hill), the ladder divider (Ohm's law), and the stated Poisson counting
approximation (factor 3, see tests/test_false_triggers.py)."""

import json
import math
import os
import re
import subprocess
import sys

import pytest

ROOT = os.path.dirname(os.path.dirname(os.path.abspath(__file__)))


def run(name):
    proc = subprocess.run(
        [sys.executable, os.path.join(ROOT, "examples", name)],
        capture_output=True,
        text=True,
        check=False,
        timeout=600,
        env=dict(os.environ, MPLBACKEND="Agg"),
    )
    assert proc.returncode == 0, proc.stderr
    return proc.stdout


def values(out):
    return {k: v.split() for k, v in re.findall(r"^(\w+): (.+)$", out, flags=re.M)}


def test_bias_for_two_wire_budget():
    out = run("bias_for_two_wire_budget.py")
    v = values(out)
    r_s, i_d, v_s = (
        float(v[k][0])
        for k in ("chosen_source_resistor", "chosen_drain_current", "chosen_source_voltage")
    )
    # Shockley (Sedra & Smith): R_S I_DSS (1 + (V_G − V_S)/|V_P|)² = V_S with the demo JFET
    # (400 µA, 1.2 V at 25 °C; the example's parts are at the demo room's 21 °C: I_DSS ∝ T^−1.5,
    # |V_P| − 2.2 mV/K, common practice) and the gate lifted by its leakage through R_G
    v_g = float(v["gate_bias"][0])
    idss, vp = 400e-6 * (294.15 / 298.15) ** -1.5, 1.2 - 4 * 2.2e-3
    assert r_s * idss * (1 + (v_g - v_s) / vp) ** 2 == pytest.approx(v_s, rel=1e-4)
    assert i_d == pytest.approx(v_s / r_s, rel=1e-5)
    assert float(v["chosen_total_current"][0]) <= 30e-6
    # the table row just below the chosen R_S exceeds the budget
    rows = re.findall(r"^\s*(\d+)\s+[\d.]+\s+[\d.]+\s+[\d.]+\s+([\d.]+)$", out, flags=re.M)
    totals = {float(a): float(b) for a, b in rows}
    smaller = [r for r in totals if r < r_s]
    assert smaller and all(totals[r] > 30.0 for r in smaller)
    c1 = float(v["chosen_c1"][0])
    assert float(v["chosen_low_corner"][0]) == pytest.approx(
        # R1 = 10 kΩ at 25 °C with the demo's +100 ppm/K, at the room's 21 °C
        1 / (2 * math.pi * 10e3 * (1 - 4 * 100e-6) * c1),
        rel=1e-5,
    )
    assert float(v["chosen_warm_up"][0]) <= 30.0
    # the trade: at every source resistor, the op-amp that draws more current (lower white
    # noise and 1/f corner) gives less comparator-input noise and a longer range at one false
    # trigger per year (issue 13: the trade must not come out flat); direction only
    trade = [tuple(map(float, r)) for r in re.findall(
        r"^trade:\s+([\d.]+)\s+([\d.]+)\s+([\d.]+)\s+([\d.]+)\s+([\d.]+)\s+([\d.]+)$",
        out, flags=re.M)]  # fmt: skip
    assert len(trade) == 9
    for r_s in {t[1] for t in trade}:
        col = sorted((t for t in trade if t[1] == r_s), key=lambda t: t[0])
        sigma, rng, supply = [t[3] for t in col], [t[5] for t in col], [t[2] for t in col]
        assert supply[0] < supply[1] < supply[2]
        assert sigma[0] > sigma[1] > sigma[2]
        assert rng[0] < rng[1] < rng[2]


def test_wall_range_vs_sensitivity():
    out = run("wall_range_vs_sensitivity.py")
    rows = re.findall(
        r"sensitivity\s+(\d+) ohm: threshold ([\d.]+) V, range ([\d.]+) m, "
        r"noise-free ([\d.]+) m",
        out,
    )
    assert len(rows) == 4
    prev = math.inf
    for r, th, _, free in rows:
        r, th, free = float(r), float(th), float(free)
        assert th == pytest.approx(1.65 * r / (2e6 + r), rel=1e-5)  # ladder, Ohm's law
        assert free <= prev + 1e-9  # range falls as the threshold rises
        prev = free


def test_ceiling_hvac_false_triggers():
    out = run("ceiling_hvac_false_triggers.py")
    rows = re.findall(
        r"^(still air|diffuser): noise ([\d.]+) mV rms, draught share ([\d.]+), "
        r"1/year threshold ([\d.]+) mV, sensitivity resistor (\d+) ohm",
        out,
        re.M,
    )
    assert [r[0] for r in rows] == ["still air", "diffuser"]
    still, diff = ([float(x) for x in r[1:]] for r in rows)
    assert diff[0] > still[0] and diff[1] > 0.5 and still[1] == 0.0
    assert diff[2] > still[2]
    for _, _, th_mv, r_sens in (still, diff):
        th = th_mv * 1e-3  # ladder 1 MΩ / R / 1 MΩ on 3.3 V: R = 2 th (2 MΩ)/(3.3 − 2 th)
        assert r_sens == pytest.approx(2 * th * 2e6 / (3.3 - 2 * th), rel=1e-3)
    v = values(out)
    analytic = float(v["analytic_alarms_per_day"][0])
    lo, hi = (float(x) for x in v["mc_interval_per_day"])
    assert int(v["mc_turn_ons"][0]) > 50
    assert lo / 3 < analytic < 3 * hi


def test_bench_calibration_worked_example(tmp_path):
    # the invented bench data of examples/bench_calibration (made by the model with seeded
    # noise, a 500 Hz scope in mV with a -2 s start, quantisation and a DC level): the fit
    # must find the hidden truth the generator states. Each fitted value within 1.5 × its
    # own 95 % half-width of the truth (about 3 σ: a single draw may fall just outside a
    # 95 % interval; the coverage over seeds is tests/test_calibration.py's)
    proc = subprocess.run(
        [sys.executable, os.path.join(ROOT, "examples", "bench_calibration", "make_bench_data.py"),
         str(tmp_path)], capture_output=True, text=True, check=False, timeout=600,
    )  # fmt: skip
    assert proc.returncode == 0, proc.stderr
    cal = tmp_path / "calibrated.toml"
    proc = subprocess.run(
        [sys.executable, "-m", "pirchain.interface.entry", "bench-fit",
         "--capture", str(tmp_path / "walk.csv"), "--node", "comparator", "--scale", "1m",
         "--distance", "14", "--quiet", str(tmp_path / "quiet.csv"),
         "--walk-results", str(tmp_path / "walks.csv"), "--write", str(cal), "--json"],
        capture_output=True, text=True, check=False, timeout=600,
        env=dict(os.environ, MPLBACKEND="Agg"),
    )  # fmt: skip
    assert proc.returncode == 0, proc.stderr
    out = json.loads(proc.stdout)

    def near(entry, truth):
        half = (entry["high_95"] - entry["low_95"]) / 2
        return abs(entry["value"] - truth) <= 1.5 * half

    wave = out["waveform"]["parameters"]
    # the generator's truth: gain 0.8, τ_T 420 ms, the demo file's mismatch 0.05
    assert near(wave["gain"], 0.8) and near(wave["thermal_time_constant"], 0.42)
    assert near(wave["mismatch"], 0.05)
    assert near(wave["offset"], 0.004)  # the channel's DC level
    quiet = out["quiet"]["parameters"]  # white × 1.5, draught 14 mK rms with τ = 3 s
    assert near(quiet["white"], 1.5) and near(quiet["draught"], 0.014**2)
    assert near(quiet["tau"], 3.0)
    walks = out["walk_tests"]  # judged on the waveform-calibrated design: 0.8 / 0.8 ≈ 1
    assert walks["scale_low_95"] <= 1.0 / wave["gain"]["value"] * 0.8 <= walks["scale_high_95"]
    text = cal.read_text(encoding="utf-8")
    assert "fitted: " in text and "[calibration]" in text
    proc = subprocess.run([sys.executable, "-m", "pirchain.interface.entry", "check", str(cal)],
                          capture_output=True, text=True, check=False, timeout=600)  # fmt: skip
    assert proc.returncode == 0, proc.stderr


def test_two_wire_corridor_switch_example():
    # the invented corridor switch: its chain draws what its supply budget says (the sum of
    # its parts, Ohm's law for the dividers), its bare LED bulb flashes while off at an
    # interval no shorter than the charge time C (V_start − V_stop) / I_lim of its input
    # capacitor (common practice: the leakage charges it), the finding names a bypass, and
    # the recommended current limit lies inside the window the study states
    path = os.path.join(ROOT, "examples", "two_wire_corridor_switch.toml")
    proc = subprocess.run(
        [sys.executable, "-m", "pirchain.interface.entry", "two-wire", path, "--json"],
        capture_output=True, text=True, check=False, timeout=600,
        env=dict(os.environ, MPLBACKEND="Agg"),
    )  # fmt: skip
    assert proc.returncode == 0, proc.stderr
    data = json.loads(proc.stdout)
    from pirchain.interface.design_file import load

    d = load(path)
    assert data["chain_draw_a"] == pytest.approx(d.operating.supply_budget().total, rel=1e-12)
    bulb = data["lamps"][0]
    assert bulb["design_lamp"] and bulb["glow"] == "flashes"
    lamp, sw = d.two_wire.lamps[0], d.two_wire.switch
    charge_time = lamp.input_capacitance * (lamp.start_voltage - lamp.stop_voltage)
    assert bulb["flash_interval_s"] >= charge_time / sw.off_current_limit
    assert any("bypass of at most" in v for v in data["verdicts"])
    lo, hi = data["current_limit_low_a"], data["current_limit_high_a"]
    assert lo <= data["current_limit_recommended_a"] <= hi
    assert "hazardous voltage" in data["caution"]
