"""Range estimates with common random numbers and a stated interval (issue 19).

Sources: the exact binomial interval of Clopper and Pearson (Biometrika 26, 404, 1934),
checked against scipy's implementation (``scipy.stats.binomtest(...).proportion_ci``,
method "exact"); common random numbers as the variance-reduction device of simulation
practice (Law, *Simulation Modeling and Analysis*, ch. on variance reduction; from memory):
the same random draws at every distance make differences between distances, and a
re-evaluation, free of sampling noise.
"""

from __future__ import annotations

import dataclasses
import warnings

import numpy as np
import pytest
from scipy import stats

from pirchain.analysis.detection_range import (
    detection_range,
    detection_ranges,
    probability_of_detection,
    range_interval,
    range_table,
    trials_to_resolve,
)
from pirchain.analysis.rice import clopper_pearson
from pirchain.errors import ValidityWarning
from pirchain.interface.demo import demo_design


@pytest.fixture(scope="module")
def demo():
    return demo_design()


def _range(d, bearing, **analysis):
    s = dataclasses.replace(d.analysis, **analysis)
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", ValidityWarning)
        return detection_range(
            d.operating, d.target, d.environment, bearing, d.speed, "tangential", s
        )


@pytest.mark.parametrize(("k", "n"), [(0, 4), (3, 4), (4, 4), (17, 40), (40, 40), (1, 1)])
def test_clopper_pearson_matches_scipy_exact_interval(k, n):
    ci = stats.binomtest(k, n).proportion_ci(0.95, method="exact")
    np.testing.assert_allclose(clopper_pearson(k, n), (ci.low, ci.high), atol=1e-9)


def test_trials_needed_to_confirm_a_level():
    # all n detected: lower bound (0.025)^(1/n) (Clopper–Pearson at k = n)
    for level in (0.5, 0.8, 0.9, 0.95, 0.99):
        n = trials_to_resolve(level)
        assert clopper_pearson(n, n)[0] >= level
        assert clopper_pearson(n - 1, n - 1)[0] < level
    assert trials_to_resolve(0.9) == 36 and trials_to_resolve(1.0) is None


def test_the_reported_range_re_evaluated_alone_with_the_same_draws_meets_the_level(demo):
    # issue 19, item 2 (first half): common random numbers across grid and bisection
    a = demo.analysis
    for seed in range(5):
        for bearing in (0.0, 30.0):
            r = _range(demo, bearing, seed=seed, trials=8)
            assert r.range > 5.0
            alone = probability_of_detection(
                demo.operating, demo.target, demo.environment, [r.range], bearing,
                demo.speed, "tangential", 8, seed, sample_rate=a.sample_rate,
            )[0]  # fmt: skip
            assert alone >= a.level, (seed, bearing, r.range, alone)
            # and every grid point re-evaluated alone gives what the grid gave
            pick = r.distances[::5]
            again = probability_of_detection(
                demo.operating, demo.target, demo.environment, pick, bearing, demo.speed,
                "tangential", 8, seed, sample_rate=a.sample_rate,
            )  # fmt: skip
            np.testing.assert_array_equal(again, r.probability[::5])


def test_the_interval_covers_the_range_found_with_ten_times_the_trials(demo):
    # issue 19, item 2 (second half): 20 seeds, 40 walks per distance (enough to confirm
    # 0.9), against 400 walks with another seed; and the default 4 walks, against 40
    reference = {n: _range(demo, 30.0, trials=10 * n, seed=10_000).range for n in (4, 40)}
    for n in (4, 40):
        covered, widths = 0, []
        for seed in range(20):
            r = _range(demo, 30.0, trials=n, seed=seed)
            lo, hi = r.range_interval
            assert lo <= r.range <= hi
            covered += lo <= reference[n] <= hi
            widths.append(hi - lo)
        assert covered >= 18, (n, covered, reference[n])
        if n == 40:  # resolved: a finite low end and an interval of a few metres
            assert np.median(widths) < 4.0, widths
        else:  # 4 walks cannot confirm 0.9: the low end is 0
            assert min(widths) >= reference[n] - 1e-9


def test_interval_from_the_evaluated_distances():
    # 40 walks: 40/40 confirms 0.9 (lower bound 0.912), 38/40 does not (0.831); 33/40 does
    # not rule it out (upper bound 0.927), 30/40 does (0.873)
    seen = [(10.0, 1.0), (12.0, 1.0), (13.0, 0.95), (14.0, 33 / 40), (15.0, 30 / 40)]
    assert range_interval(seen, 40, 0.9, 13.0, 30.0) == (12.0, 15.0)
    assert range_interval(seen, 4, 0.9, 13.0, 30.0)[0] == 0.0
    assert range_interval([(10.0, 1.0)], 40, 0.9, 10.0, 30.0) == (10.0, 30.0)


def test_an_unresolvable_level_is_said_once_with_a_count(demo):
    few = dataclasses.replace(demo, analysis=dataclasses.replace(demo.analysis, trials=4))
    with warnings.catch_warnings(record=True) as caught:
        warnings.simplefilter("always")
        out = range_table(few, ("tangential",), (0.0, 30.0))
    said = [w for w in caught if "cannot resolve" in str(w.message)]
    assert len(said) == 1 and "said 2 times" in str(said[0].message)
    assert "at least 36" in str(said[0].message)
    assert all(r.range_interval[0] == 0.0 for r in out)
    assert demo.analysis.trials == 36  # the demo's own setting confirms its 0.9 level
    quiet = demo
    with warnings.catch_warnings(record=True) as caught:
        warnings.simplefilter("always")
        range_table(quiet, ("tangential",), (0.0,))
    assert not [w for w in caught if "cannot resolve" in str(w.message)]


def test_searching_cases_together_gives_each_case_its_own_result(demo):
    """Common random numbers make a batched search (issue 17: one batch per grid and per
    bisection step for every case) exactly the search of each case alone: trial k meets
    noise stream k whichever cases share the batch. Mixed kinds, bearings and speeds."""
    s = dataclasses.replace(demo.analysis, trials=6, step=3.0, refine=3)
    cases = [("tangential", -30.0, 1.0), ("radial", 15.0, 1.0), ("tangential", 0.0, 0.5)]
    det, tgt, env = demo.operating, demo.target, demo.environment
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", ValidityWarning)
        together = detection_ranges(det, tgt, env, cases, s)
        alone = [detection_range(det, tgt, env, b, v, k, s) for k, b, v in cases]
    for a, b in zip(together, alone, strict=True):
        assert (a.kind, a.bearing_deg, a.speed) == (b.kind, b.bearing_deg, b.speed)
        assert a.range == b.range and a.range_noise_free == b.range_noise_free
        assert a.range_interval == b.range_interval and a.gaps == b.gaps
        np.testing.assert_array_equal(a.probability, b.probability)
        np.testing.assert_array_equal(a.probability_noise_free, b.probability_noise_free)
        assert a.probability_by_direction.keys() == b.probability_by_direction.keys()
    assert len({r.range for r in together}) > 1  # the cases differ: not one result copied
