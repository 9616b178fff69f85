"""Record ``api.json``: the Python-API results that ``tests/test_golden_api.py`` compares
(run from the repo root: ``python3 tests/golden/make_api.py``). The same calls as the test;
``api_before.py.txt`` is the script that made the first record, against the API before the
single-engine rework."""

import json
import math
import os
import sys
import warnings

HERE = os.path.dirname(os.path.abspath(__file__))
sys.path.insert(0, os.path.dirname(HERE))

from walk_sets import mixed_walks  # noqa: E402

from pirchain.analysis.coverage import top_view  # noqa: E402
from pirchain.analysis.drift import hvac_response, ramp_response  # noqa: E402
from pirchain.analysis.false_triggers import monte_carlo_rate  # noqa: E402
from pirchain.analysis.power_up import power_up  # noqa: E402
from pirchain.errors import ValidityWarning  # noqa: E402
from pirchain.interface.demo import demo_design, demo_detector, demo_environment  # noqa: E402
from pirchain.physics.disturbance import AmbientRamp, HvacCycle  # noqa: E402
from pirchain.physics.scene import (  # noqa: E402
    Path,
    adult,
    child,
    minor_motion_arm,
    walks_from_paths,  # noqa: E402
)
from pirchain.settings import AnalysisSettings  # noqa: E402


def record() -> dict:
    det, env = demo_detector(), demo_environment()
    out = {}
    o = det.outcomes(adult(), env, mixed_walks(120))
    out["mixed"] = {
        "detected": o.detected.tolist(),
        "first_on": [None if math.isnan(x) else x for x in o.first_on.tolist()],
        "pulses": o.pulses.tolist(), "triggers": o.triggers.tolist(),
        "turn_ons": o.turn_ons.tolist(), "peak": o.peak.tolist(),
    }  # fmt: skip
    out["mixed_child_peak"] = det.outcomes(child(), env, mixed_walks(40, seed=9)).peak.tolist()
    walks = walks_from_paths([Path(((3.0, 0.0),), 1.0), Path(((6.0, 1.0),), 1.0)], 6.0, 100.0)
    o = det.outcomes(minor_motion_arm(), env, walks)
    out["arm"] = {"detected": o.detected.tolist(), "pulses": o.pulses.tolist(),
                  "peak": o.peak.tolist()}  # fmt: skip
    pu = power_up(det, 60.0, 50.0)
    out["power_up"] = {"settle": pu.settling, "v": pu.run.comparator_input[0, ::25].tolist(),
                       "s1": pu.run.stage_outputs[0][0, ::25].tolist()}  # fmt: skip
    r = ramp_response(det, env, AmbientRamp(3.0, 5.0, 120.0))
    out["ramp"] = {"turn_ons": r.turn_ons, "peak": r.peak_excursion,
                   "v": r.comparator_input[::40].tolist()}  # fmt: skip
    h = hvac_response(det, env, HvacCycle(), cycles=2)
    out["hvac"] = {"turn_ons": h.turn_ons, "peak": h.peak_excursion}
    mc = monte_carlo_rate(det, env, 4 * 3600.0, demo_design().draught, seed=3, streams=4)
    out["mc"] = {"pulses": mc.pulses, "alarms": mc.alarms, "duration": mc.duration}
    for kind, noise, key in (("tangential", True, "coverage_noise"),
                             ("radial", False, "coverage_radial")):  # fmt: skip
        s = AnalysisSettings(coverage_cell=1.5, coverage_x_max=9.0, coverage_trials=2,
                             coverage_speed=1.22, seed=4, noise=noise)  # fmt: skip
        m = top_view(det, adult(), env, kind, s)
        out[key] = {"walks": m.walks, "p": m.probability.ravel().tolist()}
    return out


if __name__ == "__main__":
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", ValidityWarning)
        data = record()
    with open(os.path.join(HERE, "api.json"), "w", encoding="utf-8") as fh:
        json.dump(data, fh, indent=1, sort_keys=True)
        fh.write("\n")
    print("recorded api.json")
