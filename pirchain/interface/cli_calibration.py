"""The command that fits a design to bench data: ``bench-fit`` (a walk capture, a
quiet-room recording, a walk-test sheet; any of them) and writes the calibrated design
file. Registered by :mod:`pirchain.interface.cli`."""

from __future__ import annotations

from dataclasses import asdict

from ..errors import DesignError
from ..physics.scene import TARGET_PRESETS
from ..units import parse_quantity
from .capture_file import NODES, read_capture
from .output import check_output, write_new

COMMANDS = {
    "bench-fit": "fit the model to bench captures, a quiet recording and walk-test results",
}

_HELP = (
    " Give any of --capture (a scope capture of one walk), --quiet (a recording of the empty"
    " room at the comparator input) and --walk-results (a sheet of walk tests: a header with"
    " distance, bearing, speed, detected and optionally kind and target). Captures are CSV"
    " (header lines, comma/semicolon/tab/space) or .npy with time and value columns."
    " --write puts the fits into a new design file that every other command then uses."
)


def add_parsers(add) -> None:
    """Add the command's options (``add(name, extra_help)`` makes a sub-parser)."""
    sp = add("bench-fit", _HELP)
    sp.add_argument("--capture", help="walk capture file (.csv or .npy)")
    sp.add_argument("--node", default=None, choices=NODES, help="where it was taken")
    sp.add_argument("--scale", default="1", help="multiplier of the value column (1m for mV)")
    sp.add_argument("--time-scale", default="1", help="multiplier of the time column")
    sp.add_argument("--distance", default=None, help="walk distance (default: walk_distance)")
    sp.add_argument("--bearing", default="0", help="walk bearing [°]")
    sp.add_argument("--speed", default=None, help="walk speed [m/s] (default: the design's)")
    sp.add_argument("--cross-time", default="5", help="when the walk crosses the axis [s]")
    sp.add_argument("--direction", choices=("ccw", "cw"), default="ccw",
                    help="seen from above: ccw walks towards increasing bearing")  # fmt: skip
    sp.add_argument("--target", choices=TARGET_PRESETS, default=None,
                    help="who walked (default: the design's target)")  # fmt: skip
    sp.add_argument("--quiet", help="quiet-room recording at the comparator input")
    sp.add_argument("--quiet-scale", default="1", help="multiplier of its value column")
    sp.add_argument("--walk-results", help="walk-test sheet (CSV)")
    sp.add_argument("--spread", default="0.3", help="walk-to-walk signal spread (ln units)")
    sp.add_argument("--link", choices=("probit", "logistic"), default="probit")
    sp.add_argument("--write", help="write the calibrated design file here (a new file)")
    sp.add_argument("--plot", help="write a PNG of measured against fitted here")


def _number(text, option, unit=None):
    return parse_quantity(text, option, unit)


def cmd_bench_fit(args, design, design_text, emit):
    from ..calibration.quiet import fit_quiet
    from ..calibration.walk_results import fit_walk_tests
    from ..calibration.waveform import WalkSpec, fit_waveform
    from .walk_sheet import read_walk_results

    if not (args.capture or args.quiet or args.walk_results):
        raise DesignError("bench-fit", "no data", "--capture, --quiet or --walk-results")
    if args.capture and args.node is None:
        raise DesignError("--node", "missing", "where the capture was taken: " + ", ".join(NODES))
    for opt in ("write", "plot"):  # refuse an output before any work: never overwritten
        if getattr(args, opt):
            check_output(getattr(args, opt), False, f"--{opt}")
    data, text, cap, wf, qf, wt = {}, [], None, None, None, None
    if args.capture:
        cap = read_capture(args.capture, args.node, _number(args.scale, "--scale"),
                           _number(args.time_scale, "--time-scale"))  # fmt: skip
        dist = design.analysis.walk_distance if args.distance is None else args.distance
        walk = WalkSpec(
            _number(dist, "--distance", "m"), _number(args.bearing, "--bearing"),
            _number(design.speed if args.speed is None else args.speed, "--speed", "m/s"),
            _number(args.cross_time, "--cross-time", "s"),
            1 if args.direction == "ccw" else -1, args.target or "",
        )  # fmt: skip
        wf = fit_waveform(design, cap, walk)
        data["waveform"] = {**wf.to_dict(), "capture": args.capture, "walk": asdict(walk),
                            "sample_rate_hz": cap.sample_rate, "time_origin_s": cap.t0}  # fmt: skip
        text.append(wf.table(cap))
    if args.quiet:
        rec = read_capture(args.quiet, "comparator", _number(args.quiet_scale, "--quiet-scale"))
        qf = fit_quiet(design, rec, seed=design.analysis.seed)
        data["quiet"] = {**qf.to_dict(), "recording": args.quiet}
        text.append(qf.table())
    if args.walk_results:
        rows = read_walk_results(args.walk_results)
        spread = _number(args.spread, "--spread")
        base = design if wf is None else _calibrated(design, design_text, wf, args.capture)
        wt = fit_walk_tests(base, rows, spread, args.link)
        data["walk_tests"] = {**wt.to_dict(), "sheet": args.walk_results}
        text.append(wt.table())
    if args.write:
        from .calibrated_file import calibrated_text
        from .design_file import loads

        out = calibrated_text(design_text, design, waveform=wf, waveform_source=args.capture
                              or "", quiet=qf, quiet_source=args.quiet or "", walks=wt,
                              walks_source=args.walk_results or "")  # fmt: skip
        loads(out)  # the written file must load and check like any other
        write_new(args.write, out, False, "--write")
        data["written"] = args.write
        text.append(f"wrote {args.write}: run any command on it to use the fits")
    if args.plot:
        from . import plots

        fig = plots.bench_fit(cap, wf, qf, wt)
        write_new(args.plot, plots.png_bytes(fig), False, "--plot")
        data["plot"] = args.plot
    emit(data, "\n\n".join(text))


def _calibrated(design, text, wf, source):
    """The design with the waveform fit in it (the walk tests are judged on it)."""
    from .calibrated_file import calibrated_text
    from .design_file import loads

    return loads(calibrated_text(text, design, waveform=wf, waveform_source=source))
