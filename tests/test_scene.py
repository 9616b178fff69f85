"""Targets and paths: published body-size relations (DuBois 1916; Fanger 1970 / ASHRAE 55)
and walking kinematics."""

import math

import numpy as np
import pytest

from pirchain.errors import DesignError
from pirchain.physics.pose import arm_segment, projected_half_width
from pirchain.physics.scene import (
    EFFECTIVE_RADIATING_FRACTION,
    BodyPart,
    Environment,
    adult,
    child,
    dubois_area,
    minor_motion_arm,
    radial_path,
    small_pet,
    straight_walks,
    tangential_path,
    walks_from_paths,
)


def test_dubois_worked_value():
    # DuBois & DuBois (1916): 175 cm, 70 kg → 1.848 m² (docs/references.md, high)
    assert dubois_area(1.75, 70.0) == pytest.approx(1.848, abs=1e-3)


@pytest.mark.parametrize(
    "make,h,m", [(adult, 1.75, 70.0), (child, 1.28, 26.0), (lambda: adult(1.62, 55.0), 1.62, 55.0)]
)
def test_projected_areas_follow_fanger(make, h, m):
    # Fanger (1970) / ASHRAE 55: projected area factor 0.35 front, 0.23 side, of the
    # effective radiating area 0.725 × A_DuBois (docs/references.md, high), within 5 %.
    t = make()
    a_eff = EFFECTIVE_RADIATING_FRACTION * dubois_area(h, m)
    assert t.frontal_area() == pytest.approx(0.35 * a_eff, rel=0.05)
    assert t.side_area() == pytest.approx(0.23 * a_eff, rel=0.05)
    assert max(p.z_top for p in t.parts) == pytest.approx(h)


def test_pet_below_half_metre_and_warmer_than_room():
    pet = small_pet()
    assert max(p.z_top for p in pet.parts) < 0.5
    temps = pet.surface_temperatures_c(Environment(air_c=20.0))
    assert np.all(temps > 20.0) and np.all(temps < 38.5)


def test_adult_surface_temperatures():
    temps = adult(met=1.0).surface_temperatures_c(Environment(air_c=22.0))
    head = [p.name for p in adult().parts].index("head")
    # two-node skin (Gagge et al. 1986) of a person near comfort: within 0.3 K of Fanger's
    # comfort skin temperature at 1 met, 35.7 − 0.0275 × 58.15 = 34.10 °C (Fanger 1970)
    assert temps[head] == pytest.approx(34.10, abs=0.3)
    assert 24.0 < temps[0] < 30.0  # clothing surface, a few K above the air (ISO 7730 too)
    # in a 38 °C room the skin warms and sweats and the clothing takes the room's
    # temperature from outside: both above the comfort values, clothing above the skin
    hot = adult(met=1.0).surface_temperatures_c(Environment(air_c=38.0))
    assert 35.5 < hot[head] < 38.0 and hot[0] > hot[head]


def test_contrast_shrinks_as_room_warms():
    dl = [adult().radiance_contrast(Environment(air_c=t))[0] for t in (18.0, 24.0, 30.0)]
    assert dl[0] > dl[1] > dl[2] > 0


def test_width_follows_walking_direction():
    # elliptical section: the side width crossing the line of sight (ψ = 90°), the front
    # width walking along it (ψ = 0), √((w_f cos ψ)² + (w_s sin ψ)²) between
    for p in adult().parts:
        a2, b2 = (p.width_front / 2) ** 2, (p.width_side / 2) ** 2
        assert 2 * projected_half_width(a2, b2, 0.0) == pytest.approx(p.width_side, rel=1e-12)
        assert 2 * projected_half_width(a2, b2, 1.0) == pytest.approx(p.width_front, rel=1e-12)
        psi = math.radians(35.0)
        expect = math.hypot(p.width_front * math.cos(psi), p.width_side * math.sin(psi))
        w = 2 * projected_half_width(a2, b2, math.cos(psi) ** 2)
        assert w == pytest.approx(expect, rel=1e-12)


def test_paths_kinematics():
    p = tangential_path(6.0, 30.0, 1.2, length=4.0)
    assert p.length == pytest.approx(4.0)
    mid = np.mean(np.asarray(p.waypoints), axis=0)
    assert math.degrees(math.atan2(mid[1], mid[0])) == pytest.approx(30.0)
    assert np.hypot(*mid) == pytest.approx(6.0)
    w = walks_from_paths([p], 5.0, 50.0)
    step = np.hypot(*np.diff(w.position[0], axis=0).T)
    assert np.all(step[: int(3.0 * 50)] == pytest.approx(1.2 / 50.0))
    np.testing.assert_allclose(w.position[0, -1], p.waypoints[1])  # stands at the end
    r = radial_path(2.0, 8.0, -20.0, 0.5)
    assert r.duration == pytest.approx(12.0)


def test_vectorised_walks_equal_path_walks():
    paths = [tangential_path(d, b, v) for d, b, v in ((3.0, 0.0, 1.0), (7.0, -40.0, 0.4))]
    a = walks_from_paths(paths, 4.0, 40.0)
    starts = np.array([p.waypoints[0] for p in paths])
    ends = np.array([p.waypoints[1] for p in paths])
    b = straight_walks(
        starts, ends - starts, [1.0, 0.4], 4.0, 40.0, lengths=[p.length for p in paths]
    )
    np.testing.assert_allclose(a.position, b.position, atol=1e-12)


def test_minor_motion_arm_swings():
    # NEMA WD 7: 76 × 76 × 381 mm arm, pivot at 0.91 m, 90°/s (medium confidence)
    arm = minor_motion_arm().swing
    t = np.arange(201) / 100.0
    theta = arm.angle(t)
    seg = arm.length / arm.segments
    top, area = [], []
    for th in theta:
        parts = [arm_segment((i + 0.5) * seg, seg, arm.width, th) for i in range(arm.segments)]
        top.append(max(arm.pivot_height + rise + hh for _, _, rise, hh in parts))
        area.append(sum(2 * hw * 2 * hh for _, hw, _, hh in parts))
    assert min(top) == pytest.approx(0.91 + 0.038, abs=0.01)  # horizontal at t = 0
    assert max(top) == pytest.approx(0.91 + 0.381, abs=0.01)  # vertical after 1 s
    assert np.argmax(top) == pytest.approx(100, abs=1)
    np.testing.assert_allclose(area, 0.076 * 0.381, rtol=1e-9)  # each segment keeps its area
    lateral = [arm_segment(0.5 * seg, seg, arm.width, th)[0] for th in (0.0, math.pi / 2)]
    assert lateral == pytest.approx([0.5 * seg, 0.0], abs=1e-12)


def test_bad_parts_are_named():
    with pytest.raises(DesignError, match=r"z_top"):
        BodyPart("leg", 0.5, 0.2, 0.1, 0.1)
    with pytest.raises(DesignError, match=r"temperature_c"):
        BodyPart("hot", 0.0, 1.0, 0.1, 0.1, "fixed")
    with pytest.raises(DesignError, match="environment.air_c"):
        Environment(air_c=float("nan"))
