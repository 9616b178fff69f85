"""The sign-off commands of the command line: ``yield`` (tolerance Monte Carlo against the
design's acceptance lines, with worst-case corners) and ``choose-values`` (IEC 60063 value
search). Registered by :mod:`pirchain.interface.cli`."""

from __future__ import annotations

import re

from ..errors import DesignError
from ..units import parse_quantity
from .output import Progress

COMMANDS = {
    "yield": "tolerance Monte Carlo: yield against the acceptance lines, failures, corners",
    "choose-values": "search standard (E-series) values of chosen parts for yield or range",
}


def add_parsers(add) -> None:
    """Add the commands' options (``add(name, extra_help)`` makes a sub-parser)."""
    for name in COMMANDS:
        sp = add(name, " Needs [[tolerances]] and [acceptance] in the design file.")
        sp.add_argument("--units", default="200", help="units drawn (default 200)")
        sp.add_argument("--processes", default=None, help="local worker processes (1: here)")
        sp.add_argument("--scheduler", default=None, help="Dask scheduler, e.g. tcp://h:8786")
        if name == "yield":
            sp.add_argument("--corners", default="3", help="corners of the k most influential")
        else:
            sp.add_argument("--part", action="append", required=True,
                            help="PATH=SERIES:LOW:HIGH, e.g. "
                            "detector.comparator.window.r_middle=E24:47k:1M")  # fmt: skip
            sp.add_argument("--objective", choices=("yield", "range"), default="yield")
            sp.add_argument("--target", default="0.9", help="yield the range objective needs")


def _int(text, option, low, high):
    try:
        v = int(text)
    except (TypeError, ValueError):
        raise DesignError(option, text, "an integer") from None
    if not low <= v <= high:
        raise DesignError(option, v, f"an integer between {low} and {high}")
    return v


def _runner(args):
    from ..production.runners import runner_for

    procs = None if args.processes is None else _int(args.processes, "--processes", 1, 256)
    if args.scheduler is not None and not re.fullmatch(r"[a-z]+://[\w.\-\[\]:]+", args.scheduler):
        raise DesignError("--scheduler", args.scheduler, "an address such as tcp://host:8786")
    return runner_for(procs, args.scheduler)


def cmd_yield(args, design, emit):
    from ..production.corners import corner_study
    from ..production.yields import run_yield

    units = _int(args.units, "--units", 1, 100_000)
    k = _int(args.corners, "--corners", 0, 8)
    runner = _runner(args)
    try:
        y = run_yield(design, units, args.seed, runner, Progress("units", args.progress or None))
        data, text = y.to_dict(), y.table()
        top = [i.path for i in y.influence()[:k]]
        if top:
            cs = corner_study(design, top, runner)
            data["corners"], text = cs.to_dict(), text + "\n" + cs.table()
    finally:
        runner.close()
    emit(data, text)


def _part(text):
    from ..production.choose import Part
    from .design_schema import unit_of

    m = re.fullmatch(r"([^=]+)=(E\d+):([^:]+):([^:]+)", text or "")
    if m is None:
        raise DesignError(
            "--part", text, "PATH=SERIES:LOW:HIGH, e.g. detector.stages[0].rf=E24:100k:1M"
        )
    unit = unit_of(m.group(1))
    low = parse_quantity(m.group(3), "--part low", unit)
    high = parse_quantity(m.group(4), "--part high", unit)
    return Part(m.group(1), m.group(2), low, high)


def cmd_choose_values(args, design, emit):
    from ..analysis.sweep import check_sweep_path
    from ..production.choose import choose_values

    parts = [_part(t) for t in args.part]
    for p in parts:
        check_sweep_path(design, p.path)
    units = _int(args.units, "--units", 1, 100_000)
    target = parse_quantity(args.target, "--target")
    if not 0 < target <= 1:
        raise DesignError("--target", target, "a yield between 0 and 1")
    runner = _runner(args)
    try:
        c = choose_values(design, parts, units, args.objective, target, args.seed, runner,
                          Progress("candidates", args.progress or None))  # fmt: skip
    finally:
        runner.close()
    emit(c.to_dict(), c.table())
