"""Time 1 000 ten-second walks with the front end's nodes kept: radiometry + optics
(power per element) + sensor (gate voltage), the rest of the one pass included.

Run:  python benchmarks/front_end.py [--walks N] [--rate HZ]
Prints the wall time, the throughput and, for scale, bare scipy.signal.sosfilt over the same
(walks × samples) array with the sensor's sections.
"""

from __future__ import annotations

import argparse
import time

import numpy as np
from scipy import signal

from pirchain.interface.demo import demo_detector, demo_environment
from pirchain.physics.scene import adult, straight_walks


def main() -> None:
    ap = argparse.ArgumentParser(description=__doc__)
    ap.add_argument("--walks", type=int, default=1000)
    ap.add_argument("--rate", type=float, default=100.0)
    ap.add_argument("--seed", type=int, default=1)
    args = ap.parse_args()
    rng = np.random.default_rng(args.seed)
    n = args.walks
    dist = rng.uniform(2.0, 12.0, n)
    bearing = rng.uniform(-0.9, 0.9, n)
    centre = np.stack([dist * np.cos(bearing), dist * np.sin(bearing)], axis=1)
    perp = np.stack([-np.sin(bearing), np.cos(bearing)], axis=1)
    speed = rng.uniform(0.5, 1.5, n)
    starts = centre - perp * (5.0 * speed)[:, None]
    det, env, tgt = demo_detector(), demo_environment(), adult()
    taps = ("element_power", "equivalent_power", "gate")
    walks = straight_walks(starts, perp, speed, 10.0, args.rate)
    det.run(tgt, env, straight_walks(starts[:2], perp[:2], speed[:2], 10.0, args.rate), taps)
    t0 = time.perf_counter()
    walks = straight_walks(starts, perp, speed, 10.0, args.rate)
    res = det.run(tgt, env, walks, taps)
    elapsed = time.perf_counter() - t0
    samples = res.gate_voltage.size
    sos = det.sensor.sos(args.rate)
    x = np.ascontiguousarray(res.equivalent_power)
    t1 = time.perf_counter()
    signal.sosfilt(sos, x, axis=-1)
    floor = time.perf_counter() - t1
    print(
        f"walks: {n} x {walks.n_samples} samples ({samples:.3g} samples), "
        f"{det.beams().count} beams, {len(tgt.parts)} body parts"
    )
    print(
        f"pass with the front end kept (power per element, gate): {elapsed:.3f} s "
        f"= {samples / elapsed:.3g} samples/s"
    )
    print(f"bare sosfilt of the sensor sections over the same samples: {floor:.4f} s")
    print(f"ratio front end / bare filtering: {elapsed / floor:.1f}")


if __name__ == "__main__":
    main()
