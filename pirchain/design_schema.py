"""Schema of design files: every section, key, kind, unit and default.

Kinds: ``q`` quantity (engineering notation, optional unit), ``celsius``, ``int``, ``bool``,
``str``, ``choice``, ``list``, ``vref`` (a voltage or "reference"), ``section`` (a table) and
``tables`` (a list of tables). ``REQ`` marks a required key.
"""

from __future__ import annotations

from .frontend import STAGE_TYPES
from .scene import TARGET_PRESETS
from .sensor import MATERIALS

REQ = object()  # marks a required key


def _q(unit=None, default=REQ):
    return ("q", unit, default)


def _choice(options, default=REQ):
    return ("choice", tuple(options), default)


TIER = {
    "elevation_deg": _q(),
    "count": ("int", None, REQ),
    "focal_length": _q("m"),
    "area": _q("m2"),
    "transmittance": _q(None, 0.65),
}
RING = {
    "nadir_deg": _q(),
    "count": ("int", None, REQ),
    "focal_length": _q("m"),
    "area": _q("m2"),
    "transmittance": _q(None, 0.65),
    "azimuth_offset_deg": _q(None, 0.0),
}
FACET = {
    "azimuth_deg": _q(),
    "elevation_deg": _q(),
    "focal_length": _q("m"),
    "area": _q("m2"),
    "transmittance": _q(None, 0.65),
}
OPAMP = {
    "gbw": _q("Hz", 200e3),
    "v_low": _q("V", 0.05),
    "v_high": _q("V", 3.25),
    "quiescent_current": _q("A", 10e-6),
    "e_n": _q("V/rtHz", 60e-9),
    "i_n": _q("A/rtHz", 1e-15),
    "open_loop_gain": _q(None, 1e5),
}
STAGE = {
    "type": _choice(STAGE_TYPES),
    "name": ("str", None, ""),
    "r1": _q("ohm", None),
    "c1": _q("F", None),
    "rf": _q("ohm", None),
    "cf": _q("F", None),
    "r": _q("ohm", None),
    "c": _q("F", None),
    "num": ("list", None, None),
    "den": ("list", None, None),
    "v_ref": ("vref", None, None),
    "clamp": ("bool", None, True),
    "opamp": ("section", OPAMP, None),
}
SCHEMA = {
    "design": ("section", {"name": ("str", None, "unnamed design")}, {}),
    "lens": (
        "section",
        {
            "layout": _choice(("wall", "ceiling", "table")),
            "fov_deg": _q(None, 110.0),
            "surface": _choice(("dome", "flat"), "dome"),
            "name": ("str", None, "lens"),
            "tiers": ("tables", TIER, None),
            "rings": ("tables", RING, None),
            "facets": ("tables", FACET, None),
        },
        REQ,
    ),
    "mount": (
        "section",
        {
            "kind": _choice(("wall", "ceiling"), "wall"),
            "height": _q("m", 2.2),
            "tilt_deg": _q(None, 0.0),
            "rotation_deg": _q(None, 0.0),
        },
        {},
    ),
    "sensor": (
        "section",
        {
            "route": _choice(("material", "datasheet"), "material"),
            "material": _choice(MATERIALS, "LiTaO3"),
            "layout": _choice(("dual", "quad"), "dual"),
            "element_width": _q("m", 1e-3),
            "element_height": _q("m", 2e-3),
            "element_spacing": _q("m", 2e-3),
            "thickness": _q("m", 25e-6),
            "absorptance": _q(None, 0.8),
            "thermal_time_constant": _q("s"),
            "gate_resistance": _q("ohm", None),
            "input_capacitance": _q("F", 3e-12),
            "mismatch": _q(None, 0.0),
            "connection": _choice(("series", "parallel"), "series"),
            "window_transmittance": _q(None, 0.75),
            "band_low": _q("m", 5e-6),
            "band_high": _q("m", 14e-6),
            "responsivity": _q("V/W", None),
            "electrical_time_constant": _q("s", None),
            "element_capacitance": _q("F", None),
            "reference_frequency": _q("Hz", 1.0),
            "loss_tangent": _q(None, None),
        },
        REQ,
    ),
    "follower": (
        "section",
        {
            "idss": _q("A"),
            "pinch_off": _q("V"),
            "source_resistance": _q("ohm"),
            "e_n": _q("V/rtHz", 20e-9),
            "i_n": _q("A/rtHz", 1e-16),
        },
        REQ,
    ),
    "opamp": ("section", OPAMP, {}),
    "stages": ("tables", STAGE, REQ),
    "comparator": (
        "section",
        {
            "window": _choice(("ladder", "fixed", "mapped")),
            "r_top": _q("ohm", None),
            "r_middle": _q("ohm", None),
            "r_bottom": _q("ohm", None),
            "threshold": _q("V", None),
            "settings": ("list", None, None),
            "thresholds": ("list", None, None),
            "setting": _q(None, None),
            "hysteresis": _q("V", 0.0),
        },
        REQ,
    ),
    "logic": (
        "section",
        {
            "rate": _q("Hz", 50.0),
            "pulses_required": ("int", None, 2),
            "count_window": _q("s", 4.0),
            "alternate": ("bool", None, False),
            "single_pulse_factor": _q(None, None),
            "blanking": _q("s", 0.3),
            "hold": _q("s", 60.0),
            "retrigger": ("bool", None, True),
            "lockout": _q("s", 2.0),
            "daylight": (
                "section",
                {
                    "r_fixed": _q("ohm"),
                    "r_ldr_10lux": _q("ohm", 50e3),
                    "gamma": _q(None, 0.7),
                    "v_on": _q("V"),
                    "hysteresis": _q("V", 0.2),
                },
                None,
            ),
        },
        {},
    ),
    "supply": (
        "section",
        {
            "voltage": _q("V", 3.3),
            "reference_top": _q("ohm", 1e6),
            "reference_bottom": _q("ohm", 1e6),
            "logic_current": _q("A", 5e-6),
            "other_current": _q("A", 0.0),
            "limit": _q("A", None),
        },
        {},
    ),
    "scene": (
        "section",
        {
            "target": _choice(TARGET_PRESETS, "adult"),
            "speed": _q("m/s", 1.0),
            "air_c": ("celsius", None, 22.0),
            "radiant_c": ("celsius", None, None),
            "background_c": ("celsius", None, None),
            "background_emissivity": _q(None, 0.95),
            "air_speed": _q(None, 0.1),
            "lux": _q("lux", 5.0),
        },
        {},
    ),
    "draught": (
        "section",
        {
            "rms": _q("K", 0.01),
            "correlation_time": _q("s", 5.0),
            "beam_correlation": _q(None, 0.7),
            "fov_fraction": _q(None, 0.2),
        },
        None,
    ),
    "analysis": (
        "section",
        {
            "sample_rate": _q("Hz", 100.0),
            "level": _q(None, 0.9),
            "trials": ("int", None, 4),
            "d_max": _q("m", 30.0),
            "step": _q("m", 1.5),
            "bearings": ("list", None, [0.0]),
            "seed": ("int", None, 0),
            "walk_distance": _q("m", 8.0),
            "sensitivity_path": ("str", None, "detector.comparator.window.r_middle"),
            "sensitivity_values": ("list", None, None),
            "false_trigger_budget": _q(None, 1.0),
            "coverage_cell": _q("m", 1.0),
            "coverage_x_max": _q("m", 16.0),
            "coverage_trials": ("int", None, 2),
        },
        {},
    ),
}
