"""Surface temperatures against ISO 7730 / Fanger check values (docs/references.md)."""

import numpy as np
import pytest

from pirchain.physics.body_heat import clothing_surface_temperature_c, skin_temperature_c


def test_fanger_skin_temperature():
    # Fanger (1970); ISO 7730: 35.7 − 0.0275 M °C, ≈ 34.1 °C at 1 met (medium).
    assert skin_temperature_c(1.0) == pytest.approx(34.10, abs=0.01)
    assert skin_temperature_c(2.0) == pytest.approx(35.7 - 0.0275 * 2 * 58.15, abs=1e-9)


def test_iso7730_clothing_surface_temperature():
    # ISO 7730 heat-balance iteration, 0.1 m/s, 1.2 met, air = radiant; the general-purpose
    # library pythermalcomfort gives the same values (docs/references.md, derived). The
    # iteration stops at 1.5e-4 × 100 K, so agree to 0.02 K.
    got = clothing_surface_temperature_c(
        [22.0, 22.0, 25.0], clo=[1.0, 0.5, 0.5], met=1.2, air_speed=0.1
    )
    np.testing.assert_allclose(got, [26.84, 28.95, 30.16], atol=0.02)


def test_clothing_warms_toward_skin_as_room_warms():
    t = clothing_surface_temperature_c(np.array([15.0, 20.0, 25.0, 30.0, 34.0]))
    assert np.all(np.diff(t) > 0)
    assert np.all(np.diff(t - np.array([15.0, 20.0, 25.0, 30.0, 34.0])) < 0)
