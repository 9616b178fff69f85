"""Seeded, chunked synthesis of noise with a prescribed PSD for long Monte Carlo runs.

Each source is white Gaussian noise of one-sided density S0 (sample variance S0·fs/2)
through the bilinear-transform sections of its transfer function; a source whose density
rises as f (dielectric loss) first passes a half-order filter: alternating real zeros and
poles, three pairs per decade, whose amplitude follows √(f/f_ref) to within ±0.1 dB between
f_lo and f_hi (Keshner's pole–zero approximation of fractional-order noise). Filter states
are carried from chunk to chunk, so a long run is one continuous realisation.

References
----------
.. [1] Keshner, M. S., "1/f noise", Proc. IEEE 70, 212 (1982): pole–zero approximation of
   fractional-power spectra.
"""

from __future__ import annotations

import math

import numpy as np
from scipy import signal


def tf_sos(transfer, sample_rate: float) -> np.ndarray:
    """Bilinear sections of a python-control SISO transfer function."""
    num = np.asarray(transfer.num[0][0], dtype=float)
    den = np.asarray(transfer.den[0][0], dtype=float)
    z, p, k = signal.tf2zpk(num, den)
    zd, pd, kd = signal.bilinear_zpk(z, p, k, sample_rate)
    return signal.zpk2sos(zd, pd, kd)


def half_order_sos(
    sample_rate: float,
    f_lo: float = 1e-3,
    f_hi: float | None = None,
    per_decade: int = 3,
    f_ref: float = 1.0,
) -> np.ndarray:
    """Sections with |H(f)| ≈ √(f/f_ref) for f_lo ≤ f ≤ f_hi (flat outside)."""
    f_hi = 0.45 * sample_rate if f_hi is None else f_hi
    n = int(math.ceil(math.log10(f_hi / f_lo) * per_decade))
    step = 10.0 ** (1.0 / per_decade)
    fz = f_lo * step ** np.arange(n)
    fp = fz * math.sqrt(step)
    z, p = -2 * math.pi * fz, -2 * math.pi * fp
    # each section (s − z)/(s − p) normalised to unity at high frequency; then scale at f_ref
    zd, pd, kd = signal.bilinear_zpk(z, p, 1.0, sample_rate)
    sos = signal.zpk2sos(zd, pd, kd)
    _, h = signal.sosfreqz(sos, worN=[f_ref], fs=sample_rate)
    sos[0, :3] /= abs(h[0])
    return sos


def dominant_sources(sources, min_share: float = 1e-4, f_lo: float = 1e-3, f_hi: float = 1e3):
    """The sources whose variance is at least ``min_share`` of the total (the rest change the
    total variance by less than ``min_share`` × their number, and cost synthesis time)."""
    sources = list(sources)
    if not sources:
        return sources
    f = np.geomspace(f_lo, f_hi, 3000)
    var = np.array([np.trapezoid(s.psd(f), f) for s in sources])
    return [s for s, v in zip(sources, var, strict=True) if v >= min_share * var.sum()]


class NoiseSynthesizer:
    """Independent streams of the sum of several shaped noises, generated chunk by chunk.

    Parameters
    ----------
    sources : sequence
        Objects with ``level``, ``transfer`` and ``rising`` (:class:`pirchain.noise.NoiseSource`).
    sample_rate : float
        [Hz].
    streams : int
        Number of independent realisations generated side by side.
    seed : int
        Seed of ``numpy.random.default_rng``.
    """

    def __init__(self, sources, sample_rate: float, streams: int = 1, seed: int = 0):
        self.fs = float(sample_rate)
        self.streams = int(streams)
        self.rng = np.random.default_rng(seed)
        self.filters = []
        for src in sources:
            sos = tf_sos(src.transfer, self.fs)
            if src.rising:
                sos = np.vstack([half_order_sos(self.fs), sos])
            scale = math.sqrt(src.level * self.fs / 2.0)
            zi = np.zeros((sos.shape[0], self.streams, 2))
            self.filters.append([sos, scale, zi])

    def next(self, n: int) -> np.ndarray:
        """The next ``n`` samples of every stream, shape (streams, n) [V]."""
        out = np.zeros((self.streams, n))
        for item in self.filters:
            sos, scale, zi = item
            white = self.rng.standard_normal((self.streams, n)) * scale
            y, item[2] = signal.sosfilt(sos, white, axis=-1, zi=zi)
            out += y
        return out
