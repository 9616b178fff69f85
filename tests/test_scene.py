"""Targets and paths: published body-size relations (DuBois 1916; Fanger 1970 / ASHRAE 55)
and walking kinematics."""

import math

import numpy as np
import pytest

from pirchain.errors import DesignError
from pirchain.scene import (
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
from pirchain.target_pose import pose


def test_dubois_worked_value():
    # DuBois & DuBois (1916): 175 cm, 70 kg → 1.848 m² (REFERENCES.md, high)
    assert dubois_area(1.75, 70.0) == pytest.approx(1.848, abs=1e-3)


@pytest.mark.parametrize(
    "make,h,m", [(adult, 1.75, 70.0), (child, 1.28, 26.0), (lambda: adult(1.62, 55.0), 1.62, 55.0)]
)
def test_projected_areas_follow_fanger(make, h, m):
    # Fanger (1970) / ASHRAE 55: projected area factor 0.35 front, 0.23 side, of the
    # effective radiating area 0.725 × A_DuBois (REFERENCES.md, high), within 5 %.
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
    assert temps[head] == pytest.approx(34.10, abs=0.01)  # Fanger mean skin temperature
    assert 24.0 < temps[0] < 30.0  # ISO 7730 clothing surface, a few K above the air


def test_contrast_shrinks_as_room_warms():
    dl = [adult().radiance_contrast(Environment(air_c=t))[0] for t in (18.0, 24.0, 30.0)]
    assert dl[0] > dl[1] > dl[2] > 0


def test_width_follows_walking_direction():
    a = adult()
    tang = walks_from_paths([tangential_path(5.0, 0.0, 1.0, length=0.2)], 0.1, 100.0)
    rad = walks_from_paths([radial_path(5.0, 4.0, 0.0, 1.0)], 0.1, 100.0)
    hw_t = pose(a, tang).half_width[0, 0]
    hw_r = pose(a, rad).half_width[0, 0]
    np.testing.assert_allclose(2 * hw_t, [p.width_side for p in a.parts], rtol=1e-3)
    np.testing.assert_allclose(2 * hw_r, [p.width_front for p in a.parts], rtol=1e-12)


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
    # NEMA WD 7: 76 × 76 × 381 mm arm, pivot at 0.91 m, 90°/s (REFERENCES.md, medium)
    arm = minor_motion_arm()
    w = walks_from_paths([tangential_path(3.0, 0.0, 1.0, length=1e-3)], 2.0, 100.0)
    pp = pose(arm, w)
    top = pp.z_top.max(axis=-1)[0]
    assert top.min() == pytest.approx(0.91 + 0.038, abs=0.01)  # horizontal at t = 0
    assert top.max() == pytest.approx(0.91 + 0.381, abs=0.01)  # vertical after 1 s
    assert np.argmax(top) == pytest.approx(100, abs=1)
    area = (2 * pp.half_width * (pp.z_top - pp.z_bottom)).sum(axis=-1)
    np.testing.assert_allclose(area, 0.076 * 0.381, rtol=1e-9)


def test_bad_parts_are_named():
    with pytest.raises(DesignError, match=r"z_top"):
        BodyPart("leg", 0.5, 0.2, 0.1, 0.1)
    with pytest.raises(DesignError, match=r"temperature_c"):
        BodyPart("hot", 0.0, 1.0, 0.1, 0.1, "fixed")
    with pytest.raises(DesignError, match="environment.air_c"):
        Environment(air_c=float("nan"))
