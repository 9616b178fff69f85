"""A design under study: the detector, the scene it is judged in, and the analysis settings.

Every analysis of :mod:`pirchain.analysis` that needs more than a detector takes a
:class:`Design`; a sweep replaces one of its values by dotted path
(``detector.comparator.window.r_middle``, ``environment.air_c``, ``speed``, ``target``,
``analysis.trials`` …). The design file (:mod:`pirchain.interface.design_file`) reads into
one. May import the base, the domain packages and :mod:`pirchain.chain`.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field

from .chain.detector import Detector
from .errors import DesignError, check_nonnegative
from .physics.disturbance import Draught
from .physics.scene import DEFAULT_TARGET, Environment, Target, target_preset
from .settings import AnalysisSettings


@dataclass(frozen=True)
class Design:
    """A detector with the scene and settings its analyses run in.

    Attributes
    ----------
    detector : Detector
    environment : Environment
        The room.
    target : Target
        Who walks (a preset name is accepted and looked up).
    speed : float
        Walking speed of the range walks and the sample walk [m s⁻¹].
    draught : Draught or None
        Stationary HVAC disturbance for the false-trigger rate.
    lux : float or None
        Illuminance for the daylight inhibit during walks [lux] (None: no inhibit).
    analysis : AnalysisSettings
    """

    detector: Detector
    environment: Environment = field(default_factory=Environment)
    target: Target = field(default_factory=lambda: target_preset(DEFAULT_TARGET))
    speed: float = 1.0
    draught: Draught | None = None
    lux: float | None = 5.0
    analysis: AnalysisSettings = field(default_factory=AnalysisSettings)

    def __post_init__(self):
        if isinstance(self.target, str):
            object.__setattr__(self, "target", target_preset(self.target))
        if (
            isinstance(self.speed, bool)
            or not isinstance(self.speed, (int, float))
            or not (0 < self.speed <= 20 and math.isfinite(self.speed))
        ):
            raise DesignError("scene.speed", self.speed, "a walking speed between 0 and 20 m/s")
        if self.lux is not None:
            check_nonnegative("scene.lux", self.lux, "lux")
