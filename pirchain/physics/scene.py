"""Targets, their surface temperatures, the room, and the paths they walk.

A target is a set of vertical rectangles ("body parts") standing on the floor, always
turned to face the detector, each with a height range, a frontal and a side width, a
surface kind and an emissivity. Walks are sampled into a batch of floor positions and
headings with a leading walk axis, shape (walks, samples, 2).

Floor coordinates [m]: the detector is above the origin; bearing 0 is the detector's
boresight (the +x axis) and bearings grow counter-clockwise seen from above.

References
----------
.. [1] DuBois, D. and DuBois, E. F., Arch. Intern. Med. 17, 863 (1916): body surface area.
.. [2] Fanger, P. O., *Thermal Comfort* (1970), as tabulated in ASHRAE 55: projected area
   factors of a standing person (0.35 front, 0.23 side) and effective radiating fraction 0.725.
.. [3] Steketee, J., Phys. Med. Biol. 18, 686 (1973): skin emissivity 0.98.
.. [4] NEMA WD 7-2011: minor-motion target, a 76 × 76 × 381 mm arm pivoting 0.91 m above the
   floor at 90° s⁻¹.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

from ..errors import DesignError, check_array, check_choice, check_nonnegative, check_positive
from ..errors import check_range as _check_range
from .body_heat import fur_surface_temperature_c, two_node_temperatures
from .radiometry import celsius_to_kelvin, radiance_contrast

SKIN_EMISSIVITY = 0.98  # Steketee (1973)
CLOTHING_EMISSIVITY = 0.95  # common practice for textiles in the LWIR
FUR_EMISSIVITY = 0.95  # common practice
FRONT_AREA_FACTOR = 0.35  # Fanger (1970) / ASHRAE 55, standing person, front
SIDE_AREA_FACTOR = 0.23  # Fanger (1970) / ASHRAE 55, standing person, side
EFFECTIVE_RADIATING_FRACTION = 0.725  # Fanger (1970)
SURFACES = ("skin", "clothing", "fur", "fixed")


def dubois_area(height, mass):
    """Body surface area by DuBois & DuBois (1916) [m²].

    Parameters
    ----------
    height : array_like
        Stature [m].
    mass : array_like
        Body mass [kg].
    """
    h = check_array("height", height, positive=True)
    m = check_array("mass", mass, positive=True)
    return 0.007184 * (h * 100.0) ** 0.725 * m**0.425


@dataclass(frozen=True)
class Environment:
    """Room conditions.

    Attributes
    ----------
    air_c : float
        Air temperature [°C].
    radiant_c : float or None
        Mean radiant temperature [°C]; None means equal to the air temperature.
    background_c : float or None
        Temperature of the surfaces the beams end on (floor, walls) [°C]; None means the
        radiant temperature.
    background_emissivity : float
        Emissivity of those surfaces.
    air_speed : float
        Air speed around the occupant [m s⁻¹].
    relative_humidity : float
        [%]; sets how well a warm person's sweat cools the skin (two-node model).
    """

    air_c: float = 22.0
    radiant_c: float | None = None
    background_c: float | None = None
    background_emissivity: float = 0.95
    air_speed: float = 0.1
    relative_humidity: float = 50.0

    def __post_init__(self):
        _check_range("environment.air_c", self.air_c, -40.0, 60.0, "°C")
        if self.radiant_c is not None:
            _check_range("environment.radiant_c", self.radiant_c, -40.0, 80.0, "°C")
        if self.background_c is not None:
            _check_range("environment.background_c", self.background_c, -40.0, 80.0, "°C")
        _check_range("environment.background_emissivity", self.background_emissivity, 0.01, 1.0)
        check_nonnegative("environment.air_speed", self.air_speed, "m/s")
        _check_range("environment.relative_humidity", self.relative_humidity, 0.0, 100.0, "%")

    @property
    def mean_radiant_c(self) -> float:
        """Mean radiant temperature [°C]."""
        return self.air_c if self.radiant_c is None else self.radiant_c

    @property
    def surfaces_c(self) -> float:
        """Background surface temperature [°C]."""
        return self.mean_radiant_c if self.background_c is None else self.background_c

    @property
    def air_k(self) -> float:
        """Air temperature [K] (also the temperature of the electronics)."""
        return float(celsius_to_kelvin(self.air_c))

    @property
    def mean_radiant_k(self) -> float:
        """Mean radiant temperature [K]."""
        return float(celsius_to_kelvin(self.mean_radiant_c))

    @property
    def surfaces_k(self) -> float:
        """Background surface temperature [K]."""
        return float(celsius_to_kelvin(self.surfaces_c))


@dataclass(frozen=True)
class BodyPart:
    """One vertical rectangle of a target.

    Attributes
    ----------
    name : str
        Label.
    z_bottom, z_top : float
        Height range above the floor [m].
    width_front, width_side : float
        Width seen from the front (walking straight at the detector) and from the side [m].
    surface : {"skin", "clothing", "fur", "fixed"}
        How the surface temperature is found (skin and clothing surface by the two-node model
        of Gagge et al. 1986 in the room, :func:`pirchain.physics.body_heat.two_node_temperatures`;
        fur by its series resistance; or ``temperature_c``).
    emissivity : float
        LWIR emissivity.
    temperature_c : float or None
        Surface temperature for ``surface="fixed"`` [°C].
    """

    name: str
    z_bottom: float
    z_top: float
    width_front: float
    width_side: float
    surface: str = "clothing"
    emissivity: float = CLOTHING_EMISSIVITY
    temperature_c: float | None = None

    def __post_init__(self):
        where = f"target.parts[{self.name}]"
        check_nonnegative(where + ".z_bottom", self.z_bottom, "m")
        top = check_positive(where + ".z_top", self.z_top, "m")
        if top <= self.z_bottom:
            raise DesignError(
                where + ".z_top", self.z_top, f"a height above z_bottom = {self.z_bottom} m"
            )
        check_positive(where + ".width_front", self.width_front, "m")
        check_positive(where + ".width_side", self.width_side, "m")
        check_choice(where + ".surface", self.surface, SURFACES)
        _check_range(where + ".emissivity", self.emissivity, 0.01, 1.0)
        if self.surface == "fixed":
            if self.temperature_c is None:
                raise DesignError(
                    where + ".temperature_c", None, "a temperature in °C for a fixed surface"
                )
            _check_range(where + ".temperature_c", self.temperature_c, -40.0, 150.0, "°C")

    @property
    def height(self) -> float:
        """Height of the rectangle [m]."""
        return self.z_top - self.z_bottom


@dataclass(frozen=True)
class ArmSwing:
    """A forearm swinging about a pivot in the plane facing the detector.

    The arm is split into ``segments`` small rectangles along its length so that its
    angular footprint stays close to the real rotated bar at every angle.

    Attributes
    ----------
    pivot_height : float
        Height of the pivot above the floor [m].
    length, width : float
        Arm length and width [m].
    rate_deg_s : float
        Angular speed [° s⁻¹].
    sweep_deg : float
        Swing amplitude: the arm goes from horizontal up by this angle and back [°].
    segments : int
        Number of rectangles the arm is split into.
    """

    pivot_height: float = 0.91
    length: float = 0.381
    width: float = 0.076
    rate_deg_s: float = 90.0
    sweep_deg: float = 90.0
    segments: int = 6

    def __post_init__(self):
        check_positive("target.swing.pivot_height", self.pivot_height, "m")
        check_positive("target.swing.length", self.length, "m")
        check_positive("target.swing.width", self.width, "m")
        check_positive("target.swing.rate_deg_s", self.rate_deg_s, "°/s")
        _check_range("target.swing.sweep_deg", self.sweep_deg, 1.0, 180.0, "°")
        if not isinstance(self.segments, int) or self.segments < 1:
            raise DesignError("target.swing.segments", self.segments, "an integer >= 1")

    def angle(self, t):
        """Arm angle above horizontal at times ``t`` [rad] (a triangle wave)."""
        period = 2.0 * self.sweep_deg / self.rate_deg_s
        phase = np.mod(np.asarray(t, dtype=float), period) / period
        tri = 1.0 - np.abs(2.0 * phase - 1.0)  # 0 → 1 → 0
        return np.deg2rad(self.sweep_deg) * tri


@dataclass(frozen=True)
class Target:
    """A person or animal as a set of body parts.

    Attributes
    ----------
    name : str
        Label.
    parts : tuple of BodyPart
        Static body parts (empty for a pure arm target).
    clo, met : float
        Clothing insulation [clo] and metabolic rate [met] for the heat balance.
    core_c : float
        Core temperature for furred parts [°C].
    fur_clo : float
        Fur insulation [clo].
    swing : ArmSwing or None
        Moving arm, with skin surface.
    """

    name: str
    parts: tuple[BodyPart, ...] = ()
    clo: float = 1.0
    met: float = 1.6
    core_c: float = 38.5
    fur_clo: float = 1.5
    swing: ArmSwing | None = None

    def __post_init__(self):
        if not self.parts and self.swing is None:
            raise DesignError("target.parts", self.parts, "at least one body part or an arm swing")
        check_positive("target.clo", self.clo, "clo")
        _check_range("target.met", self.met, 0.7, 6.0, "met")
        _check_range("target.core_c", self.core_c, 30.0, 45.0, "°C")
        check_positive("target.fur_clo", self.fur_clo, "clo")

    def surface_temperatures_c(self, env: Environment) -> np.ndarray:
        """Surface temperature of each part (static parts, then arm segments) [°C]."""
        skin, _, cloth = (
            float(t)
            for t in two_node_temperatures(
                env.air_c, env.mean_radiant_c, env.air_speed, env.relative_humidity, self.met,
                self.clo,
            )
        )  # fmt: skip
        fur = float(fur_surface_temperature_c(env.air_c, self.core_c, self.fur_clo))
        lookup = {"skin": skin, "clothing": cloth, "fur": fur}
        temps = [p.temperature_c if p.surface == "fixed" else lookup[p.surface] for p in self.parts]
        if self.swing is not None:
            temps += [skin] * self.swing.segments
        return np.array(temps, dtype=float)

    def emissivities(self) -> np.ndarray:
        """Emissivity of each part (static parts, then arm segments)."""
        eps = [p.emissivity for p in self.parts]
        if self.swing is not None:
            eps += [SKIN_EMISSIVITY] * self.swing.segments
        return np.array(eps, dtype=float)

    def radiance_contrast(self, env: Environment, band=(5e-6, 14e-6)) -> np.ndarray:
        """In-band radiance of each part minus the background's [W m⁻² sr⁻¹]."""
        return radiance_contrast(
            celsius_to_kelvin(self.surface_temperatures_c(env)),
            self.emissivities(),
            env.surfaces_k,
            env.background_emissivity,
            env.mean_radiant_k,
            band,
        )

    def frontal_area(self) -> float:
        """Projected area of the static parts seen from the front [m²]."""
        return float(sum(p.height * p.width_front for p in self.parts))

    def side_area(self) -> float:
        """Projected area of the static parts seen from the side [m²]."""
        return float(sum(p.height * p.width_side for p in self.parts))


# Shape of a standing person as fractions of stature (common practice anthropometry,
# segment proportions after Drillis & Contini; from memory). Widths are relative and are
# rescaled so the projected areas meet Fanger's factors exactly.
_PERSON_SHAPE = (
    # name, z0/H, z1/H, relative front width, relative side width, surface
    ("legs", 0.00, 0.53, 0.30, 0.15, "clothing"),
    ("torso", 0.53, 0.82, 0.46, 0.25, "clothing"),
    ("head", 0.82, 1.00, 0.155, 0.20, "skin"),
)


def person(name: str, height: float, mass: float, clo: float = 1.0, met: float = 1.6) -> Target:
    """A standing or walking person scaled to the published body-size relations.

    Frontal and side projected areas equal FRONT/SIDE_AREA_FACTOR × 0.725 × A_DuBois
    (Fanger 1970) and the parts follow common anthropometric proportions.

    Parameters
    ----------
    name : str
        Label.
    height : float
        Stature [m].
    mass : float
        Body mass [kg].
    clo, met : float
        Clothing [clo] and activity [met].
    """
    h = check_positive("target.height", height, "m")
    check_positive("target.mass", mass, "kg")
    a_eff = EFFECTIVE_RADIATING_FRACTION * float(dubois_area(h, mass))
    raw_front = sum((z1 - z0) * h * wf for _, z0, z1, wf, _, _ in _PERSON_SHAPE)
    raw_side = sum((z1 - z0) * h * ws for _, z0, z1, _, ws, _ in _PERSON_SHAPE)
    kf = FRONT_AREA_FACTOR * a_eff / raw_front
    ks = SIDE_AREA_FACTOR * a_eff / raw_side
    parts = tuple(
        BodyPart(
            n,
            z0 * h,
            z1 * h,
            wf * kf,
            ws * ks,
            surface=s,
            emissivity=SKIN_EMISSIVITY if s == "skin" else CLOTHING_EMISSIVITY,
        )
        for n, z0, z1, wf, ws, s in _PERSON_SHAPE
    )
    return Target(name, parts, clo=clo, met=met)


def adult(height: float = 1.75, mass: float = 70.0, clo: float = 1.0, met: float = 1.6) -> Target:
    """Adult walker (default 1.75 m, 70 kg, within the NEMA WD 7 test-person range)."""
    return person("adult", height, mass, clo, met)


def child(height: float = 1.28, mass: float = 26.0, clo: float = 0.8, met: float = 1.8) -> Target:
    """Child of about eight years (1.28 m, 26 kg: typical growth-chart values, from memory)."""
    return person("child", height, mass, clo, met)


def small_pet(length: float = 0.45, core_c: float = 38.5, fur_clo: float = 1.5) -> Target:
    """A cat or small dog: every part below 0.5 m, furred surface.

    Dimensions are common practice for a 4–6 kg animal (from memory).
    """
    k = check_positive("target.length", length, "m") / 0.45
    parts = (
        BodyPart("legs", 0.0, 0.12 * k, 0.10 * k, 0.30 * k, "fur", FUR_EMISSIVITY),
        BodyPart("body", 0.12 * k, 0.30 * k, 0.15 * k, 0.45 * k, "fur", FUR_EMISSIVITY),
        BodyPart("head", 0.30 * k, 0.42 * k, 0.09 * k, 0.12 * k, "fur", FUR_EMISSIVITY),
    )
    return Target("small pet", parts, core_c=core_c, fur_clo=fur_clo)


def minor_motion_arm(rate_deg_s: float = 90.0) -> Target:
    """The minor-motion target of NEMA WD 7: a bare 76 × 76 × 381 mm forearm at 0.91 m."""
    return Target("minor-motion arm", (), met=1.2, swing=ArmSwing(rate_deg_s=rate_deg_s))


TARGET_PRESETS = {
    "adult": adult,
    "child": child,
    "small_pet": small_pet,
    "minor_motion_arm": minor_motion_arm,
}


#: The target of a design that names none.
DEFAULT_TARGET = "adult"


def target_preset(name: str) -> Target:
    """Return a target preset by name (see ``TARGET_PRESETS``)."""
    check_choice("target.preset", name, TARGET_PRESETS)
    return TARGET_PRESETS[name]()


# ---------------------------------------------------------------------------------------
# Paths and batches of walks


@dataclass(frozen=True)
class Path:
    """A polyline walked at constant speed; the walker stands at the ends before and after.

    Attributes
    ----------
    waypoints : tuple of (x, y)
        Floor points [m]; one point means standing still.
    speed : float
        Walking speed [m s⁻¹].
    start_time : float
        Time at which walking starts [s].
    """

    waypoints: tuple[tuple[float, float], ...]
    speed: float = 1.0
    start_time: float = 0.0

    def __post_init__(self):
        pts = check_array("path.waypoints", self.waypoints)
        if pts.ndim != 2 or pts.shape[1] != 2 or pts.shape[0] < 1:
            raise DesignError("path.waypoints", self.waypoints, "a list of (x, y) points in metres")
        object.__setattr__(self, "waypoints", tuple(map(tuple, pts.tolist())))
        check_positive("path.speed", self.speed, "m/s")
        check_nonnegative("path.start_time", self.start_time, "s")

    @property
    def length(self) -> float:
        """Path length [m]."""
        pts = np.asarray(self.waypoints)
        return float(np.sum(np.hypot(*np.diff(pts, axis=0).T))) if len(pts) > 1 else 0.0

    @property
    def duration(self) -> float:
        """Time from start until the end of the path [s]."""
        return self.start_time + self.length / self.speed

    def sample(self, t):
        """Positions and unit headings at times ``t``.

        Returns
        -------
        position, heading : numpy.ndarray
            Shapes (len(t), 2) [m] and (len(t), 2) [unit vectors].
        """
        t = np.asarray(t, dtype=float)
        pts = np.asarray(self.waypoints, dtype=float)
        if len(pts) == 1:
            pos = np.broadcast_to(pts[0], t.shape + (2,)).copy()
            head = np.zeros_like(pos)
            head[..., 0] = 1.0
            return pos, head
        seg = np.diff(pts, axis=0)
        seg_len = np.hypot(seg[:, 0], seg[:, 1])
        keep = seg_len > 0
        pts = np.vstack([pts[:1], pts[1:][keep]])
        seg, seg_len = seg[keep], seg_len[keep]
        cum = np.concatenate([[0.0], np.cumsum(seg_len)])
        s = np.clip((t - self.start_time) * self.speed, 0.0, cum[-1])
        pos = np.stack([np.interp(s, cum, pts[:, 0]), np.interp(s, cum, pts[:, 1])], axis=-1)
        idx = np.clip(np.searchsorted(cum, s, side="right") - 1, 0, len(seg) - 1)
        head = seg[idx] / seg_len[idx, None]
        return pos, head


def _unit(bearing_rad):
    return np.array([math.cos(bearing_rad), math.sin(bearing_rad)])


def tangential_path(
    distance, bearing_deg=0.0, speed=1.0, length=None, direction=1, start_time=0.0
) -> Path:
    """A straight walk across the line of sight, centred on it at ``distance``.

    Parameters
    ----------
    distance : float
        Horizontal distance from the detector to the crossing point [m].
    bearing_deg : float
        Bearing of the line of sight [°].
    speed : float
        Walking speed [m s⁻¹].
    length : float, optional
        Path length [m]; default ``max(3 m, distance)``.
    direction : {1, -1}
        +1 walks counter-clockwise (increasing bearing), −1 clockwise.
    """
    d = check_positive("path.distance", distance, "m")
    if direction not in (1, -1):
        raise DesignError("path.direction", direction, "+1 or -1")
    length = max(3.0, d) if length is None else check_positive("path.length", length, "m")
    b = math.radians(bearing_deg)
    centre = d * _unit(b)
    perp = direction * _unit(b + math.pi / 2)
    a, z = centre - 0.5 * length * perp, centre + 0.5 * length * perp
    return Path((tuple(a), tuple(z)), speed, start_time)


def radial_path(start_distance, end_distance, bearing_deg=0.0, speed=1.0, start_time=0.0) -> Path:
    """A straight walk along the line of sight from one distance to another [m]."""
    d0 = check_positive("path.start_distance", start_distance, "m")
    d1 = check_positive("path.end_distance", end_distance, "m")
    if d0 == d1:
        raise DesignError("path.end_distance", end_distance, "a distance different from the start")
    u = _unit(math.radians(bearing_deg))
    return Path((tuple(d0 * u), tuple(d1 * u)), speed, start_time)


@dataclass(frozen=True)
class Walks:
    """A batch of sampled walks.

    Attributes
    ----------
    time : numpy.ndarray
        Sample times, shape (samples,) [s].
    position : numpy.ndarray
        Floor positions, shape (walks, samples, 2) [m].
    heading : numpy.ndarray
        Unit walking directions, shape (walks, samples, 2).
    """

    time: np.ndarray
    position: np.ndarray
    heading: np.ndarray
    sample_rate: float

    @property
    def n_walks(self) -> int:
        """Number of walks."""
        return self.position.shape[0]

    @property
    def n_samples(self) -> int:
        """Number of samples per walk."""
        return self.time.shape[0]


def sample_times(duration, sample_rate) -> np.ndarray:
    """Sample instants 0, 1/fs, … < duration [s]."""
    dur = check_positive("duration", duration, "s")
    fs = check_positive("sample_rate", sample_rate, "Hz")
    n = max(2, int(math.ceil(dur * fs)))
    return np.arange(n) / fs


def walks_from_paths(paths, duration, sample_rate) -> Walks:
    """Sample a list of paths on a common time base into one batch."""
    if isinstance(paths, Path):
        paths = [paths]
    if not paths:
        raise DesignError("paths", paths, "at least one path")
    t = sample_times(duration, sample_rate)
    pos = np.empty((len(paths), t.size, 2))
    head = np.empty_like(pos)
    for i, p in enumerate(paths):
        pos[i], head[i] = p.sample(t)
    return Walks(t, pos, head, float(sample_rate))


def straight_walks(
    starts, headings, speeds, duration, sample_rate, start_times=0.0, lengths=None
) -> Walks:
    """A batch of straight walks, fully vectorised.

    Parameters
    ----------
    starts : array_like, shape (walks, 2)
        Start points [m].
    headings : array_like, shape (walks, 2)
        Walking directions (normalised here).
    speeds : array_like, shape (walks,)
        Speeds [m s⁻¹], > 0.
    duration, sample_rate : float
        Simulated time [s] and sample rate [Hz].
    start_times : array_like, shape (walks,) or scalar
        Time each walk starts [s]; the walker stands at the start before it.
    lengths : array_like, shape (walks,) or scalar, optional
        Distance after which each walker stops [m]; default: never stops.
    """
    p0 = check_array("starts", starts).reshape(-1, 2)
    hd = check_array("headings", headings).reshape(-1, 2)
    norm = np.hypot(hd[:, 0], hd[:, 1])
    if np.any(norm == 0):
        raise DesignError("headings", headings, "non-zero direction vectors")
    hd = hd / norm[:, None]
    v = np.broadcast_to(check_array("speeds", speeds, positive=True), (p0.shape[0],))
    t0 = np.broadcast_to(check_array("start_times", start_times), (p0.shape[0],))
    t = sample_times(duration, sample_rate)
    s = np.clip(t[None, :] - t0[:, None], 0.0, None) * v[:, None]
    if lengths is not None:
        s = np.minimum(s, np.broadcast_to(check_array("lengths", lengths), (p0.shape[0],))[:, None])
    pos = p0[:, None, :] + s[..., None] * hd[:, None, :]
    head = np.broadcast_to(hd[:, None, :], pos.shape)
    return Walks(t, pos, head, float(sample_rate))
