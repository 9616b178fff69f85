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


def front_end_summary(distances=(2.0, 4.0, 6.0, 8.0, 10.0, 12.0), speed=1.0) -> str:
    """Peak element power and gate voltage of tangential demo walks on the boresight."""
    det = demo_detector()
    env = demo_environment()
    paths = [tangential_path(d, 0.0, speed, length=6.0) for d in distances]
    walks = walks_from_paths(paths, 6.0 / speed + 2.0, 100.0)
    res = det.front_end(adult(), env, walks)
    s = det.sensor
    lines = [
        f"design: {det.name}",
        f"lens: {len(det.lens.facets)} facets, {det.beams().count} beams; mount "
        f"{det.mount.kind} at {det.mount.height:.2f} m",
        f"sensor: tau_T {s.thermal_time_constant:.3g} s, tau_E "
        f"{s.electrical_time_constant:.3g} s, |R_V(1 Hz)| {abs(s.responsivity(1.0)):.4g} V/W",
        f"room: {env.air_c:.1f} degC; target: adult, tangential walks at {speed:g} m/s",
        "",
        f"{'distance [m]':>12}  {'peak |P_eq| [nW]':>16}  {'peak |v_gate| [uV]':>18}",
    ]
    peak_p = np.abs(res.equivalent_power).max(axis=1) * 1e9
    peak_v = np.abs(res.gate_voltage).max(axis=1) * 1e6
    lines += [
        f"{d:12.1f}  {p:16.3f}  {v:18.1f}"
        for d, p, v in zip(distances, peak_p, peak_v, strict=True)
    ]
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
        "frontend",
        help="peak sensor signals of tangential demo walks",
        description="Peak element power and gate voltage of tangential walks across the demo "
        "detector's boresight.",
        epilog=_epilog(),
        formatter_class=argparse.RawDescriptionHelpFormatter,
    )
    return parser


def main(argv=None) -> int:
    """Entry point; returns the exit code (0 ok, 2 bad design or arguments, 3 internal error)."""
    parser = build_parser()
    args = parser.parse_args(argv)
    try:
        if args.command in (None, "frontend"):
            print(front_end_summary())
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
