"""The one object that wires the stages of a detector together.

``Detector`` holds the frozen parameter objects of every stage and runs a batch of walks
through them; each stage is a pure function from :mod:`pirchain.optics`,
:mod:`pirchain.sensor` and the later stages.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from .optics import Beams, Lens, Mount, element_power, make_beams, part_angles
from .scene import Environment, Target, Walks
from .sensor import PyroSensor, gate_voltage
from .target_pose import pose


@dataclass(frozen=True)
class FrontEndResult:
    """Signals of a batch of walks up to the sensor's gate.

    Attributes
    ----------
    time : numpy.ndarray
        Sample times, shape (samples,) [s].
    element_power : numpy.ndarray
        Radiant power change on each element, shape (walks, samples, elements) [W].
    equivalent_power : numpy.ndarray
        Σ c_k P_k, the power the gate node responds to, shape (walks, samples) [W].
    gate_voltage : numpy.ndarray
        Gate voltage change, shape (walks, samples) [V].
    """

    time: np.ndarray
    element_power: np.ndarray
    equivalent_power: np.ndarray
    gate_voltage: np.ndarray


@dataclass(frozen=True)
class Detector:
    """A PIR detector design: lens, mounting and sensor (analog and logic stages follow).

    Attributes
    ----------
    lens : Lens
    mount : Mount
    sensor : PyroSensor
    name : str
    """

    lens: Lens
    mount: Mount
    sensor: PyroSensor
    name: str = "detector"

    def beams(self) -> Beams:
        """Beams of this lens, mounting and sensor in the room frame."""
        return make_beams(self.lens, self.mount, self.sensor.elements)

    def element_power(
        self, target: Target, env: Environment, walks: Walks, beams: Beams | None = None
    ) -> np.ndarray:
        """Radiant power change on each element, shape (walks, samples, elements) [W]."""
        beams = self.beams() if beams is None else beams
        pp = pose(target, walks)
        angles = part_angles(pp.x, pp.y, pp.half_width, pp.z_bottom, pp.z_top, self.mount.height)
        contrast = target.radiance_contrast(env, self.sensor.band)
        return element_power(
            beams, angles, contrast, len(self.sensor.elements), self.sensor.window_transmittance
        )

    def front_end(self, target: Target, env: Environment, walks: Walks) -> FrontEndResult:
        """Run a batch of walks from the scene to the sensor's gate."""
        power = self.element_power(target, env, walks)
        p_eq = self.sensor.equivalent_power(power)
        v_g = gate_voltage(self.sensor, power, walks.sample_rate)
        return FrontEndResult(walks.time, power, p_eq, v_g)
