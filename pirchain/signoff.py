"""What a design must hold for the units that will be built: the tolerances of its parts
and the acceptance lines every unit must pass.

Pure data with their checks (the computations are in :mod:`pirchain.production`); a
:class:`pirchain.design.Design` carries them and the design file's ``[[tolerances]]`` tables
and ``[acceptance]`` section read into them. May import only :mod:`pirchain.errors`.
"""

from __future__ import annotations

from dataclasses import dataclass

from .errors import DesignError, check_choice, check_range

DISTRIBUTIONS = ("uniform", "gaussian", "lognormal")
#: Shorthands for a tolerance on every part of a kind (expanded by the production package).
GROUPS = ("resistors", "capacitors")


@dataclass(frozen=True)
class Tolerance:
    """The spread of one value (or of every value of a group) across built units.

    Attributes
    ----------
    path : str
        Dotted path of a number of the design (``detector.stages[0].rf``; ``[*]`` for every
        stage), or a group: ``resistors`` (every stage's resistors and the comparator
        ladder), ``capacitors`` (every stage's capacitors).
    tolerance : float
        Relative (a fraction: 0.01 for 1 %) or absolute (SI units of the value).
    relative : bool
        ``tolerance`` is a fraction of the nominal value.
    distribution : {"uniform", "gaussian", "lognormal"}
        Uniform within ± the tolerance; Gaussian with the tolerance at ``sigmas`` standard
        deviations; lognormal (for a value that cannot change sign) with ln(1 + tolerance)
        at ``sigmas`` standard deviations of ln(value).
    sigmas : float
        How many standard deviations the tolerance stands for (3 is common practice).
    random_sign : bool
        The drawn value's sign is random (an element mismatch whose sign is not known).
    """

    path: str
    tolerance: float
    relative: bool = True
    distribution: str = "uniform"
    sigmas: float = 3.0
    random_sign: bool = False

    def __post_init__(self):
        if not isinstance(self.path, str) or not self.path:
            raise DesignError("tolerances.path", self.path, "a dotted path or a group name")
        # a relative spread below 100 % (the value keeps its sign), except a lognormal one
        high = 100.0 if self.distribution == "lognormal" else 0.999 if self.relative else 1e30
        check_range(f"tolerances[{self.path}].tolerance", self.tolerance, 0.0, high)
        check_choice(f"tolerances[{self.path}].distribution", self.distribution, DISTRIBUTIONS)
        check_range(f"tolerances[{self.path}].sigmas", self.sigmas, 0.5, 10.0)
        if self.distribution == "lognormal" and not self.relative:
            raise DesignError(
                f"tolerances[{self.path}].distribution", self.distribution,
                "a relative tolerance for a lognormal spread",
            )  # fmt: skip


@dataclass(frozen=True)
class Acceptance:
    """The lines every built unit must pass (None: the line is not asked for).

    Attributes
    ----------
    range_m : float or None
        Distance at which walks must be detected [m].
    bearings : tuple of float
        Bearings of those walks [°] (the worst over them counts).
    speeds : tuple of float
        Walking speeds [m s⁻¹].
    kind : {"tangential", "radial"}
    level : float
        Required P(detect) at ``range_m``.
    trials : int
        Walks (with noise) per bearing and speed.
    seated_m : float or None
        A seated person (the minor-motion arm target, still) must be detected at this
        distance on the boresight [m].
    false_triggers_per_year : float or None
        At most this many false triggers per year (noise and the design's draught).
    warm_up_s : float or None
        Warm-up (settling after power-up) at most [s].
    supply_a : float or None
        Supply current at most [A].
    units : int
        Units the report draws for its yield section.
    """

    range_m: float | None = None
    bearings: tuple[float, ...] = (0.0,)
    speeds: tuple[float, ...] = (1.0,)
    kind: str = "tangential"
    level: float = 0.9
    trials: int = 8
    seated_m: float | None = None
    false_triggers_per_year: float | None = None
    warm_up_s: float | None = None
    supply_a: float | None = None
    units: int = 100

    def __post_init__(self):
        for key in ("bearings", "speeds"):
            vals = tuple(float(v) for v in getattr(self, key))
            if not 1 <= len(vals) <= 36:
                raise DesignError(f"acceptance.{key}", len(vals), "between 1 and 36 values")
            object.__setattr__(self, key, vals)
        for i, b in enumerate(self.bearings):
            check_range(f"acceptance.bearings[{i}]", b, -90.0, 90.0, "°")
        for i, v in enumerate(self.speeds):
            check_range(f"acceptance.speeds[{i}]", v, 0.05, 10.0, "m/s")
        check_choice("acceptance.kind", self.kind, ("tangential", "radial"))
        check_range("acceptance.level", self.level, 0.01, 1.0)
        if isinstance(self.trials, bool) or not isinstance(self.trials, int):
            raise DesignError("acceptance.trials", self.trials, "an integer")
        check_range("acceptance.trials", self.trials, 1, 1000)
        if isinstance(self.units, bool) or not isinstance(self.units, int):
            raise DesignError("acceptance.units", self.units, "an integer")
        check_range("acceptance.units", self.units, 1, 100_000)
        if self.range_m is not None:
            check_range("acceptance.range_m", self.range_m, 0.3, 200.0, "m")
        if self.seated_m is not None:
            check_range("acceptance.seated_m", self.seated_m, 0.3, 30.0, "m")
        if self.false_triggers_per_year is not None:
            check_range(
                "acceptance.false_triggers_per_year", self.false_triggers_per_year, 1e-6, 1e9
            )
        if self.warm_up_s is not None:
            check_range("acceptance.warm_up_s", self.warm_up_s, 0.1, 3600.0, "s")
        if self.supply_a is not None:
            check_range("acceptance.supply_a", self.supply_a, 1e-9, 10.0, "A")
        if not self.lines():
            raise DesignError("acceptance", "no lines", "at least one line to judge units by")

    def lines(self) -> tuple[str, ...]:
        """Names of the lines asked for, in a fixed order."""
        out = []
        if self.range_m is not None:
            out += [f"range {b:g}° {v:g} m/s" for b in self.bearings for v in self.speeds]
        if self.seated_m is not None:
            out.append("seated")
        for key, name in (("false_triggers_per_year", "false triggers"),
                          ("warm_up_s", "warm-up"), ("supply_a", "supply")):  # fmt: skip
            if getattr(self, key) is not None:
                out.append(name)
        return tuple(out)


@dataclass(frozen=True)
class CalibrationRecord:
    """What a calibrated design was fitted to (written by ``pirchain bench-fit``).

    Attributes
    ----------
    signal_scale : float
        Multiplier of the sensor's current responsivity the fits found (it stands for the
        product responsivity × lens transmission × the target's contrast, which one walk
        cannot tell apart).
    white_noise_scale, flicker_noise_scale : float
        Multipliers of the electrical noise densities (applied by the detector's
        :class:`pirchain.circuit.noise.NoiseScale`).
    fitted_from : tuple of str
        The data each fit used, one line each.
    fitted_on : str
        When (ISO date).
    summary : tuple of str
        The fitted values with their 95 % intervals, one line each.
    """

    signal_scale: float = 1.0
    white_noise_scale: float = 1.0
    flicker_noise_scale: float = 1.0
    fitted_from: tuple[str, ...] = ()
    fitted_on: str = ""
    summary: tuple[str, ...] = ()

    def __post_init__(self):
        check_range("calibration.signal_scale", self.signal_scale, 1e-3, 1e3)
        for name in ("fitted_from", "summary"):
            v = getattr(self, name)
            if not all(isinstance(x, str) and len(x) < 400 for x in v):
                raise DesignError(f"calibration.{name}", v, "a list of short text lines")
            object.__setattr__(self, name, tuple(v))
