"""Level crossings of stationary Gaussian noise (Rice's formula) and Poisson statistics.

References
----------
.. [1] Rice, S. O., "Mathematical analysis of random noise", Bell Syst. Tech. J. 23, 282
   (1944) and 24, 46 (1945): up-crossing rate ν⁺(u) = √(m2/m0) exp(−u²/(2 m0)),
   m_k = ∫ f^k S(f) df (one-sided PSD, f in Hz).
.. [2] Garwood, F., Biometrika 28, 437 (1936): exact confidence interval of a Poisson count.
.. [3] Clopper, C. J. and Pearson, E. S., Biometrika 26, 404 (1934): exact confidence
   interval of a binomial proportion.
"""

from __future__ import annotations

import math

import numpy as np
from scipy import stats

from ..errors import DesignError


def spectral_moment(f, psd, k: int) -> float:
    """m_k = ∫ f^k S(f) df by the trapezoidal rule (f [Hz], S one-sided)."""
    f = np.asarray(f, dtype=float)
    return float(np.trapezoid(f**k * np.asarray(psd, dtype=float), f))


def zero_crossing_rate(f, psd) -> float:
    """ν₀⁺ = √(m2/m0): mean rate of up-crossings of the mean [s⁻¹]."""
    m0 = spectral_moment(f, psd, 0)
    if m0 <= 0:
        raise DesignError("psd", "zero", "a noise spectrum with non-zero power")
    return math.sqrt(spectral_moment(f, psd, 2) / m0)


def upcrossing_rate(level, m0: float, m2: float):
    """ν⁺(u) = √(m2/m0) exp(−u²/(2 m0)) [s⁻¹], vectorised over ``level``."""
    u = np.asarray(level, dtype=float)
    return math.sqrt(m2 / m0) * np.exp(-(u**2) / (2.0 * m0))


def level_for_rate(rate: float, m0: float, m2: float) -> float:
    """Level u whose up-crossing rate is ``rate`` [same unit as √m0]."""
    nu0 = math.sqrt(m2 / m0)
    if not 0 < rate < nu0:
        raise DesignError("target_rate", rate, f"a rate between 0 and ν₀⁺ = {nu0:.4g} /s")
    return math.sqrt(2.0 * m0 * math.log(nu0 / rate))


def clopper_pearson(
    k: int, n: int, confidence: float = 0.95, field: str = "units"
) -> tuple[float, float]:
    """Exact binomial interval of a proportion k/n (Clopper and Pearson, Biometrika 26, 404,
    1934): the beta quantiles at (1 − confidence)/2 and (1 + confidence)/2."""
    if n <= 0 or not 0 <= k <= n:
        raise DesignError(field, n, f"a count of at least {k}")
    a = 1.0 - confidence
    lo = 0.0 if k == 0 else float(stats.beta.ppf(a / 2, k, n - k + 1))
    hi = 1.0 if k == n else float(stats.beta.ppf(1 - a / 2, k + 1, n - k))
    return lo, hi


def poisson_interval(count: int, exposure: float, confidence: float = 0.95):
    """Exact (Garwood) interval of a Poisson rate from ``count`` events in ``exposure``."""
    a = 1.0 - confidence
    lo = 0.0 if count == 0 else stats.chi2.ppf(a / 2, 2 * count) / 2
    hi = stats.chi2.ppf(1 - a / 2, 2 * count + 2) / 2
    return lo / exposure, hi / exposure


def clustered_alarm_rate(
    pulse_rate: float, pulses_required: int, window: float, dead_time: float = 0.0
) -> float:
    """Alarm rate of an N-pulses-in-T_w counter fed by Poisson pulses [s⁻¹].

    Approximation (stated): pulses are a Poisson stream of rate λ thinned by a dead time τ
    (blanking + pulse length), λ' = λ/(1 + λτ); an alarm occurs at a pulse when at least N−1
    others fell in the T_w before it, so rate = λ' P[Poisson(λ' T_w) ≥ N − 1]. Real noise
    pulses cluster (a band-pass excursion often crosses both window edges in turn), so this
    underestimates the multi-pulse rate; the Monte Carlo gives the truth.
    """
    lam = pulse_rate / (1.0 + pulse_rate * dead_time)
    if pulses_required <= 1:
        return lam
    return lam * float(stats.poisson.sf(pulses_required - 2, lam * window))
