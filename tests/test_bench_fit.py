"""Calibration to bench data (issue 15): the walk-test likelihood and fitted scale against
scipy.stats on a case with a closed form; the quiet-room fit of the design's own spectra
with its crossing counts against Rice; the command line refusing broken captures with exit
2; and the calibrated design file loading, checking and reproducing the fitted waveform.
Sources are named beside each check."""

import dataclasses
import math

import numpy as np
import pytest
from scipy import optimize, stats

from pirchain.calibration.quiet import calibrated_sources, fit_quiet
from pirchain.calibration.walk_results import WalkRow, fit_walk_tests, row_margins
from pirchain.calibration.waveform import WalkSpec, fit_waveform, simulate
from pirchain.circuit.noise import NoiseScale
from pirchain.circuit.synthesis import NoiseSynthesizer, dominant_sources
from pirchain.interface.calibrated_file import calibrated_text
from pirchain.interface.capture_file import Capture
from pirchain.interface.cli import main
from pirchain.interface.demo import demo_design
from pirchain.interface.demo_text import DEMO_TOML
from pirchain.interface.design_file import loads


@pytest.mark.parametrize(("link", "dist"), [("probit", stats.norm), ("logistic", stats.logistic)])
def test_walk_test_fit_matches_the_binomial_closed_form(link, dist):
    # every row the same walk (one margin m0): P is one number p(s) = F(ln(s/m0)/σ), so the
    # likelihood is binomial: the maximum is at p = k/n, ŝ = m0 exp(σ F⁻¹(k/n)), the maximum
    # log-likelihood is Σ Bernoulli log-pmf at k/n (scipy.stats.binom / bernoulli), and the
    # likelihood-ratio interval (Wilks 1938) maps through the monotonic p(s)
    d = demo_design()
    n, k, m0 = 40, 26, 0.6
    rows = [WalkRow(10.0, 0.0, 1.0, i < k, line=i + 2) for i in range(n)]
    fit = fit_walk_tests(d, rows, 0.3, link, margins=np.full((n, 1), m0))
    sigma = fit.spread  # the spread with the unit's noise in quadrature
    assert sigma == pytest.approx(0.3, rel=0.05)
    p_hat = k / n
    assert fit.scale == pytest.approx(m0 * math.exp(sigma * dist.ppf(p_hat)), rel=1e-6)
    y = np.array([r.detected for r in rows])
    assert fit.log_likelihood == pytest.approx(stats.bernoulli.logpmf(y, p_hat).sum(), rel=1e-9)
    assert fit.log_likelihood == pytest.approx(
        stats.binom.logpmf(k, n, p_hat) - math.log(math.comb(n, k)), rel=1e-9
    )
    top, cut = stats.binom.logpmf(k, n, p_hat), stats.chi2.ppf(0.95, 1) / 2

    def gap(p):
        return stats.binom.logpmf(k, n, p) - top + cut

    p_lo, p_hi = optimize.brentq(gap, 1e-6, p_hat), optimize.brentq(gap, p_hat, 1 - 1e-6)
    assert fit.low == pytest.approx(m0 * math.exp(sigma * dist.ppf(p_lo)), rel=1e-6)
    assert fit.high == pytest.approx(m0 * math.exp(sigma * dist.ppf(p_hi)), rel=1e-6)
    # the exact (Clopper-Pearson) interval of p is a little wider than the LR one
    ci = stats.binomtest(k, n).proportion_ci(0.95, "exact")
    assert ci.low < p_lo and p_hi < ci.high
    assert not fit.open_ended


def test_walk_margins_follow_the_signal_and_the_worst_rows_are_the_surprises():
    # the margin is the signal multiplier at which the walk is just detected, so it grows
    # with distance (common practice: the signal falls with distance) and a walk at twice
    # the margin is detected by the engine while one at half of it is not
    d = demo_design()
    rows = [WalkRow(dist, 0.0, 1.0, True) for dist in (6.0, 12.0, 20.0)]
    m = row_margins(d, rows, positions=2)
    assert np.all(np.isfinite(m)) and np.all(np.diff(m.mean(axis=1)) > 0)
    rows = [WalkRow(6.0, 0.0, 1.0, False, line=2)] + [
        WalkRow(6.0, 0.0, 1.0, True, line=3 + i) for i in range(5)
    ]
    fit = fit_walk_tests(d, rows, margins=np.full((6, 1), 0.5))
    assert fit.worst(1) == [0]  # the one miss among hits is the surprise


def test_quiet_fit_recovers_the_noise_and_its_crossings_agree_with_rice():
    # a 20-minute record of the design's own noise at known multipliers (white × 1.5, draught
    # 0.014 K, 3 s), synthesised at 400 Hz: the white scale falls inside its 95 % interval
    # and the fitted σ within 2 % of the true one; the crossings of ±2.5 σ counted on the
    # record agree with Rice's rate of the fitted model (Rice 1945) within 20 %
    d = demo_design()
    truth = dataclasses.replace(d.draught, rms=0.014, correlation_time=3.0)
    src = dominant_sources(calibrated_sources(d, NoiseScale(1.5, 1.0), truth))
    fs, n = 400.0, int(1200 * 400)
    x = NoiseSynthesizer(src, fs, 1, 3, stationary=True).next(n)[0]
    rest = d.operating.rest_levels()[-1]
    cap = Capture(np.arange(n) / fs, rest + 0.005 + x, "comparator", 0.0, "synthetic")
    q = fit_quiet(d, cap, mc_duration=3600.0, seed=1)
    names = list(q.spectrum.names)
    i = names.index("white")
    assert q.spectrum.low[i] <= 1.5 <= q.spectrum.high[i]
    from pirchain.circuit.noise import band_grid, total_psd

    true_sigma = math.sqrt(np.trapezoid(total_psd(src, band_grid()), band_grid()))
    assert q.sigma_model == pytest.approx(true_sigma, rel=0.02)
    row = next(r for r in q.crossings if r.label == "±2.5 σ")
    assert row.counted / q.duration == pytest.approx(row.rice, rel=0.2)
    assert row.monte_carlo == pytest.approx(row.rice, rel=0.2)
    assert q.mean_offset == pytest.approx(0.005, abs=0.002)


def _capture(d, seed=0):
    walk = WalkSpec(12.0, 0.0, 1.0, 5.0)
    s = d.operating.sensor
    t = np.arange(2000) / 200.0
    theta = np.array([math.log(0.85), math.log(1.2 * s.thermal_time_constant),
                      math.log(s.electrical_time_constant), 0.05, 0.0])  # fmt: skip
    y = simulate(d, walk, "stage1", t, theta)
    y = y + np.random.default_rng(seed).normal(0.0, 0.002, t.size)
    return walk, Capture(t, y, "stage1", 0.0, "synthetic walk")


def test_the_calibrated_file_loads_checks_and_reproduces_the_fit(tmp_path):
    # written by tomlkit into the demo's own text, read back by the loader (tomllib): the
    # calibrated design run with no further correction reproduces the fitted waveform (to
    # the 4 significant digits the file keeps), and `pirchain check` accepts it
    d = demo_design()
    walk, cap = _capture(d)
    fit = fit_waveform(d, cap, walk)
    text = calibrated_text(DEMO_TOML, d, waveform=fit, waveform_source="synthetic walk")
    cal = loads(text)
    assert cal.calibration.signal_scale == pytest.approx(fit.values[0], rel=1e-5)
    s = cal.operating.sensor
    shift, offset = fit.values[3], fit.values[4]
    theta = np.array([0.0, math.log(s.thermal_time_constant),
                      math.log(s.electrical_time_constant), shift, offset])  # fmt: skip
    again = simulate(cal, walk, "stage1", cap.time, theta)
    assert np.max(np.abs(again - fit.fitted)) < 2e-3 * np.ptp(fit.fitted)
    assert "fitted: synthetic walk" in text and "[calibration]" in text
    path = tmp_path / "calibrated.toml"
    path.write_text(text, encoding="utf-8")
    assert main(["check", str(path)]) == 0


def test_bench_fit_command_writes_a_new_file_and_never_replaces_one(tmp_path, capsys):
    d = demo_design()
    walk, cap = _capture(d, seed=1)
    csv = tmp_path / "walk.csv"
    rows = "".join(f"{a:.5f},{1e3 * b:.3f}\n" for a, b in zip(cap.time, cap.value, strict=True))
    csv.write_text("# scope\ntime,CH1 [mV]\n" + rows, encoding="utf-8")
    out = tmp_path / "cal.toml"
    args = ["bench-fit", "--capture", str(csv), "--node", "stage1", "--scale", "1m",
            "--distance", "12", "--write", str(out), "--json"]  # fmt: skip
    assert main(args) == 0
    import json

    data = json.loads(capsys.readouterr().out)
    assert data["waveform"]["parameters"]["gain"]["low_95"] <= 0.85
    assert 0.85 <= data["waveform"]["parameters"]["gain"]["high_95"]
    before = out.read_bytes()
    assert main(args) == 2  # the file exists: refused, untouched
    err = capsys.readouterr().err
    assert "--write" in err and err.count("\n") == 1
    assert out.read_bytes() == before


BAD = [  # (file name, body, what the one line must name)
    ("text.csv", "t,v\n0,1\n0.1,2\n0.2,abc\n" + "".join(f"{k},1\n" for k in range(1, 9)),
     "text.csv:4 column 2"),
    ("unsorted.csv", "0,1\n0.2,2\n0.1,3\n" + "".join(f"{k},1\n" for k in range(1, 9)),
     "unsorted.csv:3 column 1"),
    ("one.csv", "".join(f"{k}\n" for k in range(20)), "one.csv:1"),
    ("empty.csv", "time,value\n", "empty.csv"),
    ("nan.csv", "0,1\n0.1,NaN\n" + "".join(f"{k},1\n" for k in range(1, 9)), "nan.csv:2 column 2"),
]  # fmt: skip


@pytest.mark.parametrize(("name", "body", "where"), BAD)
def test_broken_captures_exit_2_with_one_line(tmp_path, capsys, name, body, where):
    p = tmp_path / name
    p.write_text(body, encoding="utf-8")
    assert main(["bench-fit", "--capture", str(p), "--node", "comparator"]) == 2
    err = capsys.readouterr().err
    assert where in err and err.count("\n") == 1 and "Traceback" not in err


def test_huge_npy_and_sheet_without_header_exit_2(tmp_path, capsys):
    p = tmp_path / "huge.npy"  # a header claiming 2 GB of samples: refused before reading
    with open(p, "wb") as fh:
        np.lib.format.write_array_header_1_0(
            fh, {"descr": "<f8", "fortran_order": False, "shape": (134_217_728, 2)}
        )
    assert main(["bench-fit", "--capture", str(p), "--node", "comparator"]) == 2
    assert "huge.npy" in capsys.readouterr().err
    sheet = tmp_path / "walks.csv"  # a walk-test sheet must say which column is which
    sheet.write_text("8,0,1,yes\n10,0,1,no\n", encoding="utf-8")
    assert main(["bench-fit", "--walk-results", str(sheet)]) == 2
    err = capsys.readouterr().err
    assert "walks.csv:1" in err and "header" in err and err.count("\n") == 1
    sheet.write_text("distance,bearing,speed,detected\n8,0,1,maybe\n", encoding="utf-8")
    assert main(["bench-fit", "--walk-results", str(sheet)]) == 2
    assert "walks.csv:2 column 4" in capsys.readouterr().err
