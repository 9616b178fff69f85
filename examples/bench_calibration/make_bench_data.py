"""Invented bench data for the worked calibration example (``pirchain bench-fit``).

Scenario (invented): the first hand-built prototypes of the demo's "Tern-2" wall sensor are
on the bench of a small lighting workshop. Their sensor is a little slower and less
sensitive than its datasheet, their op-amps a little noisier, and the workshop's air
handler stirs the room more than the brief assumed. This script makes what that bench would
record, from the model itself with seeded noise and a scope's habits, so the fit has a known
answer:

- ``walk.csv``: a scope capture at the comparator input of one walk across the axis at
  14 m: 500 samples/s (not the model's 100 Hz), time from −2 s, values in mV, a header, the
  channel's DC level, the prototype's own noise and 0.2 mV quantisation;
- ``quiet.csv``: 20 minutes of the empty room at the comparator input, 200 samples/s;
- ``walks.csv``: a walk-test sheet, 45 rows (distances 6–24 m, bearings −30°, 0°, 30°).

The hidden truth (what ``bench-fit`` should find): signal gain 0.8 (× the sensor's
responsivity), thermal time constant 420 ms (the file says 350 ms), gate resistor as given,
white noise × 1.5, draught 0.014 K rms with a 3 s correlation time; the walk-test sheet is
drawn with a sensitivity scale of 0.8 and a walk-to-walk spread of 0.3.

Usage: ``python3 make_bench_data.py OUTPUT_FOLDER`` (the folder must not hold these files).
"""

import dataclasses
import math
import os
import sys

import numpy as np

from pirchain.calibration.quiet import calibrated_sources
from pirchain.calibration.walk_results import WalkRow, detection_probability, row_margins
from pirchain.calibration.waveform import WalkSpec, simulate
from pirchain.circuit.noise import NoiseScale
from pirchain.circuit.synthesis import NoiseSynthesizer, dominant_sources
from pirchain.interface.demo import demo_design

GAIN, TAU_T, WHITE, DRAUGHT_RMS, DRAUGHT_TAU, WALK_SCALE = 0.8, 0.42, 1.5, 0.014, 3.0, 0.8


def _write(folder, name, header, t, v, fmt):
    path = os.path.join(folder, name)
    with open(path, "x", encoding="utf-8") as fh:  # never replaces a file
        fh.write(header)
        fh.writelines(fmt % (a, b) for a, b in zip(t, v, strict=True))
    return path


def main(folder: str) -> None:
    os.makedirs(folder, exist_ok=True)
    d = demo_design()
    s = d.operating.sensor
    truth = dataclasses.replace(d.draught, rms=DRAUGHT_RMS, correlation_time=DRAUGHT_TAU)
    sources = dominant_sources(calibrated_sources(d, NoiseScale(WHITE, 1.0), truth))
    rest = d.operating.rest_levels()[-1]
    # the walk: 500 Hz for 10 s, the axis crossed 5 s in, scope time from -2 s, in mV
    fs = 500.0
    t = np.arange(5000) / fs
    theta = np.array([math.log(GAIN), math.log(TAU_T), math.log(s.electrical_time_constant),
                      0.0, 0.0])  # fmt: skip
    clean = simulate(d, WalkSpec(14.0, 0.0, 1.0, 5.0), "comparator", t, theta)
    noise = NoiseSynthesizer(sources, fs, 1, 11, stationary=True).next(t.size)[0]
    mv = np.round((clean + noise + 0.004) * 1e3 / 0.2) * 0.2
    _write(folder, "walk.csv",
           "# bench scope, channel 2 = comparator input (TP7)\n# walk across at 14 m, 1 m/s\n"
           "time [s],CH2 [mV]\n", t - 2.0, mv, "%.4f,%.1f\n")  # fmt: skip
    # the quiet room: 20 min at 200 Hz, in volts
    fq = 200.0
    n = int(1200 * fq)
    synth = NoiseSynthesizer(sources, fq, 1, 12, stationary=True)
    x = rest + 0.003 + synth.next(n)[0]
    _write(folder, "quiet.csv", "t,v\n", np.arange(n) / fq, x, "%.3f,%.6f\n")
    # the walk-test sheet: the model's P(detect) at the hidden scale, seeded outcomes
    rows = [WalkRow(dist, b, 1.0, False) for dist in (6, 10, 13, 16, 18, 20, 22, 23, 24)
            for b in (-30, 0, 30)]  # fmt: skip
    rows += [WalkRow(dist, 0, 1.5, False) for dist in (8, 12, 16, 20, 24)]
    rows += [WalkRow(dist, 0, 0.5, False, "radial") for dist in (6, 9, 12, 15, 18)]
    rows += [WalkRow(dist, 15, 1.0, False) for dist in (14, 17, 19, 21, 23, 25, 27, 29)]
    p = detection_probability(row_margins(d, rows) / WALK_SCALE, 1.0, 0.3)
    hit = np.random.default_rng(13).random(len(rows)) < p
    path = os.path.join(folder, "walks.csv")
    with open(path, "x", encoding="utf-8") as fh:
        fh.write("# walk tests, workshop bay 2, tester in street clothes\n")
        fh.write("distance,bearing,speed,kind,detected\n")
        for r, h in zip(rows, hit, strict=True):
            fh.write(f"{r.distance}m,{r.bearing},{r.speed},{r.kind},{'yes' if h else 'no'}\n")
    print(f"wrote walk.csv, quiet.csv and walks.csv in {folder}")


if __name__ == "__main__":
    if len(sys.argv) != 2:
        sys.exit("usage: python3 make_bench_data.py OUTPUT_FOLDER")
    main(sys.argv[1])
