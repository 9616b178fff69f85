"""How a design rides out its surroundings: room-temperature ramps and HVAC cycling over a
stated set of cases, each through the whole chain, with the worst case named.

Each case is a deterministic disturbance (:mod:`pirchain.analysis.drift`): a uniform ramp of
every surface in view at a rate in K/min (it leaks through the element mismatch) or a warm-air
burst repeated every period on a surface seen unequally by the + and − beams. For every case
the output turn-ons it causes by itself are counted, and the comparator input's largest
excursion towards each window edge is compared with that edge: the margin left, in volts
and in standard deviations of the comparator-input noise (the less margin, the more the
noise alone will fire the detector while the disturbance lasts). The worst case has the
most turn-ons, then the least margin.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from ..errors import check_positive
from ..physics.disturbance import AmbientCases
from .drift import hvac_response, ramp_response
from .false_triggers import analytic_rate

KEPT_SAMPLES = 20_000  # per case, for the worst-case figure


def _decimated(t: np.ndarray, v: np.ndarray, rest: float):
    """At most KEPT_SAMPLES samples: the one farthest from ``rest`` in each block."""
    k = int(np.ceil(t.size / KEPT_SAMPLES))
    if k <= 1:
        return t, v
    n = t.size // k * k
    blocks = np.abs(v[:n] - rest).reshape(-1, k)
    pick = np.arange(blocks.shape[0]) * k + np.argmax(blocks, axis=1)
    return t[pick], v[pick]


@dataclass(frozen=True)
class AmbientCase:
    """One case's outcome.

    Attributes
    ----------
    kind : {"ramp", "hvac"}
    value : float
        Ramp rate [K min⁻¹] or HVAC amplitude [K].
    turn_ons : int
        Output turn-ons the disturbance caused by itself.
    pulses : int
        Comparator pulses it caused (outside the window; the logic may not count them all).
    excursion_up, excursion_down : float
        Largest excursion of the comparator input above and below its rest [V].
    margin : float
        Smallest distance left to a window edge [V] (negative: the edge was crossed).
    margin_sigma : float
        ``margin`` in standard deviations of the comparator-input noise.
    time, comparator_input : numpy.ndarray
        The waveform [s], [V], decimated to at most :data:`KEPT_SAMPLES` samples keeping the
        largest excursion of every block (the figures above are from every sample).
    """

    kind: str
    value: float
    turn_ons: int
    pulses: int
    excursion_up: float
    excursion_down: float
    margin: float
    margin_sigma: float
    time: np.ndarray
    comparator_input: np.ndarray

    @property
    def label(self) -> str:
        """E.g. "ramp +1 K/min" or "HVAC 0.5 K"."""
        if self.kind == "ramp":
            return f"ramp {self.value:+g} K/min"
        return f"HVAC {self.value:g} K"


@dataclass(frozen=True)
class AmbientStudy:
    """Every case, the window and the noise they were judged against."""

    cases: tuple[AmbientCase, ...]
    window: tuple[float, float]
    rest: float
    sigma: float

    @property
    def worst(self) -> AmbientCase:
        """Most turn-ons, then least margin (a pulse the logic did not count is still closer
        to a trigger than none)."""
        return max(self.cases, key=lambda c: (c.turn_ons, -c.margin))

    def table(self) -> str:
        """Plain-text table of the cases and the worst one."""
        rows = [
            f"{'case':<18s} {'turn-ons':>8s} {'pulses':>6s} {'up mV':>8s} {'down mV':>8s} "
            f"{'margin':>14s}"
        ]
        for c in self.cases:
            rows.append(
                f"{c.label:<18s} {c.turn_ons:8d} {c.pulses:6d} {c.excursion_up * 1e3:8.2f} "
                f"{c.excursion_down * 1e3:8.2f} {c.margin * 1e3:7.1f} mV "
                f"{c.margin_sigma:4.1f}σ"
            )
        rows.append(f"worst case: {self.worst.label}")
        return "\n".join(rows)


def ambient_study(detector, env, cases: AmbientCases, draught=None) -> AmbientStudy:
    """Run every case of ``cases`` through ``detector`` in ``env``.

    Parameters
    ----------
    detector : Detector
        At its operating temperature (:attr:`pirchain.design.Design.operating`).
    env : Environment
    cases : AmbientCases
        :class:`pirchain.physics.disturbance.AmbientCases`.
    draught : Draught, optional
        Included in the noise the margins are counted in.
    """
    check_positive("ambient.sample_rate", cases.sample_rate, "Hz")
    lo, hi = detector.window()
    rest = detector.rest_levels()[-1]
    sigma = analytic_rate(detector, env, draught).sigma
    responses = [("ramp", r.rate, ramp_response(detector, env, r, None, cases.sample_rate))
                 for r in cases.ramps()]  # fmt: skip
    responses += [
        ("hvac", a, hvac_response(detector, env, cases.hvac(a), cases.hvac_cycles,
                                  cases.sample_rate))
        for a in cases.hvac_amplitudes
    ]  # fmt: skip
    out = []
    for kind, value, resp in responses:
        dev = resp.comparator_input - rest
        up, down = max(float(dev.max()), 0.0), max(float(-dev.min()), 0.0)
        margin = min(hi - rest - up, rest - lo - down)
        out.append(
            AmbientCase(
                kind,
                float(value),
                resp.turn_ons,
                resp.pulses,
                up,
                down,
                margin,
                margin / sigma,
                *_decimated(resp.time, resp.comparator_input, rest),
            )
        )
    return AmbientStudy(tuple(out), (lo, hi), rest, sigma)
