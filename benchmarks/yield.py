"""Tolerance Monte Carlo throughput: units per second against a specification of 7 bearings
× 3 speeds plus a false-trigger line, in this process, on local processes and on a Dask
LocalCluster (a real scheduler and worker processes on this machine).

Run:  python benchmarks/yield.py [--units 1000] [--processes 2]
Prints the time of each runner, the cost per unit, the Dask overhead over local processes
and whether the answers are identical; with --scaling also how the cost grows with units and
with specification lines.
"""

from __future__ import annotations

import argparse
import dataclasses
import json
import time

from pirchain.interface.demo import demo_design
from pirchain.production.runners import DaskCluster, InProcess, LocalProcesses
from pirchain.production.yields import run_yield
from pirchain.signoff import Acceptance, Tolerance

TOLERANCES = (
    Tolerance("resistors", 0.01),
    Tolerance("capacitors", 0.10),
    Tolerance("detector.sensor.current_responsivity", 0.2, distribution="gaussian"),
    Tolerance("detector.sensor.mismatch", 0.05, False, random_sign=True),
    Tolerance("detector.follower.jfet.idss", 0.5, distribution="lognormal"),
    Tolerance("detector.follower.jfet.gate_leakage", 2.0, distribution="lognormal"),
)


def design(bearings=(-50, -30, -15, 0, 15, 30, 50), speeds=(0.3, 1.0, 2.0)):
    acc = Acceptance(range_m=12.0, bearings=bearings, speeds=speeds, trials=8,
                     false_triggers_per_year=1.0)  # fmt: skip
    return dataclasses.replace(demo_design(), tolerances=TOLERANCES, acceptance=acc)


def timed(d, units, runner):
    run_yield(d, min(units, 8), seed=1, runner=runner)  # warm the workers' kernel cache
    t = time.perf_counter()
    y = run_yield(d, units, seed=1, runner=runner)
    return time.perf_counter() - t, json.dumps(y.to_dict(), sort_keys=True), y


def main() -> None:
    ap = argparse.ArgumentParser(description=__doc__)
    ap.add_argument("--units", type=int, default=1000)
    ap.add_argument("--processes", type=int, default=2)
    ap.add_argument("--in-process", action="store_true", help="also time the in-process run")
    ap.add_argument("--scaling", action="store_true", help="cost against units and lines")
    args = ap.parse_args()
    d = design()
    n = args.units
    local = LocalProcesses(args.processes)
    t_local, j_local, y = timed(d, n, local)
    print(f"local processes ({args.processes}): {t_local:.1f} s for {n} units = "
          f"{1e3 * t_local / n:.1f} ms/unit; yield {100 * y.yield_fraction:.1f} %")  # fmt: skip
    if args.scaling:
        for m in (n // 4, n // 2):
            t, _, _ = timed(d, m, local)
            print(f"  {m} units: {t:.1f} s = {1e3 * t / m:.1f} ms/unit")
        for b, s in (((0,), (1.0,)), ((-30, 0, 30), (0.3, 1.0, 2.0))):
            t, _, _ = timed(design(b, s), n // 4, local)
            print(f"  {len(b) * len(s)} range lines, {n // 4} units: {1e3 * t / (n // 4):.1f} "
                  "ms/unit")  # fmt: skip
    local.close()
    import dask
    from distributed import Client, LocalCluster

    # the workers' statistical profiler samples every task's stack (for the dashboard); a
    # compute-bound run does not need it (set the same on a real cluster's workers)
    dask.config.set({"distributed.worker.profile.enabled": False})
    with (
        LocalCluster(n_workers=args.processes, threads_per_worker=1, processes=True,
                     dashboard_address=None) as cluster,
        Client(cluster) as client,
    ):  # fmt: skip
        t_dask, j_dask, _ = timed(d, n, DaskCluster(client=client))
    print(
        f"dask LocalCluster ({args.processes} workers): {t_dask:.1f} s; overhead over local "
        f"processes {100 * (t_dask / t_local - 1):+.1f} %; identical: {j_dask == j_local}"
    )
    if args.in_process:
        t_in, j_in, _ = timed(d, n, InProcess())
        print(f"in-process: {t_in:.1f} s; identical: {j_in == j_local}")


if __name__ == "__main__":
    main()
