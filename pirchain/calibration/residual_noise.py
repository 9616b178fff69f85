"""The noise under a fitted capture, for the fit's intervals.

A capture's noise is the chain's own: band-limited and strongly correlated, with much of
its power at the low frequencies where a walk's signal lives too. A ten-second capture
cannot tell its own spectrum at 0.1 Hz from its residual (the fitted parameters absorb the
slowest part of it), so the residual's spectrum is not estimated freely: it is the design's
noise model at the capture's node (every source of :func:`pirchain.circuit.noise.noise_sources`
referred to that node, plus the draught through the same path), with its level, and a white
floor for what the model does not carry (a scope's quantisation and input noise), fitted to
the residual's Welch estimate (:func:`pirchain.calibration.background.fit_spectrum`).

The least-squares estimates are then given the covariance of a linear estimator under
correlated noise (the "sandwich"),

    Cov(θ̂) = (JᵀJ)⁻¹ JᵀΣJ (JᵀJ)⁻¹,

with Σ the noise's autocovariance matrix, evaluated through the FFT (zero-padded to twice
the record, so the product is the aperiodic one); for white noise Σ = σ²I it reduces to
σ²(JᵀJ)⁻¹ (Bates & Watts 1988, §2.3; White, Econometrica 48, 817, 1980; Newey & West,
Econometrica 55, 703, 1987, for the correlated case).
"""

from __future__ import annotations

import math

import numpy as np

from ..circuit.noise import band_grid, noise_sources, sensor_sources, total_psd
from ..circuit.stage import chain_transfer_function
from ..errors import DesignError
from ..physics.disturbance import Draught, draught_parts
from .background import Component, fit_spectrum, welch_psd


def _stages_upto(design, node: str) -> int | None:
    """How many stages lie before ``node`` (None: the gate)."""
    if node == "gate":
        return None
    if node == "source":
        return 0
    if node == "comparator":
        return len(design.operating.stages)
    return int(node.removeprefix("stage"))


def node_psd(design, node: str, f: np.ndarray) -> np.ndarray:
    """One-sided noise PSD [V² Hz⁻¹] of the design's chain at ``node`` on ``f`` [Hz]: its
    electrical noise sources and the draught, at the parts' temperature."""
    det, env = design.operating, design.environment
    upto = _stages_upto(design, node)
    if upto is None:
        src, to_node = sensor_sources(det), det.sensor.transfer_function()
    else:
        src = noise_sources(det, upto=upto)
        to_node = (det.sensor.transfer_function() * det.follower.gain
                   * chain_transfer_function(det.stages[:upto], gbw=True))  # fmt: skip
    psd = total_psd(src, f)
    dr = design.draught or Draught()
    diff, common = draught_parts(det, env, dr)
    if dr.rms > 0 and diff + common > 0:
        w = 2 * math.pi * f
        h = np.abs(to_node(1j * w)) ** 2 / (1.0 + (w * dr.correlation_time) ** 2)
        psd = psd + 4 * dr.rms**2 * dr.correlation_time * (diff + common) * h
    return psd


def node_rms(design, node: str, fs: float) -> float:
    """rms [V] of :func:`node_psd` from 1 mHz to ``fs``/2 [Hz]."""
    f = band_grid(1e-3, fs / 2.0)
    return math.sqrt(float(np.trapezoid(node_psd(design, node, f), f)))


def residual_spectrum(design, node: str, residual: np.ndarray, fs: float):
    """The residual's noise as ``(spectrum(f), model_level, white_level)``: the design's PSD
    at ``node`` times a fitted level plus a fitted white floor [V² Hz⁻¹]."""
    segment = residual.size / fs / 4.0
    f, p, k = welch_psd(residual - residual.mean(), fs, max(segment, 16.0 / fs))
    shape = node_psd(design, node, np.maximum(f, f[1] / 2))
    # the level is fitted where the model's noise lives (within 30 dB of its peak): far
    # above the chain's band the discrete-time noise of a capture follows its sampling, not
    # the analog model
    top = f[np.flatnonzero(shape >= 1e-3 * shape.max())[-1]]
    try:
        fit = fit_spectrum(f, p, k, [Component("model", "shape", shape),
                                     Component("white", "white")], (f[1], top))  # fmt: skip
        level, white = float(fit.values[0]), float(fit.values[1])
    except DesignError:  # too few bins to split the two: all of it as the model's shape
        level, white = float(np.var(residual)) / max(float(np.trapezoid(shape, f)), 1e-300), 0.0

    def spectrum(freq):
        return level * node_psd(design, node, np.maximum(freq, 1e-4)) + white

    return spectrum, level, white


def sandwich_covariance(jac: np.ndarray, spectrum, fs: float) -> np.ndarray:
    """(JᵀJ)⁻¹ JᵀΣJ (JᵀJ)⁻¹ for noise of one-sided PSD ``spectrum(f)`` [V² Hz⁻¹] sampled at
    ``fs`` [Hz]; ``jac`` is (samples × parameters)."""
    n = jac.shape[0]
    big = 2 * n
    # per-sample two-sided spectrum: γ(m) = (1/N) Σ_k S_k e^{iω_k m}, S_k = S₁(f_k) fs / 2
    s = spectrum(np.abs(np.fft.fftfreq(big, 1.0 / fs))) * fs / 2.0
    fj = np.fft.fft(jac, big, axis=0)
    meat = np.real(fj.conj().T @ (s[:, None] * fj)) / big
    bread = np.linalg.inv(jac.T @ jac)
    return bread @ meat @ bread
