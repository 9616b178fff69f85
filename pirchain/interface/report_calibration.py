"""The report's calibration section, for a design written by ``pirchain bench-fit``: what
was fitted to which bench data, the fitted values with their 95 % intervals, and the
multipliers every prediction of the report now carries."""

from __future__ import annotations


def compute(design) -> dict | None:
    """The section's numbers (None for a design that was not calibrated)."""
    cal = design.calibration
    if cal is None:
        return None
    det = design.detector
    return {
        "fitted_from": list(cal.fitted_from),
        "fitted_on": cal.fitted_on,
        "summary": list(cal.summary),
        "signal_scale": cal.signal_scale,
        "white_noise_scale": det.noise_scale.white,
        "flicker_noise_scale": det.noise_scale.flicker,
    }


def html(section, esc, pre) -> list[str]:
    """The section's HTML parts (empty for a design that was not calibrated)."""
    if section is None:
        return []
    when = f" on {esc(section['fitted_on'])}" if section["fitted_on"] else ""
    data = "".join(f"<li>{esc(x)}</li>" for x in section["fitted_from"]) or "<li>(none named)</li>"
    return [
        "<h2>Calibration to bench data</h2>",
        f"<p>This design was fitted{when} to:</p><ul>{data}</ul>",
        f"<p>Every range and rate in this report carries the fit: signal × "
        f"{section['signal_scale']:.4g} (responsivity, lens and contrast together), noise "
        f"densities × {section['white_noise_scale']:.4g} (white) and × "
        f"{section['flicker_noise_scale']:.4g} (1/f), and the fitted sensor time constants "
        f"and draught in the design file. A calibration holds for the unit and room it was "
        f"measured on; other units spread by their tolerances.</p>",
        pre("\n".join(section["summary"]) or "(no values recorded)"),
    ]
