"""The report's sign-off section: yield of ``acceptance.units`` drawn units with its exact
interval, the failures per line, the most influential values, the worst-case corners and a
histogram of each unit's range at the acceptance's critical line (the bearing and speed
with the shortest nominal range)."""

from __future__ import annotations

import numpy as np

from ..production.corners import corner_study
from ..production.runners import InProcess
from ..production.yields import critical_line, run_yield, unit_ranges


def compute(design) -> dict | None:
    """Numbers and the histogram data of the section (None without tolerances and lines)."""
    if design.acceptance is None or not design.tolerances:
        return None
    acc = design.acceptance
    y = run_yield(design, acc.units)
    out = {"yield": y.to_dict(), "yield_text": y.table()}
    top = [i.path for i in y.influence()[:3]]
    if top:
        out["corners_text"] = corner_study(design, top).table()
    if acc.range_m is not None:
        line = critical_line(design)
        task = [(design, y.paths, y.values, line)]
        out["ranges"] = InProcess().map(unit_ranges, task)[0]
        out["critical_line"] = line
    return out


def histogram(ranges, required, line):
    """Figure: each unit's noise-free range at the critical line, and the required range."""
    from . import plots

    fig, ax = plots.plt.subplots(figsize=(7, 3.2))
    r = np.asarray(ranges, dtype=float)
    r = r[np.isfinite(r)]
    ax.hist(r, bins=max(5, min(30, int(np.ptp(r) / 0.5) + 1 if r.size else 5)), color="C0")
    ax.axvline(required, color="C3", ls="--", label=f"required {required:g} m")
    ax.set_xlabel(f"noise-free range at {line[0]:g}°, {line[1]:g} m/s [m]")
    ax.set_ylabel("units")
    ax.set_title("Range of the drawn units at the critical acceptance line")
    ax.legend(fontsize=8, loc="upper left")
    return plots.frame(fig)


def html(design, section, esc, pre, img, png) -> list[str]:
    """The section's HTML parts (empty without sign-off data)."""
    if section is None:
        return []
    y = section["yield"]
    lo, hi = y["yield_95"]
    parts = [
        "<h2>Sign-off: yield of built units</h2>",
        f"<p>{y['units']} units, each one draw of every toleranced value (seed {y['seed']}): "
        f"<b>{100 * y['yield']:.1f} %</b> pass every acceptance line (Clopper–Pearson 95 % "
        f"interval {100 * lo:.1f}–{100 * hi:.1f} %).</p>",
        pre(section["yield_text"]),
    ]
    if "corners_text" in section:
        parts += ["<p>Worst-case corners of the three most influential values:</p>",
                  pre(section["corners_text"])]  # fmt: skip
    if "ranges" in section:
        fig = histogram(section["ranges"], design.acceptance.range_m, section["critical_line"])
        parts.append(img(png(fig), "range of the drawn units"))
    return parts
