"""Segmented (Fresnel) lens optics: facets × sensing elements → beams → element power.

Every facet images every sensing element into a beam. Beams and body parts are both
described as rectangles in (azimuth, elevation) seen from the lens, and the power a body
part sends onto an element through a facet is

    P = τ_window · τ_facet · A_facet · cos(incidence) · ΔL · Ω_overlap,

with Ω_overlap = Δaz · (sin el_hi − sin el_lo) the exact solid angle of the overlapping
az–el rectangle (dΩ = cos el d(el) d(az)). A vertical rectangle of width W between heights
z0 and z1 at horizontal range ρ spans exactly Δaz = 2 atan(W/2ρ) and elevations
atan((z − h)/ρ) when it is turned to face the lens, so the distance laws come out of the
geometry: power independent of d for a target that fills the beam, ∝ 1/d when it fills the
beam in one direction only, ∝ 1/d² when it is much smaller than the beam.

This module builds the beams (:func:`make_beams`); the overlap sum itself runs in the
chain's single compiled pass, :func:`pirchain.kernels.optics.walk_power`, for every
target (static body parts and swinging-arm segments alike).

A beam is the element's image through a thin lens: its centre is the facet axis offset by
−(focal-plane position)/f (the image is inverted), projected perpendicular to the facet axis
(foreshortening for off-axis facets). Its shape is replaced by the az–el rectangle with the
same solid angle and the same bounding-box aspect ratio, exact when the element edges are
along azimuth and elevation (wall units, rings of a ceiling unit seen tangentially). Beams
within about three beam widths of the nadir are coarse; a :class:`ValidityWarning` says so.

References
----------
.. [1] Born, M. and Wolf, E., *Principles of Optics*: thin-lens imaging, etendue A·Ω.
.. [2] Boyd, R. W., *Radiometry and the Detection of Optical Radiation* (1983): radiant power
   P = L · A · cos θ · Ω for a Lambertian source.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

from ..errors import (
    DesignError,
    check_choice,
    check_positive,
    check_range,
    check_real,
    warn_validity,
)

#: Horizontal range below which a body part is taken as directly below the lens [m].
MIN_RANGE = 0.01


def crossing_frequency(speed, distance, focal_length: float, spacing: float):
    """Fundamental of a beam-pair crossing, v f / (2 d s) [Hz].

    The + and − lobes of a crossing are d s/(f v) apart in time (thin lens, element spacing
    ``s``, focal length ``f``), so the pair's waveform has its fundamental at v f/(2 d s).

    Parameters
    ----------
    speed : array_like
        Walking speed across the line of sight [m s⁻¹].
    distance : array_like
        Horizontal distance [m].
    focal_length, spacing : float
        [m].
    """
    return np.asarray(speed) * focal_length / (2.0 * np.asarray(distance) * spacing)


@dataclass(frozen=True)
class Facet:
    """One lens facet.

    Attributes
    ----------
    azimuth_deg, elevation_deg : float
        Direction of the facet's optical axis in the detector frame [°]; elevation is
        negative below the horizon (−90° straight down).
    focal_length : float
        Focal length [m].
    area : float
        Aperture area [m²].
    transmittance : float
        In-band transmittance of the lens material at this facet.
    """

    azimuth_deg: float
    elevation_deg: float
    focal_length: float
    area: float
    transmittance: float = 0.65

    def __post_init__(self):
        check_range("facet.azimuth_deg", self.azimuth_deg, -360.0, 360.0, "°")
        check_range("facet.elevation_deg", self.elevation_deg, -90.0, 90.0, "°")
        check_positive("facet.focal_length", self.focal_length, "m")
        check_positive("facet.area", self.area, "m²")
        check_range("facet.transmittance", self.transmittance, 0.0, 1.0)


@dataclass(frozen=True)
class Lens:
    """A segmented lens.

    Attributes
    ----------
    facets : tuple of Facet
        The facet table.
    surface : {"dome", "flat"}
        "dome": each facet faces along its own axis (curved lens); "flat": every facet lies
        in one plane facing the boresight, so off-axis facets lose cos(incidence).
    name : str
        Label.
    """

    facets: tuple[Facet, ...]
    surface: str = "dome"
    name: str = "lens"

    def __post_init__(self):
        if not self.facets:
            raise DesignError("lens.facets", self.facets, "at least one facet")
        object.__setattr__(self, "facets", tuple(self.facets))
        check_choice("lens.surface", self.surface, ("dome", "flat"))


@dataclass(frozen=True)
class LensTier:
    """One horizontal row of facets of a wall lens (see :func:`wall_lens`)."""

    elevation_deg: float
    count: int
    focal_length: float
    area: float
    transmittance: float = 0.65

    def __post_init__(self):
        Facet(0.0, self.elevation_deg, self.focal_length, self.area, self.transmittance)
        if not isinstance(self.count, int) or self.count < 1:
            raise DesignError("tier.count", self.count, "an integer >= 1")


@dataclass(frozen=True)
class LensRing:
    """One ring of facets of a ceiling lens (see :func:`ceiling_lens`)."""

    nadir_deg: float
    count: int
    focal_length: float
    area: float
    transmittance: float = 0.65
    azimuth_offset_deg: float = 0.0

    def __post_init__(self):
        check_range("ring.nadir_deg", self.nadir_deg, 0.0, 89.0, "°")
        Facet(0.0, self.nadir_deg - 90.0, self.focal_length, self.area, self.transmittance)
        check_range("ring.azimuth_offset_deg", self.azimuth_offset_deg, -360.0, 360.0, "°")
        if not isinstance(self.count, int) or self.count < 1:
            raise DesignError("ring.count", self.count, "an integer >= 1")


def wall_lens(
    tiers, fov_deg: float = 110.0, surface: str = "dome", name: str = "wall lens"
) -> Lens:
    """Tiers of facets fanned evenly across a horizontal field of view.

    Parameters
    ----------
    tiers : sequence of LensTier
        Rows of facets, each at a downward elevation with a count, focal length and area.
    fov_deg : float
        Horizontal field of view the facet axes are spread over [°].
    """
    fov = check_range("lens.fov_deg", fov_deg, 1.0, 360.0, "°")
    facets = []
    for i, tier in enumerate(tiers):
        if not isinstance(tier.count, int) or tier.count < 1:
            raise DesignError(f"lens.tiers[{i}].count", tier.count, "an integer >= 1")
        for j in range(tier.count):
            az = -fov / 2 + (j + 0.5) * fov / tier.count
            facets.append(
                Facet(az, tier.elevation_deg, tier.focal_length, tier.area, tier.transmittance)
            )
    return Lens(tuple(facets), surface, name)


def ceiling_lens(rings, surface: str = "dome", name: str = "ceiling lens") -> Lens:
    """Rings of facets around the nadir for a 360° ceiling unit.

    Parameters
    ----------
    rings : sequence of LensRing
        Each ring at a nadir angle (0° = straight down) with a facet count.
    """
    facets = []
    for i, ring in enumerate(rings):
        if not isinstance(ring.count, int) or ring.count < 1:
            raise DesignError(f"lens.rings[{i}].count", ring.count, "an integer >= 1")
        check_range(f"lens.rings[{i}].nadir_deg", ring.nadir_deg, 0.0, 89.0, "°")
        for j in range(ring.count):
            az = ring.azimuth_offset_deg + 360.0 * j / ring.count
            az = (az + 180.0) % 360.0 - 180.0
            facets.append(
                Facet(az, ring.nadir_deg - 90.0, ring.focal_length, ring.area, ring.transmittance)
            )
    return Lens(tuple(facets), surface, name)


@dataclass(frozen=True)
class Mount:
    """How the detector is installed.

    Attributes
    ----------
    kind : {"wall", "ceiling"}
        Wall units look along +x; ceiling units look down.
    height : float
        Lens height above the floor [m].
    tilt_deg : float
        Downward pitch of the whole detector about the lateral axis [°].
    rotation_deg : float
        Rotation of the sensor about the boresight (0: elements side by side horizontally
        for a wall unit, along +y for a ceiling unit) [°].
    """

    kind: str = "wall"
    height: float = 2.2
    tilt_deg: float = 0.0
    rotation_deg: float = 0.0

    def __post_init__(self):
        check_choice("mount.kind", self.kind, ("wall", "ceiling"))
        check_range("mount.height", self.height, 0.05, 30.0, "m")
        check_range("mount.tilt_deg", self.tilt_deg, -90.0, 90.0, "°")
        check_real("mount.rotation_deg", self.rotation_deg)

    def to_room(self, v: np.ndarray) -> np.ndarray:
        """Rotate detector-frame vectors (..., 3) into the room frame (downward pitch)."""
        t = math.radians(self.tilt_deg)
        c, s = math.cos(t), math.sin(t)
        x, y, z = v[..., 0], v[..., 1], v[..., 2]
        return np.stack([x * c + z * s, y, -x * s + z * c], axis=-1)

    def sensor_axes(self):
        """Boresight n and in-plane sensor axes U (element x) and V (element y), detector frame."""
        if self.kind == "wall":
            n, u, v = np.array([1.0, 0, 0]), np.array([0, 1.0, 0]), np.array([0, 0, 1.0])
        else:
            n, u, v = np.array([0, 0, -1.0]), np.array([0, 1.0, 0]), np.array([1.0, 0, 0])
        r = math.radians(self.rotation_deg)
        return n, math.cos(r) * u + math.sin(r) * v, -math.sin(r) * u + math.cos(r) * v


def direction(az, el):
    """Unit vector(s) for azimuth and elevation [rad], shape (..., 3)."""
    az, el = np.asarray(az, dtype=float), np.asarray(el, dtype=float)
    return np.stack([np.cos(el) * np.cos(az), np.cos(el) * np.sin(az), np.sin(el)], axis=-1)


@dataclass(frozen=True)
class Beams:
    """Beams of a lens and sensor in the room frame (arrays over beams).

    Attributes
    ----------
    azimuth, elevation : numpy.ndarray
        Beam centre [rad].
    half_azimuth, half_elevation : numpy.ndarray
        Half extents of the beam rectangle [rad].
    weight : numpy.ndarray
        τ_facet · A_facet · cos(incidence) [m²].
    element : numpy.ndarray of int
        Index of the sensing element the beam belongs to.
    facet : numpy.ndarray of int
        Index of the facet.
    """

    azimuth: np.ndarray
    elevation: np.ndarray
    half_azimuth: np.ndarray
    half_elevation: np.ndarray
    weight: np.ndarray
    element: np.ndarray
    facet: np.ndarray

    @property
    def count(self) -> int:
        """Number of beams."""
        return int(self.azimuth.size)

    @property
    def sin_edges(self) -> tuple[np.ndarray, np.ndarray]:
        """Sines of the lower and upper elevation edges of each beam (clipped at ±90°)."""
        el_lo = np.maximum(self.elevation - self.half_elevation, -math.pi / 2)
        el_hi = np.minimum(self.elevation + self.half_elevation, math.pi / 2)
        return np.sin(el_lo), np.sin(el_hi)

    @property
    def solid_angle(self) -> np.ndarray:
        """Solid angle of each beam [sr]: 2 Δaz/2 · (sin el_hi − sin el_lo)."""
        lo, hi = self.sin_edges
        return 2 * self.half_azimuth * (hi - lo)


def make_beams(lens: Lens, mount: Mount, elements) -> Beams:
    """Image every sensing element through every facet.

    Parameters
    ----------
    lens : Lens
        Facet table.
    mount : Mount
        Installation.
    elements : sequence
        Sensing elements with attributes ``x``, ``y`` (focal-plane centre [m]), ``width``
        (along the sensor x axis [m]) and ``height`` [m].
    """
    n, u_ax, v_ax = mount.sensor_axes()
    fac = lens.facets
    az = np.deg2rad([f.azimuth_deg for f in fac])
    el = np.deg2rad([f.elevation_deg for f in fac])
    focal = np.array([f.focal_length for f in fac])
    area_tau = np.array([f.area * f.transmittance for f in fac])
    axis = direction(az, el)  # (F, 3) detector frame
    normal = axis if lens.surface == "dome" else np.broadcast_to(n, axis.shape)
    out = {k: [] for k in ("az", "el", "ha", "he", "w", "k", "i")}
    for k, e in enumerate(elements):
        off = (e.x * u_ax + e.y * v_ax)[None, :] / focal[:, None]  # (F, 3)
        off -= np.sum(off * axis, axis=1, keepdims=True) * axis
        d_det = axis - off
        d_det /= np.linalg.norm(d_det, axis=1, keepdims=True)
        cos_inc = np.sum(d_det * normal, axis=1)
        d = mount.to_room(d_det)
        up = mount.to_room(np.broadcast_to(u_ax, axis.shape))
        vp = mount.to_room(np.broadcast_to(v_ax, axis.shape))
        up = up - np.sum(up * d, axis=1, keepdims=True) * d  # foreshortened axes
        vp = vp - np.sum(vp * d, axis=1, keepdims=True) * d
        b_az = np.arctan2(d[:, 1], d[:, 0])
        b_el = np.arcsin(np.clip(d[:, 2], -1.0, 1.0))
        east = np.stack([-np.sin(b_az), np.cos(b_az), np.zeros_like(b_az)], axis=1)
        north = np.stack(
            [-np.sin(b_el) * np.cos(b_az), -np.sin(b_el) * np.sin(b_az), np.cos(b_el)], axis=1
        )
        ue, un = np.sum(up * east, 1) * e.width, np.sum(up * north, 1) * e.width
        ve, vn = np.sum(vp * east, 1) * e.height, np.sum(vp * north, 1) * e.height
        box_e, box_n = np.abs(ue) + np.abs(ve), np.abs(un) + np.abs(vn)
        scale = np.sqrt(np.abs(ue * vn - un * ve) / (box_e * box_n))
        half_e = 0.5 * scale * box_e / focal
        half_n = 0.5 * scale * box_n / focal
        cos_el = np.cos(b_el)
        if np.any(cos_el < 3.0 * 2 * half_e):
            warn_validity(
                "a beam lies within three beam widths of the nadir: its az-el "
                "rectangle is a coarse approximation there"
            )
        out["az"].append(b_az)
        out["el"].append(b_el)
        out["ha"].append(np.minimum(half_e / np.maximum(cos_el, 1e-9), math.pi))
        out["he"].append(half_n)
        out["w"].append(area_tau * np.clip(cos_inc, 0.0, None))
        out["k"].append(np.full(len(fac), k))
        out["i"].append(np.arange(len(fac)))
    cat = {k: np.concatenate(v) for k, v in out.items()}
    return Beams(
        cat["az"],
        cat["el"],
        cat["ha"],
        cat["he"],
        cat["w"],
        cat["k"].astype(int),
        cat["i"].astype(int),
    )
