"""A quiet-room recording at the comparator input, fitted to the design's own noise model,
and the false-trigger rates the fitted model implies beside those counted on the recording.

The components are the design's own spectra at the comparator input
(:func:`pirchain.analysis.false_triggers.comparator_sources`): every non-1/f source of the
detector summed (its level becomes :attr:`NoiseScale.white`), every 1/f source summed
(:attr:`NoiseScale.flicker`) and the draught, 4σ²τ (Σ level multipliers) |H(f)|²/(1 +
(2πfτ)²), whose variance σ² and correlation time τ are fitted. The fit itself is
:func:`pirchain.calibration.background.fit_spectrum` on the Welch estimate.

Rates: the fitted model's Rice rates (level crossings and the design's alarm rate,
:func:`pirchain.analysis.false_triggers.analytic_rate`) and a seeded Monte Carlo of the
fitted model (:func:`pirchain.analysis.false_triggers.monte_carlo_rate`, and synthesised
records of the recording's length for the crossing counts), beside the same counts made on
the recording: crossings of its mean ± u (up through +u, down through −u), and the
recording, about the design's rest level, run through the design's comparator and logic.
Counts carry exact 95 % Poisson intervals (Garwood 1936).

References
----------
.. [1] Rice, S. O., Bell Syst. Tech. J. 24, 46 (1945): the level-crossing rate
   ν(u) = √(m₂/m₀) e^(−u²/2m₀) per level.
.. [2] Garwood, F., Biometrika 28, 437 (1936): exact Poisson intervals.
"""

from __future__ import annotations

import dataclasses
import math
from dataclasses import dataclass

import numpy as np

from ..analysis.false_triggers import (
    DRAUGHT_SOURCE,
    YEAR,
    analytic_rate,
    comparator_sources,
    format_rate,
    monte_carlo_rate,
)
from ..analysis.rice import poisson_interval, spectral_moment, upcrossing_rate
from ..circuit.noise import NoiseScale, NoiseSource, band_grid, total_psd
from ..circuit.synthesis import NoiseSynthesizer, dominant_sources
from ..errors import DesignError
from ..physics.disturbance import Draught, draught_parts
from .background import Component, SpectrumFit, fit_spectrum, welch_psd

QUIET_NODES = ("comparator",)  # plus the last stage's output, which is the same node
SIGMA_LEVELS = (2.0, 2.5, 3.0, 3.5)
MIN_SHARE = 0.05  # 1/f noise below 5 % of the white throughout the band is not fitted


def quiet_node(design, node: str) -> str:
    """``node`` if a quiet recording there can be fitted (the comparator input)."""
    last = f"stage{len(design.detector.stages)}"
    if node not in ("comparator", last):
        raise DesignError(
            "quiet.node", node, f"a recording at the comparator input ('comparator' or '{last}')"
        )
    return "comparator"


def _components(design, f, band):
    """The design's spectra at the comparator input on ``f``: white and 1/f sums and the
    draught's shape; a component that is not at least :data:`MIN_SHARE` of the total on
    ten bins of ``band`` cannot be told from the others and is left out."""
    det, env = design.operating, design.environment
    src = comparator_sources(det, env)
    white = sum(s.psd(f) for s in src if s.slope != -1)
    flicker = sum((s.psd(f) for s in src if s.slope == -1), np.zeros_like(f))
    comps = [Component("white", "shape", white), Component("flicker", "shape", flicker)]
    dr = design.draught or Draught()
    diff, common = draught_parts(det, env, dr)
    if diff + common > 0:
        h2 = np.abs(det.transfer_function(True)(2j * math.pi * f)) ** 2
        comps.append(Component("draught", "draught", 4.0 * (diff + common) * h2))
    inside = (f >= band[0]) & (f <= band[1])
    nominal = [
        c.shape(f, dr.correlation_time) * (dr.rms**2 if c.kind == "draught" else 1.0) for c in comps
    ]
    total = np.maximum(sum(nominal), 1e-300)
    keep = [
        c
        for c, s in zip(comps, nominal, strict=True)
        if np.count_nonzero(s[inside] / total[inside] > MIN_SHARE) >= 10
    ]
    left = tuple(c.name for c in comps if c not in keep)
    return keep, dr, left


@dataclass(frozen=True)
class CrossingRow:
    """Crossings of mean ± ``level`` [V] counted and predicted [s⁻¹]."""

    label: str
    level: float
    counted: int
    counted_interval: tuple[float, float]
    rice: float
    monte_carlo: float
    monte_carlo_interval: tuple[float, float]


@dataclass(frozen=True)
class QuietFit:
    """A quiet recording fitted to the design's noise model, and the rates it implies.

    Attributes
    ----------
    spectrum : SpectrumFit
        Fitted levels: white and flicker as multipliers of the design's densities, the
        draught as σ² [K²] and τ [s].
    noise_scale : NoiseScale
        The detector's new multipliers (the design's own times the fitted ones).
    draught : Draught or None
        The fitted draught (None if the design's beams see no draught).
    f, psd, model_psd : numpy.ndarray
        Welch grid [Hz], estimate and fitted model [V² Hz⁻¹].
    duration : float
        Length of the recording [s].
    sigma_recording, sigma_model : float
        rms of the recording and of the fitted model [V].
    mean_offset : float
        The recording's mean minus the design's rest level [V].
    crossings : tuple of CrossingRow
    alarms_counted : int
        Output turn-ons of the design's logic run on the recording.
    alarm_counted_interval : tuple of float
        [s⁻¹].
    alarm_rice, alarm_monte_carlo : float
        [s⁻¹] of the fitted model.
    alarm_monte_carlo_interval : tuple of float
    monte_carlo_duration : float
        [s].
    not_fitted : tuple of str
        Components too small in the band to be told apart (kept at the design's values).
    """

    spectrum: SpectrumFit
    noise_scale: NoiseScale
    draught: Draught | None
    f: np.ndarray
    psd: np.ndarray
    model_psd: np.ndarray
    duration: float
    sigma_recording: float
    sigma_model: float
    mean_offset: float
    crossings: tuple
    alarms_counted: int
    alarm_counted_interval: tuple
    alarm_rice: float
    alarm_monte_carlo: float
    alarm_monte_carlo_interval: tuple
    monte_carlo_duration: float
    not_fitted: tuple = ()

    def to_dict(self) -> dict:
        sp = self.spectrum
        yr = YEAR
        return {
            "parameters": {
                n: {"value": float(v), "low_95": float(lo), "high_95": float(hi)}
                for n, v, lo, hi in zip(sp.names, sp.values, sp.low, sp.high, strict=True)
            },
            "chi2_per_bin": sp.chi2_per_bin,
            "noise_scale": dataclasses.asdict(self.noise_scale),
            "draught": None if self.draught is None else dataclasses.asdict(self.draught),
            "duration_s": self.duration,
            "sigma_recording_v": self.sigma_recording,
            "sigma_model_v": self.sigma_model,
            "mean_minus_rest_v": self.mean_offset,
            "crossings": [
                {
                    "label": r.label,
                    "level_v": r.level,
                    "counted": r.counted,
                    "counted_per_hour_95": [x * 3600 for x in r.counted_interval],
                    "rice_per_hour": r.rice * 3600,
                    "monte_carlo_per_hour": r.monte_carlo * 3600,
                    "monte_carlo_per_hour_95": [x * 3600 for x in r.monte_carlo_interval],
                }
                for r in self.crossings
            ],
            "alarms_counted": self.alarms_counted,
            "alarms_counted_per_year_95": [x * yr for x in self.alarm_counted_interval],
            "alarms_rice_per_year": self.alarm_rice * yr,
            "alarms_monte_carlo_per_year": self.alarm_monte_carlo * yr,
            "alarms_monte_carlo_per_year_95": [x * yr for x in self.alarm_monte_carlo_interval],
            "monte_carlo_duration_s": self.monte_carlo_duration,
            "not_fitted": list(self.not_fitted),
        }

    def table(self) -> str:
        sp = self.spectrum
        lines = [
            f"Quiet recording: {self.duration / 60:.1f} min, rms {self.sigma_recording * 1e3:.3g}"
            f" mV (fitted model {self.sigma_model * 1e3:.3g} mV), mean"
            f" {self.mean_offset * 1e3:+.3g}"
            f" mV from the rest level; χ²/bin {sp.chi2_per_bin:.2f}"
        ]
        for n, v, lo, hi in zip(sp.names, sp.values, sp.low, sp.high, strict=True):
            what = {
                "white": "× white noise",
                "flicker": "× 1/f noise",
                "draught": "K² draught variance",
                "tau": "s draught correlation time",
            }[n]
            lines.append(f"  {n:8s} {v:10.4g}  (95 %: {lo:.4g} … {hi:.4g})  {what}")
        for n in self.not_fitted:
            lines.append(f"  {n:8s} not fitted: too small in this band to tell apart (kept)")
        lines.append(
            "  crossings per hour   on the recording (95 %, count)            Rice  Monte Carlo"
        )
        for r in self.crossings:
            lo, hi = (x * 3600 for x in r.counted_interval)
            rate = r.counted / self.duration * 3600
            lines.append(
                f"  {r.label:14s} {rate:9.3g} ({lo:7.3g} … {hi:7.3g}, {r.counted:6d})"
                f"  {r.rice * 3600:9.3g}  {r.monte_carlo * 3600:9.3g}"
            )
        hi = self.alarm_counted_interval[1] * YEAR
        lines.append(
            f"  output turn-ons: {self.alarms_counted} on the recording (95 % upper bound "
            f"{format_rate(hi)}); fitted model: Rice {format_rate(self.alarm_rice * YEAR)},"
            f" Monte Carlo {self.alarm_monte_carlo * YEAR:.3g} per year "
            f"({self.monte_carlo_duration / 86400:.3g} d simulated)"
        )
        return "\n".join(lines)


def _up(x: np.ndarray, level: float) -> int:
    """Up-crossings of ``level`` by rows ``x``."""
    return int(((x[..., 1:] > level) & (x[..., :-1] <= level)).sum())


def calibrated_sources(design, scale: NoiseScale, draught: Draught | None) -> list[NoiseSource]:
    """The comparator-input sources of ``design`` with fitted noise scales and draught."""
    det = dataclasses.replace(design.operating, noise_scale=scale)
    return comparator_sources(det, design.environment, draught)


def fit_quiet(
    design,
    capture,
    segment: float | None = None,
    band=None,
    mc_duration: float = 86400.0,
    seed: int = 0,
) -> QuietFit:
    """Fit a quiet-room ``capture`` and count and predict its false-trigger rates.

    Parameters
    ----------
    capture : Capture
        Taken at the comparator input (:func:`quiet_node`).
    segment : float, optional
        Welch segment [s] (default: an eighth of the record, at most 200 s).
    band : tuple of float, optional
        Fitted band [Hz] (default: from two bins to where the design's noise is 30 dB
        below its peak, at most a tenth of the sample rate and 50 Hz).
    mc_duration : float
        Simulated time of the fitted model's alarm-rate Monte Carlo [s].
    seed : int
    """
    quiet_node(design, capture.node)
    det = design.operating
    fs = capture.sample_rate
    if fs < 10.0 or capture.time[-1] < 60.0:
        raise DesignError(
            "quiet", capture.source, "a recording of at least 60 s sampled at 10 Hz or more"
        )
    fs = min(fs, 1e3)
    x = capture.resampled(fs)
    seg = min(x.size / fs / 8.0, 200.0) if segment is None else segment
    f, p, k = welch_psd(x - x.mean(), fs, seg)
    if band is None:  # up to where the design's noise is 30 dB below its peak: beyond, a
        # recorder's own floor (a scope's quantisation) is what a recording holds
        total = total_psd(
            comparator_sources(det, design.environment, design.draught), np.maximum(f, 1e-6)
        )
        top = int(np.argmax(total))
        low = np.flatnonzero(total[top:] < 1e-3 * total[top])
        f_30 = f[top + low[0]] if low.size else f[-1]
        band = (2.0 / seg, min(0.1 * fs, 50.0, f_30))
    comps, dr0, left = _components(design, f, band)
    if not comps:
        raise DesignError("quiet", capture.source, "a band where the design's noise is seen")
    fit = fit_spectrum(f, p, k, comps, band, tau0=dr0.correlation_time)
    vals = dict(zip(fit.names, fit.values, strict=True))
    old = det.noise_scale
    scale = NoiseScale(old.white * vals["white"], old.flicker * vals.get("flicker", 1.0))
    dr = None
    if "draught" in vals:
        dr = dataclasses.replace(dr0, rms=math.sqrt(vals["draught"]), correlation_time=vals["tau"])
    src = calibrated_sources(design, scale, dr)
    grid = band_grid(1e-3, 1e3, 6000)
    full = total_psd(src, grid)
    m0, m2 = spectral_moment(grid, full, 0), spectral_moment(grid, full, 2)
    sigma = math.sqrt(m0)
    # the fitted model synthesised: the recording's length, 8 records, seeded
    synth = NoiseSynthesizer(dominant_sources(src), fs, 8, seed, stationary=True)
    if synth.warm_up_needed:
        synth.next(int(60 * fs))
    sim = synth.next(x.size)
    rest = det.rest_levels()[-1]
    lo_w, hi_w = det.window()
    levels = [(f"±{k:g} σ", k * sigma) for k in SIGMA_LEVELS]
    levels += [("window high", hi_w - rest), ("window low", rest - lo_w)]
    rows = []
    xc, dur = x - x.mean(), x.size / fs
    for label, u in levels:
        if label.startswith("window"):  # one edge, on its own side
            sign = 1.0 if label.endswith("high") else -1.0
            n_rec, n_sim = _up(sign * xc, u), _up(sign * sim, u)
            rice = float(upcrossing_rate(u, m0, m2))
        else:
            n_rec, n_sim = _up(xc, u) + _up(-xc, u), _up(sim, u) + _up(-sim, u)
            rice = 2.0 * float(upcrossing_rate(u, m0, m2))
        rows.append(
            CrossingRow(
                label,
                float(u),
                n_rec,
                poisson_interval(n_rec, dur),
                rice,
                n_sim / (8 * dur),
                poisson_interval(n_sim, 8 * dur),
            )
        )
    out = det.drive("comparator", rest + xc, fs).outcomes
    alarms = int(out.turn_ons.sum())
    det_c = dataclasses.replace(det, noise_scale=scale)
    rice_alarm = analytic_rate(det_c, design.environment, sources=src).alarm_rate
    mc = monte_carlo_rate(
        det_c,
        design.environment,
        mc_duration,
        seed=seed,
        sources=src,
        sample_rate=design.analysis.sample_rate,
    )
    return QuietFit(
        fit,
        scale,
        dr,
        f,
        p,
        total_psd(src, np.maximum(f, 1e-6)),
        dur,
        float(np.std(x)),
        sigma,
        float(x.mean() - rest),
        tuple(rows),
        alarms,
        poisson_interval(alarms, dur),
        rice_alarm,
        mc.alarm_rate,
        mc.alarm_interval,
        mc.duration,
        left,
    )


__all__ = ["QuietFit", "fit_quiet", "quiet_node", "calibrated_sources", "DRAUGHT_SOURCE"]
