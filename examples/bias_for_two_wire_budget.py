"""Choose the JFET source resistor and the first coupling capacitor for a two-wire budget.

Scenario (invented): the "Wren-1" two-wire hallway switch has no neutral and lives on about
30 µA while the lamp is off. Starting from the demo chain with nanopower op-amps and
high-value dividers, pick the smallest source resistor R_S that keeps the whole budget under
30 µA, then the largest first-stage C1 (lowest low-frequency corner) that still warms up in
under 30 s. Last, the trade the budget is about: the range at one false trigger per year
(threshold set for that rate, a still hallway with no draught) against the supply current,
for three op-amps of different supply current (invented datasheet-style figures: the lower
the current, the higher the white noise and its 1/f corner) and three source resistors.
"""

from __future__ import annotations

import dataclasses
import warnings

from pirchain.analysis.detection_range import detection_range
from pirchain.analysis.false_triggers import YEAR, analytic_rate, threshold_for_rate, with_threshold
from pirchain.analysis.power_up import power_up
from pirchain.circuit.comparator import LadderWindow, WindowComparator
from pirchain.circuit.opamp import OpAmp
from pirchain.circuit.supply import PowerSupply
from pirchain.errors import ValidityWarning
from pirchain.interface.demo import demo_detector, demo_environment
from pirchain.physics.scene import adult
from pirchain.settings import AnalysisSettings

BUDGET = 30e-6
# invented op-amps, datasheet style: supply current, GBW, white e_n and its 1/f corner
OPAMPS = {
    0.35e-6: OpAmp(gbw=4e3, v_low=0.02, v_high=3.28, quiescent_current=0.35e-6, e_n=600e-9,
                   i_n=1e-15, e_n_corner=100.0),
    1.0e-6: OpAmp(gbw=10e3, v_low=0.02, v_high=3.28, quiescent_current=1.0e-6, e_n=250e-9,
                  i_n=1e-15, e_n_corner=40.0),
    7.0e-6: OpAmp(gbw=100e3, v_low=0.02, v_high=3.28, quiescent_current=7.0e-6, e_n=60e-9,
                  i_n=1e-15, e_n_corner=20.0),
}  # fmt: skip


def wren_detector(r_s: float = 47e3, c1: float = 22e-6, amp_current: float = 1.0e-6):
    base = demo_detector()
    amp = OPAMPS[amp_current]
    supply = PowerSupply(3.3, 10e6, 10e6, logic_current=2e-6, limit=BUDGET)
    st1 = dataclasses.replace(base.stages[0], opamp=amp, c1=c1)
    st2 = dataclasses.replace(base.stages[1], opamp=amp, v_ref=supply.reference)
    return dataclasses.replace(
        base,
        name="Wren-1 two-wire switch (example)",
        supply=supply,
        stages=(st1, st2),
        follower=dataclasses.replace(base.follower, source_resistance=r_s),
        comparator=WindowComparator(LadderWindow(3.3, 10e6, 4.7e6, 10e6), 0.02),
        logic=dataclasses.replace(base.logic, daylight=None),
    ).at_temperature(demo_environment().air_k)


def main() -> dict:
    rows = []
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", ValidityWarning)
        for r_s in (22e3, 47e3, 100e3, 220e3, 470e3):
            det = wren_detector(r_s)
            b = det.supply_budget()
            rows.append(
                (r_s, det.follower.offset, det.follower.drain_current, det.follower.gain, b.total)
            )
    print(f"{'R_S':>8} {'V_S [V]':>8} {'I_D [uA]':>9} {'gain':>7} {'total [uA]':>10}")
    for r_s, vs, i_d, g, tot in rows:
        print(f"{r_s:8.0f} {vs:8.4f} {i_d * 1e6:9.3f} {g:7.4f} {tot * 1e6:10.3f}")
    ok = [r for r in rows if r[4] <= BUDGET]
    chosen_rs = ok[0][0]
    print(f"chosen_source_resistor: {chosen_rs:.0f}")
    print(f"chosen_drain_current: {ok[0][2]:.6e}")
    print(f"chosen_source_voltage: {ok[0][1]:.6f}")
    print(f"gate_bias: {wren_detector(chosen_rs).follower.gate_bias:.6e}")
    print(f"chosen_total_current: {ok[0][4]:.6e}")
    settle_rows = []
    for c1 in (4.7e-6, 10e-6, 22e-6, 47e-6):
        det = wren_detector(chosen_rs, c1)
        settle = power_up(det, 120.0, 50.0).settling
        settle_rows.append((c1, det.stages[0].low_corner, settle))
        print(
            f"C1 {c1 * 1e6:5.1f} uF: f_L {det.stages[0].low_corner:.3f} Hz, warm-up {settle:.1f} s"
        )
    fit = [r for r in settle_rows if r[2] <= 30.0]
    best = max(fit, key=lambda r: r[0])
    print(f"chosen_c1: {best[0]:.3e}")
    print(f"chosen_low_corner: {best[1]:.6f}")
    print(f"chosen_warm_up: {best[2]:.3f}")
    trade = trade_rows(best[0])
    print(f"{'op-amp':>8} {'R_S':>8} {'supply uA':>9} {'sigma mV':>8} {'thr mV':>7} {'range m':>7}")
    for amp_i, r_s, total, sigma, th, rng in trade:
        print(
            f"trade: {amp_i * 1e6:6.2f} {r_s:8.0f} {total * 1e6:9.2f} {sigma * 1e3:8.3f} "
            f"{th * 1e3:7.2f} {rng:7.2f}"
        )
    return {
        "rows": rows, "chosen_rs": chosen_rs, "settle": settle_rows, "c1": best[0],
        "trade": trade,
    }  # fmt: skip


def trade_rows(c1: float):
    """(op-amp current, R_S, supply current, noise rms, threshold for 1/year, range) rows."""
    env = demo_environment()
    settings = AnalysisSettings(noise=False, trials=4, d_min=2.0, d_max=40.0, step=0.5, refine=5)
    out = []
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", ValidityWarning)
        for amp_i in OPAMPS:
            for r_s in (47e3, 100e3, 220e3):
                det = wren_detector(r_s, c1, amp_i)
                th, _ = threshold_for_rate(det, env, 1.0 / YEAR)
                sigma = analytic_rate(det, env).sigma
                at = with_threshold(det, th)
                rng = detection_range(at, adult(), env, 0.0, 1.0, "tangential", settings).range
                out.append((amp_i, r_s, det.supply_budget().total, sigma, th, rng))
    return out


if __name__ == "__main__":
    main()
