"""One self-contained HTML report of a design: every image embedded, every user string escaped."""

from __future__ import annotations

import base64
import datetime
import html
import math
import os
import warnings

import numpy as np

from .. import __version__
from ..analysis.ambient import ambient_study
from ..analysis.coverage import side_view, top_view
from ..analysis.detection_range import range_table
from ..analysis.false_triggers import (
    YEAR,
    analytic_rate,
    comparator_sources,
    format_rate,
    threshold_for_rate,
)
from ..analysis.power_up import power_up
from ..analysis.sweep import log_values, trade_off
from ..circuit.noise import noise_budget, sensor_sources
from ..circuit.schematic import schematic_svg
from ..errors import ValidityWarning, warnings_once
from ..physics.scene import tangential_path, walks_from_paths
from ..units import format_eng
from . import plots, report_calibration, report_signoff, report_two_wire
from .cautions import CAUTIONS
from .design_schema import unit_of
from .output import span, terminal_text

SECTIONS = (
    "Design summary",
    "Schematic",
    "Chain response",
    "Noise budget",
    "Sample walk",
    "Coverage",
    "Range per bearing",
    "Sensitivity sweep",
    "Trade-off",
    "Room-temperature drift and HVAC",
    "Power-up and supply",
    "Assumptions and validity",
    "Cautions",
)


def _today() -> str:
    """The report's date: SOURCE_DATE_EPOCH if set (the reproducible-builds convention, for
    byte-identical reports on any day), else today."""
    epoch = os.environ.get("SOURCE_DATE_EPOCH", "")
    if epoch.isdigit() and len(epoch) <= 12:
        return datetime.datetime.fromtimestamp(int(epoch), datetime.UTC).date().isoformat()
    return datetime.date.today().isoformat()


def _esc(x) -> str:
    """User or report text for HTML: control and bidi characters removed, then escaped."""
    return html.escape(terminal_text(str(x)))


def _img(png: bytes, alt: str) -> str:
    return f'<img alt="{_esc(alt)}" src="data:image/png;base64,{base64.b64encode(png).decode()}">'


def _svg(svg: bytes, alt: str) -> str:
    # at its own size, scrolling sideways on a narrow screen: shrunk, its text is unreadable
    return (
        f'<div class="wide"><img style="max-width:none;width:60em" alt="{_esc(alt)}" '
        f'src="data:image/svg+xml;base64,{base64.b64encode(svg).decode()}"></div>'
    )


def _pre(text: str) -> str:
    return f"<pre>{_esc(text)}</pre>"


def _table(header, rows) -> str:
    h = "".join(f"<th>{_esc(str(x))}</th>" for x in header)
    body = "".join(
        "<tr>" + "".join(f"<td><bdi>{_esc(x)}</bdi></td>" for x in r) + "</tr>" for r in rows
    )  # <bdi>: a user string cannot reorder the text around it
    return f"<div class='wide'><table><tr>{h}</tr>{body}</table></div>"


@warnings_once()
def sample_walk_distance(det, walk_distance: float) -> float:
    """Distance of the report's sample walk [m]: the design's ``walk_distance``, but for a
    ceiling unit no farther than the median ground distance of its downward beams, so the
    walk crosses the pattern instead of passing outside it."""
    if det.mount.kind != "ceiling":
        return walk_distance
    el = det.beams().elevation
    down = el[el < -0.02]
    if down.size == 0:
        return walk_distance
    ground = det.mount.height / np.tan(-down)
    return float(min(walk_distance, np.median(ground)))


_WAYS = {
    "both": "tangential walks both ways in equal numbers (mirror-symmetric set)",
    "ccw": "tangential walks counter-clockwise only (seen from above)",
    "cw": "tangential walks clockwise only (seen from above)",
}
QUICK = {"trials": 2, "refine": 2, "step": 3.0, "coverage_cell": 2.0, "coverage_trials": 1}
QUICK_SWEEP = 3  # sensitivity values of a quick report


def quick_design(design):
    """The design with the quick report's settings (:data:`QUICK`): fewer trials, a coarser
    distance grid and coverage grid, three sweep values; the walks, the physics and every
    section stay the same."""
    import dataclasses

    a = design.analysis
    values = a.sensitivity_values or tuple(log_values(50e3, 1e6, 6))
    keep = tuple(values[i] for i in sorted({0, len(values) // 2, len(values) - 1}))
    quick = dataclasses.replace(a, **QUICK, sensitivity_values=keep[:QUICK_SWEEP])
    return dataclasses.replace(design, analysis=quick)


def quick_note(design) -> str:
    """What a quick report's settings resolve: the trial count, the binomial spread of
    P(detect) at the level and the distance resolution."""
    a = design.analysis
    p = a.level
    half = 1.96 * math.sqrt(p * (1 - p) / a.trials)
    return (
        f"Quick report: {a.trials} walks per distance (P(detect) at the {p:g} level known to "
        f"± {half:.2f} from the walks alone), distances on a {a.step:g} m grid refined "
        f"{a.refine} times (± {a.step / 2**a.refine:.2g} m), coverage on {a.coverage_cell:g} m "
        f"cells with {a.coverage_trials} walk each, {len(a.sensitivity_values)} sweep values. "
        "Use it to iterate; the full report decides."
    )


def compute(design, progress=None) -> dict:
    """Run every analysis of the report; returns figures (PNG/SVG bytes) and numbers."""
    det, env, a = design.operating, design.environment, design.analysis
    tgt = design.target
    out: dict = {"figures": {}, "numbers": {}}
    steps = 8

    def tick(k):
        if progress is not None:
            progress(k / steps)

    fig = out["figures"]
    num = out["numbers"]
    fig["schematic"] = schematic_svg(det)
    fig["bode"] = plots.png_bytes(plots.bode(det))
    sources = comparator_sources(det, env, design.draught)
    budget = noise_budget(sources, (1e-3, 1e3))
    sensor_b = noise_budget(sensor_sources(det), (0.4, 10.0))
    fig["noise"] = plots.png_bytes(plots.noise_psd(sources))
    num["noise_table"] = budget.table()
    num["noise_total_v"] = budget.total_rms
    num["sensor_noise_pp_v"] = 6.6 * sensor_b.total_rms
    tick(1)
    dist = sample_walk_distance(det, a.walk_distance)
    walk = walks_from_paths(
        [tangential_path(dist, 0.0, design.speed, length=6.0)],
        6.0 / design.speed + 4.0,
        float(det.sample_rate_for(design.speed, dist, a.sample_rate)[0]),
    )
    num["walk_distance_m"] = dist
    res = det.simulate(tgt, env, walk, lux=design.lux)
    fig["walk"] = plots.png_bytes(plots.waveforms(res, det))
    num["walk_detected"] = bool(res.detected[0])
    tick(2)
    cov = {}
    for kind in ("tangential", "radial"):
        cov[kind] = top_view(det, tgt, env, kind, a)
        fig[f"top_{kind}"] = plots.png_bytes(plots.top_view(cov[kind], det))
    fig["side"] = plots.png_bytes(plots.side_view(side_view(det, 0.0, 10.0), a.d_max))
    num["coverage_walks"] = sum(c.walks for c in cov.values())
    tick(4)
    ranges = range_table(design)
    fig["range"] = plots.png_bytes(plots.range_by_bearing(ranges))
    num["ranges"] = [
        (r.kind, r.bearing_deg, r.range, r.range_noise_free, r.gaps, r.range_interval)
        for r in ranges
    ]
    tick(5)
    values = a.sensitivity_values or tuple(log_values(50e3, 1e6, 6))
    trade = trade_off(design, a.sensitivity_path, values, a.false_trigger_budget)
    fig["sweep"] = plots.png_bytes(
        plots.sweep_plot(
            trade.table,
            a.sensitivity_path,
            a.false_trigger_budget,
            trade.best,
            unit_of(a.sensitivity_path),
        )  # fmt: skip
    )
    fig["trade"] = plots.png_bytes(plots.trade_off(trade))
    num["sweep_text"] = trade.table.to_text()
    num["best_value"] = trade.best_value
    th, r_sens = threshold_for_rate(det, env, 1.0 / YEAR, design.draught)
    num["threshold_1_per_year_v"] = th
    num["sensitivity_1_per_year_ohm"] = r_sens
    est = analytic_rate(det, env, design.draught, sources=sources)
    num["false_per_year"] = est.per(YEAR)
    study = ambient_study(det, env, design.ambient, design.draught)
    fig["ambient"] = plots.png_bytes(plots.ambient_case(study))
    num["ambient_table"] = study.table()
    num["ambient_worst"] = study.worst.label
    num["ambient_worst_turn_ons"] = study.worst.turn_ons
    num["ambient_worst_margin_sigma"] = study.worst.margin_sigma
    out["calibration"] = report_calibration.compute(design)
    if out["calibration"] is not None:
        num["calibrated_from"] = out["calibration"]["fitted_from"]
    out["two_wire"] = report_two_wire.compute(design)
    if out["two_wire"] is not None:
        num["two_wire_verdicts"] = out["two_wire"]["data"]["verdicts"]
    out["signoff"] = report_signoff.compute(design)
    if out["signoff"] is not None:
        num["signoff_yield"] = out["signoff"]["yield"]["yield"]
        num["signoff_yield_95"] = out["signoff"]["yield"]["yield_95"]
    tick(7)
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", ValidityWarning)
        pu = power_up(det, a.settle_duration, a.settle_sample_rate)
        supply = det.supply_budget()
    fig["power_up"] = plots.png_bytes(plots.power_up(pu))
    num["settling_s"] = pu.settling
    num["supply_table"] = supply.table()
    num["supply_total_a"] = supply.total
    num["supply_exceeds"] = supply.exceeds_limit
    tick(8)
    return out


def render(design, data: dict) -> str:
    """The HTML text of the report."""
    det, env, a = design.operating, design.environment, design.analysis
    fig, num = data["figures"], data["numbers"]
    name = _esc(det.name)  # in <title>; in the page it is also isolated with <bdi>
    s = det.sensor
    summary = [
        ("design", det.name),
        (
            "lens",
            f"{det.lens.name}: {len(det.lens.facets)} facets, "
            f"{det.beams().count} beams, {det.lens.surface}",
        ),
        ("mount", f"{det.mount.kind}, {det.mount.height:g} m, tilt {det.mount.tilt_deg:g}°"),
        (
            "sensor",
            f"{len(s.elements)} elements ({s.connection}), τ_T {s.thermal_time_constant:.3g}"
            f" s, τ_E {s.electrical_time_constant:.3g} s, |R_V(1 Hz)| "
            f"{abs(s.responsivity(1.0)):.4g} V/W, mismatch {s.mismatch:g}",
        ),
        (
            "follower",
            f"R_S {format_eng(det.follower.source_resistance, 'Ω')}, V_S "
            f"{det.follower.offset:.3f} V, gain {det.follower.gain:.4f}, I_D "
            f"{format_eng(det.follower.drain_current, 'A')}",
        ),
    ]
    for k, st in enumerate(det.stages, 1):
        summary.append((f"stage {k}", st.name))
    lo, hi = det.window()
    summary += [
        (
            "window",
            f"{lo:.3f} – {hi:.3f} V (threshold {det.comparator.threshold * 1e3:.1f}"
            f" mV, hysteresis {det.comparator.hysteresis * 1e3:.1f} mV)",
        ),
        (
            "logic",
            f"{det.logic.pulses_required} pulses in {det.logic.count_window:g} s, "
            f"blanking {det.logic.blanking:g} s, hold {det.logic.hold:g} s"
            f"{' retriggerable' if det.logic.retrigger else ''}, lockout "
            f"{det.logic.lockout:g} s, logic rate {det.logic.rate:g} Hz",
        ),
        (
            "scene",
            f"{design.target.name} at {design.speed:g} m/s, room {env.air_c:g} °C, parts at "
            f"{det.temperature - 273.15:.4g} °C",
        ),
    ]
    rng_rows = [
        (
            k,
            f"{b:g}°",
            f"{r:.2f}",
            span(iv),
            f"{rf:.2f}",
            "; ".join(f"{g0:g}–{g1:g} m" for g0, g1 in gaps) or "none",
        )
        for k, b, r, rf, gaps, iv in num["ranges"]
    ]
    r1 = num["sensitivity_1_per_year_ohm"]
    best = num["best_value"]
    parts = [
        "<!DOCTYPE html><html lang='en'><head><meta charset='utf-8'>",
        "<meta name='viewport' content='width=device-width, initial-scale=1'>",
        f"<title>pirchain report: {name}</title>",
        "<style>body{font-family:sans-serif;max-width:60em;margin:auto;padding:1em;color:#111}"
        "img{max-width:100%;height:auto}.wide{overflow-x:auto}"
        "table{border-collapse:collapse}td,th{border:1px solid #999;"
        "padding:2px 6px;font-size:90%}pre{background:#f4f4f4;padding:.5em;overflow-x:auto}"
        ".caution{border:2px solid #b00;padding:.6em;background:#fff4f4}</style></head><body>",
        f"<h1>pirchain report: <bdi>{name}</bdi></h1>",
        f"<p>Generated {_today()} by pirchain {__version__}.</p>",
        f"<p class='caution'><b>Caution.</b> {_esc(CAUTIONS)}</p>",
        *([f"<p class='caution'>{_esc(data['quick'])}</p>"] if data.get("quick") else []),
        "<h2>Design summary</h2>",
        _table(("item", "value"), summary),
        "<h2>Schematic</h2>",
        _svg(fig["schematic"], "schematic of the analog chain"),
        "<h2>Chain response</h2>",
        _img(fig["bode"], "Bode plot"),
        "<h2>Noise budget</h2>",
        f"<p>At the comparator input, the parts at {det.temperature - 273.15:.4g} °C.</p>",
        _img(fig["noise"], "noise spectra"),
        _pre(num["noise_table"]),
        f"<p>Sensor-referred noise 0.4–10 Hz: {num['sensor_noise_pp_v'] * 1e6:.1f} µV p-p "
        "(common practice: tens of µV p-p).</p>",
        "<h2>Sample walk</h2>",
        f"<p>Tangential walk at {num['walk_distance_m']:.3g} m, {design.speed:g} m/s on the "
        "boresight: "
        f"{'detected' if num['walk_detected'] else 'not detected'}.</p>",
        _img(fig["walk"], "stage waveforms"),
        "<h2>Coverage</h2>",
        f"<p>{num['coverage_walks']} walks at {a.coverage_speed:g} m/s (NEMA WD 7: 1.22 m/s), "
        f"cells of {a.coverage_cell:g} m; {_WAYS[a.walk_direction]}.</p>",
        _img(fig["top_tangential"], "top view, tangential"),
        _img(fig["top_radial"], "top view, radial"),
        _img(fig["side"], "side view"),
        "<h2>Range per bearing</h2>",
        f"<p>{a.trials} walks per distance, spread over one beam pitch; "
        f"{_WAYS[a.walk_direction]}.</p>",
        _img(fig["range"], "range per bearing"),
        _table(
            (
                "walk",
                "bearing",
                f"range at P ≥ {a.level:g} [m]",
                "95 % interval [m]",
                "noise-free [m]",
                "gaps",
            ),
            rng_rows,  # fmt: skip
        ),
        "<h2>Sensitivity sweep</h2>",
        _img(fig["sweep"], "range and false triggers"),
        _pre(num["sweep_text"]),
        "<h2>Trade-off</h2>",
        _img(fig["trade"], "trade-off"),
        f"<p>Most range within {a.false_trigger_budget:g} false trigger(s) per year: "
        f"{_esc(a.sensitivity_path)} = "
        f"{_esc(format_eng(best, '') if best is not None else 'none meets the budget')}."
        f" One false trigger per year at a {num['threshold_1_per_year_v'] * 1e3:.1f} mV threshold"
        + (f" ({_esc(format_eng(r1, 'Ω'))} sensitivity resistor)" if r1 else "")
        + f". The design as drawn: {_esc(format_rate(num['false_per_year']))}.</p>",
        "<h2>Room-temperature drift and HVAC</h2>",
        f"<p>Each case runs through the whole chain by itself: uniform ramps of every surface in"
        f" view for {design.ambient.ramp_minutes:g} min, and {design.ambient.hvac_cycles} cycles"
        " of warm-air bursts on a surface the + and − beams see unequally. Turn-ons are those "
        "the disturbance causes alone; the margin is what is left to the nearer window edge, "
        "also in standard deviations of the comparator-input noise. Worst case: "
        f"{_esc(num['ambient_worst'])}, {num['ambient_worst_turn_ons']} turn-ons, "
        f"{num['ambient_worst_margin_sigma']:.1f} σ left.</p>",
        _img(fig["ambient"], "worst ambient case"),
        _pre(num["ambient_table"]),
        *report_calibration.html(data.get("calibration"), _esc, _pre),
        *report_two_wire.html(data.get("two_wire"), _esc, _pre, _img),
        *report_signoff.html(design, data.get("signoff"), _esc, _pre, _img, plots.png_bytes),
        "<h2>Power-up and supply</h2>",
        _img(fig["power_up"], "power-up"),
        f"<p>Settling (warm-up) time: {num['settling_s']:.1f} s.</p>",
        _pre(num["supply_table"]),
        "<h2>Assumptions and validity</h2><ul>",
        "<li>Body parts are vertical rectangles facing the lens; no occlusion between them; "
        "ceiling units see no head-top area.</li>",
        "<li>Beams are az–el rectangles (thin lens, small beams); coarse within three beam "
        "widths of the nadir.</li>",
        "<li>Op-amp GBW is in the Bode plot and noise, not in the time simulation; references "
        "are ideal; noise is added at the comparator input.</li>",
        "<li>False-trigger counting uses a Poisson approximation (clusters not modelled); "
        "the draught parameters are illustrative unless measured.</li>",
        "<li>Walk-test speeds of EN 50131-2-2 are from memory; lighting walk per NEMA WD 7.</li>",
        "<li>Part values are those at 25 °C, moved to the parts' temperature by the laws of "
        "docs/model.md §15 (pyroelectric coefficient, leakage, offsets, stated temperature "
        "coefficients); a change of temperature during a run moves the room (ramps), not the "
        "parts. Noise has its 1/f corners; popcorn noise and supply transients are not "
        "modelled.</li>",
        "</ul>",
        f"<h2>Cautions</h2><p class='caution'>{_esc(CAUTIONS)}</p>",
        "</body></html>",
    ]
    return "\n".join(parts)
