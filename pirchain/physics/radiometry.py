"""Band-limited blackbody radiometry.

Functions take temperatures in kelvin and wavelengths in metres (SI); the helpers
:func:`celsius_to_kelvin` and :func:`kelvin_to_celsius` are for the user's edge.

References
----------
.. [1] Siegel, R. and Howell, J. R., *Thermal Radiation Heat Transfer*, blackbody fraction
   series F(0→λT).
.. [2] Incropera, F. P. et al., *Fundamentals of Heat and Mass Transfer*, table of the
   blackbody radiation function.
"""

from __future__ import annotations

import math

import numpy as np
from scipy.special import bernoulli, factorial

from ..errors import DesignError, check_array
from .constants import K_B, C, H
from .constants import SIGMA as STEFAN_BOLTZMANN
from .constants import ZERO_CELSIUS as _ZERO_C

#: Second radiation constant c2 = h c / k [m K].
C2 = H * C / K_B
#: First radiation constant for spectral exitance c1 = 2 π h c² [W m²].
C1 = 2.0 * math.pi * H * C**2
#: Stefan–Boltzmann constant [W m⁻² K⁻⁴].
SIGMA = STEFAN_BOLTZMANN
#: Kelvin offset of the Celsius scale [K].
ZERO_CELSIUS = _ZERO_C

_FRACTION_NORM = 15.0 / math.pi**4
# Series for small ζ = c2/(λT): ∫0^ζ x³/(eˣ−1) dx = Σ B_n ζ^(n+3) / ((n+3) n!), |ζ| < 2π.
_N_BERN = 40
_BERN = bernoulli(_N_BERN)
_BERN_COEF = np.array(
    [_BERN[n] / ((n + 3) * factorial(n, exact=False)) for n in range(_N_BERN + 1)]
)
_SPLIT = 2.0  # ζ at which the two series swap (both converge to < 1e-15 there)
_N_EXP = 40


def celsius_to_kelvin(t_c):
    """Convert a temperature from degrees Celsius to kelvin [K]."""
    return np.asarray(t_c, dtype=float) + ZERO_CELSIUS


def kelvin_to_celsius(t_k):
    """Convert a temperature from kelvin to degrees Celsius [°C]."""
    return np.asarray(t_k, dtype=float) - ZERO_CELSIUS


def blackbody_fraction(lambda_t):
    """Fraction of blackbody exitance emitted below wavelength λ at temperature T.

    Parameters
    ----------
    lambda_t : array_like
        Product λ·T [m K]; must be > 0.

    Returns
    -------
    numpy.ndarray
        F(0→λT), dimensionless, in [0, 1].

    Notes
    -----
    For ζ = c2/(λT) ≥ 2 the exponential series of Siegel & Howell [1]_ is used,
    F = 15/π⁴ Σ e^(−nζ)/n (ζ³ + 3ζ²/n + 6ζ/n² + 6/n³); below it, the Bernoulli series of the
    complementary integral. Both are summed to machine precision.
    """
    lt = check_array("lambda_t", lambda_t, positive=True)
    zeta = C2 / lt
    # Exponential series (good for large ζ).
    zc = np.maximum(zeta, _SPLIT)
    n = np.arange(1, _N_EXP + 1).reshape((-1,) + (1,) * zc.ndim)
    terms = np.exp(-n * zc) / n * (zc**3 + 3 * zc**2 / n + 6 * zc / n**2 + 6 / n**3)
    f_large = _FRACTION_NORM * terms.sum(axis=0)
    # Bernoulli series of the integral from 0 to ζ (good for small ζ).
    zs = np.minimum(zeta, _SPLIT)
    k = np.arange(_N_BERN + 1).reshape((-1,) + (1,) * zs.ndim)
    coef = _BERN_COEF.reshape((-1,) + (1,) * zs.ndim)
    integral = (coef * zs ** (k + 3)).sum(axis=0)
    f_small = 1.0 - _FRACTION_NORM * integral
    return np.clip(np.where(zeta >= _SPLIT, f_large, f_small), 0.0, 1.0)


def spectral_exitance(wavelength, temperature):
    """Planck spectral exitance of a blackbody [W m⁻² m⁻¹].

    Parameters
    ----------
    wavelength : array_like
        Wavelength λ [m].
    temperature : array_like
        Temperature T [K].
    """
    lam = np.asarray(wavelength, dtype=float)
    temp = np.asarray(temperature, dtype=float)
    x = C2 / (lam * temp)
    # e^(−x)/(1 − e^(−x)) = 1/(e^x − 1) without overflow for large x
    return C1 / lam**5 * np.exp(-x) / -np.expm1(-x)


def band_exitance(temperature, band=(5e-6, 14e-6)):
    """Blackbody exitance between two wavelengths [W m⁻²].

    M(T; λ1, λ2) = σ T⁴ [F(0→λ2 T) − F(0→λ1 T)], vectorised over ``temperature``.

    Parameters
    ----------
    temperature : array_like
        Temperature T [K], > 0.
    band : tuple of float
        (λ1, λ2) [m], 0 < λ1 < λ2.
    """
    lam1, lam2 = _check_band(band)
    temp = check_array("temperature", temperature, positive=True)
    return SIGMA * temp**4 * (blackbody_fraction(lam2 * temp) - blackbody_fraction(lam1 * temp))


def band_radiance(temperature, band=(5e-6, 14e-6)):
    """Lambertian blackbody radiance in a band, L = M/π [W m⁻² sr⁻¹]."""
    return band_exitance(temperature, band) / math.pi


def band_exitance_derivative(temperature, band=(5e-6, 14e-6)):
    """dM/dT of the in-band blackbody exitance [W m⁻² K⁻¹].

    Computed analytically: dM/dT = ∫ ∂M_λ/∂T dλ; the integrand is expressed through
    the band fraction identity d(σT⁴F(λT))/dT evaluated with the Planck spectral term
    at the band edges.
    """
    lam1, lam2 = _check_band(band)
    temp = check_array("temperature", temperature, positive=True)

    # d/dT [σT⁴ F(λT)] = 4σT³F(λT) + σT⁴ λ f(λT), with f = dF/d(λT) = M_λ(λ,T)/(σ T⁵)
    def edge(lam):
        return (
            4 * SIGMA * temp**3 * blackbody_fraction(lam * temp)
            + lam * spectral_exitance(lam, temp) / temp
        )

    return edge(lam2) - edge(lam1)


def surface_radiance(temperature, emissivity, surround_temperature, band=(5e-6, 14e-6)):
    """In-band radiance leaving an opaque grey Lambertian surface [W m⁻² sr⁻¹].

    L = ε L_bb(T) + (1 − ε) L_bb(T_surround): emission plus reflection of the surroundings.
    """
    eps = np.asarray(emissivity, dtype=float)
    return eps * band_radiance(temperature, band) + (1.0 - eps) * band_radiance(
        surround_temperature, band
    )


def radiance_contrast(
    target_temperature,
    target_emissivity,
    background_temperature,
    background_emissivity=1.0,
    surround_temperature=None,
    band=(5e-6, 14e-6),
):
    """Target-minus-background in-band radiance ΔL [W m⁻² sr⁻¹].

    ΔL = ε_t L(T_t) − ε_b L(T_b) + (ε_b − ε_t) L(T_s): each opaque surface also reflects the
    surroundings at T_s (default: the background temperature), so a target at the same
    temperature as everything around it gives exactly zero. A target cooler than the
    background gives ΔL < 0.

    Parameters
    ----------
    target_temperature, background_temperature, surround_temperature : array_like
        Temperatures [K].
    target_emissivity, background_emissivity : array_like
        Emissivities in (0, 1].
    band : tuple of float
        Wavelength band [m].
    """
    if surround_temperature is None:
        surround_temperature = background_temperature
    for name, value in (
        ("target_emissivity", target_emissivity),
        ("background_emissivity", background_emissivity),
    ):
        arr = check_array(name, value)
        if np.any((arr <= 0) | (arr > 1)):
            raise DesignError(name, value, "an emissivity in (0, 1]")
    lt = surface_radiance(target_temperature, target_emissivity, surround_temperature, band)
    lb = surface_radiance(background_temperature, background_emissivity, surround_temperature, band)
    return lt - lb


def _check_band(band):
    try:
        lam1, lam2 = (float(x) for x in band)
    except (TypeError, ValueError):
        raise DesignError("band", band, "two wavelengths (λ1, λ2) in metres") from None
    if not (np.isfinite(lam1) and np.isfinite(lam2) and 0 < lam1 < lam2):
        raise DesignError("band", band, "0 < λ1 < λ2 (metres), e.g. (5e-6, 14e-6)")
    return lam1, lam2
