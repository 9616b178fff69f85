"""Command line: ``pirchain [command] [design.toml] ...``.

With no command, writes the full HTML report of the built-in demo design.
Exit codes: 0 success, 2 bad design or arguments, 3 internal error, 130 interrupted.
"""

from __future__ import annotations

import argparse
import dataclasses
import math
import os
import sys
import textwrap
import warnings

import numpy as np

from ..errors import DesignError, ValidityWarning, check_range, warnings_once
from ..settings import MC_HOURS, WALK_DIRECTIONS, WALK_SPEED_RANGE, check_work
from ..units import parse_celsius, parse_quantity
from . import cli_calibration, cli_inject, cli_production, cli_two_wire
from .cautions import CAUTIONS
from .output import Progress, check_output, free_name, span, terminal_text, to_json, write_new

EXIT_OK, EXIT_DESIGN, EXIT_INTERNAL, EXIT_INTERRUPTED = 0, 2, 3, 130

COMMANDS = {
    "check": "validate a design file and print what it describes",
    "demo-design": "write the built-in demo design to a file to start from",
    "walk": "simulate one walk: every stage's waveform (plot and CSV)",
    "range": "detection range per bearing and a top-view coverage map",
    "sweep": "sweep one parameter: range, false triggers, settling, supply",
    "false-triggers": "noise budget and false-trigger rate (Rice and Monte Carlo)",
    "ambient": "room-temperature ramps and HVAC cycling: triggers, margins, worst case",
    "netlist": "export the analog chain as a SPICE netlist",
    "report": "the full self-contained HTML report",
    **cli_production.COMMANDS,
    **cli_calibration.COMMANDS,
    **cli_two_wire.COMMANDS,
    **cli_inject.COMMANDS,
}

DIRECTION_HELP = "way of tangential walks: both in turn, ccw or cw (seen from above)"


def _epilog() -> str:
    return "Caution: " + textwrap.fill(CAUTIONS, 78)


class _Parser(argparse.ArgumentParser):
    def error(self, message):
        print(
            f"pirchain: argument error: {terminal_text(message)} (see '{self.prog} --help')",
            file=sys.stderr,
        )
        sys.exit(EXIT_DESIGN)


def build_parser() -> argparse.ArgumentParser:
    """The argument parser of the ``pirchain`` command."""
    fmt = argparse.RawDescriptionHelpFormatter
    p = _Parser(
        prog="pirchain",
        formatter_class=fmt,
        epilog=_epilog(),
        description="Model a passive-infrared motion detector from the walking person "
        "through lens, pyroelectric sensor, amplifier and logic to its decisions. With "
        "no command, writes the full report of the built-in demo design.",
    )
    p.add_argument("--version", action="version", version="pirchain 0.1.0")
    sub = p.add_subparsers(dest="command", parser_class=_Parser)

    def add(name, extra_help=""):
        sp = sub.add_parser(
            name,
            help=COMMANDS[name],
            formatter_class=fmt,
            epilog=_epilog(),
            description=COMMANDS[name].capitalize() + "." + extra_help,
        )
        if name != "demo-design":
            sp.add_argument("design", nargs="?", help="design file (TOML); default: built-in demo")
        sp.add_argument("--json", action="store_true", help="print results as JSON")
        sp.add_argument("--seed", type=int, default=None, help="seed (default: the design's)")
        sp.add_argument("--progress", action="store_true", help="always show progress")
        sp.add_argument("--debug", action="store_true", help="show tracebacks of internal errors")
        return sp

    add("check")
    sp = add("demo-design")
    sp.add_argument("-o", "--output", required=True, help="file to write")
    sp.add_argument("--force", action="store_true", help="replace an existing file")
    sp = add("walk", " Writes CSV (time and every stage) and a PNG if asked.")
    sp.add_argument(
        "--distance", default=None, help="distance [m] (default: the design's walk_distance)"
    )
    sp.add_argument("--bearing", default="0", help="bearing [°] (default 0)")
    sp.add_argument("--speed", default=None, help="speed [m/s] (default: the design's)")
    sp.add_argument(
        "--kind",
        choices=("tangential", "radial", "still"),
        default="tangential",
        help="walk across, walk towards, or stay still at --distance (for a minor-motion "
        "target such as scene.target = 'minor_motion_arm')",
    )
    sp.add_argument("--direction", choices=WALK_DIRECTIONS[1:], default="ccw", help=DIRECTION_HELP)
    sp.add_argument("--csv", help="write the waveforms here")
    sp.add_argument("--plot", help="write a PNG of the waveforms here")
    sp.add_argument("--force", action="store_true", help="replace existing output files")
    sp = add("range", " Range at P(detect) >= the design's level, with and without noise.")
    sp.add_argument("--bearings", default=None, help="comma-separated bearings [°]")
    sp.add_argument("--kind", choices=("tangential", "radial", "both"), default="both")
    sp.add_argument("--map", help="write a PNG top-view coverage map here")
    sp.add_argument("--force", action="store_true", help="replace existing output files")
    sp = add("sweep", " Values take engineering notation, e.g. 62k,150k,470k.")
    sp.add_argument(
        "--path", default=None, help="dotted path, e.g. detector.comparator.window.r_middle"
    )
    sp.add_argument("--values", default=None, help="comma-separated values")
    sp.add_argument("--budget", default=None, help="false triggers per year allowed")
    sp = add("false-triggers", " Monte Carlo only if --mc-hours is given.")
    sp.add_argument("--mc-hours", default=None, help="simulated hours for the Monte Carlo")
    sp = add("ambient", " Cases from the design's [ambient] section unless given here.")
    sp.add_argument("--ramps", default=None, help="comma-separated ramp rates [K/min]")
    sp.add_argument("--hvac", default=None, help="comma-separated HVAC amplitudes [K]")
    sp.add_argument("--plot", help="write a PNG of the worst case here")
    sp.add_argument("--force", action="store_true", help="replace an existing file")
    sp = add("netlist", " With --walk-distance, the PWL source carries that walk.")
    sp.add_argument("-o", "--output", required=True, help="netlist file to write")
    sp.add_argument("--walk-distance", default=None, help="distance of a tangential walk [m]")
    sp.add_argument("--force", action="store_true", help="replace an existing file")
    sp = add("report")
    sp.add_argument("-o", "--output", help="HTML file (default: pirchain-report[-N].html)")
    sp.add_argument("--force", action="store_true", help="replace an existing file")
    sp.add_argument("--quick", action="store_true", help="fewer trials, spread shown")
    for name in ("range", "sweep", "report"):
        sub.choices[name].add_argument("--direction", choices=WALK_DIRECTIONS, help=DIRECTION_HELP)
    cli_production.add_parsers(add)
    cli_calibration.add_parsers(add)
    cli_two_wire.add_parsers(add)
    cli_inject.add_parsers(add)
    return p


def _design(args):
    from .demo import demo_design
    from .design_file import load

    d = demo_design() if getattr(args, "design", None) is None else load(args.design)
    if args.seed is not None:
        d = _with_setting(d, "seed", args.seed)
    if getattr(args, "direction", None) and args.command != "walk":
        d = _with_setting(d, "walk_direction", args.direction, "--direction")
    return d


def _design_text(args) -> str:
    from .demo_text import DEMO_TOML
    from .design_file import read_text

    return DEMO_TOML if getattr(args, "design", None) is None else read_text(args.design)


def _outputs(args, *options) -> None:
    """Check every output file a command will write before any work is done."""
    seen = {}
    for opt in options:
        path = getattr(args, opt.lstrip("-").replace("-", "_"))
        if path is None:
            continue
        check_output(path, getattr(args, "force", False), opt)  # refuses an empty name
        key = os.path.realpath(path)
        if key in seen:
            raise DesignError(opt, path, f"a file other than the one given to {seen[key]}")
        seen[key] = opt


def _emit(args, data: dict, text: str) -> None:
    print(to_json(data) if args.json else terminal_text(text))


def _with_setting(design, key: str, value, option: str | None = None):
    """The design with one analysis setting replaced, checked by the settings' own limits
    (an error names the command-line option)."""
    try:
        a = dataclasses.replace(design.analysis, **{key: value})
    except DesignError as err:
        raise DesignError(option or f"--{key.replace('_', '-')}", value, err.expected) from None
    return dataclasses.replace(design, analysis=a)


def _list(text, field, unit=None):
    cells = [v.strip() for v in text.split(",")]
    return [parse_quantity(v, f"{field}[{i}]", unit) for i, v in enumerate(cells) if v]


def cmd_check(args):
    d = _design(args)
    det = d.operating
    lo, hi = det.window()
    data = {
        "name": det.name,
        "facets": len(det.lens.facets),
        "beams": det.beams().count,
        "stages": [st.name for st in det.stages],
        "window_v": [lo, hi],
        "rest_levels_v": det.rest_levels(),
        "supply_a": det.supply_budget().total,
        "parts_c": det.temperature - 273.15,
        "gate_bias_v": det.follower.gate_bias,
    }
    text = "\n".join(
        [
            f"design OK: {det.name}",
            f"lens: {data['facets']} facets, {data['beams']} beams",
            "stages: " + ", ".join(data["stages"]),
            f"window: {lo:.4f} to {hi:.4f} V",
            f"supply: {data['supply_a'] * 1e6:.2f} µA",
            f"parts at {data['parts_c']:.4g} °C: gate lifted {data['gate_bias_v'] * 1e3:.3g} mV"
            " by the JFET's leakage",
        ]
    )
    _emit(args, data, text)


def cmd_demo_design(args):
    from .demo_text import DEMO_TOML

    _outputs(args, "--output")
    write_new(args.output, DEMO_TOML, args.force)
    _emit(args, {"written": args.output}, f"wrote {args.output}")


def cmd_walk(args):
    from ..physics.scene import Path, radial_path, tangential_path, walks_from_paths

    _outputs(args, "--csv", "--plot")
    d = _design(args)
    det = d.operating
    dist = (
        d.analysis.walk_distance
        if args.distance is None
        else parse_quantity(args.distance, "--distance", "m")
    )
    bearing = check_range("--bearing", parse_quantity(args.bearing, "--bearing"), -360, 360, "°")
    speed = d.speed if args.speed is None else parse_quantity(args.speed, "--speed", "m/s")
    check_range("--speed", speed, *WALK_SPEED_RANGE, "m/s (a person's speed)")
    check_range("--distance", dist, 0.05, 1000.0, "m")
    if args.kind == "tangential":
        sense = 1 if args.direction == "ccw" else -1
        path, closest = tangential_path(dist, bearing, speed, 6.0, sense), dist
    elif args.kind == "radial":
        closest = max(dist - 3.0, 0.3)
        path = radial_path(dist + 3.0, closest, bearing, speed)
    else:  # standing or seated still (a minor-motion target moves only its arm)
        b = math.radians(bearing)
        path, closest = Path(((dist * math.cos(b), dist * math.sin(b)),), speed), dist
    fs = float(det.sample_rate_for(speed, closest, d.analysis.sample_rate)[0])
    walk = walks_from_paths([path], max(path.duration, 6.0) + 4.0, fs)
    res = det.simulate(d.target, d.environment, walk, lux=d.lux)
    cols = {
        "time_s": res.time,
        "equivalent_power_w": res.equivalent_power[0],
        "gate_v": res.gate_voltage[0],
        "source_v": res.source_voltage[0],
    }
    for k, out in enumerate(res.stage_outputs, 1):
        cols[f"stage{k}_v"] = out[0]
    if args.csv:
        from .output import columns_csv  # with the waveforms' other outputs

        write_new(args.csv, columns_csv(cols), args.force)
    if args.plot:
        from . import plots

        write_new(args.plot, plots.png_bytes(plots.waveforms(res, det)), args.force)
    dec = res.decisions[0]
    rest = det.rest_levels()[-1]
    data = {
        "distance_m": dist,
        "bearing_deg": bearing,
        "speed_m_s": speed,
        "kind": args.kind,
        "direction": args.direction if args.kind == "tangential" else None,
        "detected": dec.detected,
        "first_on_s": dec.first_on,
        "peak_gate_v": float(np.max(np.abs(res.gate_voltage))),
        "peak_comparator_excursion_v": float(np.max(np.abs(res.comparator_input - rest))),
        "pulses": int(res.pulses.start.size),
        "window_v": list(res.window),
    }
    text = "\n".join(f"{k}: {v}" for k, v in data.items())
    _emit(args, data, text)


def cmd_range(args):
    from ..analysis.detection_range import range_table

    _outputs(args, "--map")
    d = _design(args)
    a = d.analysis
    bearings = a.bearings if args.bearings is None else _list(args.bearings, "--bearings")
    kinds = ("tangential", "radial") if args.kind == "both" else (args.kind,)
    from ..analysis.coverage import COVERAGE_DIAMETER, diameter_from_ranges

    prog = Progress("range", True if args.progress else None)
    results = range_table(d, kinds, bearings, prog)
    rows = [
        {"kind": r.kind, "bearing_deg": r.bearing_deg, "range_m": r.range,
         "range_noise_free_m": r.range_noise_free, "range_interval_m": r.range_interval,
         "gaps_m": r.gaps,
         "walk_direction": r.walk_direction if r.kind == "tangential" else "towards"}
        for r in results
    ]  # fmt: skip
    data = {"level": a.level, "speed_m_s": d.speed, "ranges": rows}
    head = f"{'walk':>10} {'bearing':>8} {'range m':>8} {'95 % interval':>13} {'noise-free':>10}"
    lines = [head + "  gaps"] + [
        f"{r['kind']:>10} {r['bearing_deg']:8.1f} {r['range_m']:8.2f} "
        f"{span(r['range_interval_m']):>13} {r['range_noise_free_m']:10.2f}  "
        + ", ".join(f"{g0:.2f}–{g1:.2f} m" for g0, g1 in r["gaps_m"])
        for r in rows
    ]
    if d.detector.mount.kind == "ceiling":
        diam = {k: diameter_from_ranges(r for r in results if r.kind == k) for k in kinds}
        data["coverage_diameter_m"] = diam
        data["coverage_diameter_means"] = COVERAGE_DIAMETER
        lines += [f"coverage diameter, {k}: {v:.2f} m" for k, v in diam.items() if v is not None]
    if args.map:
        from ..analysis.coverage import top_view
        from . import plots

        m = top_view(d.operating, d.target, d.environment, "tangential", a)
        write_new(args.map, plots.png_bytes(plots.top_view(m, d.operating)), args.force)
        if d.detector.mount.kind == "ceiling":
            data["map_coverage_diameter_m"] = m.diameter(a.level)
            lines.append(f"coverage diameter on the map, tangential: {m.diameter(a.level):.2f} m")
    _emit(args, data, "\n".join(lines))


def cmd_sweep(args):
    from ..analysis.sweep import best_meaning, check_sweep_path, log_values, trade_off
    from .design_schema import unit_of

    d = _design(args)
    if args.budget is not None:
        d = _with_setting(
            d, "false_trigger_budget", parse_quantity(args.budget, "--budget"), "--budget"
        )
    a = d.analysis
    path = args.path or a.sensitivity_path
    current = check_sweep_path(d, path)
    unit = unit_of(path)
    if args.values is not None:
        if path == "target":
            values = [v.strip() for v in args.values.split(",") if v.strip()]
        elif unit == "°C":
            values = [
                parse_celsius(v.strip(), f"--values[{i}]")
                for i, v in enumerate(args.values.split(","))
                if v.strip()
            ]
        else:  # the swept key's unit, as the design file reads it: "3m" of a height is 3 m
            values = _list(args.values, "--values", unit)
    elif path == a.sensitivity_path and a.sensitivity_values:
        values = list(a.sensitivity_values)
    elif isinstance(current, str) or current <= 0:
        raise DesignError("--values", None, f"values to sweep {path} over")
    else:
        values = log_values(current / 4, current * 2, 5)
    budget = a.false_trigger_budget
    tr = trade_off(d, path, values, budget, Progress("sweep", True if args.progress else None))
    rows = [dict(r) for r in tr.table.rows]
    meaning = best_meaning(path)
    if meaning is None:
        best_text = f"no best value: {path} is not a value of the electronics"
    elif tr.best_value is None:
        best_text = f"no value meets the budget of {budget:g} false triggers per year"
    else:
        best_text = f"best ({meaning}, {budget:g}/year): {path} = {tr.best_value}"
    _emit(
        args,
        {
            "path": path,
            "unit": unit,
            "budget_per_year": budget,
            "best_value": tr.best_value,
            "best_means": meaning,
            "rows": rows,
        },
        tr.table.to_text() + "\n" + best_text,
    )


def cmd_false_triggers(args):
    from ..analysis.false_triggers import (
        DAY,
        YEAR,
        analytic_rate,
        comparator_sources,
        format_rate,
        monte_carlo_rate,
        rate_fields,
        threshold_for_rate,
    )
    from ..circuit.noise import noise_budget

    d = _design(args)
    det, env = d.operating, d.environment
    src = comparator_sources(det, env, d.draught)
    b = noise_budget(src, (1e-3, 1e3))
    est = analytic_rate(det, env, d.draught, sources=src)
    th, r = threshold_for_rate(det, env, 1.0 / YEAR, d.draught)
    data = {
        "noise": dict(zip(b.names, b.rms.tolist(), strict=True)),
        "noise_total_v": b.total_rms,
        "pulse_rate_per_hour": est.pulse_rate * 3600,
        "alarms_per_hour": est.alarm_rate * 3600,
        "alarms_per_day": est.alarm_rate * DAY,
        **rate_fields(est.alarm_rate * YEAR),
        "threshold_for_1_per_year_v": th,
        "sensitivity_resistor_for_1_per_year_ohm": r,
    }
    text = (
        b.table() + f"\nanalytic: {format_rate(est.alarm_rate * YEAR)}"
        f"\n1 per year needs a {th * 1e3:.2f} mV threshold"
    )
    if args.mc_hours is not None:
        hours = check_range(
            "--mc-hours",
            parse_quantity(args.mc_hours, "--mc-hours"),
            MC_HOURS[0],
            MC_HOURS[1],
            "h",
        )
        check_work("--mc-hours", hours * 3600 * d.analysis.sample_rate)
        mc = monte_carlo_rate(
            det,
            env,
            hours * 3600,
            d.draught,
            d.analysis.seed,
            sample_rate=d.analysis.sample_rate,
            progress=Progress("monte carlo", True if args.progress else None),
        )
        data["monte_carlo"] = {
            "hours": mc.duration / 3600,
            "pulses": mc.pulses,
            "alarms": mc.alarms,
            "alarms_per_day_95": [x * DAY for x in mc.alarm_interval],
        }
        text += (
            f"\nMonte Carlo {mc.duration / 3600:.1f} h: {mc.alarms} turn-ons, 95 % "
            f"interval {mc.alarm_interval[0] * DAY:.3g}–{mc.alarm_interval[1] * DAY:.3g} "
            "per day"
        )
    _emit(args, data, text)


def cmd_ambient(args):
    from ..analysis.ambient import ambient_study

    _outputs(args, "--plot")
    d = _design(args)
    cases = d.ambient
    for key, option in (("ramp_rates", "--ramps"), ("hvac_amplitudes", "--hvac")):
        text = getattr(args, option[2:])
        if text is None:
            continue
        try:
            cases = dataclasses.replace(cases, **{key: tuple(_list(text, option))})
        except DesignError as err:  # name the option, keep the index of the bad value
            field = err.field.replace(f"ambient.{key}", option)
            raise DesignError(field, err.value, err.expected) from None
    study = ambient_study(d.operating, d.environment, cases, d.draught)
    if args.plot:
        from . import plots

        write_new(args.plot, plots.png_bytes(plots.ambient_case(study)), args.force)
    rows = [
        {"case": c.label, "kind": c.kind, "value": c.value, "turn_ons": c.turn_ons,
         "pulses": c.pulses,
         "excursion_up_v": c.excursion_up, "excursion_down_v": c.excursion_down,
         "margin_v": c.margin, "margin_sigma": c.margin_sigma}
        for c in study.cases
    ]  # fmt: skip
    data = {"window_v": list(study.window), "noise_rms_v": study.sigma, "cases": rows,
            "worst": study.worst.label}  # fmt: skip
    _emit(args, data, study.table())


def cmd_netlist(args):
    from ..circuit.netlist import netlist
    from ..physics.scene import tangential_path, walks_from_paths
    from ..physics.sensor import gate_current

    _outputs(args, "--output")
    d = _design(args)
    fs = d.analysis.sample_rate
    cur = None
    if args.walk_distance is not None:
        dist = parse_quantity(args.walk_distance, "--walk-distance", "m")
        w = walks_from_paths(
            [tangential_path(dist, 0.0, d.speed, length=6.0)], 6.0 / d.speed + 4.0, fs
        )
        run = d.operating.run(d.target, d.environment, w, ("equivalent_power",))
        cur = gate_current(d.operating.sensor, run.equivalent_power, fs)[0]
    text = netlist(d.operating, cur, fs, None if cur is not None else 60.0, power_up=cur is None)
    write_new(args.output, text, args.force)
    _emit(args, {"written": args.output}, f"wrote {args.output}")


def cmd_report(args):
    from .report import compute, quick_design, quick_note, render

    args.output = args.output if args.output is not None else free_name("pirchain-report", ".html")
    _outputs(args, "--output")
    d = _design(args)
    if getattr(args, "quick", False):
        d = quick_design(d)
    out = args.output
    data = compute(d, Progress("report", True if args.progress else None))
    if getattr(args, "quick", False):
        data["quick"] = data["numbers"]["quick"] = quick_note(d)
    write_new(out, render(d, data), args.force)
    _emit(
        args,
        {
            "written": out,
            **{
                k: v
                for k, v in data["numbers"].items()
                if not k.endswith("_text") and not k.endswith("_table")
            },
        },
        f"wrote {out}\n\n{_epilog()}",
    )


def _on_design(command):
    """A handler running ``command(args, design, emit)`` of a command module."""
    return lambda a: command(a, _design(a), lambda d, t: _emit(a, d, t))


HANDLERS = {
    "check": cmd_check,
    "demo-design": cmd_demo_design,
    "walk": cmd_walk,
    "range": cmd_range,
    "sweep": cmd_sweep,
    "false-triggers": cmd_false_triggers,
    "ambient": cmd_ambient,
    "netlist": cmd_netlist,
    "report": cmd_report,
    "yield": _on_design(cli_production.cmd_yield),
    "choose-values": _on_design(cli_production.cmd_choose_values),
    "two-wire": _on_design(cli_two_wire.cmd_two_wire),
    "inject": _on_design(cli_inject.cmd_inject),
    "bench-fit": lambda a: cli_calibration.cmd_bench_fit(
        a, _design(a), _design_text(a), lambda d, t: _emit(a, d, t)
    ),
}


def main(argv=None) -> int:
    """Entry point; returns the exit code (0 ok, 2 bad design or arguments, 3 internal error)."""
    args = build_parser().parse_args(argv)
    if args.command is None:
        args = build_parser().parse_args(["report"])
    try:
        with warnings.catch_warnings():
            warnings.simplefilter("always", ValidityWarning)
            warnings.showwarning = lambda m, *a, **k: print(
                f"pirchain: warning: {terminal_text(str(m))}", file=sys.stderr
            )
            with warnings_once():  # each kind of warning once per run, with its count
                HANDLERS[args.command](args)
        return EXIT_OK
    except DesignError as exc:
        print(f"pirchain: design error: {exc}", file=sys.stderr)
        return EXIT_DESIGN
    except BrokenPipeError:  # output piped into a program that stopped reading
        return EXIT_OK
    except KeyboardInterrupt:
        print("pirchain: interrupted; nothing half-written was left", file=sys.stderr)
        return EXIT_INTERRUPTED
    except Exception as exc:  # noqa: BLE001 - one line for the user, traceback on --debug
        if getattr(args, "debug", False):
            raise
        print(
            f"pirchain: internal error: {type(exc).__name__}: {exc} (rerun with --debug)",
            file=sys.stderr,
        )
        return EXIT_INTERNAL


if __name__ == "__main__":
    sys.exit(main())
