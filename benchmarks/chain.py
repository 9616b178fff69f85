"""The same walk through pirchain and through ngspice: time ratio and largest difference.

Run:  python benchmarks/chain.py [--batch N] [--distance M]
pirchain runs the walk inside a batch of N copies (its normal use) and the time per walk is
the batch time / N; ngspice runs the exported netlist of the same walk once. Both times
cover the analog chain from the gate current to the comparator input (the part ngspice
simulates). pirchain's whole chain (optics to decisions) is timed as ``Detector.run`` with only the
comparator input tapped (the one engine, one compiled pass per walk) and its waveform of
the first walk is the one compared with ngspice; the analog chain alone is the same pass
driven at the gate (``Detector.drive``), and ``Detector.simulate`` (every node tapped) is
timed as well.
"""

from __future__ import annotations

import argparse
import time

import numpy as np

from pirchain.circuit.netlist import run_ngspice
from pirchain.interface.demo import demo_detector, demo_environment
from pirchain.physics.scene import adult, tangential_path, walks_from_paths
from pirchain.physics.sensor import gate_current


def main() -> None:
    ap = argparse.ArgumentParser(description=__doc__)
    ap.add_argument("--batch", type=int, default=1000)
    ap.add_argument("--distance", type=float, default=20.0)
    ap.add_argument("--rate", type=float, default=100.0)
    ap.add_argument("--repeat", type=int, default=5, help="best of N timings")
    args = ap.parse_args()
    det, env, tgt = demo_detector(), demo_environment(), adult()
    fs = args.rate
    walk = walks_from_paths([tangential_path(args.distance, 0.0, 1.0, length=6.0)], 10.0, fs)
    res = det.simulate(tgt, env, walk)
    cur = gate_current(det.sensor, res.equivalent_power, fs)[0]

    t_spice = np.inf
    for _ in range(args.repeat):
        t0 = time.perf_counter()
        ts, v = run_ngspice(det, cur, fs)
        t_spice = min(t_spice, time.perf_counter() - t0)

    gate = np.repeat(res.gate_voltage, args.batch, axis=0)
    det.drive("gate", gate, fs, ("comparator",))
    t_analog = np.inf
    for _ in range(args.repeat):  # best of N: the machine's other load only adds time
        t0 = time.perf_counter()
        det.drive("gate", gate, fs, ("comparator",))
        t_analog = min(t_analog, (time.perf_counter() - t0) / args.batch)

    batch = walks_from_paths(
        [tangential_path(args.distance, 0.0, 1.0, length=6.0)] * args.batch, 10.0, fs
    )
    det.outcomes(tgt, env, batch)  # load the compiled kernels
    t_full = np.inf
    for _ in range(args.repeat):
        t0 = time.perf_counter()
        out = det.run(tgt, env, batch, ("comparator",))
        t_full = min(t_full, (time.perf_counter() - t0) / args.batch)
    t_sim = np.inf
    for _ in range(args.repeat):
        t0 = time.perf_counter()
        det.simulate(tgt, env, batch)
        t_sim = min(t_sim, (time.perf_counter() - t0) / args.batch)

    n = min(ts.size, res.time.size)
    ours = out.comparator_input[0, :n]
    peak = np.max(np.abs(ours - det.rest_levels()[-1]))
    diff = np.max(np.abs(v["out2"][:n] - ours))
    print(f"walk: tangential, {args.distance:g} m, 1 m/s, 10 s at {fs:g} Hz; batch {args.batch}")
    print(f"ngspice, one walk (analog chain):           {t_spice * 1e3:10.2f} ms")
    print(f"pirchain per walk, analog chain (batched):  {t_analog * 1e6:10.2f} us")
    print(f"pirchain per walk, whole chain (outcomes):  {t_full * 1e6:10.2f} us")
    print(f"pirchain per walk, whole chain (simulate):  {t_sim * 1e6:10.2f} us")
    print(f"speed ratio ngspice / pirchain (analog):    {t_spice / t_analog:10.0f}")
    print(f"speed ratio ngspice / pirchain (whole):     {t_spice / t_full:10.0f}")
    print(f"speed ratio ngspice / pirchain (simulate):  {t_spice / t_sim:10.0f}")
    print(
        f"max |difference| at the comparator input:   {diff * 1e3:10.4f} mV "
        f"= {100 * diff / peak:.3f} % of the {peak:.3f} V peak"
    )


if __name__ == "__main__":
    main()
