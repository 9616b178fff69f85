"""The ``inject`` command: a signal from a CSV (or ``.npy``) file driven in at any node of the
chain (an element current as a bench injects it, the equivalent power, the gate, a stage's
input, the comparator input) and run through the rest of it with the decision logic, as a
walk is. Registered by :mod:`pirchain.interface.cli`."""

from __future__ import annotations

import numpy as np

from ..errors import DesignError
from ..units import parse_quantity
from .output import check_output, columns_csv, write_new

COMMANDS = {
    "inject": "drive a signal from a file in at any node: waveforms, pulses, decisions",
}
_HELP = (
    " The file holds a time column and a value column (header lines allowed; comma,"
    " semicolon, tab or spaces): an element current [A] (--node element_current, the"
    " pyroelectric current into the gate node, as the exported netlist's source), an"
    " equivalent power [W], a gate-voltage change [V], a stage's input or the comparator"
    " input [V]. It is resampled to the design's analysis.sample_rate."
)
#: Units of the value column per node (the stage inputs are voltages too).
UNITS = {"element_current": "A", "equivalent_power": "W", "gate": "V", "comparator": "V"}


def add_parsers(add) -> None:
    """Add the command's options (``add(name, extra_help)`` makes a sub-parser)."""
    sp = add("inject", _HELP)
    sp.add_argument("--signal", required=True, help="CSV or .npy file: time, value")
    sp.add_argument(
        "--node",
        required=True,
        help="element_current, equivalent_power, gate, stage<k>_input, comparator",
    )
    sp.add_argument("--scale", default="1", help="multiplier of the value column (1p: pA)")
    sp.add_argument("--time-scale", default="1", help="multiplier of the time column (1m: ms)")
    sp.add_argument(
        "--start", choices=("steady", "discharged"), default="steady",
        help="stages in steady state, or every capacitor discharged (power-up)",
    )  # fmt: skip
    sp.add_argument("--tail", default="2", help="seconds simulated after the file ends")
    sp.add_argument("--csv", help="write the waveforms from the node on here")
    sp.add_argument("--force", action="store_true", help="replace an existing output file")


def _nodes(detector) -> tuple[str, ...]:
    return (*UNITS, *(f"stage{k}_input" for k in range(1, len(detector.stages) + 1)))


def cmd_inject(args, design, emit) -> None:
    """Run the command on ``design``; ``emit(data, text)`` prints the result."""
    from .capture_file import read_capture

    if args.csv:
        check_output(args.csv, args.force, "--csv")
    det = design.operating
    det.require_analog()
    fs = design.analysis.sample_rate
    nodes = _nodes(det)
    scale, tscale = (
        parse_quantity(args.scale, "--scale"),
        parse_quantity(args.time_scale, "--time-scale"),
    )
    tail = parse_quantity(args.tail, "--tail")
    if not 0.0 <= tail <= 600.0:
        raise DesignError("--tail", tail, "0 to 600 s")
    cap = read_capture(args.signal, args.node, scale, tscale, nodes)
    value = cap.resampled(fs)
    hold = np.full(int(round(tail * fs)), value[-1])  # the last value held through the tail
    sig = np.concatenate([value, hold])[None, :]
    taps = ("stages", "comparator", "events")
    if args.node in ("element_current", "equivalent_power", "gate"):
        taps = ("gate", "source", *taps)
    run = det.drive(args.node, sig, fs, taps, lux=design.lux, start=args.start)
    dec, oc = run.decisions[0], run.outcomes
    rest = det.rest_levels()[-1]
    data = {
        "node": args.node,
        "unit": UNITS.get(args.node, "V"),
        "samples": int(sig.shape[1]),
        "sample_rate_hz": fs,
        "file_sample_rate_hz": cap.sample_rate,
        "start": args.start,
        "detected": bool(dec.detected),
        "first_on_s": dec.first_on,
        "on_intervals_s": [list(iv) for iv in dec.on_intervals],
        "pulses": int(oc.pulses[0]),
        "turn_ons": int(oc.turn_ons[0]),
        "peak_comparator_excursion_v": float(np.max(np.abs(run.comparator_input[0] - rest))),
        "window_v": list(run.window),
    }
    if args.csv:
        cols = {"time_s": run.time}
        if run.gate_voltage is not None:
            cols["gate_v"], cols["source_v"] = run.gate_voltage[0], run.source_voltage[0]
        for k, out in enumerate(run.stage_outputs, 1):
            cols[f"stage{k}_v"] = out[0]
        data["written"] = write_new(args.csv, columns_csv(cols), args.force, "--csv")
    text = "\n".join(f"{k}: {v}" for k, v in data.items())
    emit(data, text)
