"""Sign-off for built units, each check against an outside source:

* exact binomial intervals: ``scipy.stats.binomtest(...).proportion_ci(method="exact")``
  (Clopper & Pearson, Biometrika 26, 404, 1934);
* IEC 60063:2015 preferred-number tables (E6, E12, E24 typed from the standard; E96 spot
  values; from memory);
* a yield whose line depends on one closed-form quantity — the ladder's supply current
  V/(R_t + R_m + R_b) (Ohm's law) — against the exact distribution of that sum of three
  uniform resistors (their densities convolved numerically);
* Dask distributed (a real scheduler and worker processes, ``LocalCluster``) against the
  in-process run: byte-identical JSON;
* the value search against the known best value: the smallest series value at or above the
  sensitivity resistor that gives one false trigger a year (Rice, from the nominal model).
"""

import dataclasses
import json
import math

import numpy as np
import pytest
from scipy import stats

from pirchain.analysis.false_triggers import YEAR, threshold_for_rate
from pirchain.errors import DesignError
from pirchain.interface.cli import main
from pirchain.interface.demo import demo_design
from pirchain.production.acceptance import evaluate_unit
from pirchain.production.choose import Part, choose_values
from pirchain.production.eseries import decade, nearest, values_between
from pirchain.production.tolerances import draw, expand
from pirchain.production.yields import clopper_pearson, run_yield
from pirchain.signoff import Acceptance, Tolerance

E24 = [1.0, 1.1, 1.2, 1.3, 1.5, 1.6, 1.8, 2.0, 2.2, 2.4, 2.7, 3.0, 3.3, 3.6, 3.9, 4.3, 4.7,
       5.1, 5.6, 6.2, 6.8, 7.5, 8.2, 9.1]  # fmt: skip
E12 = [1.0, 1.2, 1.5, 1.8, 2.2, 2.7, 3.3, 3.9, 4.7, 5.6, 6.8, 8.2]
E6 = [1.0, 1.5, 2.2, 3.3, 4.7, 6.8]


def small_acceptance(**kw):
    base = dict(range_m=10.0, bearings=(0.0,), speeds=(1.0,), trials=4,
                false_triggers_per_year=1.0)  # fmt: skip
    return Acceptance(**{**base, **kw})


def test_e_series_equal_iec_60063():
    assert list(decade("E6")) == E6 and list(decade("E12")) == E12 and list(decade("E24")) == E24
    e96 = decade("E96")
    assert len(e96) == 96
    for v in (1.00, 1.02, 1.47, 2.49, 3.32, 4.99, 6.81, 8.66, 9.76):  # IEC 60063 E96
        assert v in e96
    assert 9.20 in decade("E192") and 9.19 not in decade("E192")
    assert list(values_between("E12", 47e3, 150e3)) == [47e3, 56e3, 68e3, 82e3, 100e3, 120e3,
                                                        150e3]  # fmt: skip
    assert nearest("E24", 4.6e3) == 4.7e3


@pytest.mark.parametrize(("k", "n"), [(0, 20), (3, 20), (17, 20), (20, 20), (70, 100)])
def test_clopper_pearson_matches_scipy(k, n):
    ci = stats.binomtest(k, n).proportion_ci(confidence_level=0.95, method="exact")
    lo, hi = clopper_pearson(k, n)
    assert lo == pytest.approx(ci.low, abs=1e-12) and hi == pytest.approx(ci.high, abs=1e-12)


def test_zero_tolerances_give_the_nominal_answer():
    d = demo_design()
    acc = small_acceptance(range_m=25.0, warm_up_s=30.0, supply_a=150e-6)
    tols = (Tolerance("resistors", 0.0), Tolerance("detector.sensor.mismatch", 0.0, False))
    d = dataclasses.replace(d, acceptance=acc, tolerances=tols)
    nominal = evaluate_unit(d)
    y = run_yield(d, 6, seed=3)
    assert y.yield_fraction in (0.0, 1.0)
    assert y.yield_fraction == float(nominal.ok)
    for k in range(y.units):
        assert tuple(y.passed[k]) == nominal.passed
        np.testing.assert_array_equal(y.margins[k], nominal.margins)


def test_yield_of_a_closed_form_line_matches_its_exact_distribution():
    # Only the ladder resistors spread (uniform ±2 %); the only line is the supply current,
    # I = I_rest + V / (R_t + R_m + R_b): the yield is P(R_t + R_m + R_b ≥ V/(limit − I_rest)).
    d = demo_design()
    det = d.operating
    win = det.comparator.window
    r = np.array([win.r_top, win.r_middle, win.r_bottom])
    i_rest = det.supply_budget().total - win.current()
    s_nom = r.sum()
    limit = i_rest + win.supply / (s_nom * 1.004)  # needs the sum 0.4 % above nominal
    tols = tuple(Tolerance(f"detector.comparator.window.{n}", 0.02)
                 for n in ("r_top", "r_middle", "r_bottom"))  # fmt: skip
    d = dataclasses.replace(d, tolerances=tols, acceptance=Acceptance(supply_a=limit))
    y = run_yield(d, 400, seed=5)
    # exact: the density of the sum of three uniforms, by numerical convolution
    grid = np.linspace(-1.0, 1.0, 20001)
    h = grid[1] - grid[0]
    dens = None
    for half in 0.02 * r:
        u = np.where(np.abs(grid * 0.1 * s_nom) <= half, 1.0 / (2 * half), 0.0)
        dens = u if dens is None else np.convolve(dens, u, mode="same") * h * 0.1 * s_nom
    x = s_nom + grid * 0.1 * s_nom
    cdf = np.cumsum(dens) * h * 0.1 * s_nom
    need = win.supply / (limit - i_rest)
    exact = 1.0 - float(np.interp(need, x, cdf))
    assert 0.2 < exact < 0.8  # a line that really splits the units
    lo, hi = y.interval
    assert lo <= exact <= hi, (y.yield_fraction, exact)


def test_draws_follow_their_distribution_and_sign():
    d = demo_design()
    tols = (Tolerance("detector.sensor.mismatch", 0.05, False, random_sign=True),
            Tolerance("detector.follower.jfet.idss", 0.5, distribution="lognormal"),
            Tolerance("detector.stages[*].opamp.offset", 3e-3, False, "gaussian"))  # fmt: skip
    sp = expand(d, tols)
    assert [s.path for s in sp] == ["detector.sensor.mismatch", "detector.follower.jfet.idss",
                                    "detector.stages[0].opamp.offset",
                                    "detector.stages[1].opamp.offset"]  # fmt: skip
    x = draw(sp, 4000, 1)
    assert (x[:, 0] < 0).mean() == pytest.approx(0.5, abs=0.05)  # random sign
    assert np.all(np.abs(x[:, 0]) <= 0.1 + 1e-12)
    assert np.all(x[:, 1] > 0)  # lognormal stays positive
    # ln(1 + 50 %) at 3 σ of ln I_DSS (GUM §4.3 for the stated multiple)
    assert np.std(np.log(x[:, 1] / 0.4e-3)) == pytest.approx(math.log(1.5) / 3, rel=0.05)
    assert np.std(x[:, 2]) == pytest.approx(1e-3, rel=0.05)  # 3 mV at 3 σ
    assert not np.allclose(x[:, 2], x[:, 3])  # each stage its own draw
    with pytest.raises(DesignError, match="tolerances.path"):
        expand(d, (Tolerance("detector.stages[*].nothing", 0.1),))


def test_the_value_search_finds_the_known_best():
    d = demo_design()
    _, r_ft = threshold_for_rate(d.operating, d.environment, 1.0 / YEAR, d.draught)
    d = dataclasses.replace(d, acceptance=small_acceptance())
    c = choose_values(d, [Part("detector.comparator.window.r_middle", "E12", 47e3, 1e6)],
                      objective="range")  # fmt: skip
    # a wider window (larger R_m) fires less and sees less far: the longest range with at
    # most one false trigger a year is the smallest series value at or above R_ft
    expect = min(v for v in values_between("E12", 47e3, 1e6) if v >= r_ft)
    assert c.best.values == (expect,)
    assert all(cand.yield_fraction == 0.0 for cand in c.ranked if cand.values[0] < r_ft)


def test_local_dask_cluster_gives_byte_identical_json():
    import distributed

    from pirchain.production.runners import DaskCluster

    d = demo_design()
    tols = (Tolerance("resistors", 0.05), Tolerance("capacitors", 0.2))
    d = dataclasses.replace(d, tolerances=tols, acceptance=small_acceptance(range_m=20.0))
    here = json.dumps(run_yield(d, 12, seed=7, batch=3).to_dict(), sort_keys=True)
    with (
        distributed.LocalCluster(n_workers=2, threads_per_worker=1, processes=True,
                                 dashboard_address=None) as cluster,
        distributed.Client(cluster) as client,
    ):  # fmt: skip
        there = run_yield(d, 12, seed=7, runner=DaskCluster(client=client), batch=3)
        again = run_yield(d, 12, seed=7, client=client)  # the client= form, default batches
    assert json.dumps(there.to_dict(), sort_keys=True) == here
    assert json.dumps(again.to_dict(), sort_keys=True) == here


def test_yield_command_and_its_errors(tmp_path, capsys):
    from pirchain.interface.demo_text import DEMO_TOML

    text = DEMO_TOML + (
        '\n[[tolerances]]\npath = "resistors"\ntolerance = "1%"\n'
        "\n[acceptance]\nrange_m = 20\nfalse_triggers_per_year = 1\ntrials = 4\n"
    )
    p = tmp_path / "d.toml"
    p.write_text(text, encoding="utf-8")
    assert main(["yield", str(p), "--units", "4", "--processes", "1", "--json",
                 "--corners", "1"]) == 0  # fmt: skip
    data = json.loads(capsys.readouterr().out)
    assert data["units"] == 4 and len(data["corners"]["corners"]) == 2
    for argv in (["--units", "0"], ["--processes", "x"], ["--scheduler", "not an address"],
                 ["--corners", "9"]):  # fmt: skip
        assert main(["yield", str(p), *argv]) == 2
    assert main(["choose-values", str(p), "--part", "detector.nothing=E12:1k:2k"]) == 2
    assert main(["choose-values", str(p), "--part", "bad"]) == 2
    assert main(["yield"]) == 2  # the demo has no [acceptance]
