"""Whole-chain behaviour: supply budget (Ohm's law per part; docs/references.md: a two-wire
switch lives on tens of µA, common practice), rest levels and end-to-end detection."""

import dataclasses

import numpy as np
import pytest

from pirchain.circuit.supply import PowerSupply
from pirchain.errors import ValidityWarning
from pirchain.interface.demo import demo_detector, demo_environment
from pirchain.physics.scene import adult, tangential_path, walks_from_paths


def test_supply_budget_per_part_and_sum():
    det = demo_detector()
    b = det.supply_budget()
    items = dict(b.items)
    assert items["JFET follower drain current"] == pytest.approx(det.follower.offset / 47e3)
    assert items["reference divider"] == pytest.approx(3.3 / 2e6)
    assert items["comparator window divider"] == pytest.approx(3.3 / 2.47e6)
    assert sum(1 for k in items if k.startswith("op-amp")) == 2
    assert b.total == pytest.approx(sum(items.values()), rel=1e-12)
    assert not b.exceeds_limit
    assert "total" in b.table()


def test_supply_budget_warns_above_two_wire_limit():
    det = dataclasses.replace(demo_detector(), supply=PowerSupply(3.3, 1e6, 1e6, limit=20e-6))
    with pytest.warns(ValidityWarning, match="exceeds the limit"):
        b = det.supply_budget()
    assert b.exceeds_limit


def test_rest_levels_and_window():
    det = demo_detector()
    levels = det.rest_levels()
    assert levels[0] == pytest.approx(det.follower.offset)
    # Horowitz & Hill, op-amp DC analysis with the offset at + and C1's leakage resistance
    # R_L as the gain leg at DC: non-inverting v_out = v_− + (v_− − v_ref) Rf/(R1 + R_L),
    # v_− = v_in + V_os; inverting v_out = v_− − (v_in − v_−) Rf/(R1 + R_L), v_− = v_ref + V_os
    s1, s2 = det.stages
    vm = levels[0] + s1.opamp.offset
    assert levels[1] == pytest.approx(vm + (vm - s1.v_ref) * s1.rf / (s1.r1 + s1.c1_leakage))
    vm = s2.v_ref + s2.opamp.offset
    assert levels[2] == pytest.approx(vm - (levels[1] - vm) * s2.rf / (s2.r1 + s2.c1_leakage))
    bare = [
        dataclasses.replace(st, c1_leakage=None, opamp=dataclasses.replace(st.opamp, offset=0.0))
        for st in det.stages
    ]
    plain = dataclasses.replace(det, stages=tuple(bare)).rest_levels()
    assert plain[1] == pytest.approx(plain[0])  # non-inverting stage: DC gain 1
    assert plain[2] == pytest.approx(1.65)  # AC-coupled inverting stage rests at its v_ref
    lo, hi = det.window()
    assert lo < levels[-1] < hi


def test_detection_near_but_not_far():
    det = demo_detector()
    paths = [tangential_path(d, 0.0, 1.0, length=6.0) for d in (4.0, 8.0, 60.0)]
    res = det.simulate(adult(), demo_environment(), walks_from_paths(paths, 10.0, 100.0))
    np.testing.assert_array_equal(res.detected, [True, True, False])
    # the comparator input of the far walk stays inside the window
    far = res.comparator_input[2]
    assert np.all((far > res.window[0]) & (far < res.window[1]))


def test_chain_transfer_function_is_product_of_stages():
    det = demo_detector()
    f = 1.0
    h = det.transfer_function(gbw=False)(2j * np.pi * f)
    prod = det.sensor.transfer_function()(2j * np.pi * f) * det.follower.gain
    for st in det.stages:
        prod *= st.transfer_function()(2j * np.pi * f)
    assert h == pytest.approx(prod, rel=1e-12)


def test_minor_motion_arm_end_to_end():
    # NEMA WD 7 minor-motion target (76 × 76 × 381 mm arm, 90°/s) in front of the demo unit:
    # a stationary person's swinging arm alone triggers it at 3 m
    from pirchain.physics.scene import Path, minor_motion_arm

    det = demo_detector()
    walks = walks_from_paths([Path(((3.0, 0.0),), 1.0), Path(((40.0, 0.0),), 1.0)], 6.0, 100.0)
    res = det.simulate(minor_motion_arm(), demo_environment(), walks)
    np.testing.assert_array_equal(res.detected, [True, False])
    assert np.all(np.isfinite(res.gate_voltage))
