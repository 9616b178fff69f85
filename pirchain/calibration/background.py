"""Fit of a quiet-room recording: its power spectral density by Welch's method, and the levels
of the spectrum's components (white, 1/f, a Lorentzian of unknown correlation time, or the
shapes of a design's own noise sources at the recorded node) fitted to it.

The fit is weighted least squares on the logarithm of the Welch estimate: averaging K
segments, ln P̂ scatters about ln S + ψ(K) − ln K with variance ψ′(K) (the log of a χ² with
2K degrees of freedom over 2K), so every bin has a known weight and the bias is removed; the
levels are fitted in logarithms (they stay positive), and their 95 % intervals come from
(JᵀJ)⁻¹ with that known variance (no rescaling by the residual). Every second bin is used
(neighbours of a Hann window are correlated) and overlapping segments count as
K/(1 + 2c²) with c = 0.167 for 50 % overlap.

References
----------
.. [1] Welch, P. D., "The use of fast Fourier transform for the estimation of power spectra",
   IEEE Trans. Audio Electroacoust. 15, 70 (1967).
.. [2] Percival, D. B. and Walden, A. T., *Spectral Analysis for Physical Applications*,
   Cambridge (1993), §6.6, §7.3: the χ² distribution of averaged periodograms and the
   log-spectrum's variance ψ′(K).
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np
from scipy import optimize, signal, special, stats

from ..errors import DesignError


@dataclass(frozen=True)
class Component:
    """One spectrum shape: ``kind`` "white" (flat), "flicker" (1/f), "lorentzian"
    (1/(1 + (2πfτ)²), τ fitted; times ``values`` if given, a transfer |H(f)|² on the Welch
    grid), "draught" (``values`` · τ/(1 + (2πfτ)²): the level is then a variance), or "shape"
    (``values`` given on the Welch grid)."""

    name: str
    kind: str
    values: np.ndarray | None = None

    def shape(self, f: np.ndarray, tau: float = 1.0) -> np.ndarray:
        if self.kind == "white":
            return np.ones_like(f)
        if self.kind == "flicker":
            return 1.0 / f
        weight = 1.0 if self.values is None else np.asarray(self.values, dtype=float)
        if self.kind == "lorentzian":
            return weight / (1.0 + (2 * math.pi * f * tau) ** 2)
        if self.kind == "draught":
            return weight * tau / (1.0 + (2 * math.pi * f * tau) ** 2)
        return weight


def welch_psd(x: np.ndarray, fs: float, segment: float) -> tuple[np.ndarray, np.ndarray, int]:
    """One-sided Welch PSD of ``x`` (Hann, 50 % overlap, segments of ``segment`` s) and the
    number of segments averaged (per stream for a 2-D ``x``, all streams averaged)."""
    x = np.atleast_2d(np.asarray(x, dtype=float))
    n = int(round(segment * fs))
    if n < 16 or n > x.shape[-1]:
        raise DesignError("segment", segment, f"between {16 / fs:.3g} s and the record length")
    f, p = signal.welch(x, fs, window="hann", nperseg=n, noverlap=n // 2, axis=-1)
    k = x.shape[0] * ((x.shape[-1] - n) // (n // 2) + 1)
    return f, p.mean(axis=0), int(k)


@dataclass(frozen=True)
class SpectrumFit:
    """Fitted levels (and the Lorentzian's τ) with 95 % intervals."""

    names: tuple[str, ...]
    values: np.ndarray
    low: np.ndarray
    high: np.ndarray
    chi2_per_bin: float


def _start(f, target, comps, tau0, has_tau):
    """Start values: for each τ of a grid (or ``tau0`` alone), non-negative levels by
    least squares on relative errors (NNLS, Lawson & Hanson 1974), the τ whose levels fit
    the log-spectrum best; a level NNLS sets to zero starts at 10⁻⁶ of the best level."""
    p = np.exp(target)
    taus = np.geomspace(1e-2, 1e3, 31) if has_tau else np.array([tau0])
    best = None
    for tau in taus:
        a = np.stack([c.shape(f, tau) / p for c in comps], axis=1)
        levels, _ = optimize.nnls(a, np.ones(f.size))
        if not np.any(levels > 0):
            continue
        levels = np.maximum(levels, 1e-6 * levels.max())
        cost = float(np.sum((target - np.log(a @ levels * p)) ** 2))
        if best is None or cost < best[0]:
            best = (cost, levels, tau)
    if best is None:
        raise DesignError("spectrum", "no fit", "a spectrum the components can describe")
    _, levels, tau = best
    return np.log(np.concatenate([levels, [tau] if has_tau else []]))


def fit_spectrum(f, p, segments, components, band=None, tau0: float = 1.0) -> SpectrumFit:
    """Fit the levels of ``components`` to the Welch estimate ``p`` on ``f`` (``segments``
    averaged) within ``band`` = (f_lo, f_hi) [Hz]."""
    f, p = np.asarray(f, float), np.asarray(p, float)
    lo_f, hi_f = band if band is not None else (f[1], f[-1])
    sel = (f >= lo_f) & (f <= hi_f) & (f > 0) & (p > 0)
    if sel.sum() < 2 * len(components) + 6:
        raise DesignError("band", band, "enough spectrum bins for the components")
    # Hann-windowed neighbouring bins are correlated; every second bin is nearly independent
    idx = np.flatnonzero(sel)[::2]
    f, lp = f[idx], np.log(p[idx])
    comps = [c if c.values is None else Component(c.name, c.kind, np.asarray(c.values)[idx])
             for c in components]  # fmt: skip
    # 50 %-overlapping Hann segments are correlated too: K/(1 + 2c²) equivalent segments,
    # c = 0.167 (Percival & Walden §6.17)
    k = max(1, int(segments / (1 + 2 * 0.167**2)))
    bias, sd = special.digamma(k) - math.log(k), math.sqrt(special.polygamma(1, k))
    has_tau = any(c.kind in ("lorentzian", "draught") for c in comps)

    def model(th):
        tau = math.exp(th[-1]) if has_tau else 1.0
        return sum(math.exp(a) * c.shape(f, tau) for a, c in zip(th, comps, strict=False))

    def resid(th):
        return (lp - bias - np.log(model(th))) / sd

    th0 = _start(f, lp - bias, comps, tau0, has_tau)
    lo = np.concatenate([th0[: len(comps)] - 25.0, [math.log(1e-2)] if has_tau else []])
    hi = np.concatenate([th0[: len(comps)] + 25.0, [math.log(1e3)] if has_tau else []])
    th0 = np.clip(th0, lo + 1e-9, hi - 1e-9)
    res = optimize.least_squares(resid, th0, bounds=(lo, hi), x_scale="jac")
    try:
        cov = np.linalg.inv(res.jac.T @ res.jac)
    except np.linalg.LinAlgError:
        cov = np.full((th0.size, th0.size), np.nan)
    s = np.sqrt(np.clip(np.diag(cov), 0.0, None))
    z = stats.norm.ppf(0.975)
    names = tuple(c.name for c in comps) + (("tau",) if has_tau else ())
    lo_i, hi_i = np.clip(res.x - z * s, -700, 700), np.clip(res.x + z * s, -700, 700)
    return SpectrumFit(names, np.exp(res.x), np.exp(lo_i), np.exp(hi_i),
                       float(res.fun @ res.fun / max(lp.size - th0.size, 1)))  # fmt: skip
