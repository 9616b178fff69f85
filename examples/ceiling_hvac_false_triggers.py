"""False triggers of a ceiling unit near an HVAC diffuser.

Scenario (invented): the "Plover-C" ceiling sensor sits 2.7 m up in an open office, 1.5 m
from a supply-air diffuser. The draught moves the temperature of the desks it sees by a few
hundredths of a kelvin. How often does it fire with nobody there, what does a Monte Carlo
of one simulated day say, and which threshold keeps it to one false trigger a year?
"""

from __future__ import annotations

import dataclasses

from pirchain.analysis.false_triggers import (
    YEAR,
    analytic_rate,
    comparator_sources,
    monte_carlo_rate,
    threshold_for_rate,
    with_threshold,
)
from pirchain.circuit.noise import noise_budget
from pirchain.interface.demo import demo_detector, demo_environment
from pirchain.physics.disturbance import Draught
from pirchain.physics.optics import LensRing, Mount, ceiling_lens


def plover():
    base = demo_detector()
    lens = ceiling_lens(
        [
            LensRing(32.0, 8, 12e-3, 12e-6),
            LensRing(45.0, 10, 15e-3, 15e-6),
            LensRing(55.0, 14, 18e-3, 18e-6, azimuth_offset_deg=6.0),
        ],
        name="Plover-C three-ring dome",
    )
    return dataclasses.replace(
        base, lens=lens, mount=Mount("ceiling", 2.7), name="Plover-C ceiling sensor (example)"
    )


def main() -> dict:
    det, env = plover(), demo_environment()
    out = {}
    for label, dr in (("still air", None), ("diffuser", Draught(0.02, 4.0, 0.5, 0.35))):
        src = comparator_sources(det, env, dr)
        b = noise_budget(src, (1e-3, 1e3))
        share = dict(zip(b.names, b.share, strict=True)).get("HVAC draught", 0.0)
        th, r_sens = threshold_for_rate(det, env, 1.0 / YEAR, dr)
        out[label] = (b.total_rms, share, th, r_sens)
        print(
            f"{label}: noise {b.total_rms * 1e3:.4f} mV rms, draught share {share:.4f}, "
            f"1/year threshold {th * 1e3:.3f} mV, sensitivity resistor {r_sens:.0f} ohm"
        )
    dr = Draught(0.02, 4.0, 0.5, 0.35)
    sigma = out["diffuser"][0]
    test = with_threshold(det, 3.0 * sigma)  # a deliberately low threshold to see events
    est = analytic_rate(test, env, dr)
    mc = monte_carlo_rate(test, env, 24 * 3600.0, draught=dr, seed=21, streams=8)
    print(f"analytic_alarms_per_day: {est.alarm_rate * 86400:.6g}")
    print(f"mc_alarms_per_day: {mc.alarm_rate * 86400:.6g}")
    lo, hi = (x * 86400 for x in mc.alarm_interval)
    print(f"mc_interval_per_day: {lo:.6g} {hi:.6g}")
    print(f"mc_turn_ons: {mc.alarms}")
    out["analytic"] = est.alarm_rate
    out["mc"] = mc
    return out


if __name__ == "__main__":
    main()
