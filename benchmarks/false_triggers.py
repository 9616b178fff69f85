"""Monte Carlo false-trigger throughput beside bare scipy.signal.sosfilt.

Run:  python benchmarks/false_triggers.py [--hours H] [--rate HZ] [--streams N]
The Monte Carlo synthesises every noise source (white noise through its own sections, states
carried between chunks) and runs the comparator and decision logic. The floor is one
sosfilt call over the same number of samples with the sections of the chain's total
transfer function (what the bare filtering of one already-shaped noise would cost).
"""

from __future__ import annotations

import argparse
import time

import numpy as np
from scipy import signal

from pirchain.analysis.false_triggers import analytic_rate, comparator_sources, monte_carlo_rate
from pirchain.circuit.synthesis import tf_sos
from pirchain.interface.demo import demo_detector, demo_environment
from pirchain.physics.disturbance import Draught


def main() -> None:
    ap = argparse.ArgumentParser(description=__doc__)
    ap.add_argument("--hours", type=float, default=24.0)
    ap.add_argument("--rate", type=float, default=100.0)
    ap.add_argument("--streams", type=int, default=8)
    ap.add_argument("--seed", type=int, default=1)
    args = ap.parse_args()
    det, env, dr = demo_detector(), demo_environment(), Draught()
    src = comparator_sources(det, env, dr)
    dur = args.hours * 3600.0
    t0 = time.perf_counter()
    mc = monte_carlo_rate(
        det,
        env,
        dur,
        draught=dr,
        seed=args.seed,
        streams=args.streams,
        sample_rate=args.rate,
        sources=src,
    )
    t_mc = time.perf_counter() - t0
    samples = mc.duration * args.rate
    sos = tf_sos(det.transfer_function(True), args.rate)
    x = np.random.default_rng(0).standard_normal((args.streams, int(samples / args.streams)))
    t0 = time.perf_counter()
    signal.sosfilt(sos, x, axis=-1)
    t_floor = time.perf_counter() - t0
    est = analytic_rate(det, env, dr, sources=src)
    print(
        f"simulated {mc.duration / 3600:.1f} h of noise + draught at {args.rate:g} Hz "
        f"({samples:.3g} samples, {args.streams} streams)"
    )
    print(
        f"Monte Carlo: {t_mc:.2f} s = {samples / t_mc:.3g} samples/s; pulses {mc.pulses}, "
        f"turn-ons {mc.alarms}"
    )
    print(
        f"bare sosfilt ({sos.shape[0]} sections) over the same samples: {t_floor:.2f} s "
        f"= {samples / t_floor:.3g} samples/s"
    )
    print(f"Monte Carlo throughput = {t_floor / t_mc:.2f} x bare filtering")
    print(f"analytic: sigma {est.sigma * 1e3:.3f} mV, alarm rate {est.per(86400):.3g} /day")


if __name__ == "__main__":
    main()
