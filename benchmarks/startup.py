"""Interactive speed of a design iteration: start-up of the light commands, the demo report
warm and quick, and the first run after an install (kernels compiled) against a reinstall
(kernels loaded from the content-keyed cache), and the same version installed in another
place (another virtual environment: numba's own cache is keyed by the source folder).

Usage: ``python3 benchmarks/startup.py [--repeat N] [--skip-first-run]``. Every figure is
the best of N runs of the command in a fresh process (the machine is shared; single runs
vary). The first-run figures use a fresh cache folder (``PIRCHAIN_CACHE_DIR``); the
"installed elsewhere" run imports a copy of the package from another folder and keeps the
cache.
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


IN_PROCESS = """
import time
from pirchain.interface import plots, report
from pirchain.interface.demo import demo_design
full = demo_design()
quick = report.quick_design(full)
report.compute(quick)  # kernels loaded, fonts cached: what a script's second call sees
spent = [0.0]
png = plots.png_bytes
def timed_png(fig):
    t = time.perf_counter(); out = png(fig); spent[0] += time.perf_counter() - t; return out
report.plots.png_bytes = timed_png
for name, design in (("full", full), ("quick", quick)):
    best = None
    for _ in range({n}):
        spent[0] = 0.0
        t = time.perf_counter(); report.compute(design); dt = time.perf_counter() - t
        if best is None or dt < best[0]:
            best = (dt, spent[0])
    print(name, best[0], best[1])
"""


def in_process(n: int, env) -> list[tuple[str, float]]:
    """The report's computation in a warm session (a script calling it again): total and the
    part spent rendering figures."""
    code = IN_PROCESS.format(n=n)
    proc = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True,
                          env=env, check=True)  # fmt: skip
    rows = []
    for line in proc.stdout.splitlines():
        name, total, figs = line.split()
        rows.append((f"report compute in a warm session ({name})", float(total)))
        rows.append((f"  of which figures ({name})", float(figs)))
    return rows


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
        rows += in_process(3, env)
        if not a.skip_first_run:
            cache = os.path.join(tmp, "cache")
            fresh = dict(env, PIRCHAIN_CACHE_DIR=cache)
            walk = ["walk", "--distance", "8"]
            rows.append(("first run after install (walk, empty cache)", timed(walk, fresh)))
            rows.append(("next run (walk)", best(walk, 3, fresh)))
            # the same version installed in another place (another environment)
            moved = os.path.join(tmp, "elsewhere")
            shutil.copytree(ROOT / "pirchain", os.path.join(moved, "pirchain"))
            elsewhere = dict(fresh, PYTHONPATH=moved)
            label = "same version installed elsewhere (walk, same cache)"
            rows.append((label, timed(walk, elsewhere, cwd=tmp)))
        width = max(len(r[0]) for r in rows)
        for label, t in rows:
            print(f"{label:{width}s}  {t:7.2f} s")
    finally:
        shutil.rmtree(tmp, ignore_errors=True)


if __name__ == "__main__":
    main()
