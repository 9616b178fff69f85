"""Bad input, unsafe writes and misleading figures at the command line: one test per class.

What a careful user expects (common practice for command-line tools): a wrong value gives
exit 2 and one line naming it, never a traceback; nothing the user made is overwritten or
loses its mode; a warning is said once; no figure is printed that the model cannot claim.
"""

from __future__ import annotations

import builtins
import contextlib
import io
import json
import os
import stat

import pytest

from pirchain.errors import DesignError, ValidityWarning, warn_validity, warnings_once
from pirchain.interface import entry, report
from pirchain.interface.cli import main
from pirchain.interface.demo_text import DEMO_TOML
from pirchain.interface.design_file import loads
from pirchain.interface.output import write_new

HERE = os.path.dirname(__file__)
CEILING = os.path.join(HERE, "..", "examples", "ceiling_seated_minor_motion.toml")


def run(argv):
    out, err = io.StringIO(), io.StringIO()
    with contextlib.redirect_stdout(out), contextlib.redirect_stderr(err):
        try:
            code = main([str(a) for a in argv])
        except SystemExit as stop:  # argparse's own exit, after its one line
            code = stop.code
    return code, out.getvalue(), err.getvalue()


def design(tmp_path, text=DEMO_TOML, name="d.toml"):
    p = tmp_path / name
    p.write_text(text, encoding="utf-8")
    return p


def one_line_exit_2(argv):
    code, _out, err = run(argv)
    lines = err.strip().splitlines()
    assert code == 2 and len(lines) == 1, (argv, code, err)
    assert "internal error" not in err and "Traceback" not in err
    return lines[0]


# --- bad design files ---------------------------------------------------------------


@pytest.mark.parametrize(
    ("old", "new", "field"),
    [
        ("[design]", "x = " + "[" * 200 + "]" * 200 + "\n[design]", "file"),
        ("[design]", "x = 1" + "0" * 5000 + "\n[design]", "file"),
        ("pinch_off = ", "pinch_off = 1e-300 #", "follower.pinch_off"),
        ('cf = "27n"', "cf = 1e308", "cf"),
        ("speed = 1.0", "speed = 1e-6", "scene.speed"),
        ("speed = 1.0", "speed = 1000", "scene.speed"),
        ("sample_rate = 100", "sample_rate = 1e7", "analysis.sample_rate"),
        ("trials = 36", "trials = 1000000000", "analysis.trials"),
        ("d_max = 30\n", "d_max = 1e6\n", "analysis.d_max"),
        ("step = 1.5\n", "step = 0.001\n", "analysis.step"),
        ("level = 0.9\n", "level = 1e-300\n", "analysis.level"),
        ("seed = 1\n", "seed = 1.5\n", "analysis.seed"),
        ("trials = 36", "trials = 0", "analysis.trials"),
        ('target = "adult"', "target = 3", "scene.target"),
        ("air_c = 21.0\n", "air_c = 21.0\ndetector_c = 400\n", "scene.detector_c"),
        ('c1_leakage = "200M"', 'c1_leakage = "-1M"', "c1_leakage"),
        ('r_tempco = "100u"', "r_tempco = 1", "r_tempco"),
        ('gate_leakage = "0.5p"', "gate_leakage = 1", "gate_leakage"),
        ("e_n_corner = 20\n", "e_n_corner = 1e300\n", "e_n_corner"),
        ('offset = "1m"', "offset = 5", "opamp.offset"),
        ("[analysis]", "[ambient]\nramp_rates = [[1, [2]]]\n[analysis]", "ambient.ramp_rates"),
        ("[analysis]", "[ambient]\nramp_rates = []\n[analysis]", "ambient.ramp_rates"),
        ("[analysis]", "[ambient]\nhvac_cycles = true\n[analysis]", "ambient.hvac_cycles"),
        ("[analysis]", "[ambient]\nramp_minutes = 1e9\n[analysis]", "ambient.ramp_minutes"),
        ("[analysis]", "[ambient]\nsample_rate = 1000\nhvac_cycles = 100\n[analysis]",
         "ambient.hvac_cycles"),
        ("[analysis]", "[ambient]\nramp_rates = [1e400]\n[analysis]", "ambient.ramp_rates[0]"),
        ("[analysis]", '[[tolerances]]\npath = "detector.nope"\ntolerance = "1%"\n[analysis]',
         "tolerances.path"),
        ("[analysis]", '[[tolerances]]\npath = "resistors"\ntolerance = "150%"\n[analysis]',
         "tolerances[0].tolerance"),
        ("[analysis]", '[[tolerances]]\npath = "resistors"\ntolerance = [1]\n[analysis]',
         "tolerances[0].tolerance"),
        ("[analysis]", '[[tolerances]]\npath = "__class__"\ntolerance = "1%"\n[analysis]',
         "tolerances.path"),
        ("[analysis]", "[acceptance]\nrange_m = 1e9\n[analysis]", "acceptance.range_m"),
        ("[analysis]", "[acceptance]\nlevel = 0.9\n[analysis]", "acceptance"),
        ("[analysis]", "[acceptance]\nrange_m = 10\nbearings = [[0]]\n[analysis]",
         "acceptance.bearings[0]"),
        ("[analysis]", "[acceptance]\nrange_m = 10\nunits = 1e12\n[analysis]",
         "acceptance.units"),
    ],
)  # fmt: skip
def test_bad_design_values_give_one_line(tmp_path, old, new, field):
    assert old in DEMO_TOML, old
    path = design(tmp_path, DEMO_TOML.replace(old, new, 1))
    line = one_line_exit_2(["check", path])
    assert field in line, line


def test_device_files_and_byte_order_marks(tmp_path):
    assert "regular file" in one_line_exit_2(["check", "/dev/zero"])
    bom = tmp_path / "bom.toml"
    bom.write_bytes(b"\xef\xbb\xbf" + DEMO_TOML.encode("utf-8"))
    assert run(["check", bom])[0] == 0  # a BOM is allowed (common practice of editors)


def test_one_set_of_limits_for_check_and_range(tmp_path):
    # a value that passes `check` runs in `range`: both build the same settings object
    ok = design(tmp_path, DEMO_TOML.replace("level = 0.9\n", "level = 0.01\n", 1))
    assert run(["check", ok])[0] == 0
    with pytest.raises(DesignError):
        loads(DEMO_TOML.replace("level = 0.9\n", "level = 0.001\n", 1))


# --- bad command lines --------------------------------------------------------------


@pytest.mark.parametrize(
    "path",
    ["detector.stages[99].c1", "detector.name", "detector.lens", "__class__",
     "detector.stages[0]", "detector.stages.x"],
)  # fmt: skip
def test_sweep_paths_must_name_a_number(path):
    assert "sweep.path" in one_line_exit_2(["sweep", "--path", path, "--values", "1,2"])


@pytest.mark.parametrize(
    "argv",
    [
        ["sweep", "--budget", "-1"],
        ["false-triggers", "--mc-hours", "1e-9"],
        ["false-triggers", "--mc-hours", "1e12"],
        ["walk", "--speed", "1000"],
        ["walk", "--distance", "-3"],
        ["walk", "--bearing", "1e300"],
        ["check", "--seed", "-4"],
        ["walk", "--kind", "sideways"],
        ["range", "--bearings", "a,b"],
        ["ambient", "--ramps", "1,100"],
        ["ambient", "--hvac", ","],
        ["ambient", "--hvac", "1e400"],
    ],
)
def test_bad_options_give_one_line(argv):
    one_line_exit_2(argv)


def test_interrupt_while_starting_prints_no_traceback(monkeypatch, capsys):
    real = builtins.__import__

    def interrupted(name, *a, **k):
        if name == "cli" or name.endswith("interface.cli"):
            raise KeyboardInterrupt
        return real(name, *a, **k)

    monkeypatch.delitem(__import__("sys").modules, "pirchain.interface.cli")
    monkeypatch.setattr(builtins, "__import__", interrupted)
    assert entry.main(["check"]) == 130
    err = capsys.readouterr().err
    assert "interrupted" in err and "Traceback" not in err


# --- writing files ------------------------------------------------------------------


@pytest.mark.parametrize("target", ["", "{tmp}", "/proc/pirchain.html", "/sys/pirchain.html"])
def test_outputs_that_are_not_files_are_refused(tmp_path, target):
    one_line_exit_2(["demo-design", "-o", target.format(tmp=tmp_path), "--force"])


def test_non_regular_targets_are_never_replaced(tmp_path):
    fifo = tmp_path / "pipe"
    os.mkfifo(fifo)
    one_line_exit_2(["demo-design", "-o", fifo, "--force"])
    assert stat.S_ISFIFO(os.lstat(fifo).st_mode)
    if os.geteuid() == 0:  # a device node, as the outside trial made with mknod
        dev = tmp_path / "null"
        os.mknod(dev, 0o600 | stat.S_IFCHR, os.makedev(1, 3))
        one_line_exit_2(["demo-design", "-o", dev, "--force"])
        assert stat.S_ISCHR(os.lstat(dev).st_mode)


def test_force_on_a_symlink_replaces_the_file_it_points_to(tmp_path):
    real = tmp_path / "real.toml"
    real.write_text("old\n")
    link = tmp_path / "link.toml"
    link.symlink_to(real)
    assert run(["demo-design", "-o", link, "--force"])[0] == 0
    assert link.is_symlink() and real.read_text() == DEMO_TOML  # the link stays
    dangling = tmp_path / "dangling.toml"
    dangling.symlink_to(tmp_path / "nowhere.toml")
    one_line_exit_2(["demo-design", "-o", dangling, "--force"])


def test_new_files_honour_the_umask_and_replaced_files_keep_their_mode(tmp_path):
    old = os.umask(0o022)
    try:
        write_new(tmp_path / "a.txt", "x")
        assert stat.S_IMODE(os.stat(tmp_path / "a.txt").st_mode) == 0o644
        os.umask(0o077)
        write_new(tmp_path / "b.txt", "x")
        assert stat.S_IMODE(os.stat(tmp_path / "b.txt").st_mode) == 0o600
        os.chmod(tmp_path / "a.txt", 0o640)
        write_new(tmp_path / "a.txt", "y", force=True)
        assert stat.S_IMODE(os.stat(tmp_path / "a.txt").st_mode) == 0o640
    finally:
        os.umask(old)
    assert (tmp_path / "a.txt").read_text() == "y"
    assert sorted(p.name for p in tmp_path.iterdir()) == ["a.txt", "b.txt"]  # no temp files


def test_outputs_are_checked_before_any_work(tmp_path, monkeypatch):
    existing = tmp_path / "r.html"
    existing.write_text("mine")

    def no_work(*a, **k):
        raise AssertionError("computed before checking the output")

    monkeypatch.setattr(report, "compute", no_work)
    one_line_exit_2(["report", "-o", existing])
    assert existing.read_text() == "mine"
    x = tmp_path / "x.out"
    one_line_exit_2(["walk", "--csv", x, "--plot", x])
    assert not x.exists()


# --- warnings -----------------------------------------------------------------------


def test_each_kind_of_warning_is_said_once_with_a_count():
    with pytest.warns(ValidityWarning) as rec:
        with warnings_once():
            for f in (3.0, 27.7, 11.0):
                warn_validity(f"beam crossings reach {f} Hz, above a tenth")
            warn_validity("another kind")
    texts = sorted(str(w.message) for w in rec)
    assert texts == ["another kind", "beam crossings reach 27.7 Hz, above a tenth (said 3 times "
                     "this run)"]  # fmt: skip


def test_the_demo_needs_no_warning_and_a_ceiling_unit_warns_once(tmp_path):
    code, _out, err = run(["range", "--json", "--bearings=-30,0,30"])
    assert code == 0 and "warning" not in err, err  # each walk sampled fast enough
    code, _out, err = run(["walk", CEILING, "--kind", "still", "--distance", "1.5"])
    assert code == 0 and err.count("warning") <= 1, err


# --- figures a user would quote -----------------------------------------------------


def test_range_figures_a_user_would_quote():
    code, out, _ = run(["range", "--json", "--kind", "tangential", "--bearings=-50,0,50"])
    assert code == 0
    data = json.loads(out)
    step = 1.5  # the demo's analysis.step
    for r in data["ranges"]:
        for g0, g1 in r["gaps_m"]:
            assert g1 - g0 >= step - 1e-9  # a gap is at least one cell, never "14–14 m"
    other = json.loads(run(["range", "--json", "--kind", "tangential", "--bearings=-50,0,50",
                            "--seed", "99"])[1])  # fmt: skip
    free = [r["range_noise_free_m"] for r in data["ranges"]]
    assert free == [r["range_noise_free_m"] for r in other["ranges"]]  # not the seed's


def test_sweep_values_take_the_unit_of_the_swept_key():
    code, out, _ = run(["sweep", "--json", "--path", "detector.mount.height", "--values", "3m"])
    assert code == 0
    data = json.loads(out)
    assert data["rows"][0]["detector.mount.height"] == 3.0  # 3 m, as a design file reads it
    assert data["best_value"] is None and data["best_means"] is None  # no "best" height
    code, out, _ = run(["sweep", "--json", "--values", "470k,1M"])
    assert json.loads(out)["best_means"].startswith("the most tangential range")


# --- names in reports, figures and terminals ----------------------------------------


def test_user_text_is_plain_text_everywhere(tmp_path, monkeypatch):
    name = r"Lab $x^2$ \u202Eevil\u202C \u001B[31mred"  # TOML escapes: the real characters
    text = DEMO_TOML.replace("(demo)", name, 1)
    stage = "stage 1 (non-inverting)"
    assert stage in text
    # a "$" pair that matplotlib could not even parse as a formula
    path = design(tmp_path, text.replace(stage, r"stage $\\nosuchcommand{$ 1", 1))
    code, out, err = run(["check", path])
    assert code == 0 and "\x1b" not in out and "\u202e" not in out
    assert run(["walk", path, "--plot", tmp_path / "w.png"])[0] == 0  # "$" is no formula
    monkeypatch.setenv("SOURCE_DATE_EPOCH", "1700000000")
    html = []
    for k in range(2):
        assert run(["report", path, "-o", tmp_path / f"r{k}.html"])[0] == 0
        html.append((tmp_path / f"r{k}.html").read_bytes())
    assert html[0] == html[1]  # the same design gives byte-identical HTML
    text = html[0].decode("utf-8")
    assert "\u202e" not in text and "\x1b" not in text and "<bdi>" in text
    assert "name='viewport'" in text and "2023-11-14" in text


# --- the ceiling example ------------------------------------------------------------


def test_seated_minor_motion_under_a_ceiling_unit():
    # NEMA WD 7 minor motion: a still person moving a forearm; detected near, not far out
    def detected(d):
        code, out, _ = run(["walk", CEILING, "--kind", "still", "--distance", d, "--json"])
        assert code == 0
        return json.loads(out)["detected"]

    assert detected(1.5) and not detected(3.0)


def test_one_coverage_diameter_for_ranges_and_maps():
    import numpy as np

    from pirchain.analysis.coverage import CoverageMap, diameter_from_ranges
    from pirchain.analysis.detection_range import RangeResult

    x = np.arange(-4.75, 5.0, 0.5)
    gx, gy = np.meshgrid(x, x)
    prob = (np.hypot(gx, gy) < 3.0).astype(float)  # detected inside a 3 m circle
    m = CoverageMap(x, x, prob, "tangential", 1.22, prob.size)
    assert m.diameter(0.5) == pytest.approx(6.0, abs=0.5)  # within one cell
    rs = [
        RangeResult(b, "tangential", 1.0, 0.5, x, x, x, 3.0, 3.0, gaps, 100.0, 4)
        for b, gaps in ((0.0, ()), (120.0, ()), (240.0, ((1.0, 1.5),)))
    ]
    assert diameter_from_ranges(rs) == 2.0  # the gap from 1 m bounds the covered circle
    assert diameter_from_ranges(rs[:2]) is None
