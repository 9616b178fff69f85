"""Walk tests: batches of standard walks through the whole chain, with or without noise.

Protocols follow the published walk tests (docs/validation.md lists them): the
lighting-sensor walk of NEMA WD 7-2011 (1.22 m/s, cells of 0.91 m), its minor-motion arm,
and the intrusion-detector speed set of EN 50131-2-2 (from memory, low confidence:
labelled as such). A walk segment of 3 m is used for a detection verdict (EN 50131-2-2
asks for detection within about 3 m of walking; from memory). The probability of detection
is estimated over start positions spread evenly relative to the beams (the walk is shifted
over one beam pitch, trial by trial), over both walking directions of a tangential walk in
equal numbers (by default; one way only on request), and over seeded noise added at the
comparator input. The positions and directions form a mirror-symmetric set, so a
mirror-symmetric design gives mirror-symmetric results.
"""

from __future__ import annotations

import math
import warnings
from dataclasses import dataclass

import numpy as np

from ..chain.detector import Detector
from ..circuit.synthesis import NoiseSynthesizer, dominant_sources
from ..errors import DesignError, ValidityWarning, check_positive
from ..physics.scene import Environment, Target, straight_walks
from ..settings import WALK_DIRECTIONS


@dataclass(frozen=True)
class WalkProtocol:
    """A named set of walking speeds and a walk length.

    Attributes
    ----------
    name : str
    speeds : tuple of float
        [m s⁻¹].
    walk_length : float
        Length of each test walk [m].
    cell : float
        Grid cell of a coverage map [m].
    source : str
        Where the numbers come from.
    """

    name: str
    speeds: tuple[float, ...]
    walk_length: float = 3.0
    cell: float = 0.91
    source: str = ""


PROTOCOLS = {
    "lighting": WalkProtocol(
        "lighting-sensor walk test",
        (1.22,),
        3.0,
        0.91,
        "NEMA WD 7-2011: 1.22 ± 0.15 m/s, cells <= 0.91 m (medium)",
    ),
    "intrusion_grade2": WalkProtocol(
        "intrusion detector, grade 2",
        (0.3, 1.0, 2.0),
        3.0,
        1.0,
        "EN 50131-2-2 speeds, from memory (low confidence)",
    ),
    "intrusion_grade3": WalkProtocol(
        "intrusion detector, grade 3",
        (0.2, 1.0, 2.5),
        3.0,
        1.0,
        "EN 50131-2-2 speeds, from memory (low confidence)",
    ),
    "intrusion_grade4": WalkProtocol(
        "intrusion detector, grade 4",
        (0.1, 1.0, 3.0),
        3.0,
        1.0,
        "EN 50131-2-2 speeds, from memory (low confidence)",
    ),
}


def protocol(name: str) -> WalkProtocol:
    """A walk protocol by name (see ``PROTOCOLS``)."""
    if name not in PROTOCOLS:
        raise DesignError("protocol", name, "one of " + ", ".join(PROTOCOLS))
    return PROTOCOLS[name]


def beam_pitch(detector: Detector) -> float:
    """Angular period of the + / − beam pattern of one facet, 2 × the pair separation [rad].

    Shifting a walk by this angle × distance samples every phase of the walk relative to the
    beams (the median over facets is used).
    """
    beams = detector.beams()
    sep = []
    for i in np.unique(beams.facet):
        az = beams.azimuth[(beams.facet == i)]
        el = beams.elevation[(beams.facet == i)]
        if az.size >= 2:
            sep.append(math.hypot(np.ptp(az) * math.cos(el.mean()), np.ptp(el)))
    return 2.0 * float(np.median(sep)) if sep else 0.1


@dataclass(frozen=True)
class WalkSet:
    """Straight test walks, arrays over walks.

    Attributes
    ----------
    centre : numpy.ndarray, shape (n, 2)
        Middle of each walk [m].
    heading : numpy.ndarray, shape (n, 2)
        Unit walking direction.
    speed : numpy.ndarray, shape (n,)
        [m s⁻¹].
    length : float
        Walk length [m].
    direction : numpy.ndarray of int, shape (n,)
        +1 counter-clockwise seen from above (towards larger bearings), −1 clockwise, 0 a
        radial walk (towards the detector).
    """

    centre: np.ndarray
    heading: np.ndarray
    speed: np.ndarray
    length: float
    direction: np.ndarray


def trial_directions(trials: int, direction: str = "both") -> np.ndarray:
    """Walking direction of each of ``trials`` tangential walks: +1 counter-clockwise, −1
    clockwise. ``"both"`` alternates, starting counter-clockwise, so an even number of trials
    walks each way equally often (with positions spread symmetrically, trial k and trial
    n − 1 − k are mirror images of each other across the line of sight's mirror plane)."""
    if direction not in WALK_DIRECTIONS:
        choices = "one of " + ", ".join(WALK_DIRECTIONS)
        raise DesignError("analysis.walk_direction", direction, choices)
    if direction != "both":
        return np.full(trials, 1 if direction == "ccw" else -1, dtype=np.int8)
    return np.where(np.arange(trials) % 2 == 0, 1, -1).astype(np.int8)


def walk_heading(los: np.ndarray, kind: str, direction=1) -> np.ndarray:
    """Walking direction for a line of sight (n, 2): across it (``direction`` +1
    counter-clockwise, −1 clockwise; broadcast over walks) or toward the detector."""
    if kind != "tangential":
        return -los
    return np.asarray(direction, float).reshape(-1, 1) * np.stack([-los[:, 1], los[:, 0]], axis=1)


def make_walks(
    distance,
    bearing_deg,
    speed,
    kind: str = "tangential",
    length: float = 3.0,
    trials: int = 1,
    jitter: float = 0.0,
    direction: str = "both",
) -> WalkSet:
    """Tangential or radial walks at given distances, bearings and speeds.

    All of ``distance``, ``bearing_deg`` and ``speed`` broadcast together; each combination
    is repeated ``trials`` times at positions spread evenly relative to the beams: trial k of
    n is shifted across the line of sight (along a tangential walk, sideways for a radial
    one) by ((k + ½)/n − ½)·``jitter``·d, where ``jitter`` is an angle [rad] (use
    :func:`beam_pitch`), and a tangential trial walks the way :func:`trial_directions` gives
    for ``direction``. No randomness: the seed of an analysis drives its noise only.

    The set is mirror-symmetric: mirrored in the plane through the boresight, the walks at
    bearing b become the walks at −b (shift and direction both change sign, and with
    ``"both"`` and an even ``trials`` trial k maps onto trial n − 1 − k), so a
    mirror-symmetric design gives the same noise-free result at ±b.
    """
    if kind not in ("tangential", "radial"):
        raise DesignError("walk.kind", kind, "'tangential' or 'radial'")
    d, b, v = np.broadcast_arrays(
        np.asarray(distance, float), np.asarray(bearing_deg, float), np.asarray(speed, float)
    )
    d, b, v = (np.repeat(x.ravel(), trials) for x in (d, b, v))
    if np.any(d <= 0) or np.any(v <= 0):
        raise DesignError("walk", "distance/speed", "distances and speeds > 0")
    br = np.radians(b)
    los = np.stack([np.cos(br), np.sin(br)], axis=1)
    # positions spread evenly over the jitter (stratified: trial k of n at (k + 1/2)/n), so a
    # noise-free result does not depend on the seed; the seed drives the noise only
    k = np.tile(np.arange(trials), d.size // max(trials, 1))
    tangential = kind == "tangential"
    if tangential and direction == "both" and trials % 2:
        warnings.warn(
            ValidityWarning(
                f"an odd number of trials ({trials}) with walk_direction 'both' walks one way "
                "once more than the other, so the set of walks is not mirror-symmetric: use "
                "an even number"
            ),
            stacklevel=2,
        )
    sense = np.tile(trial_directions(trials, direction), d.size // max(trials, 1))
    sense = sense if tangential else np.zeros_like(sense)
    head = walk_heading(los, kind, sense)
    shift = ((k + 0.5) / trials - 0.5) * jitter * d
    side = walk_heading(los, "tangential")
    centre = d[:, None] * los + shift[:, None] * side
    return WalkSet(centre, head, v, float(length), sense)


def detect(
    detector: Detector,
    target: Target,
    env: Environment,
    walks: WalkSet,
    sample_rate: float = 100.0,
    noise_sources=None,
    seed: int = 0,
    chunk: int = 256,
    tail: float = 2.0,
    progress=None,
    common: int | None = None,
    noise_cache: dict | None = None,
):
    """Run test walks through the whole chain in chunks (bounded memory).

    Each walk runs at ``sample_rate`` or, where its fastest beam crossing needs it, at a
    power-of-two multiple (:meth:`pirchain.chain.detector.Detector.sample_rate_for`), so that
    close, fast walks are not undersampled and the rest cost no more.

    Parameters
    ----------
    noise_sources : list of NoiseSource, optional
        If given, seeded noise with these sources is added at the comparator input (sources
        below 1e-4 of the total variance are left out, as in the Monte Carlo).
    tail : float
        Time simulated after the walk ends [s].
    common : int, optional
        Common random numbers: walk i gets the noise of stream i mod ``common`` of one seeded
        draw per sample rate and length, so that the same trial at other distances (or in
        another call with the same seed) meets the same noise. Without it every walk of the
        call has its own draw.
    noise_cache : dict, optional
        With ``common``: where the draws are kept between calls that share the noise sources,
        the seed and ``common`` (a search calling again and again), so each is made once.

    Returns
    -------
    detected : numpy.ndarray of bool, shape (walks,)
    peak : numpy.ndarray, shape (walks,)
        Peak |comparator input − rest| [V], noise included if any.
    """
    check_positive("sample_rate", sample_rate, "Hz")
    n = walks.centre.shape[0]
    detected = np.zeros(n, dtype=bool)
    peak = np.zeros(n)
    detector.window()  # warns if the rest level is outside the window
    noise_sources = dominant_sources(noise_sources or [])
    rates = detector.sample_rate_for(walks.speed, closest_range(walks), sample_rate)
    done = 0
    shared = {} if noise_cache is None else noise_cache
    for rate in np.unique(rates):  # walks that cross beams fast run at a higher rate
        idx = np.flatnonzero(rates == rate)
        for c0 in range(0, idx.size, chunk):
            sel = idx[c0 : c0 + chunk]
            v = walks.speed[sel]
            dur = walks.length / v.min() + tail
            start = walks.centre[sel] - 0.5 * walks.length * walks.heading[sel]
            batch = straight_walks(
                start, walks.heading[sel], v, dur, rate, start_times=0.5, lengths=walks.length
            )
            noise = None
            if noise_sources and common:
                key = (float(rate), batch.n_samples, seed, common)
                if key not in shared:
                    shared[key] = _noise(noise_sources, rate, common, seed, batch.n_samples)
                noise = shared[key][sel % common]
            elif noise_sources:
                noise = _noise(
                    noise_sources, rate, batch.n_walks, seed * 100003 + int(sel[0]),
                    batch.n_samples,
                )  # fmt: skip
            out = detector.outcomes(target, env, batch, extra=noise)
            detected[sel] = out.detected
            peak[sel] = out.peak
            done += sel.size
            if progress is not None:
                progress(done / n)
    return detected, peak


def _noise(sources, rate, streams, seed, n):
    """``streams`` seeded noise streams of ``n`` samples at the comparator input [V]."""
    synth = NoiseSynthesizer(sources, rate, streams, seed, stationary=True)
    if synth.warm_up_needed:
        synth.next(int(10 * rate))
    return synth.next(n)


def closest_range(walks: WalkSet) -> np.ndarray:
    """Shortest horizontal distance from the detector to each straight walk [m]."""
    a = walks.centre - 0.5 * walks.length * walks.heading
    along = np.clip(-np.sum(a * walks.heading, axis=1), 0.0, walks.length)
    return np.linalg.norm(a + along[:, None] * walks.heading, axis=1)
