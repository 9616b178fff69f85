"""Interactive speed of a design iteration: start-up of the light commands, the demo report
warm and quick, and the first run after an install (kernels compiled) against a reinstall
(kernels loaded from the content-keyed cache).

Usage: ``python3 benchmarks/startup.py [--repeat N] [--skip-first-run]``. Every figure is
the best of N runs of the command in a fresh process (the machine is shared; single runs
vary). The first-run figures use a fresh cache folder (``PIRCHAIN_CACHE_DIR``); the
"reinstall" run touches every source file first (a reinstall gives them new times, which
numba's own cache stamp treats as changed sources) and keeps the cache.
"""

from __future__ import annotations

import argparse
import os
import pathlib
import shutil
import subprocess
import sys
import tempfile
import time

ROOT = pathlib.Path(__file__).resolve().parent.parent


def timed(args, env=None, cwd=None) -> float:
    t0 = time.perf_counter()
    cmd = [sys.executable, "-m", "pirchain.interface.entry", *args]
    proc = subprocess.run(cmd, capture_output=True, text=True, env=env, cwd=cwd, check=False)
    dt = time.perf_counter() - t0
    if proc.returncode != 0:
        raise SystemExit(f"{args}: exit {proc.returncode}\n{proc.stderr[-2000:]}")
    return dt


def best(args, n, env=None, cwd=None) -> float:
    return min(timed(args, env, cwd) for _ in range(n))


def main() -> None:
    p = argparse.ArgumentParser(description=__doc__.split("\n")[0])
    p.add_argument("--repeat", type=int, default=5)
    p.add_argument("--skip-first-run", action="store_true")
    a = p.parse_args()
    tmp = tempfile.mkdtemp(prefix="pirchain-startup-")
    try:
        env = dict(os.environ, MPLBACKEND="Agg")
        rows = []
        for label, args in (
            ("--help", ["--help"]),
            ("check (demo)", ["check"]),
            ("demo-design", ["demo-design", "-o", os.path.join(tmp, "d.toml"), "--force"]),
            ("netlist (demo)", ["netlist", "-o", os.path.join(tmp, "n.cir"), "--force"]),
        ):
            rows.append((label, best(args, a.repeat, env)))
        out = os.path.join(tmp, "r.html")
        timed(["report", "-o", out, "--force"], env)  # warm the kernel cache
        rows.append(("report (demo), warm", best(["report", "-o", out, "--force"], 3, env)))
        rows.append(("report --quick (demo), warm",
                     best(["report", "--quick", "-o", out, "--force"], 3, env)))  # fmt: skip
        if not a.skip_first_run:
            cache = os.path.join(tmp, "cache")
            fresh = dict(env, PIRCHAIN_CACHE_DIR=cache)
            walk = ["walk", "--distance", "8"]
            rows.append(("first run after install (walk, empty cache)", timed(walk, fresh)))
            for src in (ROOT / "pirchain").rglob("*.py"):
                src.touch()
            rows.append(("run after a reinstall (walk, sources touched)", timed(walk, fresh)))
            rows.append(("next run (walk)", best(walk, 3, fresh)))
        width = max(len(r[0]) for r in rows)
        for label, t in rows:
            print(f"{label:{width}s}  {t:7.2f} s")
    finally:
        shutil.rmtree(tmp, ignore_errors=True)


if __name__ == "__main__":
    main()
