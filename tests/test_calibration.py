"""Calibration fits (issue 15, in progress): parameter recovery. Captures and quiet-room
records are generated from known parameters with seeded noise; the reference is the known
truth and the coverage a 95 % interval must have (Bates & Watts 1988, §2.3, for the
waveform; Percival & Walden 1993 for the log-spectrum), over the stated seeds 0–19."""

import math

import control
import numpy as np

from pirchain.calibration.background import Component, fit_spectrum, welch_psd
from pirchain.calibration.waveform import WalkSpec, fit_waveform, simulate
from pirchain.circuit.noise import NoiseSource
from pirchain.circuit.synthesis import NoiseSynthesizer
from pirchain.interface.capture_file import Capture
from pirchain.interface.demo import demo_design


def test_known_parameters_fall_inside_their_intervals():
    d = demo_design()
    s = d.operating.sensor
    walk = WalkSpec(8.0, 0.0, 1.0, 5.0)
    t = np.arange(1000) / 250.0  # a capture at 250 Hz, not the model's 100 Hz
    truth = np.array([math.log(1.3), math.log(0.8 * s.thermal_time_constant),
                      math.log(1.5 * s.electrical_time_constant), 0.12, 0.02])  # fmt: skip
    clean = simulate(d, walk, "stage1", t, truth)
    assert np.ptp(clean) > 0.1  # a real signal, 50× the noise below
    known = np.concatenate([np.exp(truth[:3]), truth[3:]])
    inside = np.zeros(5, dtype=int)
    for seed in range(20):
        y = clean + np.random.default_rng(seed).normal(0.0, 0.002, t.size)
        fit = fit_waveform(d, Capture(t, y, "stage1", 0.0, "synthetic"), walk)
        assert fit.success
        inside += (fit.low <= known) & (known <= fit.high)
        assert fit.residual_rms < 0.0025  # the noise level, not a misfit
    assert np.all(inside >= 17), dict(zip(fit.names, inside, strict=True))


def test_background_levels_recover_a_known_spectrum():
    # white + 1/f + Lorentzian (τ = 2 s) noise synthesised with known levels; Welch's
    # estimate (scipy.signal.welch, Hann, 200 s segments) fitted on 0.05–2 Hz: each level and τ
    # inside its 95 % interval (Percival & Walden 1993: ln P̂ has variance ψ′(K)) in ≥ 17 of the
    # stated seeds 0–19
    fs, tau = 20.0, 2.0
    truth = np.array([1e-6, 4e-6, 5e-5, tau])
    one = control.tf([1.0], [1.0])
    src = [NoiseSource("w", truth[0], one), NoiseSource("f", truth[1], one, slope=-1),
           NoiseSource("l", truth[2], control.tf([1.0], [tau, 1.0]))]  # fmt: skip
    comps = [Component("white", "white"), Component("flicker", "flicker"),
             Component("draught", "lorentzian")]  # fmt: skip
    inside = np.zeros(4, dtype=int)
    for seed in range(20):
        x = NoiseSynthesizer(src, fs, streams=8, seed=seed, stationary=True).next(int(4000 * fs))
        f, p, k = welch_psd(x, fs, 200.0)
        fit = fit_spectrum(f, p, k, comps, (0.05, 2.0))
        inside += (fit.low <= truth) & (truth <= fit.high)
        assert 0.6 < fit.chi2_per_bin < 1.5  # the scatter is what ψ′(K) says
    assert np.all(inside >= 17), dict(zip(fit.names, inside, strict=True))
