"""The full pipeline over N walks against bare scipy.signal.sosfilt over the same samples
and the same number of second-order sections.

Run:  python benchmarks/pipeline.py [--walks N] [--threads K] [--repeat R]
Pipeline: pose + radiometry + optics + sensor + JFET + stages (rails) + comparator + logic,
timed two ways through the one engine: ``Detector.outcomes`` (no node tapped: what range,
coverage and sweep studies use) and ``Detector.simulate`` (every node tapped). With
``--oracle`` the numpy oracles of tests/oracles.py (the array forms the package had before
its single compiled pass) are timed too, for the profile's first row.
Floor: one sosfilt call over (walks × samples) with the sensor's and every stage's sections
stacked (the filtering the pipeline cannot avoid), single-threaded as scipy runs it.
"""

from __future__ import annotations

import argparse
import time

import numba
import numpy as np
from scipy import signal

from pirchain.interface.demo import demo_detector, demo_environment
from pirchain.physics.scene import adult, straight_walks


def stage_sos(stage, fs):
    """Bilinear sections of a stage's transfer function (its linear filtering)."""
    tf = stage.transfer_function()
    return signal.tf2sos(*signal.bilinear(tf.num[0][0], tf.den[0][0], fs))


def walks(n, seed=1, rate=100.0):
    rng = np.random.default_rng(seed)
    dist = rng.uniform(2.0, 25.0, n)
    b = rng.uniform(-0.9, 0.9, n)
    c = np.stack([dist * np.cos(b), dist * np.sin(b)], axis=1)
    perp = np.stack([-np.sin(b), np.cos(b)], axis=1)
    v = rng.uniform(0.5, 1.5, n)
    return straight_walks(c - perp * (3.0 * v)[:, None], perp, v, 10.0, rate, lengths=6.0 * v)


def main() -> None:
    ap = argparse.ArgumentParser(description=__doc__)
    ap.add_argument("--walks", type=int, default=1000)
    ap.add_argument("--oracle", action="store_true", help="also time the numpy oracles")
    ap.add_argument("--repeat", type=int, default=10, help="best of N timings")
    ap.add_argument("--threads", type=int, default=None, help="numba threads (default: all)")
    args = ap.parse_args()
    if args.threads:
        numba.set_num_threads(args.threads)
    det, env, tgt = demo_detector(), demo_environment(), adult()
    det.simulate(tgt, env, walks(4))  # load the compiled kernels
    det.outcomes(tgt, env, walks(4))
    w = walks(args.walks)
    t_out = np.inf
    for _ in range(args.repeat):
        t0 = time.perf_counter()
        out = det.outcomes(tgt, env, w)
        t_out = min(t_out, time.perf_counter() - t0)
    t0 = time.perf_counter()
    res = det.simulate(tgt, env, w)
    t_pipe = time.perf_counter() - t0
    for _ in range(args.repeat - 1):  # best of N
        t0 = time.perf_counter()
        det.simulate(tgt, env, w)
        t_pipe = min(t_pipe, time.perf_counter() - t0)
    sos = np.vstack(
        [det.sensor.sos(w.sample_rate)] + [stage_sos(s, w.sample_rate) for s in det.stages]
    )
    x = np.random.default_rng(0).standard_normal((w.n_walks, w.n_samples))
    t_floor = np.inf
    for _ in range(args.repeat):
        t1 = time.perf_counter()
        signal.sosfilt(sos, x, axis=-1)
        t_floor = min(t_floor, time.perf_counter() - t1)
    n = w.n_walks * w.n_samples
    assert np.array_equal(out.detected, res.detected)  # the two paths agree
    print(
        f"{w.n_walks} walks x {w.n_samples} samples = {n:.3g} samples; "
        f"{sos.shape[0]} sections; numba threads {numba.get_num_threads()}; "
        f"detected {res.detected.mean():.2f}"
    )
    print(f"bare sosfilt, same samples and sections: {t_floor * 1e3:.2f} ms")
    print(
        f"full pipeline, outcomes (compiled pass): {t_out * 1e3:.2f} ms = "
        f"{n / t_out:.3g} samples/s ({t_out / w.n_walks * 1e6:.1f} us per walk); "
        f"ratio to floor {t_out / t_floor:.2f}"
    )
    print(
        f"full pipeline, simulate (every node tapped): "
        f"{t_pipe * 1e3:.1f} ms; ratio to floor {t_pipe / t_floor:.1f}"
    )
    if args.oracle:
        import os
        import sys

        sys.path.insert(0, os.path.join(os.path.dirname(__file__), "..", "tests"))
        import oracles

        t0 = time.perf_counter()
        oracles.chain(det, tgt, env, w)
        t_or = time.perf_counter() - t0
        print(f"numpy oracles chained: {t_or:.2f} s; ratio to floor {t_or / t_floor:.0f}")


if __name__ == "__main__":
    main()
