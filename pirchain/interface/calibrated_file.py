"""The calibrated design file: the user's own design file with the fitted values put in,
each with a comment naming what it was fitted from, written as a new file.

tomlkit edits the TOML while keeping the user's layout and comments (tomllib, which the
loader uses, only reads); every value that is not fitted stays as the user wrote it. Part
values in a design file are those at 25 °C while a fit sees the parts at their temperature,
so a fitted time constant or resistance is written as the file's own value times the ratio
fitted / model-at-that-temperature.
"""

from __future__ import annotations

import datetime
import math

import tomlkit

from ..units import format_eng


def _put(table, key: str, value, note: str) -> None:
    table[key] = value
    table[key].comment(note)


def _section(doc, name: str):
    if name not in doc:
        doc[name] = tomlkit.table()
    return doc[name]


def _sd_log(low: float, high: float) -> float:
    return (math.log(high) - math.log(low)) / (2 * 1.959964)


def _walk_share(walks, waveform) -> float:
    """The walk tests' correction of the signal scale. Alone, their fitted scale; after a
    waveform fit (which they were judged on), the two estimates of one scale are combined
    by inverse-variance weights in ln s, so a precise capture is not undone by a few
    dozen yes/no walks and the calibrated file still reproduces the fitted waveform
    closely; open-ended walk-test intervals add nothing."""
    if waveform is None:
        return walks.scale
    if walks.open_ended:
        return 1.0
    k = list(waveform.names).index("gain")
    var_g = _sd_log(waveform.low[k], waveform.high[k]) ** 2
    var_w = _sd_log(walks.low, walks.high) ** 2
    return math.exp(math.log(walks.scale) * var_g / (var_g + var_w))


def calibrated_text(
    text: str,
    design,
    *,
    waveform=None,
    waveform_source: str = "",
    quiet=None,
    quiet_source: str = "",
    walks=None,
    walks_source: str = "",
) -> str:
    """``text`` (the design file ``design`` was read from) with the fits put in.

    Parameters
    ----------
    waveform : WaveformFit, optional
        Sets the sensor's thermal time constant, its gate resistor (or electrical time
        constant) and its element mismatch, and multiplies the signal scale by the fitted
        gain.
    quiet : QuietFit, optional
        Sets the noise scales and the draught's rms and correlation time.
    walks : WalkTestFit, optional
        Multiplies the signal scale by the fitted sensitivity scale (combined with a
        waveform fit's gain by inverse-variance weights, :func:`_walk_share`).
    """
    doc = tomlkit.parse(text)
    op = design.operating.sensor
    old = design.calibration
    signal = old.signal_scale if old else 1.0
    white, flicker = design.detector.noise_scale.white, design.detector.noise_scale.flicker
    sources, summary = list(old.fitted_from if old else ()), list(old.summary if old else ())
    sensor = _section(doc, "sensor")
    if waveform is not None:
        v = dict(zip(waveform.names, waveform.values, strict=True))
        lo = dict(zip(waveform.names, waveform.low, strict=True))
        hi = dict(zip(waveform.names, waveform.high, strict=True))
        base = design.detector.sensor
        tt = base.thermal_time_constant * v["thermal_time_constant"] / op.thermal_time_constant
        _put(sensor, "thermal_time_constant", format_eng(tt), f"fitted: {waveform_source}")
        ratio = v["electrical_time_constant"] / op.electrical_time_constant
        if "gate_resistance" in sensor or "responsivity" not in sensor:
            _put(
                sensor,
                "gate_resistance",
                format_eng(base.gate_resistance * ratio),
                f"fitted (tau_E {v['electrical_time_constant']:.4g} s): {waveform_source}",
            )
        else:
            _put(
                sensor,
                "electrical_time_constant",
                format_eng(base.electrical_time_constant * ratio),
                f"fitted: {waveform_source}",
            )
        if "mismatch" in v:
            _put(sensor, "mismatch", float(f"{v['mismatch']:.4g}"), f"fitted: {waveform_source}")
        signal *= v["gain"]
        sources.append(f"waveform: {waveform_source}")
        summary += [f"{n} {v[n]:.4g} (95 %: {lo[n]:.4g} to {hi[n]:.4g})" for n in waveform.names]
    if quiet is not None:
        white, flicker = quiet.noise_scale.white, quiet.noise_scale.flicker
        if quiet.draught is not None:
            dr = _section(doc, "draught")
            for key, unit in (("rms", "K"), ("correlation_time", "s")):
                _put(
                    dr,
                    key,
                    float(f"{getattr(quiet.draught, key):.4g}"),
                    f"fitted [{unit}]: {quiet_source}",
                )
            for key in ("beam_correlation", "fov_fraction"):
                if key not in dr:
                    dr[key] = getattr(quiet.draught, key)
        sources.append(f"quiet room: {quiet_source}")
        sp = quiet.spectrum
        summary += [
            f"{n} {x:.4g} (95 %: {a:.4g} to {b:.4g})"
            for n, x, a, b in zip(sp.names, sp.values, sp.low, sp.high, strict=True)
        ]
    if walks is not None:
        signal *= _walk_share(walks, waveform)
        sources.append(f"walk tests: {walks_source}")
        summary.append(
            f"walk-test scale {walks.scale:.4g} (95 %: {walks.low:.4g} to {walks.high:.4g})"
        )
    cal = _section(doc, "calibration")
    _put(
        cal,
        "signal_scale",
        float(f"{signal:.6g}"),
        "x current responsivity (responsivity, lens and contrast together)",
    )
    _put(cal, "white_noise_scale", float(f"{white:.6g}"), "x every non-1/f noise density")
    _put(cal, "flicker_noise_scale", float(f"{flicker:.6g}"), "x every 1/f noise density")
    cal["fitted_from"] = sources
    cal["fitted_on"] = datetime.date.today().isoformat()
    cal["summary"] = summary
    head = (
        "# Calibrated by pirchain bench-fit: the values marked 'fitted' and [calibration]\n"
        "# come from the bench data named there; everything else is as the source file.\n"
    )
    return head + tomlkit.dumps(doc)
