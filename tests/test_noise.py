"""Noise budget and synthesis: Johnson noise 4kTR (Nyquist 1928), the pyroelectric noise
terms of Whatmore (1986) / Porter (1981) (from memory), the common-practice sensor noise
figure of docs/references.md, and Welch's PSD estimate (scipy.signal.welch) of synthesised noise."""

import math

import numpy as np
import pytest
from scipy import constants, signal

from pirchain.circuit.noise import (
    band_grid,
    band_variance,
    nep,
    noise_budget,
    noise_sources,
    sensor_sources,
    specific_detectivity,
    total_psd,
)
from pirchain.circuit.synthesis import NoiseSynthesizer, half_order_sos
from pirchain.interface.demo import demo_detector, demo_environment

T = 295.15
KT4 = 4 * constants.k * T


def test_gate_resistor_noise_is_nyquist():
    # Nyquist: a resistor R_G shunted by C has ∫ S df = kT/C in total (kT/C noise).
    det = demo_detector()
    rg = next(s for s in sensor_sources(det, T) if s.name.startswith("gate resistor"))
    f = band_grid(1e-5, 1e5, 20000)
    assert band_variance(f, rg.psd(f)) == pytest.approx(
        constants.k * T / det.sensor.gate_capacitance, rel=2e-3
    )
    assert rg.psd(np.array([1e-6]))[0] == pytest.approx(KT4 * det.sensor.gate_resistance, rel=1e-6)


def test_dielectric_loss_noise_high_frequency_form():
    # Whatmore (1986), from memory: ≈ 4kT tan δ / (ω C) where ωC dominates.
    det = demo_detector()
    s = det.sensor
    src = next(x for x in sensor_sources(det, T) if "dielectric" in x.name)
    c_el = s.gate_capacitance - s.input_capacitance
    f = 50.0
    expect = KT4 * s.loss_tangent * c_el / (2 * math.pi * f * s.gate_capacitance**2)
    assert src.psd(np.array([f]))[0] == pytest.approx(expect, rel=1e-3)


def test_sensor_noise_matches_common_practice_and_nep():
    # docs/references.md (common practice): tens of µV p-p in ~0.4–10 Hz; p-p ≈ 6.6 × rms for
    # Gaussian noise (common practice crest factor).
    det = demo_detector()
    rms = noise_budget(sensor_sources(det, T), (0.4, 10.0)).total_rms
    assert 10e-6 < 6.6 * rms < 100e-6
    # NEP = noise / responsivity; D* = √A / NEP
    f = np.array([1.0])
    gate = math.sqrt(total_psd(sensor_sources(det, T), f)[0])
    assert nep(det, f, T)[0] == pytest.approx(gate / abs(det.sensor.responsivity(1.0)), rel=1e-12)
    assert specific_detectivity(det, f, T)[0] == pytest.approx(math.sqrt(2e-6) / nep(det, f, T)[0])


def test_budget_shares_and_stage_resistor():
    det = demo_detector()
    b = noise_budget(noise_sources(det, T), (1e-3, 1e3))
    assert b.share.sum() == pytest.approx(1.0)
    assert b.total_rms == pytest.approx(math.sqrt(np.sum(b.rms**2)))
    # stage-1 Rf: current noise 4kT/Rf through Z_f ≈ Rf at low frequency, times downstream gain
    src = next(s for s in noise_sources(det, T) if s.name == "stage 1 Rf (Johnson)")
    st2 = det.stages[1].transfer_function(True)
    f = 2.0
    zf = 560e3 / (1 + 2j * math.pi * f * 560e3 * 27e-9)
    expect = KT4 / 560e3 * abs(zf) ** 2 * abs(st2(2j * math.pi * f)) ** 2
    assert src.psd(np.array([f]))[0] == pytest.approx(expect, rel=1e-9)


def test_half_order_filter_follows_sqrt_f():
    # Keshner (1982) pole–zero approximation: within 0.5 % over four decades
    sos = half_order_sos(100.0)
    f = np.geomspace(0.01, 20.0, 40)
    _, h = signal.sosfreqz(sos, worN=f, fs=100.0)
    np.testing.assert_allclose(np.abs(h), np.sqrt(f), rtol=5e-3)


def test_synthesised_noise_has_the_analytic_psd():
    # scipy.signal.welch of 8 streams × 2 000 s against the analytic total, within 10 %
    # (Welch with 24+ averages per stream: standard error ≈ 3 % per band after averaging).
    det = demo_detector()
    fs = 100.0
    src = noise_sources(det, T)
    synth = NoiseSynthesizer(src, fs, streams=8, seed=7)
    synth.next(6000)
    x = synth.next(int(2000 * fs))
    f, pxx = signal.welch(x, fs=fs, nperseg=8192, axis=-1)
    pxx = pxx.mean(axis=0)
    expect = total_psd(src, f)
    for a, b in [(0.7, 1.5), (1.5, 3.0), (3.0, 6.0), (6.0, 10.0)]:
        k = (f >= a) & (f < b)
        assert pxx[k].mean() == pytest.approx(expect[k].mean(), rel=0.10)


def test_stationary_start_needs_no_warm_up():
    # Reference: the stationary covariance of a linear system driven by white noise solves
    # the discrete Lyapunov equation (Åström 1970, ch. 3). Started from a draw of it, the
    # synthesised rms at samples 0, 50 and 200 equals √∫S df of the analytic PSD (20 000
    # streams: standard error of an rms 0.5 %), and the cascade's state equations reproduce
    # scipy.signal.sosfilt's final state.
    from pirchain.analysis.false_triggers import comparator_sources
    from pirchain.circuit.synthesis import cascade_state_space, dominant_sources

    src = dominant_sources(comparator_sources(demo_detector(), demo_environment()))
    assert any(s.rising for s in src)  # the half-order (dielectric loss) filter is included
    f = np.geomspace(1e-4, 50.0, 20000)
    rms = math.sqrt(np.trapezoid(total_psd(src, f), f))
    synth = NoiseSynthesizer(src, 100.0, 20000, 5, stationary=True)
    assert not synth.warm_up_needed
    x = synth.next(201)
    np.testing.assert_allclose(x.std(axis=0)[[0, 50, 200]], rms, rtol=0.03)
    rest = NoiseSynthesizer(src, 100.0, 20000, 5).next(1)  # from rest: far below
    assert rest.std() < 0.2 * rms
    sos = np.vstack([signal.butter(4, 0.1, output="sos"), half_order_sos(100.0)[:3]])
    a, b, c, d = cascade_state_space(sos)
    rng = np.random.default_rng(0)
    w, zi = rng.standard_normal(50), rng.standard_normal((sos.shape[0], 2))
    y, zf = signal.sosfilt(sos, w, zi=zi)
    z = zi.ravel()
    for k, v in enumerate(w):
        assert c @ z + d * v == pytest.approx(y[k], rel=1e-9, abs=1e-12)
        z = a @ z + b * v
    np.testing.assert_allclose(z, zf.ravel(), rtol=1e-9, atol=1e-12)
