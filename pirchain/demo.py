"""The built-in demo design.

Scenario (invented for the demo): *Marrowby Parish Reading Room* wants its lights to follow
occupancy. The fictional "Tern-2" wall sensor is mounted 2.2 m high on the short wall of the
8 × 6 m room, looking along its length; readers walk between the shelves at about 1 m/s.
It runs from a 3.3 V rail that a small mains supply provides (budget 150 µA). Every number
below is a plausible demo value, not data about any real product.
"""

from __future__ import annotations

from .chain import Detector
from .comparator import LadderWindow, WindowComparator
from .frontend import InvertingBandPass, Jfet, NonInvertingBandPass, OpAmp, SourceFollower
from .logic import DaylightInhibit, PulseLogic
from .optics import LensTier, Mount, wall_lens
from .scene import Environment
from .sensor import PyroSensor, dual_elements
from .supply import PowerSupply

DEMO_NAME = "Tern-2 reading-room wall sensor (demo)"
SUPPLY_V = 3.3


def demo_lens():
    """Four tiers across 110°: long-range facets on top, short-range ones below."""
    return wall_lens(
        [
            LensTier(-5.0, 9, 22e-3, 0.30e-4),
            LensTier(-13.0, 7, 18e-3, 0.22e-4),
            LensTier(-27.0, 5, 13e-3, 0.15e-4),
            LensTier(-52.0, 3, 9e-3, 0.10e-4),
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


def demo_opamp() -> OpAmp:
    """A micropower rail-to-rail-output op-amp."""
    return OpAmp(
        gbw=100e3, v_low=0.02, v_high=SUPPLY_V - 0.02, quiescent_current=7e-6, e_n=50e-9, i_n=1e-15
    )


def demo_detector() -> Detector:
    """The demo detector, every stage populated."""
    amp = demo_opamp()
    supply = PowerSupply(SUPPLY_V, 1e6, 1e6, logic_current=5e-6, limit=150e-6)
    vref = supply.reference
    return Detector(
        lens=demo_lens(),
        mount=Mount("wall", height=2.2, tilt_deg=0.0),
        sensor=demo_sensor(),
        follower=SourceFollower(Jfet(idss=0.4e-3, pinch_off=1.2, e_n=15e-9, i_n=2e-16), 47e3),
        stages=(
            NonInvertingBandPass(10e3, 22e-6, 560e3, 27e-9, amp, 0.0, "stage 1 (non-inverting)"),
            InvertingBandPass(22e3, 10e-6, 1e6, 15e-9, amp, vref, "stage 2 (inverting)"),
        ),
        comparator=WindowComparator(LadderWindow(SUPPLY_V, 1e6, 470e3, 1e6), hysteresis=0.02),
        logic=PulseLogic(
            rate=50.0,
            pulses_required=2,
            count_window=4.0,
            blanking=0.3,
            hold=60.0,
            retrigger=True,
            lockout=2.0,
            daylight=DaylightInhibit(SUPPLY_V, 100e3, 1e6, 0.7, 1.65, 0.2),
        ),
        supply=supply,
        name=DEMO_NAME,
    )


def demo_environment() -> Environment:
    """The reading room on a winter afternoon: 21 °C air and walls."""
    return Environment(air_c=21.0)
