"""Reliability (docs/validation.md).

Sources: no outside values; the checks are invariants any numerical model must keep
(finite results, no hang, atomic writes, reproducible bytes: common practice).

Extreme but legal inputs give finite results or a ValidityWarning of our own class, never
NaN or a hang; outputs are atomic; the same inputs and seed give byte-identical JSON."""

import dataclasses
import json
import os
import warnings

import numpy as np
import oracles
import pytest

from pirchain.errors import DesignError, ValidityWarning
from pirchain.interface.cli import main
from pirchain.interface.demo import demo_detector, demo_environment
from pirchain.interface.demo_text import DEMO_TOML
from pirchain.interface.output import write_new
from pirchain.physics.scene import adult, radial_path, tangential_path, walks_from_paths
from pirchain.physics.sensor import PyroSensor

ENV = demo_environment()


def run(det, paths, duration, rate=100.0):
    walks = walks_from_paths(paths, duration, rate)
    with warnings.catch_warnings(record=True) as caught:
        warnings.simplefilter("always")
        res = det.simulate(adult(), ENV, walks)
        ref = oracles.chain(det, adult(), ENV, walks)  # the numpy oracles chained
    others = [w for w in caught if not issubclass(w.category, ValidityWarning)]
    assert not others, [str(w.message) for w in others]
    for arr in (
        res.element_power,
        res.gate_voltage,
        res.comparator_input,
        *res.stage_outputs,
        res.outcomes.peak,
    ):
        assert np.all(np.isfinite(arr))
    # the pass agrees with the oracles at the extremes too
    span = np.ptp(res.comparator_input) + 1e-3
    np.testing.assert_allclose(res.comparator_input, ref.comparator_input, atol=1e-9 * span)
    np.testing.assert_array_equal(res.detected, [bool(d.on_intervals) for d in ref.decisions])
    return res, [w for w in caught if issubclass(w.category, ValidityWarning)]


def test_electrical_time_constant_of_1000_s():
    base = demo_detector()
    s = PyroSensor.from_datasheet(5000.0, 0.3, 1000.0, 30e-12)
    # R_G ≈ 5.6e13 Ω: the demo's 0.5 pA leakage would lift the gate 28 V, which is refused
    with pytest.raises(DesignError, match="gate_leakage"):
        dataclasses.replace(base, sensor=s)
    jfet = dataclasses.replace(base.follower.jfet, gate_leakage=1e-14)  # lifts it 0.56 V
    fol = dataclasses.replace(base.follower, jfet=jfet)
    det = dataclasses.replace(base, sensor=s, follower=fol)
    res, _ = run(det, [tangential_path(6.0, 0.0, 1.0)], 10.0)
    assert np.max(np.abs(res.gate_voltage)) > 0


def test_120_db_of_gain():
    base = demo_detector()
    st1 = dataclasses.replace(base.stages[0], rf=9.99e6, cf=1.5e-9)  # × 1000
    st2 = dataclasses.replace(base.stages[1], r1=1e3, rf=1e6)  # × 1000
    det = dataclasses.replace(base, stages=(st1, st2))
    res, _ = run(det, [tangential_path(10.0, 0.0, 1.0)], 8.0)
    assert any(p.any() for p in res.pinned)  # it saturates, and says so in the data


def test_very_slow_walk_and_fast_run():
    det = demo_detector()
    slow, _ = run(det, [tangential_path(5.0, 0.0, 0.05, length=1.0)], 20.0)
    fast, warned = run(
        det, [radial_path(12.0, 1.0, 0.0, 10.0), tangential_path(1.0, 0.0, 10.0)], 3.0
    )
    assert warned and "sample rate" in str(warned[0].message)
    assert slow.gate_voltage.shape == (1, 2000)


def test_one_kilohertz_logic_rate():
    det = demo_detector()
    det = dataclasses.replace(det, logic=dataclasses.replace(det.logic, rate=1000.0))
    res, _ = run(det, [tangential_path(8.0, 0.0, 1.0)], 8.0)
    assert res.detected[0]


def test_interrupted_write_leaves_nothing(tmp_path, monkeypatch):
    target = tmp_path / "report.html"

    def boom(*a, **k):
        raise KeyboardInterrupt

    monkeypatch.setattr(os, "link", boom)
    with pytest.raises(KeyboardInterrupt):
        write_new(str(target), "x" * 10_000)
    assert not target.exists() and os.listdir(tmp_path) == []
    monkeypatch.undo()
    write_new(str(target), "done")
    with pytest.raises(DesignError, match="does not exist yet"):
        write_new(str(target), "again")
    assert target.read_text() == "done"


def test_same_seed_gives_identical_json(tmp_path, capsys):
    small = DEMO_TOML.replace("trials = 36", "trials = 2").replace(
        "bearings = [-50, -30, -15, 0, 15, 30, 50]", "bearings = [0]"
    )
    path = tmp_path / "d.toml"
    path.write_text(small, encoding="utf-8")
    outs = []
    for seed in ("5", "5"):
        assert main(["range", str(path), "--kind", "tangential", "--json", "--seed", seed]) == 0
        assert (
            main(["false-triggers", str(path), "--json", "--mc-hours", "0.2", "--seed", seed]) == 0
        )
        outs.append(capsys.readouterr().out)
    assert outs[0] == outs[1]
    json.loads(outs[0].split("\n}\n")[0] + "\n}")
