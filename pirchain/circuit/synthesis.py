"""Seeded, chunked synthesis of noise with a prescribed PSD for long Monte Carlo runs.

Each source is white Gaussian noise of one-sided density S0 (sample variance S0·fs/2)
through the bilinear-transform sections of its transfer function; a source whose density
rises as f (dielectric loss) first passes a half-order filter: alternating real zeros and
poles, three pairs per decade, whose amplitude follows √(f/f_ref) to within ±0.1 dB between
f_lo and f_hi (Keshner's pole–zero approximation of fractional-order noise). Filter states
are carried from chunk to chunk, so a long run is one continuous realisation. With
``stationary=True`` the filter states start as a draw from their stationary distribution
(covariance P = A P Aᵀ + B Bᵀ, the discrete Lyapunov equation of the cascade's state
equations, summed by squaring), so the very first sample is already stationary and no
warm-up is needed. Flicker (1/f) sources pass the mirror image of that filter: poles and
zeros alternate the other way round, so the amplitude follows 1/√(f/f_ref) (the density
1/f) between f_lo and f_hi and is flat outside; below f_lo = 1 mHz the synthesised density
stops rising (well below every high-pass corner of a detector chain).

References
----------
.. [1] Keshner, M. S., "1/f noise", Proc. IEEE 70, 212 (1982): pole–zero approximation of
   fractional-power spectra.
.. [2] Åström, K. J., *Introduction to Stochastic Control Theory*, Academic Press (1970),
   ch. 3: the stationary covariance of a linear system driven by white noise.
.. [3] Smith, R. A., "Matrix equation XA + BX = C", SIAM J. Appl. Math. 16, 198 (1968): the
   doubling sum for the discrete Lyapunov equation.
"""

from __future__ import annotations

import functools
import math

import numpy as np

_MEMO_SIZE = 2048  # entries of each memo below (a design's sources at a few sample rates)
_SOS_MEMO: dict = {}
_ROOT_MEMO: dict = {}


def _remember(memo: dict, key, value):
    if len(memo) >= _MEMO_SIZE:
        memo.clear()
    memo[key] = value
    return value


def tf_sos(transfer, sample_rate: float) -> np.ndarray:
    """Bilinear sections of a python-control SISO transfer function (remembered by the
    coefficients and the rate: a design's noise set-up repeats them at every evaluation)."""
    num = np.asarray(transfer.num[0][0], dtype=float)
    den = np.asarray(transfer.den[0][0], dtype=float)
    key = (num.tobytes(), den.tobytes(), float(sample_rate))
    if key in _SOS_MEMO:
        return _SOS_MEMO[key].copy()
    from scipy import signal

    z, p, k = signal.tf2zpk(num, den)
    zd, pd, kd = signal.bilinear_zpk(z, p, k, sample_rate)
    return _remember(_SOS_MEMO, key, signal.zpk2sos(zd, pd, kd)).copy()


@functools.lru_cache(maxsize=16)
def _half_order_cached(sample_rate, f_lo, f_hi, per_decade, f_ref, sign) -> np.ndarray:
    return half_order_sos(sample_rate, f_lo, f_hi, per_decade, f_ref, sign)


def half_order_sos(
    sample_rate: float,
    f_lo: float = 1e-3,
    f_hi: float | None = None,
    per_decade: int = 3,
    f_ref: float = 1.0,
    sign: int = 1,
) -> np.ndarray:
    """Sections with |H(f)| ≈ (f/f_ref)^(sign/2) for f_lo ≤ f ≤ f_hi (flat outside).

    ``sign`` = +1 shapes white noise into a density rising as f (dielectric loss), −1 into
    a flicker (1/f) density.
    """
    from scipy import signal

    f_hi = 0.45 * sample_rate if f_hi is None else f_hi
    n = int(math.ceil(math.log10(f_hi / f_lo) * per_decade))
    step = 10.0 ** (1.0 / per_decade)
    first = f_lo * step ** np.arange(n)
    second = first * math.sqrt(step)
    fz, fp = (first, second) if sign > 0 else (second, first)
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


def cascade_state_space(sos: np.ndarray):
    """(A, B, C, D) of a cascade of sections in direct form II transposed, the states ordered
    as ``scipy.signal.sosfilt``'s ``zi`` (section, 2): z' = A z + B w, y = C z + D w."""
    n = 2 * sos.shape[0]
    a = np.zeros((n, n))
    b = np.zeros(n)
    x_row, x_w = np.zeros(n), 1.0  # the section input as a combination of (states, w)
    for k, (b0, b1, b2, _, a1, a2) in enumerate(sos / sos[:, 3:4]):
        y_row = b0 * x_row
        y_row[2 * k] += 1.0  # y = b0 x + z0
        y_w = b0 * x_w
        a[2 * k] = b1 * x_row - a1 * y_row  # z0' = b1 x − a1 y + z1
        a[2 * k, 2 * k + 1] += 1.0
        b[2 * k] = b1 * x_w - a1 * y_w
        a[2 * k + 1] = b2 * x_row - a2 * y_row  # z1' = b2 x − a2 y
        b[2 * k + 1] = b2 * x_w - a2 * y_w
        x_row, x_w = y_row, y_w
    return a, b, x_row, x_w


def _lyapunov_doubling(a: np.ndarray, q: np.ndarray) -> np.ndarray:
    """P = Σ_k A^k Q (A^k)ᵀ by squaring (Smith's doubling): a sum of positive semi-definite
    terms, robust for poles close to the unit circle where the direct solvers lose it."""
    p, ak = q.copy(), a.copy()
    for _ in range(64):  # A^(2^64) → 0 for any pole below 1 − 1e-18
        step = ak @ p @ ak.T
        p = p + step
        ak = ak @ ak
        if np.abs(step).max() <= 1e-17 * np.abs(p).max():
            break
    return p


def _stationary_root(sos: np.ndarray, check: int):
    """R with R Rᵀ the stationary state covariance of the cascade for unit white input, or
    None when a draw from it would not be stationary to 0.1 % over the first ``check``
    samples (remembered by the sections: deterministic, and the same at every evaluation)."""
    key = (sos.tobytes(), sos.shape, check)
    if key in _ROOT_MEMO:
        return _ROOT_MEMO[key]
    a, b, c, d = cascade_state_space(sos)
    p = _lyapunov_doubling(a, np.outer(b, b))
    w, v = np.linalg.eigh(0.5 * (p + p.T))
    root = v * np.sqrt(np.clip(w, 0.0, None))
    # output variance after n samples from this start: |C Aⁿ root|² + Σ_{j<n} (C Aʲ B)² + D²
    target = float(c @ p @ c + d * d)
    rows = np.empty((check, a.shape[0]))
    row = c.copy()
    for k in range(check):  # C Aⁿ for n < check (the only loop: one vector product each)
        rows[k] = row
        row = row @ a
    impulse = (rows @ b) ** 2
    noise = d * d + np.concatenate(([0.0], np.cumsum(impulse)[:-1]))
    var = np.sum((rows @ root) ** 2, axis=1) + noise
    ok = np.all(np.abs(var - target) <= 1e-3 * target)
    if ok:
        root.setflags(write=False)
    return _remember(_ROOT_MEMO, key, root if ok else None)


def stationary_states(sos: np.ndarray, scale: float, streams: int, rng, check: int = 400):
    """A draw of the cascade's states from their stationary distribution for white input of
    standard deviation ``scale``, shaped as ``sosfilt``'s ``zi`` (sections, streams, 2);
    None if the draw would not be stationary to 0.1 % over the first ``check`` samples
    (a covariance too ill-conditioned to factor; the caller then warms the filter up)."""
    root = _stationary_root(sos, check)
    if root is None:
        return None
    z = scale * (root @ rng.standard_normal((root.shape[0], streams)))
    return np.ascontiguousarray(z.reshape(sos.shape[0], 2, streams).transpose(0, 2, 1))


class NoiseSynthesizer:
    """Independent streams of the sum of several shaped noises, generated chunk by chunk.

    Parameters
    ----------
    sources : sequence
        Objects with ``level``, ``transfer`` and ``slope``
        (:class:`pirchain.circuit.noise.NoiseSource`).
    sample_rate : float
        [Hz].
    streams : int
        Number of independent realisations generated side by side.
    seed : int
        Seed of ``numpy.random.default_rng``.
    stationary : bool
        Start every filter in a draw from its stationary state (no warm-up needed); by
        default the filters start at rest. ``warm_up_needed`` tells whether some filter
        still starts at rest (its stationary draw failed the check).
    """

    def __init__(
        self, sources, sample_rate: float, streams: int = 1, seed: int = 0, stationary=False
    ):
        self.fs = float(sample_rate)
        self.streams = int(streams)
        self.rng = np.random.default_rng(seed)
        self.filters = []
        self.warm_up_needed = not stationary
        for src in sources:
            sos = tf_sos(src.transfer, self.fs)
            if src.slope:  # after the transfer sections: better-conditioned states
                # a function of the sample rate only: computed once per rate (read-only copy)
                half = _half_order_cached(self.fs, 1e-3, 0.45 * self.fs, 3, 1.0, src.slope)
                sos = np.vstack([sos, half])
            scale = math.sqrt(src.level * self.fs / 2.0)
            zi = stationary_states(sos, scale, self.streams, self.rng) if stationary else None
            self.warm_up_needed |= zi is None
            if zi is None:
                zi = np.zeros((sos.shape[0], self.streams, 2))
            self.filters.append([sos, scale, zi])

    def next(self, n: int) -> np.ndarray:
        """The next ``n`` samples of every stream, shape (streams, n) [V]."""
        from scipy import signal

        out = np.zeros((self.streams, n))
        for item in self.filters:
            sos, scale, zi = item
            white = self.rng.standard_normal((self.streams, n)) * scale
            y, item[2] = signal.sosfilt(sos, white, axis=-1, zi=zi)
            out += y
        return out
