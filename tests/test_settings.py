"""Every design-file ``[analysis]`` key reaches the analysis it governs, and the defaults
and limits of every object live in one place (the object itself).

Each key is changed in a design file and the change is seen where it acts: in the
engine's inputs (a spy on ``Detector.compile`` / ``Detector.run`` / ``Detector.drive``
records sample rates, walk counts, positions and added noise), in the grids and results of
the analyses, or in the command's JSON. The command line and the report pass the loaded
``Design`` whole; the first test shows that for every analysis they run.
"""

import contextlib
import dataclasses
import io
import json
import math
import re
import sys

import numpy as np
import pytest

from pirchain.analysis import coverage, detection_range, false_triggers, power_up, sweep
from pirchain.chain.detector import Detector
from pirchain.circuit.opamp import OpAmp
from pirchain.circuit.supply import PowerSupply
from pirchain.design import Design
from pirchain.errors import DesignError
from pirchain.interface import design_schema
from pirchain.interface.cli import main
from pirchain.interface.demo_text import DEMO_TOML
from pirchain.interface.design_file import load, loads
from pirchain.logic.rules import PulseLogic
from pirchain.physics.disturbance import Draught
from pirchain.physics.scene import Environment
from pirchain.settings import AnalysisSettings

SMALL = dict(
    sample_rate=100,
    level=0.9,
    trials=1,
    d_min=2.0,
    d_max=11.0,
    step=3.0,
    refine=1,
    noise=False,
    bearings=[0],
    seed=1,
    walk_distance=8,
    sensitivity_path="detector.comparator.window.r_middle",
    sensitivity_values=["91k", "470k"],
    false_trigger_budget=1.0,
    coverage_cell=2.0,
    coverage_x_max=4.0,
    coverage_trials=1,
    coverage_speed=1.22,
    settle_duration=20.0,
    settle_sample_rate=20.0,
)


def toml_value(v):
    if isinstance(v, bool):
        return "true" if v else "false"
    if isinstance(v, str):
        return f'"{v}"'
    if isinstance(v, list):
        return "[" + ", ".join(toml_value(x) for x in v) + "]"
    return repr(v)


def design_text(**changes):
    keys = {**SMALL, **changes}
    section = "[analysis]\n" + "".join(f"{k} = {toml_value(v)}\n" for k, v in keys.items())
    return DEMO_TOML[: DEMO_TOML.index("[analysis]")] + section


def design(**changes) -> Design:
    return loads(design_text(**changes))


def cli(tmp_path, args, **changes):
    path = tmp_path / "d.toml"
    path.write_text(design_text(**changes), encoding="utf-8")
    buf = io.StringIO()
    argv = [a.replace("{design}", str(path)).replace("{tmp}", str(tmp_path)) for a in args]
    with contextlib.redirect_stdout(buf), contextlib.redirect_stderr(io.StringIO()):
        assert main(argv) == 0, argv
    return json.loads(buf.getvalue())


@pytest.fixture
def spy(monkeypatch):
    """Records what reaches the engine: compiled sample rates and walk lengths, walk
    batches (sizes and positions) and whether noise was added."""
    seen = {"compile": [], "walks": [], "extra": [], "drive": []}
    compile_, run, drive = Detector.compile, Detector.run, Detector.drive

    def c(self, fs, n):
        seen["compile"].append((float(fs), int(n)))
        return compile_(self, fs, n)

    def r(self, target, env, walks, taps=(), lux=None, extra=None):
        seen["walks"].append(walks)
        seen["extra"].append(extra is not None)
        return run(self, target, env, walks, taps, lux, extra)

    def d(self, node, signal, fs, *a, **k):
        seen["drive"].append((node, float(fs), np.shape(signal)))
        return drive(self, node, signal, fs, *a, **k)

    monkeypatch.setattr(Detector, "compile", c)
    monkeypatch.setattr(Detector, "run", r)
    monkeypatch.setattr(Detector, "drive", d)
    return seen


def test_schema_has_every_setting_and_the_loader_adds_no_defaults():
    keys = set(design_schema.SCHEMA["analysis"][1])
    assert keys == {f.name for f in dataclasses.fields(AnalysisSettings)}
    # a design file that names only what is required: every other value is the object's
    # own default (the schema reads them from the objects)
    minimal = """
[lens]
layout = "table"
facets = [{ azimuth_deg = 0, elevation_deg = -10, focal_length = "20m", area = "20u" }]
[sensor]
thermal_time_constant = "0.3"
gate_resistance = "60G"
[follower]
idss = "400u"
pinch_off = 1.2
source_resistance = "47k"
[[stages]]
type = "non_inverting_band_pass"
r1 = "10k"
c1 = "22u"
rf = "560k"
cf = "27n"
[comparator]
window = "fixed"
threshold = "0.3"
"""
    d = loads(minimal)
    assert d.analysis == AnalysisSettings()
    assert d.detector.stages[0].opamp == OpAmp()
    assert d.detector.logic == PulseLogic()
    assert d.detector.supply == PowerSupply()
    assert d.environment == Environment()
    assert d.detector.mount == dataclasses.replace(d.detector.mount)  # Mount() defaults
    assert d.detector.name == Detector.__dataclass_fields__["name"].default
    assert d.speed == Design.__dataclass_fields__["speed"].default
    assert d.draught is None


def test_room_temperature_is_checked_once_by_the_room():
    with pytest.raises(DesignError) as a:
        Environment(air_c=70.0)
    with pytest.raises(DesignError) as b:
        loads(DEMO_TOML.replace("air_c = 21.0", "air_c = 70.0"))
    assert a.value.expected == b.value.expected  # the same limit, said once
    assert b.value.field == "scene.air_c"
    env = Environment(air_c=21.0)
    assert env.air_k == pytest.approx(294.15, abs=1e-12)


def test_command_line_passes_the_loaded_settings_to_every_analysis(tmp_path, monkeypatch):
    got = []
    for mod, name in (
        (detection_range, "detection_ranges"),
        (coverage, "top_view"),
        (sweep, "evaluate"),
        (false_triggers, "monte_carlo_rate"),
    ):
        orig = getattr(mod, name)

        def wrapped(*a, _orig=orig, _name=name, **k):
            got.append((_name, a, k))
            return _orig(*a, **k)

        monkeypatch.setattr(mod, name, wrapped)
        # also where a module imported the function by name before this test
        for other in list(sys.modules.values()):
            if getattr(other, "__name__", "").startswith("pirchain") and (
                getattr(other, name, None) is orig
            ):
                monkeypatch.setattr(other, name, wrapped)
    expect = design(seed=7, sample_rate=120.0).analysis
    cli(
        tmp_path, ["range", "{design}", "--json", "--map", "{tmp}/m.png"], seed=7, sample_rate=120.0
    )
    cli(tmp_path, ["sweep", "{design}", "--json"], seed=7, sample_rate=120.0)
    cli(tmp_path, ["false-triggers", "{design}", "--json", "--mc-hours", "0.02"], seed=7,
        sample_rate=120.0)  # fmt: skip
    n_before = len(got)
    cli(tmp_path, ["report", "{design}", "--json", "-o", "{tmp}/r.html"], seed=7, sample_rate=120.0)
    assert {g[0] for g in got[n_before:]} == {"detection_ranges", "top_view", "evaluate"}
    names = {g[0] for g in got}
    assert names == {"detection_ranges", "top_view", "evaluate", "monte_carlo_rate"}
    for name, a, k in got:
        if name == "detection_ranges":  # every range search, alone or batched
            assert a[4] == expect
        elif name == "top_view":
            assert a[4] == expect
        elif name == "evaluate":
            assert a[0].analysis == expect
        else:
            assert k["sample_rate"] == 120.0 and a[4] == 7


def test_sample_rate_reaches_walks_range_coverage_and_monte_carlo(tmp_path, spy):
    cli(tmp_path, ["range", "{design}", "--json", "--map", "{tmp}/m.png"], sample_rate=150.0)
    cli(tmp_path, ["false-triggers", "{design}", "--json", "--mc-hours", "0.02"],
        sample_rate=150.0)  # fmt: skip
    rates = {fs for fs, _ in spy["compile"]}
    assert rates == {150.0}
    assert all(w.sample_rate == 150.0 for w in spy["walks"])
    out = cli(tmp_path, ["walk", "{design}", "--json", "--csv", "{tmp}/w.csv"], sample_rate=250.0)
    t = np.loadtxt(tmp_path / "w.csv", delimiter=",", skiprows=1)[:, 0]
    assert np.diff(t) == pytest.approx(1 / 250.0) and out["detected"]


def test_level_trials_refine_and_grid_reach_the_range():
    r = detection_range.range_table(design(), ("tangential",))[0]
    assert (r.distances[0], r.distances[-1], r.level, r.trials) == (2.0, 11.0, 0.9, 1)
    np.testing.assert_allclose(np.diff(r.distances), 3.0)
    r2 = detection_range.range_table(
        design(d_min=1.0, d_max=9.0, step=2.0, trials=3, level=0.6), ("tangential",)
    )[0]
    assert (r2.distances[0], r2.distances[-1], r2.trials, r2.level) == (1.0, 9.0, 3, 0.6)
    assert r2.probability.size == 5 and set(np.unique(r2.probability * 3)) <= {0, 1, 2, 3}
    # refine: the range lies on the grid refined by 2^refine
    for refine in (0, 3):
        r = detection_range.range_table(design(refine=refine, d_max=29.0), ("tangential",))[0]
        k = (r.range - 2.0) / (3.0 / 2**refine)
        assert k == pytest.approx(round(k), abs=1e-9)
        if refine == 3:
            assert round(k) % 8 != 0  # the bisection moved it off the coarse grid


def test_level_changes_the_range():
    low = detection_range.range_table(design(level=0.25, trials=4, d_max=29.0), ("tangential",))
    high = detection_range.range_table(design(level=1.0, trials=4, d_max=29.0), ("tangential",))
    assert low[0].range >= high[0].range
    assert np.all(low[0].probability == high[0].probability)  # same walks, other level
    assert (low[0].probability >= 0.25).sum() >= (high[0].probability >= 1.0).sum()


def test_noise_reaches_the_walks(spy):
    detection_range.range_table(design(noise=False), ("tangential",))
    assert not any(spy["extra"])
    spy["extra"].clear()
    r = detection_range.range_table(design(noise=True), ("tangential",))[0]
    assert any(spy["extra"])
    assert r.probability.shape == r.probability_noise_free.shape


def test_bearings_reach_the_table_and_the_sweep(tmp_path, monkeypatch):
    out = cli(tmp_path, ["range", "{design}", "--json", "--kind", "radial"], bearings=[-20, 35])
    assert [r["bearing_deg"] for r in out["ranges"]] == [-20.0, 35.0]
    seen = []
    orig = sweep.detection_ranges
    monkeypatch.setattr(
        sweep, "detection_ranges", lambda *a, **k: seen.append(a[3]) or orig(*a, **k)
    )
    sweep.evaluate(design(bearings=[-20, 35, 40]))
    speed = design().speed
    # the middle bearing, tangential and radial, searched together
    assert seen == [[("tangential", 35.0, speed), ("radial", 35.0, speed)]]


def test_seed_moves_the_random_positions(spy):
    def positions(seed):
        spy["walks"].clear()
        coverage.top_view(*_scene(design(seed=seed)), "tangential", design(seed=seed).analysis)
        return np.concatenate([w.position[:, 0] for w in spy["walks"]])

    a, b, c = positions(1), positions(1), positions(2)
    np.testing.assert_array_equal(a, b)
    assert not np.allclose(a, c)


def _scene(d):
    return d.detector, d.target, d.environment


def test_coverage_keys_reach_the_map(spy):
    d = design(coverage_cell=1.5, coverage_x_max=6.0, coverage_trials=3, coverage_speed=0.8)
    m = coverage.top_view(*_scene(d), "tangential", d.analysis)
    np.testing.assert_allclose(np.diff(m.x), 1.5)
    assert m.x[-1] < 6.0 <= m.x[-1] + 1.5 and m.walks == m.x.size * m.y.size * 3
    assert m.speed == 0.8
    w = spy["walks"][0]  # walking from 0.5 s: sample 100 is mid-walk
    speed = np.hypot(*(w.position[:, 101] - w.position[:, 100]).T) * w.sample_rate
    np.testing.assert_allclose(speed, 0.8, rtol=1e-9)


def test_walk_distance_reaches_the_walk_and_the_report_walk(tmp_path):
    out = cli(tmp_path, ["walk", "{design}", "--json"], walk_distance=5.5)
    assert out["distance_m"] == 5.5


def test_sensitivity_path_values_and_budget_reach_the_sweep(tmp_path):
    out = cli(
        tmp_path, ["sweep", "{design}", "--json"], sensitivity_path="detector.stages[1].rf",
        sensitivity_values=["680k", "1M"], false_trigger_budget=1e9,
    )  # fmt: skip
    assert out["path"] == "detector.stages[1].rf"
    assert [r["detector.stages[1].rf"] for r in out["rows"]] == [680e3, 1e6]
    assert out["budget_per_year"] == 1e9 and out["best_value"] is not None
    strict = cli(tmp_path, ["sweep", "{design}", "--json"], false_trigger_budget=1e-12)
    assert strict["budget_per_year"] == 1e-12
    assert all(r["false_triggers_per_year"] > 1e-12 for r in strict["rows"]) == (
        strict["best_value"] is None
    )


def test_settle_keys_reach_the_power_up(tmp_path, spy):
    cli(tmp_path, ["sweep", "{design}", "--json"], settle_duration=15.0, settle_sample_rate=40.0)
    ups = [x for x in spy["drive"] if x[0] == "gate"]
    assert ups and all(fs == 40.0 and shape[1] == math.ceil(15.0 * 40.0) + 1
                       for _, fs, shape in ups)  # fmt: skip
    pu = power_up.power_up(design().detector, 15.0, 40.0)
    assert pu.time[-1] == pytest.approx(15.0)


def test_bad_settings_name_the_key(tmp_path):
    for key, value, match in (
        ("trials", 0, "analysis.trials"),
        ("level", 1.5, "analysis.level"),
        ("step", 1e-9, "analysis.step"),
        ("bearings", [], "analysis.bearings"),
        ("bearings", [0, "x"], "analysis.bearings"),
        ("d_max", 1.0, "analysis.d_max"),
        ("coverage_cell", 1e-3, "analysis.coverage_cell"),
        ("seed", -1, "analysis.seed"),
        ("noise", 1, "analysis.noise"),
    ):
        with pytest.raises(DesignError, match=re.escape(match)):
            loads(design_text(**{key: value}))
    path = tmp_path / "x.toml"
    path.write_text(design_text(), encoding="utf-8")
    assert load(path).analysis.trials == 1
    with pytest.raises(DesignError, match="analysis.trials"):
        AnalysisSettings(trials=2.5)
    assert Draught() == loads(DEMO_TOML).draught
