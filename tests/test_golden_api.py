"""Results unchanged through the Python API (issue 11): the analyses that the command line
does not reach — outcomes of a mixed batch with railing walks, a swinging-arm target,
power-up, ambient ramp and HVAC responses, Monte Carlo counts and coverage maps — against
the values the code before the single-engine rework recorded in tests/golden/api.json
(its script: tests/golden/api_before.py.txt, written against the old API), re-recorded
once by tests/golden/make_api.py for the parts model of issue 13 (gate leakage, offsets,
C1 leakage and flicker noise in the demo: power-up settling 11.80 → 11.98 s, the 3 K/min ramp
peak 7.336 → 7.349 mV, detections and Monte Carlo counts unchanged; tests/test_golden.py
lists the changes).

Source of the values: tests/golden/api.json, recorded by our own earlier code (not an
outside reference; the outside checks are those of the other test files).

Comparison: counts and decisions exactly; voltages within 1e-9 V.
"""

import json
import math
import os
import warnings

import numpy as np
import pytest
from walk_sets import mixed_walks

from pirchain.analysis.coverage import top_view
from pirchain.analysis.drift import hvac_response, ramp_response
from pirchain.analysis.false_triggers import monte_carlo_rate
from pirchain.analysis.power_up import power_up
from pirchain.errors import ValidityWarning
from pirchain.interface.demo import demo_design, demo_detector, demo_environment
from pirchain.physics.disturbance import AmbientRamp, HvacCycle
from pirchain.physics.scene import (
    Path,
    adult,
    child,
    minor_motion_arm,
    walks_from_paths,
)
from pirchain.settings import AnalysisSettings

GOLD = json.load(
    open(os.path.join(os.path.dirname(__file__), "golden", "api.json"), encoding="utf-8")
)
DET, ENV = demo_detector(), demo_environment()


@pytest.fixture(autouse=True)
def quiet():
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", ValidityWarning)
        yield


def test_mixed_batch_outcomes():
    o = DET.outcomes(adult(), ENV, mixed_walks(120))
    g = GOLD["mixed"]
    assert o.detected.tolist() == g["detected"]
    first = [None if math.isnan(x) else x for x in o.first_on.tolist()]
    assert first == g["first_on"]
    assert (o.pulses.tolist(), o.triggers.tolist(), o.turn_ons.tolist()) == (
        g["pulses"], g["triggers"], g["turn_ons"],
    )  # fmt: skip
    np.testing.assert_allclose(o.peak, g["peak"], rtol=0, atol=1e-9)
    o = DET.outcomes(child(), ENV, mixed_walks(40, seed=9))
    np.testing.assert_allclose(o.peak, GOLD["mixed_child_peak"], rtol=0, atol=1e-9)


def test_swinging_arm():
    walks = walks_from_paths([Path(((3.0, 0.0),), 1.0), Path(((6.0, 1.0),), 1.0)], 6.0, 100.0)
    o = DET.outcomes(minor_motion_arm(), ENV, walks)
    assert o.detected.tolist() == GOLD["arm"]["detected"]
    assert o.pulses.tolist() == GOLD["arm"]["pulses"]
    np.testing.assert_allclose(o.peak, GOLD["arm"]["peak"], rtol=0, atol=1e-9)


def test_power_up():
    pu = power_up(DET, 60.0, 50.0)
    g = GOLD["power_up"]
    assert pu.settling == g["settle"]
    np.testing.assert_allclose(pu.run.comparator_input[0, ::25], g["v"], rtol=0, atol=1e-9)
    np.testing.assert_allclose(pu.run.stage_outputs[0][0, ::25], g["s1"], rtol=0, atol=1e-9)


def test_ramp_and_hvac_responses():
    r = ramp_response(DET, ENV, AmbientRamp(3.0, 5.0, 120.0))
    assert r.turn_ons == GOLD["ramp"]["turn_ons"]
    assert r.peak_excursion == pytest.approx(GOLD["ramp"]["peak"], abs=1e-9)
    np.testing.assert_allclose(r.comparator_input[::40], GOLD["ramp"]["v"], rtol=0, atol=1e-9)
    h = hvac_response(DET, ENV, HvacCycle(), cycles=2)
    assert h.turn_ons == GOLD["hvac"]["turn_ons"]
    assert h.peak_excursion == pytest.approx(GOLD["hvac"]["peak"], abs=1e-9)


def test_monte_carlo_counts():
    mc = monte_carlo_rate(DET, ENV, 4 * 3600.0, demo_design().draught, seed=3, streams=4)
    assert (mc.pulses, mc.alarms, mc.duration) == (
        GOLD["mc"]["pulses"], GOLD["mc"]["alarms"], GOLD["mc"]["duration"],
    )  # fmt: skip


@pytest.mark.parametrize("kind,noise", [("tangential", True), ("radial", False)])
def test_coverage_maps(kind, noise):
    s = AnalysisSettings(
        coverage_cell=1.5, coverage_x_max=9.0, coverage_trials=2, coverage_speed=1.22, seed=4,
        noise=noise,
    )  # fmt: skip
    m = top_view(DET, adult(), ENV, kind, s)
    g = GOLD["coverage_noise" if noise else "coverage_radial"]
    assert m.walks == g["walks"]
    assert m.probability.ravel().tolist() == g["p"]
