"""The two-wire switch's power stage (issue 16) against outside references: ngspice running
the exported netlist of the same circuit (harvested current and storage ripple in each
state; the leakage at which an LED lamp starts to flash), the closed form of a resistive
load's power under leading-edge phase control (Mohan, Undeland & Robbins, Power
Electronics, 2003: P/P_full = 1 − α/π + sin 2α/(2π)), conservation of charge over a steady
cycle, and a design whose chain draws more than the off-state supply giving a verdict that
names the shortfall."""

import dataclasses
import json
import math

import numpy as np
import pytest

from pirchain.analysis.two_wire import bypass_for, glow_threshold, off_state, two_wire_study
from pirchain.chain.power_stage import initial_state, run_power_stage
from pirchain.circuit.netlist import ngspice_available
from pirchain.circuit.power_netlist import run_power_stage_ngspice
from pirchain.circuit.two_wire import Lamp, TwoWireSupply, TwoWireSwitch, conduction_loss
from pirchain.interface.cli import main
from pirchain.interface.demo import demo_design
from pirchain.interface.demo_text import DEMO_TOML

needs_ngspice = pytest.mark.skipif(not ngspice_available(), reason="ngspice not installed")


@needs_ngspice
@pytest.mark.parametrize("on", [False, True], ids=["off", "on"])
def test_harvest_and_ripple_agree_with_ngspice(on):
    # the same circuit in ngspice (power_netlist): 15 mains cycles from a charged storage
    # capacitor, the last 10 compared: mean harvested current (off path + on path) and the
    # storage capacitor's peak-to-peak ripple within 5 % (the tolerance). A small
    # storage capacitor (2.2 µF) makes the ripple millivolts, not nanovolts.
    sw = TwoWireSwitch(storage_capacitance=2.2e-6)
    lamp = Lamp("resistive", 60.0, cold_ratio=1.0)  # a fixed resistance in both
    draw, t_end, t_stat = 30e-6, 0.3, 0.1
    st = initial_state(sw, lamp, hot=True)
    model = run_power_stage(sw, lamp, draw, t_end, on=(0.0, math.inf) if on else
                            (math.inf, math.inf), state=st, stat_from=t_stat)  # fmt: skip
    t, v = run_power_stage_ngspice(sw, lamp, draw, t_end, on=on, max_step=5e-6)
    sel = t >= t_stat
    harvest = np.mean(v["i_off"][sel] + (v["i_on"][sel] if on else 0.0))
    assert model.harvest == pytest.approx(harvest, rel=0.05)
    assert model.ripple == pytest.approx(np.ptp(v["v_store"][sel]), rel=0.05)
    if on:  # a real on state: the triac fires in every half-cycle, late enough to harvest
        assert model.fires == 20 and math.radians(5) < model.alpha < math.radians(40)
        assert model.harvest > 1e-3
    else:
        assert model.fires == 0 and 0.9 * sw.off_current_limit < model.harvest


@pytest.mark.parametrize("alpha_deg", [30.0, 60.0, 80.0])
def test_conduction_angle_loss_matches_the_closed_form(alpha_deg):
    # nothing may flow before firing for the closed form to hold: a 1 MΩ charging path
    # (0.3 mA at most) and a constant filament resistance; the firing voltage set for the angle:
    # V_fire = √2 V sin α. Within 0.5 % of P/P_full (Mohan et al. 2003), at the measured
    # firing angle and at the intended one
    v = 230.0
    alpha = math.radians(alpha_deg)
    sw = TwoWireSwitch(fire_voltage=math.sqrt(2) * v * math.sin(alpha),
                       on_charge_resistance=1e6)  # fmt: skip
    lamp = Lamp("resistive", 100.0, cold_ratio=1.0)
    r_hot = v**2 / lamp.power
    run = run_power_stage(sw, lamp, 0.0, 0.2, on=(0.0, math.inf), stat_from=0.1,
                          state=initial_state(sw, lamp, hot=True))  # fmt: skip
    full = v**2 / (r_hot + sw.triac_resistance)
    ratio = run.light_power / full
    assert ratio == pytest.approx(conduction_loss(run.alpha), rel=0.005)
    assert ratio == pytest.approx(conduction_loss(alpha), rel=0.005)
    assert run.alpha == pytest.approx(alpha, abs=math.radians(0.5))


@pytest.mark.parametrize("on", [False, True], ids=["off", "on"])
def test_charge_balances_over_a_steady_cycle(on):
    # conservation of charge: over one mains cycle in steady state, the charge into the
    # storage capacitor equals what the chain draws plus what the zener shunts plus the
    # capacitor's own change, within 1e-6 of either side; and the state is steady (the
    # capacitor's change is below 1e-6 of the charge through it)
    sw = TwoWireSwitch(storage_capacitance=100e-6)
    lamp = Lamp("resistive", 60.0)
    draw = 30e-6
    schedule = (0.0, math.inf) if on else (math.inf, math.inf)
    warm = run_power_stage(sw, lamp, draw, 10.0, on=schedule, keep=10**6,
                           state=initial_state(sw, lamp, hot=on))  # fmt: skip
    cyc = 1.0 / sw.mains.frequency
    one = run_power_stage(sw, lamp, draw, cyc, on=(0.0, math.inf) if on else schedule,
                          state=warm.state, keep=1)  # fmt: skip
    charge_in = one.harvest * one.duration
    change = sw.storage_capacitance * (one.state[0] - warm.state[0])
    charge_out = (one.draw + one.zener) * one.duration + change
    assert charge_in == pytest.approx(charge_out, rel=1e-6)
    assert abs(change) < 1e-6 * charge_in


@needs_ngspice
def test_led_glow_threshold_agrees_with_ngspice():
    # an LED lamp with a 470 kΩ bleeder: the model's cycle-averaged threshold X (the
    # regulator current at which the lamp's input capacitor reaches its driver's start
    # voltage) against ngspice running the same circuit: at 0.95 X the driver never starts,
    # at 1.05 X it does (starts at 120 V, empties the capacitor to 50 V): X ± 5 %
    sw = TwoWireSwitch(storage_capacitance=22e-6)
    lamp = Lamp("led", 7.0, input_capacitance=1e-6, bleeder=470e3)
    x = glow_threshold(sw, lamp, sw.mains.voltage)
    assert 1e-4 < x < 1e-3  # a bleeder of this size carries a few hundred µA at 120 V
    started = []
    for f in (0.95, 1.05):
        s = dataclasses.replace(sw, off_current_limit=f * x)
        _, v = run_power_stage_ngspice(s, lamp, 20e-6, 1.5, v_cap=0.8 * lamp.start_voltage,
                                       max_step=10e-6)  # fmt: skip
        vc = v["v_cap"]
        started.append(vc.max() > lamp.start_voltage - 0.5 and vc[-vc.size // 4 :].min() < 100)
    assert started == [False, True]


def test_an_led_lamp_without_bleeder_flashes_and_with_one_does_not():
    # common practice: the leakage charges an LED lamp's input capacitor until its driver
    # starts; a bleeder that carries more than the leakage at the start voltage keeps it
    # dark. The flash interval is at least the charge time C (V_start − V_stop) / I_lim
    sw = TwoWireSwitch()
    bare, bled = Lamp("led", 9.0), Lamp("led", 9.0, bleeder=470e3)
    a, b = off_state(sw, bare, 20e-6), off_state(sw, bled, 20e-6)
    assert a.glow == "flashes" and b.glow == "none"
    charge = bare.input_capacitance * (bare.start_voltage - bare.stop_voltage)
    assert a.flash_interval >= charge / sw.off_current_limit
    assert b.settles_at < bled.start_voltage
    # the bleeder's equilibrium: the leakage into the capacitor equals V*/R_b, and the
    # switch still harvests what flows
    assert b.harvest == pytest.approx(b.settles_at / bled.bleeder, rel=0.1)


def _two_wire_design(**switch):
    d = demo_design()
    tw = TwoWireSupply(TwoWireSwitch(**switch), (Lamp("resistive", 60.0),), table_powers=())
    return dataclasses.replace(d, two_wire=tw)


def test_a_chain_drawing_more_than_the_off_state_supply_gets_a_verdict_naming_it():
    # the demo's chain draws 66 µA (its supply budget); a 20 µA regulator (common practice
    # for such switches) cannot power it: the study's first finding says so, with the
    # numbers, and the lamp's row fails for it
    d = _two_wire_design(off_current_limit=20e-6)
    study = two_wire_study(d)
    draw = d.operating.supply_budget().total
    first = study.verdicts[0]
    assert first.startswith("OFF-STATE SHORTFALL")
    short = draw - study.rows[0].off.harvest
    assert f"{short * 1e6:.1f} µA short" in first and f"{draw * 1e6:.1f} µA" in first
    assert not study.rows[0].works
    assert not math.isfinite(study.storage[0])  # no capacitor can carry a steady shortfall


def test_two_wire_command_json_and_refusals(tmp_path, capsys):
    path = tmp_path / "tw.toml"
    path.write_text(DEMO_TOML + "\n[two_wire]\noff_current_limit = \"20u\"\n"
                    "table_powers = [5]\n", encoding="utf-8")  # fmt: skip
    assert main(["two-wire", str(path), "--json"]) == 0
    data = json.loads(capsys.readouterr().out)
    assert data["verdicts"][0].startswith("OFF-STATE SHORTFALL")
    assert "hazardous voltage" in data["caution"]
    assert data["lamps"][0]["off_margin_a"] < 0
    assert main(["two-wire"]) == 2  # the demo has no [two_wire] section: one line
    err = capsys.readouterr().err
    assert "two_wire" in err and err.count("\n") == 1
    path.write_text(DEMO_TOML + "\n[two_wire]\nfire_voltage = 5\n", encoding="utf-8")
    assert main(["check", str(path)]) == 2
    assert "two_wire.fire_voltage" in capsys.readouterr().err


def test_the_recommended_bypass_keeps_a_flashing_lamp_dark():
    # in the series loop the leakage I_lim flows through a bypass R across the lamp while
    # I_lim R is below the lamp's capacitor voltage plus its bridge drops (Ohm's law), so a
    # bypass of at most V_start / (2 I_lim) holds the capacitor below the driver's start
    sw = TwoWireSwitch(off_current_limit=45e-6)
    lamp = Lamp("led", 7.0, input_capacitance=3.3e-6)
    assert off_state(sw, lamp, 10e-6).glow == "flashes"
    r = bypass_for(lamp, sw)
    assert r <= 0.5 * lamp.start_voltage / sw.off_current_limit
    fixed = off_state(sw, dataclasses.replace(lamp, bypass=r), 10e-6)
    assert fixed.glow == "none"
    # it settles near I_lim R = half the start voltage (within the cycle-averaged model's
    # grid of 48 capacitor voltages, 7 V apart here)
    assert fixed.settles_at < 0.6 * lamp.start_voltage
    assert fixed.harvest >= 0.9 * sw.off_current_limit  # the switch still gets its supply
