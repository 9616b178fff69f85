"""Schema of design files: every section, key, kind and unit.

Kinds: ``q`` quantity (engineering notation, optional unit), ``celsius``, ``int``, ``bool``,
``str``, ``choice``, ``list``, ``vref`` (a voltage or "reference"), ``section`` (a table) and
``tables`` (a list of tables). ``REQ`` marks a required key. Defaults are not written here:
:class:`From` reads each from the dataclass field or function parameter that owns it, so an
object's default lives in one place; so do validation limits, which the objects check when
the loader builds them.
"""

from __future__ import annotations

import dataclasses
import inspect

from ..chain.detector import Detector
from ..circuit.comparator import WindowComparator
from ..circuit.follower import Jfet
from ..circuit.opamp import OpAmp
from ..circuit.stages import STAGE_TYPES
from ..circuit.supply import PowerSupply
from ..circuit.two_wire import LAMP_KINDS, Lamp, Mains, TwoWireSupply, TwoWireSwitch
from ..design import Design
from ..logic.rules import DaylightInhibit, PulseLogic
from ..physics.disturbance import AmbientCases, Draught, LampInView
from ..physics.optics import Facet, Lens, LensRing, LensTier, Mount, wall_lens
from ..physics.scene import DEFAULT_TARGET, TARGET_PRESETS, Environment
from ..physics.sensor import MATERIALS, PyroSensor, dual_elements
from ..settings import WALK_DIRECTIONS, AnalysisSettings
from ..signoff import DISTRIBUTIONS, Acceptance, CalibrationRecord, Tolerance

REQ = object()  # marks a required key


@dataclasses.dataclass(frozen=True)
class From:
    """The default of a key is that of ``owner``'s field or parameter ``name`` (default: the
    key itself), optionally one ``index`` of a tuple default."""

    owner: object
    name: str | None = None
    index: int | None = None

    def resolve(self, key: str):
        name = self.name or key
        if dataclasses.is_dataclass(self.owner):
            f = {x.name: x for x in dataclasses.fields(self.owner)}[name]
            value = f.default_factory() if f.default is dataclasses.MISSING else f.default
        else:
            value = inspect.signature(self.owner).parameters[name].default
        return value if self.index is None else value[self.index]


def _q(unit=None, default=REQ):
    return ("q", unit, default)


def _choice(options, default=REQ):
    return ("choice", tuple(options), default)


def _fields(owner, units: dict, kinds: dict | None = None) -> dict:
    """One key per field of dataclass ``owner``: quantities in ``units``, others by ``kinds``."""
    kinds = kinds or {}
    out = {}
    for f in dataclasses.fields(owner):
        if f.name in kinds:
            out[f.name] = (*kinds[f.name], From(owner))
        elif f.name in units:
            out[f.name] = ("q", units[f.name], From(owner))
    return out


TIER = {
    "elevation_deg": _q(),
    "count": ("int", None, REQ),
    "focal_length": _q("m"),
    "area": _q("m2"),
    "transmittance": _q(None, From(LensTier)),
}
RING = {
    "nadir_deg": _q(),
    "count": ("int", None, REQ),
    "focal_length": _q("m"),
    "area": _q("m2"),
    "transmittance": _q(None, From(LensRing)),
    "azimuth_offset_deg": _q(None, From(LensRing)),
}
FACET = {
    "azimuth_deg": _q(),
    "elevation_deg": _q(),
    "focal_length": _q("m"),
    "area": _q("m2"),
    "transmittance": _q(None, From(Facet)),
}
OPAMP = {
    **_fields(
        OpAmp,
        {"gbw": "Hz", "v_low": "V", "v_high": "V", "quiescent_current": "A", "e_n": "V/rtHz",
         "i_n": "A/rtHz", "open_loop_gain": None, "e_n_corner": "Hz", "i_n_corner": "Hz",
         "offset": "V", "offset_drift": "V/K"},
    ),
    # the frequency the e_n / i_n figure was read at (none: they are the white levels)
    "e_n_at": _q("Hz", None),
    "i_n_at": _q("Hz", None),
}  # fmt: skip
STAGE = {
    "type": _choice(STAGE_TYPES),
    "name": ("str", None, ""),  # empty: "stage <n>"
    "r1": _q("ohm", None),
    "c1": _q("F", None),
    "rf": _q("ohm", None),
    "cf": _q("F", None),
    "r": _q("ohm", None),
    "c": _q("F", None),
    "num": ("list", None, None),
    "den": ("list", None, None),
    "c1_leakage": _q("ohm", None),  # leakage resistance across an electrolytic C1
    "r_tempco": _q("1/K", 0.0),
    "c_tempco": _q("1/K", 0.0),
    "v_ref": ("vref", None, None),  # none: the stage type's usual reference
    "clamp": ("bool", None, True),
    "opamp": ("section", OPAMP, None),
}
TOLERANCE = {
    "path": ("str", None, REQ),  # a dotted path ([*] for every stage) or a group
    "tolerance": ("tol", None, REQ),  # "1%" or a value in the unit of the path
    "distribution": _choice(DISTRIBUTIONS, From(Tolerance)),
    "sigmas": _q(None, From(Tolerance)),
    "random_sign": ("bool", None, From(Tolerance)),
}
LAMP = {
    "kind": _choice(LAMP_KINDS, From(Lamp)),
    "power": _q("W"),
    "name": ("str", None, From(Lamp)),
    **_fields(Lamp, {"cold_ratio": None, "filament_time_constant": "s",
                     "input_capacitance": "F", "input_resistance": "ohm", "start_voltage": "V",
                     "stop_voltage": "V", "bleeder": "ohm", "efficiency": None, "bypass": "ohm",
                     "diode_drop": "V"}),
}  # fmt: skip
TWO_WIRE = {
    "mains_voltage": _q("V", From(Mains, "voltage")),
    "mains_frequency": _q("Hz", From(Mains, "frequency")),
    "mains_tolerance": _q(None, From(Mains, "tolerance")),
    **_fields(
        TwoWireSwitch,
        {"off_current_limit": "A", "regulator_dropout": "V", "zener_voltage": "V",
         "zener_test_current": "A", "zener_slope": "V", "storage_capacitance": "F",
         "diode_drop": "V", "fire_voltage": "V", "on_charge_resistance": "ohm",
         "holding_current": "A", "triac_resistance": "ohm", "max_current": "A",
         "ldo_dropout": "V", "rail_minimum": "V", "gate_current": "A", "gate_pulse": "s",
         "indicator_current": "A", "relay_current": "A"},
        {"indicator_when": ("choice", ("off", "on", "both", "never"))},
    ),
    "table_powers": ("list", None, From(TwoWireSupply)),
    "on_time": _q("s", From(TwoWireSupply)),
    "lamps": ("tables", LAMP, None),
    "lamp_in_view": (
        "section",
        _fields(LampInView, {"fraction_plus": None, "fraction_minus": None, "warm_k": "K",
                             "cooling_s": "s", "lux": "lux"}),
        None,
    ),
}  # fmt: skip
_MATERIAL = PyroSensor.from_material
_DATASHEET = PyroSensor.from_datasheet
SCHEMA = {
    "design": ("section", {"name": ("str", None, From(Detector))}, {}),
    "lens": (
        "section",
        {
            "layout": _choice(("wall", "ceiling", "table")),
            "fov_deg": _q(None, From(wall_lens)),
            "surface": _choice(("dome", "flat"), From(Lens)),
            "name": ("str", None, From(Lens)),
            "tiers": ("tables", TIER, None),
            "rings": ("tables", RING, None),
            "facets": ("tables", FACET, None),
        },
        REQ,
    ),
    "mount": (
        "section",
        {
            "kind": _choice(("wall", "ceiling"), From(Mount)),
            "height": _q("m", From(Mount)),
            "tilt_deg": _q(None, From(Mount)),
            "rotation_deg": _q(None, From(Mount)),
        },
        {},
    ),
    "sensor": (
        "section",
        {
            "route": _choice(("material", "datasheet"), "material"),
            "material": _choice(MATERIALS, From(_MATERIAL)),
            "layout": _choice(("dual", "quad"), "dual"),
            "element_width": _q("m", From(dual_elements, "width")),
            "element_height": _q("m", From(dual_elements, "height")),
            "element_spacing": _q("m", From(dual_elements, "spacing")),
            "thickness": _q("m", From(_MATERIAL)),
            "absorptance": _q(None, From(_MATERIAL)),
            "thermal_time_constant": _q("s"),
            "gate_resistance": _q("ohm", None),
            "input_capacitance": _q("F", From(PyroSensor)),
            "mismatch": _q(None, From(PyroSensor)),
            "connection": _choice(("series", "parallel"), From(PyroSensor)),
            "window_transmittance": _q(None, From(PyroSensor)),
            "band_low": _q("m", From(PyroSensor, "band", 0)),
            "band_high": _q("m", From(PyroSensor, "band", 1)),
            "responsivity": _q("V/W", None),
            "electrical_time_constant": _q("s", None),
            "element_capacitance": _q("F", From(_DATASHEET)),
            "reference_frequency": _q("Hz", From(_DATASHEET)),
            "loss_tangent": _q(None, None),  # none: the material's (or the model's default)
            # temperature: none keeps the material's law (or, for a datasheet sensor, none)
            "curie_c": ("celsius", None, None),
            "pyro_tempco": _q("1/K", None),
            "permittivity_tempco": _q("1/K", None),
            "gate_resistance_tempco": _q("1/K", From(PyroSensor)),
        },
        REQ,
    ),
    "follower": (
        "section",
        {
            "idss": _q("A"),
            "pinch_off": _q("V"),
            "source_resistance": _q("ohm"),
            "e_n": _q("V/rtHz", From(Jfet)),  # none: from the operating point
            "i_n": _q("A/rtHz", From(Jfet)),  # none: shot noise of the gate leakage
            "gate_leakage": _q("A", From(Jfet)),
            "e_n_corner": _q("Hz", From(Jfet)),
            "kf": _q(None, From(Jfet)),
            "af": _q(None, From(Jfet)),
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
            "hysteresis": _q("V", From(WindowComparator)),
        },
        REQ,
    ),
    "logic": (
        "section",
        {
            **_fields(
                PulseLogic,
                {
                    "rate": "Hz",
                    "count_window": "s",
                    "single_pulse_factor": None,
                    "blanking": "s",
                    "hold": "s",
                    "lockout": "s",
                },
                {
                    "pulses_required": ("int", None),
                    "alternate": ("bool", None),
                    "retrigger": ("bool", None),
                },
            ),  # fmt: skip
            "daylight": (
                "section",
                {
                    "r_fixed": _q("ohm"),
                    **_fields(
                        DaylightInhibit,
                        {"r_ldr_10lux": "ohm", "gamma": None, "v_on": "V", "hysteresis": "V"},
                    ),
                },
                None,
            ),
        },
        {},
    ),
    "supply": (
        "section",
        _fields(
            PowerSupply,
            {
                "voltage": "V",
                "reference_top": "ohm",
                "reference_bottom": "ohm",
                "logic_current": "A",
                "other_current": "A",
                "limit": "A",
            },
        ),  # fmt: skip
        {},
    ),
    "scene": (
        "section",
        {
            "target": _choice(TARGET_PRESETS, DEFAULT_TARGET),
            "speed": _q("m/s", From(Design)),
            "air_c": ("celsius", None, From(Environment)),
            "radiant_c": ("celsius", None, From(Environment)),
            "background_c": ("celsius", None, From(Environment)),
            "background_emissivity": _q(None, From(Environment)),
            "air_speed": _q("m/s", From(Environment)),
            "relative_humidity": _q(None, From(Environment)),  # [%]
            "lux": _q("lux", From(Design)),
            "detector_c": ("celsius", None, From(Design)),  # none: the air temperature
        },
        {},
    ),
    "draught": (
        "section",
        _fields(
            Draught,
            {"rms": "K", "correlation_time": "s", "beam_correlation": None, "fov_fraction": None},
        ),
        None,
    ),
    "ambient": (
        "section",
        _fields(
            AmbientCases,
            {
                "ramp_minutes": None,
                "hvac_period": "s",
                "hvac_on_time": "s",
                "hvac_rise": "s",
                "hvac_decay": "s",
                "hvac_fraction_plus": None,
                "hvac_fraction_minus": None,
                "sample_rate": "Hz",
            },
            {
                "ramp_rates": ("list", None),
                "hvac_amplitudes": ("list", None),
                "hvac_cycles": ("int", None),
            },
        ),  # fmt: skip
        {},
    ),
    "tolerances": ("tables", TOLERANCE, None),
    "acceptance": (
        "section",
        {
            **_fields(
                Acceptance,
                {
                    "range_m": "m",
                    "level": None,
                    "seated_m": "m",
                    "false_triggers_per_year": None,
                    "warm_up_s": "s",
                    "supply_a": "A",
                },
                {
                    "bearings": ("list", None),
                    "speeds": ("list", None),
                    "kind": ("choice", ("tangential", "radial")),
                    "trials": ("int", None),
                    "units": ("int", None),
                },
            ),
        },
        None,
    ),  # fmt: skip
    "calibration": (
        "section",
        {
            **_fields(
                CalibrationRecord,
                {"signal_scale": None, "white_noise_scale": None, "flicker_noise_scale": None},
                {
                    "fitted_from": ("list", None),
                    "fitted_on": ("str", None),
                    "summary": ("list", None),
                },
            ),
        },
        None,
    ),  # fmt: skip
    "two_wire": ("section", TWO_WIRE, None),
    "analysis": (
        "section",
        _fields(
            AnalysisSettings,
            {
                "sample_rate": "Hz",
                "level": None,
                "d_min": "m",
                "d_max": "m",
                "step": "m",
                "walk_distance": "m",
                "false_trigger_budget": None,
                "coverage_cell": "m",
                "coverage_x_max": "m",
                "coverage_speed": "m/s",
                "settle_duration": "s",
                "settle_sample_rate": "Hz",
            },
            {
                "trials": ("int", None),
                "refine": ("int", None),
                "noise": ("bool", None),
                "bearings": ("list", None),
                "seed": ("int", None),
                "sensitivity_path": ("str", None),
                "sensitivity_values": ("list", None),
                "coverage_trials": ("int", None),
                "walk_direction": ("choice", WALK_DIRECTIONS),
            },
        ),  # fmt: skip
        {},
    ),
}


def default(spec, key: str):
    """The default of a schema entry (resolving :class:`From`)."""
    value = spec[2]
    return value.resolve(key) if isinstance(value, From) else value


def _units(schema: dict, out: dict) -> dict:
    for key, spec in schema.items():
        if spec[0] in ("section", "tables"):
            _units(spec[1], out)
        elif spec[0] == "q":
            out.setdefault(key, spec[1])
        elif spec[0] == "celsius":
            out.setdefault(key, "°C")
    return out


KEY_UNITS = _units(SCHEMA, {})  # unit of every quantity key, by key name (one unit each)


def unit_of(path: str) -> str | None:
    """Unit of the quantity a dotted sweep path ends in (by its key name), as the design file
    reads it: so "3m" is 3 m for a length and 3 milli-units for anything else, in a design
    file and on the command line alike."""
    leaf = path.rsplit(".", 1)[-1].split("[", 1)[0]
    return KEY_UNITS.get(leaf)
