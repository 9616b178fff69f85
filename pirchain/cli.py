"""Command line: ``pirchain`` runs the main job on the built-in demo design."""

from __future__ import annotations

import argparse
import sys
import textwrap

import numpy as np

from .cautions import CAUTIONS
from .demo import demo_detector, demo_environment
from .errors import DesignError, PirchainError
from .scene import adult, tangential_path, walks_from_paths

EXIT_OK, EXIT_DESIGN, EXIT_INTERNAL = 0, 2, 3


def _epilog() -> str:
    return "Caution: " + textwrap.fill(CAUTIONS, 78)


def demo_summary(distances=(2.0, 4.0, 8.0, 12.0, 16.0, 20.0, 25.0, 30.0), speed=1.0) -> str:
    """Tangential demo walks through the whole chain, power-up settling and supply budget."""
    det = demo_detector()
    env = demo_environment()
    paths = [tangential_path(d, 0.0, speed, length=6.0) for d in distances]
    walks = walks_from_paths(paths, 6.0 / speed + 4.0, 100.0)
    res = det.simulate(adult(), env, walks)
    s = det.sensor
    lo, hi = res.window
    _, _, settle = det.power_up(120.0, 50.0)
    lines = [
        f"design: {det.name}",
        f"lens: {len(det.lens.facets)} facets, {det.beams().count} beams; mount "
        f"{det.mount.kind} at {det.mount.height:.2f} m",
        f"sensor: tau_T {s.thermal_time_constant:.3g} s, tau_E "
        f"{s.electrical_time_constant:.3g} s, |R_V(1 Hz)| {abs(s.responsivity(1.0)):.4g} V/W",
        f"window: {lo:.3f} to {hi:.3f} V; power-up settling {settle:.1f} s",
        f"room: {env.air_c:.1f} degC; target: adult, tangential walks at {speed:g} m/s",
        "",
        f"{'distance [m]':>12}  {'peak |v_gate| [uV]':>18}  {'peak |v_c - rest| [V]':>21}"
        f"  {'rail':>4}  {'detected':>8}",
    ]
    rest = det.rest_levels()[-1]
    peak_v = np.abs(res.front.gate_voltage).max(axis=1) * 1e6
    peak_c = np.abs(res.analog.comparator_input - rest).max(axis=1)
    rail = np.any([p.any(axis=1) for p in res.analog.pinned], axis=0)
    for d, v, c, r, det_ in zip(distances, peak_v, peak_c, rail, res.detected, strict=True):
        lines.append(
            f"{d:12.1f}  {v:18.1f}  {c:21.3f}  {'yes' if r else 'no':>4}"
            f"  {'yes' if det_ else 'no':>8}"
        )
    from .analysis.false_triggers import (
        YEAR,
        analytic_rate,
        comparator_sources,
        format_rate,
        threshold_for_rate,
    )
    from .disturbance import Draught
    from .noise import noise_budget

    draught = Draught()
    sources = comparator_sources(det, env, draught)
    est = analytic_rate(det, env, draught, sources=sources)
    th, r_sens = threshold_for_rate(det, env, 1.0 / YEAR, draught)
    lines += [
        "",
        "noise at the comparator input (with a light HVAC draught):",
        noise_budget(sources, (1e-3, 1e3)).table(),
        f"false triggers (Rice + counting): {format_rate(est.per(YEAR))} at the "
        f"{det.comparator.threshold * 1e3:.0f} mV threshold",
        f"one false trigger per year at a {th * 1e3:.1f} mV threshold"
        + (f" (sensitivity resistor {r_sens / 1e3:.1f} kOhm)" if r_sens else ""),
    ]
    lines += ["", "supply budget:", det.supply_budget().table()]
    return "\n".join(lines)


def build_parser() -> argparse.ArgumentParser:
    """The argument parser of the ``pirchain`` command."""
    parser = argparse.ArgumentParser(
        prog="pirchain",
        description="Model a passive-infrared motion detector from the walking person to the "
        "detector output. With no subcommand, runs the main analysis on the built-in demo design.",
        epilog=_epilog(),
        formatter_class=argparse.RawDescriptionHelpFormatter,
    )
    sub = parser.add_subparsers(dest="command")
    sub.add_parser(
        "demo",
        help="tangential demo walks through the whole chain",
        description="Tangential walks across the demo detector's boresight through the whole "
        "chain (gate, comparator input, decision), power-up settling and supply budget.",
        epilog=_epilog(),
        formatter_class=argparse.RawDescriptionHelpFormatter,
    )
    return parser


def main(argv=None) -> int:
    """Entry point; returns the exit code (0 ok, 2 bad design or arguments, 3 internal error)."""
    parser = build_parser()
    args = parser.parse_args(argv)
    try:
        if args.command in (None, "demo"):
            print(demo_summary())
            print("\n" + _epilog())
        return EXIT_OK
    except DesignError as exc:
        print(f"pirchain: design error: {exc}", file=sys.stderr)
        return EXIT_DESIGN
    except PirchainError as exc:
        print(f"pirchain: error: {exc}", file=sys.stderr)
        return EXIT_INTERNAL


if __name__ == "__main__":
    sys.exit(main())
