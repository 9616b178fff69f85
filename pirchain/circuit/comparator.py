"""Window comparator: where the window edges come from, and the latch rule.

The window is [v_lo, v_hi] around the last stage's rest level. Its half-width (the
threshold) can come from a resistor ladder containing the sensitivity resistor, be fixed,
or be read from a user mapping of a sensitivity setting; sensitivity set by a gain resistor
is a stage value and needs nothing here. The comparator's states (above, below, inside,
with hysteresis) are a set/reset latch per edge, :func:`latch_step`, which the chain's
compiled pass runs at every logic tick (:func:`pirchain.kernels.logic.logic_walk`).
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from ..errors import DesignError, check_array, check_nonnegative, check_positive, check_real


@dataclass(frozen=True)
class LadderWindow:
    """Three-resistor ladder from the supply: top → v_hi → middle → v_lo → bottom → ground.

    v_hi = V (R_m + R_b)/ΣR, v_lo = V R_b/ΣR; with R_t = R_b the window is centred on V/2
    with half-width (V/2) R_m/(2R_t + R_m). The middle resistor is usually the sensitivity
    resistor: a larger one widens the window (less sensitive).
    """

    supply: float
    r_top: float
    r_middle: float
    r_bottom: float

    def __post_init__(self):
        check_positive("comparator.supply", self.supply, "V")
        check_positive("comparator.r_top", self.r_top, "Ω")
        check_positive("comparator.r_middle", self.r_middle, "Ω")
        check_positive("comparator.r_bottom", self.r_bottom, "Ω")

    def edges(self) -> tuple[float, float]:
        """(v_lo, v_hi) [V]."""
        total = self.r_top + self.r_middle + self.r_bottom
        return (
            self.supply * self.r_bottom / total,
            self.supply * (self.r_middle + self.r_bottom) / total,
        )

    def current(self) -> float:
        """Ladder current [A]."""
        return self.supply / (self.r_top + self.r_middle + self.r_bottom)

    def resistor_for_threshold(self, threshold: float) -> float | None:
        """Middle resistor that sets the half-width ``threshold`` [Ω] (None: unreachable).

        Half-width = V R_m / (2 ΣR), so R_m = 2 th (R_t + R_b) / (V − 2 th).
        """
        v, rt, rb = self.supply, self.r_top, self.r_bottom
        if 2 * threshold >= v:
            return None
        return 2 * threshold * (rt + rb) / (v - 2 * threshold)


@dataclass(frozen=True)
class FixedWindow:
    """A window of half-width ``threshold`` around ``centre`` [V]."""

    centre: float
    threshold: float

    def __post_init__(self):
        check_real("comparator.centre", self.centre)
        check_positive("comparator.threshold", self.threshold, "V")

    def edges(self) -> tuple[float, float]:
        """(v_lo, v_hi) [V]."""
        return (self.centre - self.threshold, self.centre + self.threshold)

    def current(self) -> float:
        """No divider current."""
        return 0.0

    def resistor_for_threshold(self, threshold: float) -> None:
        """No resistor sets this window."""
        return None


@dataclass(frozen=True)
class MappedWindow:
    """Threshold read from a user table of (setting, threshold) pairs, linearly interpolated.

    Attributes
    ----------
    centre : float
        Window centre [V].
    settings, thresholds : tuple of float
        The table; settings strictly increasing, thresholds [V] > 0.
    setting : float
        The current setting (same unit as the table).
    """

    centre: float
    settings: tuple[float, ...]
    thresholds: tuple[float, ...]
    setting: float

    def __post_init__(self):
        x = check_array("comparator.settings", self.settings)
        y = check_array("comparator.thresholds", self.thresholds, positive=True)
        if x.ndim != 1 or x.size < 2 or x.shape != y.shape or np.any(np.diff(x) <= 0):
            raise DesignError(
                "comparator.settings",
                self.settings,
                "at least two strictly increasing settings, one threshold each",
            )
        s = check_real("comparator.setting", self.setting)
        if not x[0] <= s <= x[-1]:
            raise DesignError(
                "comparator.setting",
                self.setting,
                f"a setting within the table, {x[0]:g} to {x[-1]:g}",
            )

    def edges(self) -> tuple[float, float]:
        """(v_lo, v_hi) [V]."""
        th = float(np.interp(self.setting, self.settings, self.thresholds))
        return (self.centre - th, self.centre + th)

    def current(self) -> float:
        """No divider current."""
        return 0.0

    def resistor_for_threshold(self, threshold: float) -> None:
        """No resistor sets this window."""
        return None


@dataclass(frozen=True)
class WindowComparator:
    """Window comparator with optional hysteresis.

    Attributes
    ----------
    window : LadderWindow, FixedWindow or MappedWindow
        Source of the window edges.
    hysteresis : float
        A pulse that has started ends only when the input is back inside by this much [V].
    """

    window: object
    hysteresis: float = 0.0

    def __post_init__(self):
        check_nonnegative("comparator.hysteresis", self.hysteresis, "V")
        lo, hi = self.window.edges()
        if self.hysteresis >= (hi - lo) / 2:
            raise DesignError(
                "comparator.hysteresis",
                self.hysteresis,
                f"less than the threshold {(hi - lo) / 2:.4g} V",
            )

    def edges(self) -> tuple[float, float]:
        """(v_lo, v_hi) [V]."""
        return self.window.edges()

    @property
    def centre(self) -> float:
        """Centre of the window [V]."""
        lo, hi = self.edges()
        return 0.5 * (lo + hi)

    @property
    def threshold(self) -> float:
        """Half-width of the window [V]."""
        lo, hi = self.edges()
        return 0.5 * (hi - lo)


def latch_step(state: bool, x: float, set_above: float, reset_below: float) -> bool:
    """One step of a set/reset latch with hysteresis: set when ``x > set_above``, reset when
    ``x < reset_below``, else unchanged (set wins if both hold).

    The comparator's upper edge is ``latch_step(above, x, v_hi, v_hi − h)``, its lower edge
    the mirror ``latch_step(below, −x, −v_lo, −(v_lo + h))``, the daylight inhibit
    ``latch_step(inhibit, v_node, v_on, v_on − h)``. A plain scalar function: the chain's
    compiled pass runs this same function at every logic tick.
    """
    if x > set_above:
        return True
    if x < reset_below:
        return False
    return state
