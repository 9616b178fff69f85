"""Design files (TOML): loading with clear errors into a :class:`pirchain.design.Design`.

Every key is checked against the schema (:mod:`pirchain.interface.design_schema`): an
unknown key (with a did-you-mean), a wrong type or unit or a missing required key raises
:class:`DesignError` naming the key path, the value and what was expected; values out of
range are refused by the objects they build, and the error is renamed to the key path. The
section layout is shown by the built-in demo (``pirchain demo-design -o my.toml``).
"""

from __future__ import annotations

import dataclasses
import difflib
import itertools
import os
import re
import stat
import tomllib

from ..chain.detector import Detector
from ..circuit.comparator import FixedWindow, LadderWindow, MappedWindow, WindowComparator
from ..circuit.follower import Jfet, SourceFollower
from ..circuit.noise import NoiseScale
from ..circuit.opamp import OpAmp, white_density
from ..circuit.stages import STAGE_TYPES
from ..circuit.supply import PowerSupply
from ..circuit.two_wire import Lamp, Mains, TwoWireSupply, TwoWireSwitch
from ..design import Design
from ..errors import DesignError
from ..logic.rules import DaylightInhibit, PulseLogic
from ..physics.disturbance import AmbientCases, Draught, LampInView
from ..physics.optics import Facet, Lens, LensRing, LensTier, Mount, ceiling_lens, wall_lens
from ..physics.scene import Environment
from ..physics.sensor import PyroSensor, dual_elements, quad_elements
from ..production.tolerances import expand
from ..settings import AnalysisSettings
from ..signoff import GROUPS, Acceptance, CalibrationRecord, Tolerance
from ..units import parse_celsius, parse_quantity
from .design_schema import REQ, SCHEMA, default, unit_of


def _read(data, schema: dict, path: str) -> dict:
    if not isinstance(data, dict):
        raise DesignError(path, data, "a table of keys")
    for key in data:
        if key not in schema:
            near = difflib.get_close_matches(key, list(schema), n=1)
            hint = f"; did you mean '{near[0]}'?" if near else ""
            where = f"{path}.{key}" if path else key
            raise DesignError(
                where,
                data[key],
                "a known key",
                f"{where}: unknown key{hint} (known here: {', '.join(schema)})",
            )
    out = {}
    for key, spec in schema.items():
        kind, arg = spec[0], spec[1]
        where = f"{path}.{key}" if path else key
        if key not in data:
            dflt = default(spec, key)
            if dflt is REQ:
                raise DesignError(where, "missing", "a value for this required key")
            out[key] = dflt if kind != "section" or dflt is None else _read(dflt, arg, where)
            continue
        out[key] = _value(data[key], kind, arg, where)
    return out


def _value(v, kind, arg, where):
    if kind == "q":
        return parse_quantity(v, where, arg)
    if kind == "celsius":
        return parse_celsius(v, where)
    if kind == "int":
        if isinstance(v, bool) or not isinstance(v, int):
            raise DesignError(where, v, "an integer")
        return v
    if kind == "bool":
        if not isinstance(v, bool):
            raise DesignError(where, v, "true or false")
        return v
    if kind == "str":
        if not isinstance(v, str):
            raise DesignError(where, v, "a text string")
        return v
    if kind == "choice":
        if v not in arg:
            near = difflib.get_close_matches(str(v), list(arg), n=1)
            hint = f" (did you mean '{near[0]}'?)" if near else ""
            raise DesignError(where, v, "one of " + ", ".join(map(repr, arg)) + hint)
        return v
    if kind == "list":
        if not isinstance(v, list) or not v:
            raise DesignError(where, v, "a non-empty list")
        return v
    if kind == "vref":
        return v if v == "reference" else parse_quantity(v, where, "V")
    if kind == "tol":  # "1%" or a value in the unit of the path it applies to
        if isinstance(v, bool) or not isinstance(v, (str, int, float)):
            raise DesignError(where, v, "a percentage such as '1%' or a value")
        return v
    if kind == "section":
        return _read(v, arg, where)
    if kind == "tables":
        if not isinstance(v, list) or not v:
            raise DesignError(where, v, "a non-empty list of tables")
        return [_read(item, arg, f"{where}[{i}]") for i, item in enumerate(v)]
    raise AssertionError(kind)


def _build(where: str, make):
    """Call ``make`` and re-raise a DesignError with the design-file key path."""
    try:
        return make()
    except DesignError as err:
        leaf = err.field.split(".")[-1]
        raise DesignError(f"{where}.{leaf}", err.value, err.expected) from None
    except (TypeError, ValueError) as err:
        raise DesignError(where, "invalid", str(err)) from None


def _quantities(where, items, unit=None):
    return [parse_quantity(x, f"{where}[{i}]", unit) for i, x in enumerate(items)]


def _lens(c):
    if c["layout"] == "wall":
        if not c["tiers"]:
            raise DesignError("lens.tiers", None, "a list of tiers for layout = 'wall'")
        tiers = [
            _build(f"lens.tiers[{i}]", lambda t=t: LensTier(**t)) for i, t in enumerate(c["tiers"])
        ]
        return _build("lens", lambda: wall_lens(tiers, c["fov_deg"], c["surface"], c["name"]))
    if c["layout"] == "ceiling":
        if not c["rings"]:
            raise DesignError("lens.rings", None, "a list of rings for layout = 'ceiling'")
        rings = [
            _build(f"lens.rings[{i}]", lambda r=r: LensRing(**r)) for i, r in enumerate(c["rings"])
        ]
        return _build("lens", lambda: ceiling_lens(rings, c["surface"], c["name"]))
    if not c["facets"]:
        raise DesignError("lens.facets", None, "a list of facets for layout = 'table'")
    facets = tuple(
        _build(f"lens.facets[{i}]", lambda f=f: Facet(**f)) for i, f in enumerate(c["facets"])
    )
    return _build("lens", lambda: Lens(facets, c["surface"], c["name"]))


def _sensor(c):
    els = dual_elements if c["layout"] == "dual" else quad_elements
    elements = _build(
        "sensor", lambda: els(c["element_width"], c["element_height"], c["element_spacing"])
    )
    common = dict(
        input_capacitance=c["input_capacitance"],
        connection=c["connection"],
        mismatch=c["mismatch"],
        window_transmittance=c["window_transmittance"],
        band=(c["band_low"], c["band_high"]),
    )
    if c["route"] == "material":
        if c["gate_resistance"] is None:
            raise DesignError("sensor.gate_resistance", "missing", "a gate resistor (e.g. '60G')")
        s = _build(
            "sensor",
            lambda: PyroSensor.from_material(
                c["material"],
                elements,
                c["thickness"],
                c["absorptance"],
                thermal_time_constant=c["thermal_time_constant"],
                gate_resistance=c["gate_resistance"],
                **common,
            ),
        )
    else:
        for key in ("responsivity", "electrical_time_constant"):
            if c[key] is None:
                raise DesignError(f"sensor.{key}", "missing", "a value for route = 'datasheet'")
        s = _build(
            "sensor",
            lambda: PyroSensor.from_datasheet(
                c["responsivity"],
                c["thermal_time_constant"],
                c["electrical_time_constant"],
                c["element_capacitance"],
                c["reference_frequency"],
                elements,
                **common,
            ),
        )
    moved = {
        key: c[key]
        for key in ("loss_tangent", "pyro_tempco", "permittivity_tempco", "gate_resistance_tempco")
        if c[key] is not None
    }
    if c["curie_c"] is not None:
        moved["curie_temperature"] = c["curie_c"] + 273.15
    if moved:
        s = _build("sensor", lambda: dataclasses.replace(s, **moved))
    return s


def _opamp(where: str, c: dict) -> OpAmp:
    """An op-amp from its section; a noise density read at a frequency (``e_n_at``) is
    turned into the white level with its corner."""
    c = dict(c)
    for kind in ("e_n", "i_n"):
        at = c.pop(f"{kind}_at")
        if at is not None:
            c[kind] = _build(
                f"{where}.{kind}_at", lambda k=kind, f=at: white_density(c[k], f, c[f"{k}_corner"])
            )
    return _build(where, lambda: OpAmp(**c))


def _stage(i, c, default_amp, supply):
    where = f"stages[{i}]"
    amp = default_amp if c["opamp"] is None else _opamp(f"{where}.opamp", c["opamp"])
    cls = STAGE_TYPES[c["type"]]
    vref = c["v_ref"]
    if vref == "reference":
        vref = supply.reference
    name = c["name"] or f"stage {i + 1}"
    if c["type"] in ("non_inverting_band_pass", "inverting_band_pass"):
        for key in ("r1", "c1", "rf", "cf"):
            if c[key] is None:
                raise DesignError(f"{where}.{key}", "missing", f"a value for a {c['type']} stage")
        dflt = 0.0 if c["type"] == "non_inverting_band_pass" else supply.reference
        return _build(
            where,
            lambda: cls(
                c["r1"],
                c["c1"],
                c["rf"],
                c["cf"],
                amp,
                dflt if vref is None else vref,
                name,
                c["c1_leakage"],
                c["r_tempco"],
                c["c_tempco"],
            ),  # fmt: skip
        )
    if c["type"] in ("rc_high_pass", "rc_low_pass"):
        for key in ("r", "c"):
            if c[key] is None:
                raise DesignError(f"{where}.{key}", "missing", f"a value for a {c['type']} stage")
        return _build(
            where,
            lambda: cls(
                c["r"], c["c"], 0.0 if vref is None else vref, name, c["r_tempco"], c["c_tempco"]
            ),
        )
    for key in ("num", "den"):
        if c[key] is None:
            raise DesignError(f"{where}.{key}", "missing", "polynomial coefficients (s^n first)")
    num = _quantities(f"{where}.num", c["num"])
    den = _quantities(f"{where}.den", c["den"])
    return _build(
        where,
        lambda: cls(
            tuple(num), tuple(den), 0.0 if vref is None else vref, amp if c["clamp"] else None, name
        ),
    )


def _comparator(c, supply):
    w = c["window"]
    if w == "ladder":
        for key in ("r_top", "r_middle", "r_bottom"):
            if c[key] is None:
                raise DesignError(f"comparator.{key}", "missing", "a resistor for a ladder window")
        win = _build(
            "comparator",
            lambda: LadderWindow(supply.voltage, c["r_top"], c["r_middle"], c["r_bottom"]),
        )
    elif w == "fixed":
        if c["threshold"] is None:
            raise DesignError("comparator.threshold", "missing", "a threshold in V")
        win = _build("comparator", lambda: FixedWindow(supply.reference, c["threshold"]))
    else:
        for key in ("settings", "thresholds", "setting"):
            if c[key] is None:
                raise DesignError(f"comparator.{key}", "missing", "a value for a mapped window")
        xs = _quantities("comparator.settings", c["settings"])
        ys = _quantities("comparator.thresholds", c["thresholds"], "V")
        win = _build(
            "comparator", lambda: MappedWindow(supply.reference, tuple(xs), tuple(ys), c["setting"])
        )
    return _build("comparator", lambda: WindowComparator(win, c["hysteresis"]))


def _tolerance(i: int, c: dict) -> Tolerance:
    where = f"tolerances[{i}]"
    v = c["tolerance"]
    if isinstance(v, str) and v.strip().endswith("%"):
        rel, amount = True, parse_quantity(v.strip()[:-1], f"{where}.tolerance") / 100.0
    else:
        unit = None if c["path"] in GROUPS else unit_of(c["path"])
        rel, amount = False, parse_quantity(v, f"{where}.tolerance", unit)
    return _build(
        where,
        lambda: Tolerance(c["path"], amount, rel, c["distribution"], c["sigmas"],
                          c["random_sign"]),
    )  # fmt: skip


def _acceptance(c):
    if c is None:
        return None
    c = dict(c)
    for key in ("bearings", "speeds"):
        c[key] = tuple(_quantities(f"acceptance.{key}", c[key]))
    return _build("acceptance", lambda: Acceptance(**c))


def _calibration(c):
    if c is None:
        return None
    return _build("calibration", lambda: CalibrationRecord(**c))


def _two_wire(c):
    if c is None:
        return None
    c = dict(c)
    mains = _build("two_wire", lambda: Mains(c.pop("mains_voltage"), c.pop("mains_frequency"),
                                             c.pop("mains_tolerance")))  # fmt: skip
    lamps = tuple(
        _build(f"two_wire.lamps[{k}]", lambda lp=lp: Lamp(**lp))
        for k, lp in enumerate(c.pop("lamps") or ())
    )
    view = c.pop("lamp_in_view")
    view = None if view is None else _build("two_wire.lamp_in_view", lambda: LampInView(**view))
    powers = tuple(_quantities("two_wire.table_powers", c.pop("table_powers")))
    on_time = c.pop("on_time")
    switch = _build("two_wire", lambda: TwoWireSwitch(mains, **c))
    extra = {"lamps": lamps} if lamps else {}
    return _build("two_wire", lambda: TwoWireSupply(switch, table_powers=powers, view=view,
                                                    on_time=on_time, **extra))  # fmt: skip


def design_from_dict(data: dict) -> Design:
    """Build a :class:`Design` from parsed TOML data (raises :class:`DesignError`)."""
    c = _read(data, SCHEMA, "")
    supply = _build("supply", lambda: PowerSupply(**c["supply"]))
    amp = _opamp("opamp", c["opamp"])
    stages = tuple(_stage(i, s, amp, supply) for i, s in enumerate(c["stages"]))
    lg = dict(c["logic"])
    day = lg.pop("daylight")
    daylight = (
        None
        if day is None
        else _build("logic.daylight", lambda: DaylightInhibit(supply.voltage, **day))
    )
    logic = _build("logic", lambda: PulseLogic(**lg, daylight=daylight))
    fol = c["follower"]
    follower = _build(
        "follower",
        lambda: SourceFollower(
            Jfet(
                fol["idss"],
                fol["pinch_off"],
                fol["e_n"],
                fol["i_n"],
                fol["gate_leakage"],
                fol["kf"],
                fol["af"],
                fol["e_n_corner"],
            ),
            fol["source_resistance"],  # fmt: skip
        ),
    )
    mount = _build("mount", lambda: Mount(**c["mount"]))
    lens, sensor = _lens(c["lens"]), _sensor(c["sensor"])
    comparator = _comparator(c["comparator"], supply)
    cal = _calibration(c["calibration"])
    if cal is not None:  # the fitted signal scale multiplies the 25 °C responsivity
        sensor = dataclasses.replace(
            sensor, current_responsivity=sensor.current_responsivity * cal.signal_scale
        )
    scale = _build("calibration", lambda: NoiseScale(
        *((cal.white_noise_scale, cal.flicker_noise_scale) if cal else (1.0, 1.0))))  # fmt: skip
    det = _build(
        "supply",
        lambda: Detector(
            lens, mount, sensor, follower, stages, comparator, logic, supply,
            c["design"]["name"], noise_scale=scale,
        ),
    )  # fmt: skip
    sc = c["scene"]
    env = _build(
        "scene",
        lambda: Environment(
            sc["air_c"],
            sc["radiant_c"],
            sc["background_c"],
            sc["background_emissivity"],
            sc["air_speed"],
            sc["relative_humidity"],
        ),
    )
    dr = None if c["draught"] is None else _build("draught", lambda: Draught(**c["draught"]))
    a = dict(c["analysis"])
    for key in ("bearings", "sensitivity_values"):
        if a[key] is not None:
            a[key] = tuple(_quantities(f"analysis.{key}", a[key]))
    settings = _build("analysis", lambda: AnalysisSettings(**a))
    amb = dict(c["ambient"])
    for key in ("ramp_rates", "hvac_amplitudes"):
        amb[key] = tuple(_quantities(f"ambient.{key}", amb[key]))
    ambient = _build("ambient", lambda: AmbientCases(**amb))
    tolerances = tuple(_tolerance(i, t) for i, t in enumerate(c["tolerances"] or ()))
    acceptance = _acceptance(c["acceptance"])
    two_wire = _two_wire(c["two_wire"])
    design = _build(
        "scene",
        lambda: Design(
            det,
            env,
            sc["target"],
            sc["speed"],
            dr,
            sc["lux"],
            settings,
            sc["detector_c"],
            ambient,
            tolerances,
            acceptance,
            cal,
            two_wire,
        ),
    )
    expand(design)  # every tolerance names values of this design (or a one-line error)
    return design


MAX_FILE_BYTES = 1 << 20  # a design file is a few kB; 1 MiB is far more than any needs
MAX_NESTING = 12  # the deepest table of the schema is 4 levels down


# strings (multi-line first) and comments, whose brackets do not nest anything
_NOT_STRUCTURE = re.compile(
    r'"""[\s\S]*?"""|\'\'\'[\s\S]*?\'\'\'|"(?:[^"\\\n]|\\.)*"|\'[^\'\n]*\'|#[^\n]*'
)


def _depth(text: str) -> int:
    """Deepest bracket nesting of the text outside strings and comments (an upper bound on
    the TOML nesting, found before parsing)."""
    brackets = (1 if c in "[{" else -1 for c in _NOT_STRUCTURE.sub("", text) if c in "[]{}")
    return max(itertools.accumulate(brackets), default=0)


def loads(text: str) -> Design:
    """Parse design-file text (a leading UTF-8 byte-order mark is allowed)."""
    if not isinstance(text, str):
        raise DesignError("file", type(text).__name__, "design-file text")
    text = text.removeprefix("\ufeff")
    if len(text) > MAX_FILE_BYTES:
        raise DesignError("file", f"{len(text)} characters", f"at most {MAX_FILE_BYTES} (1 MiB)")
    if _depth(text) > MAX_NESTING:
        raise DesignError("file", "deeply nested tables or lists", f"at most {MAX_NESTING} levels")
    try:
        data = tomllib.loads(text)
    except tomllib.TOMLDecodeError as err:
        raise DesignError("file", "TOML", f"valid TOML ({err})") from None
    except (ValueError, RecursionError, MemoryError) as err:  # e.g. a 5 000-digit integer
        why = str(err).split("\n")[0][:80] or type(err).__name__
        raise DesignError("file", "TOML", f"valid TOML with sensible numbers ({why})") from None
    return design_from_dict(data)


def load(path) -> Design:
    """Load a design file: a regular file of at most 1 MiB of UTF-8 TOML."""
    return loads(read_text(path))


def read_text(path) -> str:
    """The text of a design file (a regular file of at most 1 MiB of UTF-8)."""
    try:
        with open(path, "rb") as fh:
            st = os.fstat(fh.fileno())
            if not stat.S_ISREG(st.st_mode):
                raise DesignError(
                    "file", str(path), "a regular file (not a device, pipe or folder)"
                )
            raw = fh.read(MAX_FILE_BYTES + 1)
    except OSError as err:
        raise DesignError("file", str(path), f"a readable design file ({err.strerror})") from None
    if len(raw) > MAX_FILE_BYTES:
        raise DesignError("file", str(path), "a design file of at most 1 MiB")
    try:
        return raw.decode("utf-8")
    except UnicodeDecodeError:
        raise DesignError("file", str(path), "UTF-8 text") from None
