"""pirchain: an end-to-end model of passive-infrared motion detectors.

From a person's infrared emission through the segmented lens onto a dual-element
pyroelectric sensor, its front end and decision logic, for batches of walks at once.

Layout, each package a role (lower ones never import higher ones):

* :mod:`pirchain.errors`, :mod:`pirchain.units`, :mod:`pirchain.settings` — shared base:
  error classes, engineering notation, the analysis settings.
* :mod:`pirchain.physics` — radiometry, body heat, scene, pose, optics, sensor, disturbances.
* :mod:`pirchain.circuit` — follower, op-amp, stages, rails, comparator, supply, noise,
  netlist, schematic.
* :mod:`pirchain.logic` — the decision rules' parameters, logic clock and results.
* :mod:`pirchain.kernels` — the chain's single compiled pass.
* :mod:`pirchain.chain` — the detector and the engine that runs the pass with taps.
* :mod:`pirchain.design` — a design under study: detector, scene and settings.
* :mod:`pirchain.analysis` — walk tests, range, coverage, sweeps, false triggers, drift.
* :mod:`pirchain.interface` — the user's edge: design files, command line, report, plots.
"""

from .errors import DesignError, PirchainError, ValidityWarning

__version__ = "0.1.0"

_LAZY = {
    "Detector": ("pirchain.chain.detector", "Detector"),
    "Design": ("pirchain.design", "Design"),
    "AnalysisSettings": ("pirchain.settings", "AnalysisSettings"),
    "CAUTIONS": ("pirchain.interface.cautions", "CAUTIONS"),
}


def __getattr__(name):
    """Import the heavier objects on first use (``import pirchain`` stays light)."""
    if name in _LAZY:
        import importlib

        module, attr = _LAZY[name]
        return getattr(importlib.import_module(module), attr)
    raise AttributeError(f"module 'pirchain' has no attribute {name!r}")


__all__ = [
    "CAUTIONS",
    "AnalysisSettings",
    "Design",
    "DesignError",
    "Detector",
    "PirchainError",
    "ValidityWarning",
    "__version__",
]
