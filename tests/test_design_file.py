"""Design files and the command line: engineering notation (IEC 60062 codes, SI prefixes),
broken design files give a one-line error naming the key and exit code 2, never a traceback."""

import os
import subprocess
import sys

import pytest

from pirchain.errors import DesignError
from pirchain.interface.cli import EXIT_DESIGN, main
from pirchain.interface.demo_text import DEMO_TOML
from pirchain.interface.design_file import loads
from pirchain.units import format_eng, parse_celsius, parse_quantity


@pytest.mark.parametrize(
    "text,unit,value",
    [
        ("47k", "ohm", 47e3),
        ("4k7", "ohm", 4.7e3),
        ("2u2", "F", 2.2e-6),
        ("75G", "ohm", 75e9),
        ("10u", None, 10e-6),
        ("10uF", "F", 10e-6),
        ("4R7", "ohm", 4.7),
        ("R47", "ohm", 0.47),
        ("1M", "ohm", 1e6),
        ("100n", "F", 100e-9),
        ("22mm", "m", 0.022),
        ("2.2m", "m", 2.2),
        ("3.3 V", "V", 3.3),
        ("47 kΩ", "ohm", 47e3),
        ("1.5e3", None, 1500.0),
        (12, None, 12.0),
    ],
)
def test_engineering_notation(text, unit, value):
    # IEC 60062 letter codes and SI prefixes (common practice)
    assert parse_quantity(text, "x", unit) == pytest.approx(value, rel=1e-12)


def test_units_refused_and_formatting():
    with pytest.raises(DesignError, match="c1"):
        parse_quantity("10uH", "c1", "F")
    with pytest.raises(DesignError, match="air_c"):
        parse_celsius("294 K", "air_c")
    assert format_eng(4700, "Ω") == "4.7kΩ"


def test_demo_design_loads():
    d = loads(DEMO_TOML)
    assert d.detector.stages[1].v_ref == pytest.approx(1.65)
    assert d.detector.comparator.window.r_middle == 470e3


def mutate(old, new):
    assert old in DEMO_TOML, old
    return DEMO_TOML.replace(old, new, 1)


BROKEN = [
    (mutate('layout = "wall"', 'layuot = "wall"'), "lens.layuot"),
    (mutate("[sensor]", "[sensorr]"), "sensorr"),
    (mutate('c1 = "22u"', 'c1 = "22uH"'), "stages[0].c1"),
    (mutate('gate_resistance = "60G"', 'gate_resistance = "60GF"'), "sensor.gate_resistance"),
    (mutate('rf = "560k"', 'rf = "-560k"'), "stages[0].rf"),
    (mutate('source_resistance = "47k"', "source_resistance = 0"), "follower.source_resistance"),
    (mutate('thickness = "25u"', "thickness = nan"), "sensor.thickness"),
    (mutate("hold = 60", "hold = inf"), "logic.hold"),
    (mutate('[follower]\nidss = "400u"', '[follower_x]\nidss = "400u"'), "follower"),
    (mutate('idss = "400u"\n', ""), "follower.idss"),
    (mutate("count = 9", 'count = "nine"'), "lens.tiers[0].count"),
    (mutate("retrigger = true", 'retrigger = "yes"'), "logic.retrigger"),
    (mutate('window = "ladder"', 'window = "ladderr"'), "comparator.window"),
    (mutate('material = "LiTaO3"', 'material = "LiTaO"'), "sensor.material"),
    (mutate('[[stages]]\ntype = "non_inverting_band_pass"', '[[stagez]]\ntype = "x"'), "stagez"),
    (mutate("[design]", "[design"), "file"),
    (mutate("air_c = 21.0", 'air_c = "294 K"'), "scene.air_c"),
    (mutate('hysteresis = "20m"', 'hysteresis = "2"'), "comparator.hysteresis"),
    (mutate("mismatch = 0.05", "mismatch = 2"), "sensor.mismatch"),
    (mutate("speed = 1.0", "speed = 0"), "scene.speed"),
    (mutate("pulses_required = 2", "pulses_required = 0"), "logic.pulses_required"),
    (mutate("elevation_deg = -5.0,", "elevation_deg = -120.0,"), "lens.tiers[0].elevation_deg"),
    (mutate("level = 0.9", "level = 1.5"), "analysis.level"),
    (mutate("v_high = 3.28", "v_high = 0.01"), "opamp.v_high"),
    (mutate('r1 = "10k"', 'r1 = "ten k"'), "stages[0].r1"),
    (mutate("trials = 36", "trials = 2.5"), "analysis.trials"),
]


@pytest.mark.parametrize("text,key", BROKEN, ids=[k for _, k in BROKEN])
def test_broken_design_gives_one_line_error(text, key, tmp_path, capsys):
    path = tmp_path / "broken.toml"
    path.write_text(text, encoding="utf-8")
    code = main(["check", str(path)])
    err = capsys.readouterr().err.strip()
    assert code == EXIT_DESIGN
    assert len(err.splitlines()) == 1 and "Traceback" not in err
    assert key in err, err


def test_missing_file_and_bad_arguments(tmp_path, capsys):
    assert main(["check", str(tmp_path / "nope.toml")]) == EXIT_DESIGN
    assert "file" in capsys.readouterr().err
    with pytest.raises(SystemExit) as e:
        main(["walk", "--kind", "sideways"])
    assert e.value.code == EXIT_DESIGN


def test_no_traceback_in_a_real_process(tmp_path):
    path = tmp_path / "broken.toml"
    path.write_text(BROKEN[2][0], encoding="utf-8")
    proc = subprocess.run(
        [sys.executable, "-m", "pirchain.interface.cli", "check", str(path)],
        capture_output=True,
        text=True,
        check=False,
    )
    assert proc.returncode == EXIT_DESIGN
    assert "Traceback" not in proc.stderr and "stages[0].c1" in proc.stderr


def test_outputs_never_overwritten_without_force(tmp_path, capsys):
    out = tmp_path / "demo.toml"
    assert main(["demo-design", "-o", str(out)]) == 0
    out.write_text("mine", encoding="utf-8")
    assert main(["demo-design", "-o", str(out)]) == EXIT_DESIGN
    assert out.read_text(encoding="utf-8") == "mine"
    assert main(["demo-design", "-o", str(out), "--force"]) == 0
    assert out.read_text(encoding="utf-8") == DEMO_TOML
    assert not [f for f in os.listdir(tmp_path) if f.startswith(".pirchain-")]
    capsys.readouterr()


def test_help_shows_cautions(capsys):
    for argv in (["--help"], ["report", "--help"], ["walk", "--help"]):
        with pytest.raises(SystemExit):
            main(argv)
        assert "accredited laboratory" in capsys.readouterr().out
