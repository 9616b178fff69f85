"""The ``two-wire`` command: whether a two-wire (no-neutral) switch can power its detector
through the lamp, off and on and across the change, for which lamps, and what to fit.
Registered by :mod:`pirchain.interface.cli`; the report's section uses the same text and
numbers (:func:`study_data`, :func:`study_text`)."""

from __future__ import annotations

import math

from ..errors import DesignError
from .cautions import CAUTIONS

COMMANDS = {
    "two-wire": "two-wire switch: self-powering through the lamp, glow, loss, rail dips",
}
_HELP = (
    " Needs a [two_wire] section in the design file (the switch's power stage, the lamps"
    " it must work with, optionally the lamp as the detector sees it). CAUTION: the circuit"
    " modelled carries mains voltage."
)


def add_parsers(add) -> None:
    """Add the command's options (``add(name, extra_help)`` makes a sub-parser)."""
    sp = add("two-wire", _HELP)
    sp.add_argument("--plot", help="write a PNG of the storage capacitor and rail here")


def _ua(x):
    return f"{x * 1e6:+.1f} µA"


def _glow(off) -> str:
    if off.glow == "flashes":
        return f"flashes every {off.flash_interval:.3g} s"
    if off.glow == "none":
        return f"none (settles at {off.settles_at:.0f} V)"
    return "—"


def study_data(study, design) -> dict:
    """The study as JSON-ready data (SI units)."""
    sw = design.two_wire.switch
    ch, trig = study.change, study.self_trigger

    def row(r, own):
        o, n = r.off, r.on
        return {
            "lamp": o.lamp, "design_lamp": own, "works": r.works, "reasons": list(r.reasons),
            "off_harvest_a": o.harvest, "off_draw_a": o.draw, "off_margin_a": o.margin,
            "leakage_a": o.leakage, "glow": o.glow, "flash_interval_s": o.flash_interval,
            "flash_energy_j": o.flash_energy, "settles_at_v": o.settles_at,
            "glow_threshold_a": o.glow_threshold, "on_harvest_a": n.harvest,
            "on_draw_a": n.draw, "on_margin_a": n.margin, "firing_angle_deg":
            math.degrees(n.alpha) if math.isfinite(n.alpha) else None,
            "power_ratio": n.power_ratio, "lamp_power_w": n.lamp_power, "thd": n.thd,
            "third_harmonic": n.third, "rms_current_a": n.rms_current, "holds": n.holds,
            "within_rating": n.within_rating,
        }  # fmt: skip

    out = {
        "caution": CAUTIONS,
        "mains_v": sw.mains.voltage, "mains_hz": sw.mains.frequency,
        "mains_tolerance": sw.mains.tolerance, "chain_draw_a": study.chain_draw,
        "verdicts": list(study.verdicts),
        "lamps": [row(r, k < study.design_lamps) for k, r in enumerate(study.rows)],
        "change": {
            "lamp": ch.lamp, "on_from_s": ch.on_from, "on_until_s": ch.on_until,
            "v_store_min_v": ch.v_store_min, "rail_nominal_v": ch.rail_nominal,
            "rail_min_v": ch.rail_min, "rail_minimum_v": ch.rail_minimum,
            "below_s": ch.below_s, "comparator_peak_v": ch.comparator_peak,
            "window_half_v": ch.window_half, "supply_pulses": ch.supply_pulses,
            "supply_turn_ons": ch.supply_turn_ons,
        },
        "storage_min_f": study.storage[0], "storage_recommended_f": study.storage[1],
        "current_limit_low_a": study.current_limit[0],
        "current_limit_high_a": study.current_limit[1],
        "current_limit_recommended_a": study.current_limit[2],
        "lamp_self_trigger": None if trig is None else {
            "pulses": trig.pulses, "turn_ons": trig.turn_ons,
            "last_outside_s": trig.last_outside_s, "lockout_s": trig.lockout_s,
            "covered": trig.covered, "lux_on": trig.lux_on,
            "inhibits_itself": trig.inhibits_itself,
        },
    }  # fmt: skip
    return out


def study_text(study, design) -> str:
    """The study as text."""
    sw = design.two_wire.switch
    m = sw.mains
    lines = [
        f"Two-wire supply at {m.voltage:g} V ± {m.tolerance * 100:g} %, {m.frequency:g} Hz;"
        f" the chain draws {study.chain_draw * 1e6:.1f} µA.",
        "CAUTION: " + CAUTIONS,
        "",
        "Findings that need action:" if study.verdicts else "Findings that need action: none.",
        *(f"  - {v}" for v in study.verdicts),
        "",
        f"Lamps (off state at {m.low:.0f} V; on-state harvest at {m.low:.0f} V, firing and"
        f" power at {m.voltage:.0f} V):",
        f"  {'lamp':30s} {'off margin':>11s}  {'glow while off':26s} {'on margin':>10s}"
        f" {'firing':>7s} {'power':>6s} {'THD':>5s}  verdict",
    ]
    for k, r in enumerate(study.rows):
        o, n = r.off, r.on
        fire = f"{math.degrees(n.alpha):.0f}°" if math.isfinite(n.alpha) else "never"
        mark = "*" if k < study.design_lamps else " "
        lines.append(
            f" {mark}{o.lamp[:30]:30s} {_ua(o.margin):>11s}  {_glow(o)[:26]:26s}"
            f" {n.margin * 1e3:+8.2f}mA {fire:>7s} {n.power_ratio * 100:5.1f}% {n.thd:5.2f}"
            f"  {'works' if r.works else '; '.join(r.reasons)}"
        )
    lines.append("  (* the design's own lamps; power: of full conduction for a filament)")
    ch = study.change
    lines += [
        "",
        f"Across the change (off → on at {ch.on_from:g} s → off at {ch.on_until:g} s, {ch.lamp},"
        f" {m.low:.0f} V): storage capacitor down to {ch.v_store_min:.2f} V, rail down to"
        f" {ch.rail_min:.2f} V (nominal {ch.rail_nominal:.2f} V, the chain's minimum"
        f" {ch.rail_minimum:.2f} V); the rail's movement moves the comparator input by"
        f" {ch.comparator_peak * 1e3:.1f} mV against a ±{ch.window_half * 1e3:.0f} mV window:"
        f" {ch.supply_pulses} pulses, {ch.supply_turn_ons} turn-ons by itself.",
    ]
    trig = study.self_trigger
    if trig is not None:
        lines.append(
            f"Lamp at switch-off: its cooling keeps the comparator input outside the window"
            f" until {trig.last_outside_s:.1f} s ({trig.pulses} pulses, {trig.turn_ons}"
            f" turn-ons without a lockout); the {trig.lockout_s:.1f} s lockout "
            + ("covers it." if trig.covered else "does NOT cover it.")
            + (f" Its light adds {trig.lux_on:.0f} lux at the daylight sensor"
               + (", enough to set the inhibit." if trig.inhibits_itself else ".")
               if trig.inhibits_itself is not None else "")
        )  # fmt: skip
    c_min, c_rec = study.storage
    lo, hi, rec = study.current_limit
    lines += [
        "",
        "Recommended: storage capacitor "
        + (f"at least {c_min * 1e6:.3g} µF, {c_rec * 1e6:.3g} µF with margin"
           if math.isfinite(c_min) else "— none can help while a state's harvest is short")
        + f"; off-state current limit between {lo * 1e6:.1f} and "
        + (f"{hi * 1e6:.1f} µA" if math.isfinite(hi) else "any µA (no listed LED lamp limits it)")
        + (f": {rec * 1e6:.2g} µA." if math.isfinite(rec) else ": none works."),
    ]  # fmt: skip
    return "\n".join(lines)


def cmd_two_wire(args, design, emit):
    from ..analysis.two_wire import two_wire_study
    from .output import check_output, write_new

    if design.two_wire is None:
        raise DesignError("two_wire", "missing", "a [two_wire] section in the design file")
    if args.plot:
        check_output(args.plot, False, "--plot")
    study = two_wire_study(design)
    data = study_data(study, design)
    if args.plot:
        from . import plots

        write_new(args.plot, plots.png_bytes(plots.two_wire_change(study.change)), False,
                  "--plot")  # fmt: skip
        data["plot"] = args.plot
    emit(data, study_text(study, design))
