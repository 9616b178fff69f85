"""Choose the JFET source resistor and the first coupling capacitor for a two-wire budget.

Scenario (invented): the "Wren-1" two-wire hallway switch has no neutral and lives on about
30 µA while the lamp is off. Starting from the demo chain with nanopower op-amps and
high-value dividers, pick the smallest source resistor R_S that keeps the whole budget under
30 µA, then the largest first-stage C1 (lowest low-frequency corner) that still warms up in
under 30 s.
"""

from __future__ import annotations

import dataclasses
import warnings

from pirchain.analysis.power_up import power_up
from pirchain.circuit.comparator import LadderWindow, WindowComparator
from pirchain.circuit.opamp import OpAmp
from pirchain.circuit.supply import PowerSupply
from pirchain.errors import ValidityWarning
from pirchain.interface.demo import demo_detector

BUDGET = 30e-6


def wren_detector(r_s: float = 47e3, c1: float = 22e-6):
    base = demo_detector()
    amp = OpAmp(gbw=10e3, v_low=0.02, v_high=3.28, quiescent_current=1.0e-6, e_n=200e-9, i_n=1e-15)
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
    )


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
    return {"rows": rows, "chosen_rs": chosen_rs, "settle": settle_rows, "c1": best[0]}


if __name__ == "__main__":
    main()
