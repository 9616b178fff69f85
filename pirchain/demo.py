"""The built-in demo design.

Scenario (invented for the demo): *Marrowby Parish Reading Room* wants its lights to follow
occupancy. The fictional "Tern-2" wall sensor is mounted 2.2 m high on the short wall of the
8 × 6 m room, looking along its length; readers walk between the shelves at about 1 m/s.
Every number below is a plausible demo value, not data about any real product.
"""

from __future__ import annotations

from .chain import Detector
from .optics import LensTier, Mount, wall_lens
from .scene import Environment
from .sensor import PyroSensor, dual_elements

DEMO_NAME = "Tern-2 reading-room wall sensor (demo)"


def demo_lens():
    """Four tiers across 110°: long-range facets on top, short-range ones below."""
    return wall_lens(
        [
            LensTier(-5.0, 9, 22e-3, 0.55e-4),
            LensTier(-13.0, 7, 18e-3, 0.40e-4),
            LensTier(-27.0, 5, 13e-3, 0.28e-4),
            LensTier(-52.0, 3, 9e-3, 0.18e-4),
        ],
        fov_deg=110.0,
        name="Tern-2 four-tier wall lens",
    )


def demo_sensor():
    """LiTaO3 dual element, 1 × 2 mm elements 2 mm apart, 60 GΩ gate resistor, 5 % mismatch."""
    return PyroSensor.from_material(
        "LiTaO3",
        elements=dual_elements(1e-3, 2e-3, 2e-3),
        thickness=25e-6,
        absorptance=0.8,
        thermal_time_constant=0.35,
        gate_resistance=60e9,
        input_capacitance=3e-12,
        mismatch=0.05,
    )


def demo_detector() -> Detector:
    """The demo detector (front end so far: lens, mounting, sensor)."""
    return Detector(demo_lens(), Mount("wall", height=2.2, tilt_deg=0.0), demo_sensor(), DEMO_NAME)


def demo_environment() -> Environment:
    """The reading room on a winter afternoon: 21 °C air and walls."""
    return Environment(air_c=21.0)
