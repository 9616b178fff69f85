"""Lens optics, as the chain's pass computes them: the distance laws of radiometry
(P = L A cos θ Ω; Boyd 1983) and the thin-lens timing of a beam-pair crossing, lobes
d·s/(f·v) apart (Born & Wolf).

Sources: R. W. Boyd, Radiometry and the Detection of Optical Radiation (Wiley, 1983), the
throughput and inverse-square laws; M. Born & E. Wolf, Principles of Optics, the thin-lens
image of an element (both from memory for the chapter; the laws are textbook)."""

import dataclasses
import math
import warnings

import numpy as np
import oracles
import pytest

from pirchain.errors import ValidityWarning
from pirchain.interface.demo import demo_detector
from pirchain.physics.optics import Facet, Lens, LensRing, Mount, ceiling_lens, make_beams
from pirchain.physics.scene import BodyPart, Environment, Target, straight_walks, walks_from_paths
from pirchain.physics.scene import Path as WalkPath
from pirchain.physics.sensor import dual_elements, single_element

F = 20e-3
ONE_FACET = Lens((Facet(0.0, 0.0, F, 1e-4, 1.0),))
MOUNT = Mount("wall", height=1.0)
ENV = Environment(air_c=20.0)


def box(width, z0, z1, temp_c=30.0):
    return Target("box", (BodyPart("box", z0, z1, width, width, "fixed", 1.0, temp_c),))


def power(target, walks, elements, lens=ONE_FACET, mount=MOUNT):
    """Radiant power on each element, from the chain's pass (window transmittance 1)."""
    base = demo_detector()
    sensor = dataclasses.replace(
        base.sensor,
        elements=tuple(elements),
        connection="single" if len(elements) == 1 else "series",
        window_transmittance=1.0,
    )
    det = dataclasses.replace(base, lens=lens, mount=mount, sensor=sensor)
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", ValidityWarning)
        return det.run(target, ENV, walks, ("element_power",)).element_power


def static_power(target, distances, elements=None, lens=ONE_FACET, mount=MOUNT, bearing=0.0):
    elements = single_element(1e-3, 2e-3) if elements is None else elements
    d = np.asarray(distances, dtype=float)
    starts = np.stack([d * math.cos(bearing), d * math.sin(bearing)], axis=1)
    heads = np.tile([[0.0, 1.0]], (len(d), 1))
    walks = straight_walks(starts, heads, 1.0, 0.02, 100.0, start_times=10.0)  # standing
    return power(target, walks, elements, lens, mount)[:, 0, :], make_beams(lens, mount, elements)


def test_small_target_inverse_square():
    d = np.linspace(2.0, 20.0, 10)
    p, _ = static_power(box(0.02, 0.99, 1.01), d)
    pd2 = p[:, 0] * d**2
    assert np.ptp(pd2) / pd2.mean() < 0.02
    # and the absolute value: P = τ A cos θ ΔL · (a/d²) for a 2 × 2 cm target
    dl = box(0.02, 0.99, 1.01).radiance_contrast(ENV)[0]
    assert pd2[-1] == pytest.approx(1e-4 * dl * 0.02 * 0.02, rel=2e-3)


def test_beam_filling_target_independent_of_distance():
    d = np.linspace(2.0, 20.0, 10)
    p, beams = static_power(box(4.0, 0.0, 4.0), d, mount=Mount("wall", height=1.5))
    np.testing.assert_allclose(p[:, 0], p[0, 0], rtol=1e-12)
    dl = box(4.0, 0.0, 4.0).radiance_contrast(ENV)[0]
    assert p[0, 0] == pytest.approx(1e-4 * dl * beams.solid_angle[0], rel=1e-12)
    # the beam's solid angle is the element's area over f² (small-angle thin lens)
    assert beams.solid_angle[0] == pytest.approx(2e-6 / F**2, rel=2e-3)


def test_vertically_filling_target_inverse_distance():
    d = np.linspace(2.0, 20.0, 10)
    p, _ = static_power(box(0.02, 0.0, 3.0), d)
    pd = p[:, 0] * d
    assert np.ptp(pd) / pd.mean() < 0.02


def crossing(temp_c, speed=1.0, distance=5.0, spacing=2e-3):
    target = box(0.05, 0.95, 1.05, temp_c)
    path = WalkPath(((distance, -1.5), (distance, 1.5)), speed)
    walks = walks_from_paths([path], 3.0 / speed, 500.0)
    p = power(target, walks, dual_elements(1e-3, 2e-3, spacing))[0]
    return walks.time, p[:, 0] - p[:, 1]


@pytest.mark.parametrize(
    "speed,distance,spacing", [(1.0, 5.0, 2e-3), (0.5, 8.0, 2e-3), (2.0, 4.0, 3e-3)]
)
def test_crossing_lobes_separated_by_ds_over_fv(speed, distance, spacing):
    t, diff = crossing(30.0, speed, distance, spacing)
    pos, neg = np.clip(diff, 0, None), np.clip(-diff, 0, None)
    t_pos, t_neg = (t * pos).sum() / pos.sum(), (t * neg).sum() / neg.sum()
    expected = distance * spacing / (F * speed)
    assert abs(t_pos - t_neg) == pytest.approx(expected, rel=0.05)
    assert pos.sum() == pytest.approx(neg.sum(), rel=1e-6)  # bipolar and balanced


def test_cool_target_inverts_pair():
    t, warm = crossing(30.0)
    _, cool = crossing(10.0)
    order_warm = np.sign(warm[np.argmax(np.abs(warm))])
    assert np.all(np.sign(cool[np.abs(cool) > 0]) == -np.sign(warm[np.abs(cool) > 0]))
    assert order_warm != 0


def test_flat_lens_incidence_factor():
    fac = (Facet(0.0, 0.0, F, 1e-4, 1.0), Facet(40.0, 0.0, F, 1e-4, 1.0))
    dome = make_beams(Lens(fac, "dome"), MOUNT, single_element())
    flat = make_beams(Lens(fac, "flat"), MOUNT, single_element())
    assert dome.weight[1] == pytest.approx(1e-4, rel=1e-12)
    assert flat.weight[1] == pytest.approx(1e-4 * math.cos(math.radians(40.0)), rel=1e-9)


def test_tilt_and_inversion():
    tilt = math.radians(10.0)
    beams = make_beams(ONE_FACET, Mount("wall", 2.0, tilt_deg=10.0), dual_elements())
    # Element centres ±1 mm off axis image to directions δ = atan(1 mm / f) either side of
    # the facet axis (inverted: the + element at +y images to the right, −y); the detector
    # is then pitched down by the tilt: d = (cos δ cos t, ∓ sin δ, −cos δ sin t).
    delta = math.atan(1e-3 / F)
    np.testing.assert_allclose(
        beams.elevation, -math.asin(math.cos(delta) * math.sin(tilt)), atol=1e-12
    )
    az = math.atan2(math.sin(delta), math.cos(delta) * math.cos(tilt))
    np.testing.assert_allclose(beams.azimuth, [-az, az], atol=1e-12)


def test_ceiling_ring_geometry():
    lens = ceiling_lens([LensRing(45.0, 8, 15e-3, 5e-5)])
    beams = make_beams(lens, Mount("ceiling", 3.0), single_element())
    np.testing.assert_allclose(beams.elevation, math.radians(-45.0), atol=1e-12)
    az = np.sort(np.mod(np.degrees(beams.azimuth), 360.0))
    np.testing.assert_allclose(az, np.arange(8) * 45.0, atol=1e-9)
    # the element 2 × 1 mm seen from a facet 45° off the sensor normal is foreshortened by
    # cos 45°: solid angle A cos θ / f² (small-angle thin lens)
    np.testing.assert_allclose(
        beams.solid_angle, 2e-6 * math.cos(math.pi / 4) / 15e-3**2, rtol=2e-3
    )


def test_demo_and_ceiling_power_equal_the_oracle_all_round():
    # the pass against the array oracle (tests/oracles.py; same equations), 1e-12 relative,
    # walks all round (behind the unit and across ±180° included)
    from pirchain.interface.demo import demo_environment
    from pirchain.physics.scene import adult, child, small_pet

    det, env = demo_detector(), demo_environment()
    rng = np.random.default_rng(4)
    n = 60
    dist = rng.uniform(0.5, 25.0, n)
    b = rng.uniform(-3.0, 3.0, n)
    c = np.stack([dist * np.cos(b), dist * np.sin(b)], axis=1)
    head = rng.normal(size=(n, 2))
    walks = straight_walks(c, head, rng.uniform(0.2, 3.0, n), 4.0, 50.0)
    ceil = dataclasses.replace(
        det, lens=ceiling_lens([LensRing(40.0, 12, 15e-3, 15e-6)]), mount=Mount("ceiling", 2.7)
    )
    for d, tgt in ((det, adult()), (det, child()), (det, small_pet()), (ceil, adult())):
        s = d.sensor
        with warnings.catch_warnings():
            warnings.simplefilter("ignore", ValidityWarning)
            fast = d.run(tgt, env, walks, ("element_power",)).element_power
        ref = oracles.element_power(d.beams(), tgt, env, walks, d.mount.height,
                                    len(s.elements), s.window_transmittance, s.band)  # fmt: skip
        assert np.abs(ref).max() > 0
        np.testing.assert_allclose(fast, ref, rtol=1e-12, atol=1e-12 * np.abs(ref).max())
