"""A design under study: the detector, the scene it is judged in, and the analysis settings.

Every analysis of :mod:`pirchain.analysis` that needs more than a detector takes a
:class:`Design`; a sweep replaces one of its values by dotted path
(``detector.comparator.window.r_middle``, ``environment.air_c``, ``speed``, ``target``,
``analysis.trials`` …). The analyses run :attr:`Design.operating`, the detector with its
parts at their temperature, so a sweep of the room temperature moves the target's contrast
and the parts together. The design file (:mod:`pirchain.interface.design_file`) reads into
one. May import the base, the domain packages and :mod:`pirchain.chain`.
"""

from __future__ import annotations

from dataclasses import dataclass, field
from functools import cached_property

from .chain.detector import Detector
from .circuit.two_wire import TwoWireSupply
from .errors import check_nonnegative, check_range
from .physics.disturbance import AmbientCases, Draught
from .physics.scene import (
    DEFAULT_TARGET,
    Environment,
    Target,
    target_preset,
)
from .settings import WALK_SPEED_RANGE, AnalysisSettings
from .signoff import Acceptance, CalibrationRecord, Tolerance


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
    ambient : AmbientCases
        The room-temperature ramps and HVAC cycles the design is judged on.
    tolerances : tuple of Tolerance
        The spread of its parts across built units (none: exact values).
    acceptance : Acceptance or None
        The lines every built unit must pass.
    detector_c : float or None
        Temperature of the detector's parts [°C] (None: the room's air temperature). A
        detector under a sunlit ceiling or just brought in from a cold van is not at the
        room's temperature.
    calibration : CalibrationRecord or None
        What the design was fitted to on the bench (None: not calibrated); the fitted values
        themselves are in the detector and the draught.
    two_wire : TwoWireSupply or None
        The switch's power stage when the detector is a two-wire (no-neutral) switch that
        powers itself through its lamp (None: powered otherwise).
    """

    detector: Detector
    environment: Environment = field(default_factory=Environment)
    target: Target = field(default_factory=lambda: target_preset(DEFAULT_TARGET))
    speed: float = 1.0
    draught: Draught | None = None
    lux: float | None = 5.0
    analysis: AnalysisSettings = field(default_factory=AnalysisSettings)
    detector_c: float | None = None
    ambient: AmbientCases = field(default_factory=AmbientCases)
    tolerances: tuple[Tolerance, ...] = ()
    acceptance: Acceptance | None = None
    calibration: CalibrationRecord | None = None
    two_wire: TwoWireSupply | None = None

    def __post_init__(self):
        if isinstance(self.target, str):
            object.__setattr__(self, "target", target_preset(self.target))
        check_range("scene.speed", self.speed, *WALK_SPEED_RANGE, "m/s (a person's speed)")
        if self.lux is not None:
            check_nonnegative("scene.lux", self.lux, "lux")
        object.__setattr__(self, "tolerances", tuple(self.tolerances))
        if self.detector_c is not None:
            check_range("scene.detector_c", self.detector_c, -55.0, 125.0, "°C")
        self.operating  # noqa: B018 - a temperature the parts cannot take is refused here

    @property
    def parts_k(self) -> float:
        """Temperature of the detector's parts [K]."""
        return self.environment.air_k if self.detector_c is None else self.detector_c + 273.15

    @cached_property
    def operating(self) -> Detector:
        """The detector with its parts at :attr:`parts_k` (what every analysis runs)."""
        return self.detector.at_temperature(self.parts_k)
