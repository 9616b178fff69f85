"""Radiometry against published tables and an independent integration of Planck's law."""

import math

import numpy as np
import pytest
from scipy import constants, integrate

from pirchain.errors import DesignError
from pirchain.physics.radiometry import (
    C2,
    band_exitance,
    band_exitance_derivative,
    blackbody_fraction,
    radiance_contrast,
    spectral_exitance,
)

# Incropera et al., Fundamentals of Heat and Mass Transfer, blackbody radiation function
# table; Siegel & Howell, Thermal Radiation Heat Transfer (docs/references.md, medium). Printed
# tables differ among themselves by <= 5e-5, hence the 1e-4 tolerance.
TABLE = {
    1000: 0.000321,
    2000: 0.066730,
    2898: 0.250106,
    3000: 0.273229,
    4000: 0.480865,
    5000: 0.633726,
    6000: 0.737789,
    8000: 0.856251,
    10000: 0.914157,
    20000: 0.985554,
    50000: 0.998904,
}


def test_constants_match_codata():
    # CODATA via scipy.constants (docs/references.md, high): c2 = 14 387.77 µm K.
    assert C2 * 1e6 == pytest.approx(14387.77, abs=0.01)
    assert constants.Wien * 1e6 == pytest.approx(2897.77, abs=0.01)


def test_blackbody_fraction_table():
    lt = np.array(list(TABLE)) * 1e-6
    got = blackbody_fraction(lt)
    np.testing.assert_allclose(got, list(TABLE.values()), atol=1e-4)


def test_blackbody_fraction_limits_and_monotonic():
    lt = np.geomspace(100e-6, 1.0, 400)
    f = blackbody_fraction(lt)
    assert np.all(np.diff(f) >= 0)
    assert f[0] < 1e-20
    # Rayleigh–Jeans end: 1 − F → (15/π⁴) ζ³/3 as ζ = c2/(λT) → 0
    zeta = C2 / lt[-1]
    assert 1 - f[-1] == pytest.approx(15 / math.pi**4 * zeta**3 / 3, rel=1e-2)


def _quad_band(temp, lam1, lam2):
    val, _ = integrate.quad(
        lambda lam: spectral_exitance(lam, temp), lam1, lam2, epsabs=0, epsrel=1e-12, limit=200
    )
    return val


@pytest.mark.parametrize("band", [(8e-6, 14e-6), (5e-6, 14e-6), (3e-6, 50e-6)])
@pytest.mark.parametrize("temp", [250.0, 295.0, 305.0, 310.0, 420.0])
def test_band_exitance_matches_quad_of_planck(temp, band):
    # Independent check: scipy.integrate.quad of Planck's law, relative 1e-6 (issue 2).
    assert band_exitance(temp, band) == pytest.approx(_quad_band(temp, *band), rel=1e-6)


def test_band_exitance_check_values():
    # docs/references.md, derived from Planck's law (two decimals as printed).
    np.testing.assert_allclose(
        band_exitance([295, 305, 310], (8e-6, 14e-6)), [159.72, 186.04, 200.10], atol=0.006
    )
    np.testing.assert_allclose(
        band_exitance([295, 305, 310], (5e-6, 14e-6)), [211.52, 251.90, 273.95], atol=0.006
    )


def test_exitance_derivative():
    # docs/references.md (derived): 2.632 / 4.037 / 6.124 W m^-2 K^-1 at 300 K; total = 4 σ T³.
    assert band_exitance_derivative(300.0, (8e-6, 14e-6)) == pytest.approx(2.632, abs=6e-4)
    assert band_exitance_derivative(300.0, (5e-6, 14e-6)) == pytest.approx(4.037, abs=6e-4)
    total = band_exitance_derivative(300.0, (1e-8, 1.0))
    assert total == pytest.approx(4 * constants.sigma * 300.0**3, rel=1e-6)
    # and against a central difference of the quad integral
    num = (_quad_band(300.5, 8e-6, 14e-6) - _quad_band(299.5, 8e-6, 14e-6)) / 1.0
    assert band_exitance_derivative(300.0, (8e-6, 14e-6)) == pytest.approx(num, rel=1e-5)


def test_contrast_sign_and_zero():
    # A target at the temperature of everything around it is invisible; a cooler target
    # gives a negative contrast (DESIGN.md §3.1).
    assert radiance_contrast(295.0, 0.98, 295.0, 0.9) == pytest.approx(0.0, abs=1e-12)
    warm = radiance_contrast(305.0, 0.98, 295.0, 0.95)
    cool = radiance_contrast(285.0, 0.98, 295.0, 0.95)
    assert warm > 0 > cool
    # Linear for small differences: ΔL ≈ ε dL/dT ΔT
    small = radiance_contrast(296.0, 1.0, 295.0, 1.0)
    assert small == pytest.approx(band_exitance_derivative(295.5) / math.pi, rel=1e-3)


@pytest.mark.parametrize("bad", [0.0, -1.0, float("nan"), float("inf")])
def test_bad_temperature_is_named(bad):
    with pytest.raises(DesignError, match="temperature"):
        band_exitance(bad)


def test_bad_band_is_named():
    with pytest.raises(DesignError, match="band"):
        band_exitance(300.0, (14e-6, 8e-6))
