"""A coverage map of at least 10 000 walks, chunked: time, bare filtering floor, peak memory.

Run:  python benchmarks/coverage_map.py [--cells-x N] [--trials T] [--chunk C]
The floor is scipy.signal.sosfilt over the same (walks × samples) with the sections of the
whole linear chain (sensor, follower, stages). The time is the best of 3 untraced runs after
the compiled kernels are loaded. Peak memory is the peak traced by tracemalloc during a
further run of the map (numpy buffers included) and the process's maximum resident set size.
"""

from __future__ import annotations

import argparse
import resource
import time
import tracemalloc

import numpy as np
from scipy import signal

from pirchain.analysis.coverage import top_view
from pirchain.circuit.synthesis import tf_sos
from pirchain.interface.demo import demo_detector, demo_environment
from pirchain.physics.scene import adult
from pirchain.settings import AnalysisSettings


def main() -> None:
    ap = argparse.ArgumentParser(description=__doc__)
    ap.add_argument("--x-max", type=float, default=16.0)
    ap.add_argument("--cell", type=float, default=0.91)
    ap.add_argument("--trials", type=int, default=16)
    ap.add_argument("--chunk", type=int, default=256)
    ap.add_argument("--noise", action="store_true", help="add seeded noise (slower)")
    args = ap.parse_args()
    det, env = demo_detector(), demo_environment()

    settings = AnalysisSettings(
        coverage_cell=args.cell, coverage_x_max=args.x_max, coverage_trials=args.trials,
        coverage_speed=1.22, noise=args.noise,
    )  # fmt: skip

    def run():
        return top_view(det, adult(), env, "tangential", settings, chunk=args.chunk)

    small = AnalysisSettings(coverage_cell=4.0, coverage_x_max=4.0, coverage_trials=1)
    top_view(det, adult(), env, "tangential", small)  # load the kernels
    elapsed = np.inf
    for _ in range(3):  # best of 3, untraced
        t0 = time.perf_counter()
        m = run()
        elapsed = min(elapsed, time.perf_counter() - t0)
    tracemalloc.start()  # one more run for the memory figures (tracing slows it down)
    run()
    _, peak = tracemalloc.get_traced_memory()
    tracemalloc.stop()
    fs = 100.0
    n_samples = int((2 * args.cell / 1.22 + 2.0) * fs)
    sos = tf_sos(det.transfer_function(False), fs)
    x = np.random.default_rng(0).standard_normal((args.chunk, n_samples))
    t1 = time.perf_counter()
    for _ in range(int(np.ceil(m.walks / args.chunk))):
        signal.sosfilt(sos, x, axis=-1)
    floor = time.perf_counter() - t1
    rss = resource.getrusage(resource.RUSAGE_SELF).ru_maxrss / 1024
    print(
        f"coverage map: {m.probability.shape[1]} x {m.probability.shape[0]} cells, "
        f"{m.walks} walks of {n_samples} samples, chunks of {args.chunk}"
        f"{', with noise' if args.noise else ''}"
    )
    print(f"time: {elapsed:.2f} s ({elapsed / m.walks * 1e3:.3f} ms per walk)")
    print(
        f"bare sosfilt floor ({sos.shape[0]} sections, same samples): {floor:.3f} s; "
        f"ratio {elapsed / floor:.0f}"
    )
    print(f"peak traced memory: {peak / 2**20:.1f} MiB; max RSS of the process: {rss:.0f} MiB")
    print(f"mean P(detect) over the map: {m.probability.mean():.3f}")


if __name__ == "__main__":
    main()
