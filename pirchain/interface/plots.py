"""Figures for the report and the command line (matplotlib, Agg backend, print-readable)."""

from __future__ import annotations

import io
import math
import textwrap

import matplotlib

matplotlib.use("Agg")
import matplotlib.pyplot as plt  # noqa: E402
import matplotlib.ticker  # noqa: E402
import numpy as np  # noqa: E402

from ..units import format_eng  # noqa: E402
from .output import terminal_text  # noqa: E402

plt.rcParams.update(
    {
        "font.size": 10,
        "axes.grid": True,
        "grid.alpha": 0.3,
        "figure.dpi": 110,
        "savefig.bbox": "tight",  # figures without a frame (see frame())
        "axes.titley": 1.0,  # a fixed title place: the automatic one measured every tick label
        "svg.hashsalt": "pirchain",  # the same figure gives the same SVG ids
    }
)


def plain(text: str) -> str:
    """User text for a figure: control characters removed and "$" shown as a dollar sign
    (matplotlib reads a pair of "$" as a formula; the axes' own tick labels need that)."""
    return terminal_text(str(text)).replace("$", r"\$")


class EngLogFormatter(matplotlib.ticker.LogFormatter):
    """Log-axis tick labels in plain text: 0.001 … 1000 as decimals, beyond in engineering
    notation (10k, 1M, 10n). Matplotlib's default writes powers of ten as formulas, and
    typesetting them was a third of the time spent on the report's figures."""

    def _num_to_string(self, x, vmin, vmax):
        return f"{x:g}" if 1e-3 <= x < 1e4 else format_eng(x)


def plain_log_ticks(fig) -> None:
    """Put :class:`EngLogFormatter` on every log-scaled axis of a figure."""
    for ax in fig.axes:
        for axis in (ax.xaxis, ax.yaxis):
            if axis.get_scale() == "log":
                axis.set_major_formatter(EngLogFormatter())
                axis.set_minor_formatter(
                    EngLogFormatter(labelOnlyBase=False, minor_thresholds=(2, 0.4))
                )


def frame(fig, left=0.85, right=0.2, top=0.4, bottom=0.55):
    """Fixed margins [in] around a figure's axes; a framed figure is saved at its own size.

    The tight bounding box (matplotlib's ``bbox_inches="tight"``) lays every text out twice
    to find the margins; fixed ones, chosen per figure with room for its labels and any
    legend beside the axes, halve the time spent drawing the report's figures.
    """
    w, h = fig.get_size_inches()
    fig.subplots_adjust(left=left / w, right=1.0 - right / w, bottom=bottom / h, top=1.0 - top / h)
    fig.pirchain_framed = True
    return fig


def png_bytes(fig) -> bytes:
    """Render a figure to PNG bytes (log axes labelled in plain text) and close it."""
    plain_log_ticks(fig)
    buf = io.BytesIO()
    fixed = getattr(fig, "pirchain_framed", False)
    fig.savefig(buf, format="png", bbox_inches=fig.bbox_inches if fixed else "tight")
    plt.close(fig)
    return buf.getvalue()


def bode(detector):
    """Magnitude and phase of comparator-input change per element power (V/W)."""
    f = np.geomspace(0.01, 100.0, 600)
    h = detector.transfer_function(True)(2j * math.pi * f)
    fig, (a1, a2) = plt.subplots(2, 1, figsize=(7, 5), sharex=True)
    a1.semilogx(f, 20 * np.log10(np.abs(h)))
    a1.set_ylabel("|H| [dB re 1 V/W]")
    a1.set_title("Chain response: comparator input per equivalent element power")
    a2.semilogx(f, np.degrees(np.unwrap(np.angle(h))))
    a2.set_ylabel("phase [°]")
    a2.set_xlabel("frequency [Hz]")
    return frame(fig)


def waveforms(result, detector, walk: int = 0):
    """Every stage's waveform of one walk (a :class:`pirchain.chain.engine.ChainRun` with
    every tap)."""
    t = result.time
    rows = [
        ("element power difference [nW]", 1e9 * result.equivalent_power[walk]),
        ("gate voltage change [µV]", 1e6 * result.gate_voltage[walk]),
        ("JFET source [V]", result.source_voltage[walk]),
    ]
    rows += [
        (f"{plain(st.name)} output [V]", out[walk])
        for st, out in zip(detector.stages, result.stage_outputs, strict=True)
    ]
    fig, axes = plt.subplots(len(rows), 1, figsize=(7.8, 2.0 * len(rows)), sharex=True)
    for ax, (label, y) in zip(axes, rows, strict=True):
        ax.plot(t, y, lw=1)
        ax.set_ylabel(textwrap.fill(label, 16), fontsize=8)  # short lines: no collisions
    lo, hi = result.window
    axes[-1].axhline(lo, color="C3", ls="--", lw=1, label="window")
    axes[-1].axhline(hi, color="C3", ls="--", lw=1)
    for d in result.decisions[walk].triggers:
        axes[-1].axvline(d, color="C2", lw=1)
    axes[-1].legend(loc="upper left", bbox_to_anchor=(1.01, 1.0), fontsize=8)
    axes[-1].set_xlabel("time [s]")
    for ax in axes:  # one column of labels, not a ragged edge (without measuring them)
        ax.yaxis.set_label_coords(-0.11, 0.5)
    return frame(fig, left=1.25, right=1.05, top=0.2)


def top_view(cmap, detector, title: str = ""):
    """Detection probability on the floor grid with the detector and beam centres."""
    cell = cmap.x[1] - cmap.x[0] if cmap.x.size > 1 else 1.0
    ext = [cmap.x[0] - cell / 2, cmap.x[-1] + cell / 2, cmap.y[0] - cell / 2, cmap.y[-1] + cell / 2]
    height = 4.6  # the map's height [in]; its width follows the floor's aspect
    width = min(max(height * (ext[1] - ext[0]) / (ext[3] - ext[2]), 2.5), 9.0)
    fig, ax = plt.subplots(figsize=(width + 2.0, height + 0.95))
    im = ax.imshow(
        cmap.probability, origin="lower", extent=ext, vmin=0, vmax=1, cmap="viridis", aspect="equal"
    )
    fig.colorbar(im, ax=ax, label="P(detect)")
    beams = detector.beams()
    r = max(ext[1], ext[3])
    for az in np.unique(np.round(beams.azimuth, 6)):
        ax.plot([0, r * math.cos(az)], [0, r * math.sin(az)], color="w", lw=0.3, alpha=0.5)
    ax.plot(0, 0, marker="s", color="C3", ms=8, label="detector")
    ax.set_xlim(ext[0], ext[1])
    ax.set_ylim(ext[2], ext[3])
    ax.set_xlabel("x along boresight [m]")
    ax.set_ylabel("y [m]")
    ax.set_title(plain(title) if title else f"Top view: {cmap.kind} walks at {cmap.speed:g} m/s")
    ax.legend(loc="upper right", fontsize=8)
    return frame(fig, left=0.75, right=0.25, top=0.4, bottom=0.55)


def side_view(side, max_distance: float = 20.0):
    """Beams against height and distance with target height bands."""
    d = np.linspace(0.0, max_distance, 200)
    lo, hi = side.heights(d)
    fig, ax = plt.subplots(figsize=(7, 3.8))
    for band, h, c in (("adult", 1.75, "0.85"), ("child", 1.28, "0.75"), ("pet", 0.45, "0.6")):
        ax.fill_between(d, 0, h, color=c, alpha=0.35, label=f"{band} (to {h} m)")
    for k in range(lo.shape[0]):
        col = "C3" if side.polarity[k] > 0 else "C0"
        ax.fill_between(
            d, np.clip(lo[k], 0, None), np.clip(hi[k], 0, None), color=col, alpha=0.35, lw=0
        )
    ax.plot([], [], color="C3", lw=6, alpha=0.4, label="+ element beams")
    ax.plot([], [], color="C0", lw=6, alpha=0.4, label="− element beams")
    ax.set_ylim(0, side.lens_height * 1.15)
    ax.set_xlim(0, max_distance)
    ax.set_xlabel("horizontal distance [m]")
    ax.set_ylabel("height [m]")
    ax.set_title(f"Side view at bearing {side.bearing_deg:g}°")
    ax.legend(fontsize=7, loc="upper right", ncol=2)
    return frame(fig)


def range_by_bearing(results):
    """Polar plot of tangential (and radial) range per bearing."""
    fig = plt.figure(figsize=(6.2, 5))
    ax = fig.add_subplot(111, projection="polar")
    for kind, marker in (("tangential", "o-"), ("radial", "s--")):
        rs = [r for r in results if r.kind == kind]
        if rs:
            ax.plot(
                np.radians([r.bearing_deg for r in rs]),
                [r.range for r in rs],
                marker,
                label=f"{kind}",
            )
    ax.set_thetamin(-90)
    ax.set_thetamax(90)
    ax.set_title("Detection range per bearing [m]", pad=22)  # clear of the 90° label
    ax.legend(loc="upper left", bbox_to_anchor=(1.02, 1.0), fontsize=8)  # clear of the ticks
    return frame(fig, left=0.3, right=1.5, top=0.75, bottom=0.45)


def sweep_plot(table, path: str, budget: float | None = None, best=None, unit=None):
    """Range and false triggers against a swept parameter (log x)."""
    x = np.array([r[path] for r in table.rows], dtype=float)
    fig, ax = plt.subplots(figsize=(8.6, 4))
    ax.semilogx(x, table.column("tangential_range_m"), "o-", label="tangential range")
    ax.semilogx(x, table.column("radial_range_m"), "s--", label="radial range")
    unit = {"ohm": "Ω"}.get(unit, unit)
    ax.set_xlabel(path.split(".")[-1] + (f" [{unit}]" if unit else ""))
    ax.set_ylabel("range [m]")
    ax2 = ax.twinx()
    fy = np.clip(table.column("false_triggers_per_year"), 1e-12, None)
    ax2.semilogy(x, fy, "^:", color="C3", label="false triggers / year")
    ax2.set_ylabel("false triggers per year")
    if budget is not None:
        ax2.axhline(budget, color="C3", lw=0.8, ls="--")
    if best is not None:
        ax.axvline(x[best], color="C2", lw=1.5, label="chosen")
    h1, l1 = ax.get_legend_handles_labels()
    h2, l2 = ax2.get_legend_handles_labels()
    ax.legend(h1 + h2, l1 + l2, fontsize=8, loc="upper left", bbox_to_anchor=(1.15, 1.0))
    ax.set_title("Range and false triggers against " + path.split(".")[-1])
    return frame(fig, right=2.65)


def trade_off(trade):
    """Range against false triggers per year across the sensitivity setting."""
    t = trade.table
    fy = np.clip(t.column("false_triggers_per_year"), 1e-12, None)
    rng = t.column("tangential_range_m")
    fig, ax = plt.subplots(figsize=(7.6, 4))
    ax.semilogx(fy, rng, "o-")
    for r, x, y in zip(t.rows, fy, rng, strict=True):
        ax.annotate(
            f"{r[t.paths[0]]:.3g}", (x, y), fontsize=7, xytext=(3, 3), textcoords="offset points"
        )
    ax.axvline(trade.budget_per_year, color="C3", ls="--", lw=1, label="budget")
    if trade.best is not None:
        ax.plot(fy[trade.best], rng[trade.best], "*", ms=14, color="C2", label="chosen")
    ax.set_xlabel("false triggers per year (floored at 1e-12)")
    ax.set_ylabel("tangential range [m]")
    ax.set_title("Trade-off across the sensitivity setting")
    ax.legend(fontsize=8, loc="upper left", bbox_to_anchor=(1.01, 1.0))
    return frame(fig, right=1.1)


def power_up(pu):
    """Comparator input after switch-on with the window
    (:class:`pirchain.analysis.power_up.PowerUp`)."""
    t, run, window = pu.time, pu.run, pu.run.window
    fig, ax = plt.subplots(figsize=(7, 3.2))
    ax.plot(t, run.comparator_input[0], lw=1, label="comparator input")
    for k, out in enumerate(run.stage_outputs[:-1]):
        ax.plot(t, out[0], lw=0.8, alpha=0.7, label=f"stage {k + 1} output")
    ax.axhline(window[0], color="C3", ls="--", lw=1, label="window")
    ax.axhline(window[1], color="C3", ls="--", lw=1)
    ax.set_xlabel("time after switch-on [s]")
    ax.set_ylabel("voltage [V]")
    ax.set_title("Power-up from discharged capacitors")
    ax.legend(fontsize=8, loc="upper right")  # a fixed place: "best" searched the data
    return frame(fig)


def noise_psd(sources, f=None):
    """PSD of the largest noise sources and the total at the comparator input."""
    f = np.geomspace(0.01, 100.0, 500) if f is None else f
    psds = [(plain(s.name), s.psd(f)) for s in sources]
    total = np.sum([p for _, p in psds], axis=0)
    psds.sort(key=lambda x: -np.trapezoid(x[1], f))
    fig, ax = plt.subplots(figsize=(8.8, 4))
    ax.loglog(f, np.sqrt(total), "k", lw=2, label="total")
    for name, p in psds[:6]:
        ax.loglog(f, np.sqrt(p), lw=1, label=name)
    ax.set_xlabel("frequency [Hz]")
    ax.set_ylabel("noise density [V/√Hz]")
    ax.set_title("Noise at the comparator input")
    ax.legend(fontsize=7, loc="upper left", bbox_to_anchor=(1.01, 1.0))
    return frame(fig, right=2.3)


def ambient_case(study):
    """The worst ambient case's comparator input against the window (an
    :class:`pirchain.analysis.ambient.AmbientStudy`)."""
    c = study.worst
    fig, ax = plt.subplots(figsize=(7, 3.2))
    ax.plot(c.time / 60.0, c.comparator_input, lw=1.0, label="comparator input")
    for edge in study.window:
        ax.axhline(edge, color="k", ls="--", lw=0.8)
    ax.axhline(study.rest, color="0.5", lw=0.6)
    ax.set_xlabel("time [min]")
    ax.set_ylabel("[V]")
    ax.set_title(plain(f"Worst ambient case: {c.label}, {c.turn_ons} turn-ons, margin "
                       f"{c.margin * 1e3:.0f} mV ({c.margin_sigma:.1f} σ of noise)"))  # fmt: skip
    ax.legend(loc="upper right", fontsize=8)
    return frame(fig)


def bench_fit(capture=None, waveform=None, quiet=None, walks=None):
    """Measured against fitted: the walk capture and the fitted waveform, the quiet
    recording's Welch PSD and the fitted model, and every walk-test row's P(detect)."""
    panels = [p for p in ("wave", "psd", "walks") if {"wave": waveform, "psd": quiet,
                                                      "walks": walks}[p] is not None]  # fmt: skip
    fig, axes = plt.subplots(len(panels), 1, figsize=(7, 3.0 * len(panels)), squeeze=False)
    for ax, kind in zip(axes[:, 0], panels, strict=True):
        if kind == "wave":
            ax.plot(capture.time, capture.value, lw=0.8, color="0.55", label="measured")
            ax.plot(capture.time, waveform.fitted, lw=1.3, color="C0", label="fitted model")
            ax.set_xlabel("time [s]")
            ax.set_ylabel(f"{capture.node} [V]")
            ax.set_title(f"Walk capture: residual rms {waveform.residual_rms * 1e3:.3g} mV")
        elif kind == "psd":
            ok = quiet.f > 0
            ax.loglog(quiet.f[ok], quiet.psd[ok], lw=0.6, color="0.55", label="Welch estimate")
            ax.loglog(quiet.f[ok], quiet.model_psd[ok], lw=1.5, color="C1", label="fitted model")
            ax.set_xlabel("frequency [Hz]")
            ax.set_ylabel("[V²/Hz]")
            ax.set_title("Quiet room at the comparator input")
        else:
            y = np.array([r.detected for r in walks.rows], dtype=float)
            d = np.array([r.distance for r in walks.rows])
            ax.scatter(d, y, marker="|", s=200, color="0.3", label="walked (1 detected)")
            ax.scatter(d, walks.p_fitted, s=14, color="C2", label="fitted P(detect)")
            ax.scatter(d, walks.p_design, s=10, color="C3", marker="x", label="design P(detect)")
            ax.set_xlabel("distance [m]")
            ax.set_ylabel("P(detect)")
            ax.set_title(f"Walk tests: sensitivity scale {walks.scale:.3g}")
        ax.legend(fontsize=7)
    fig.tight_layout()
    return fig


def two_wire_change(change):
    """The storage capacitor and the chain's rail through off → on → off."""
    fig, (a1, a2) = plt.subplots(2, 1, figsize=(7, 5), sharex=True)
    a1.plot(change.time, change.v_store, lw=0.8, color="C0")
    a1.set_ylabel("storage capacitor [V]")
    a1.set_title(f"Two-wire supply across the change ({change.lamp}): mains off → on → off")
    a2.plot(change.time, change.rail, lw=0.8, color="C1", label="chain rail")
    a2.axhline(change.rail_minimum, color="C3", ls="--", lw=1, label="chain minimum")
    a2.set_ylabel("rail [V]")
    a2.set_xlabel("time [s]")
    for ax in (a1, a2):
        ax.axvspan(change.on_from, change.on_until, color="0.9", zorder=0)
    a2.legend(loc="lower right", fontsize=8)
    fig.tight_layout(rect=(0, 0.05, 1, 1))
    fig.text(0.01, 0.01, "CAUTION: the whole power stage is at mains potential; follow local "
             "electrical codes and licensed practice.", fontsize=7, color="C3")  # fmt: skip
    return fig
