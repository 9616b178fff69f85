"""The report's two-wire section, for a design with a ``[two_wire]`` supply: the findings
that need action, the lamp table, the storage capacitor and rail across the change, the
lamp's self-trigger risk and the recommended storage capacitor and current limit, with the
mains caution."""

from __future__ import annotations

from .cautions import CAUTIONS


def compute(design) -> dict | None:
    """The section's data and text (None without a two-wire supply)."""
    if design.two_wire is None:
        return None
    from ..analysis.two_wire import two_wire_study
    from . import plots
    from .cli_two_wire import study_data, study_text

    study = two_wire_study(design)
    return {
        "data": study_data(study, design),
        "text": study_text(study, design),
        "figure": plots.png_bytes(plots.two_wire_change(study.change)),
    }


def html(section, esc, pre, img) -> list[str]:
    """The section's HTML parts (empty without a two-wire supply)."""
    if section is None:
        return []
    verdicts = section["data"]["verdicts"]
    head = (
        "<p><b>Findings that need action:</b></p><ul>"
        + "".join(f"<li>{esc(v)}</li>" for v in verdicts)
        + "</ul>"
        if verdicts
        else "<p>No finding needs action.</p>"
    )
    return [
        "<h2>Two-wire supply through the lamp</h2>",
        f"<p><b>Caution:</b> {esc(CAUTIONS)} The power stage modelled here is at mains "
        "potential throughout, the storage capacitor and the chain's rail included.</p>",
        head,
        img(section["figure"], "storage capacitor and rail across the change"),
        pre(section["text"]),
    ]
