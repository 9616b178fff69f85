"""Supply: rail voltage, reference divider, logic current and the current budget.

A two-wire (no-neutral) switch lives on the small current that leaks through the load
while it is off, tens of µA (common practice, about 20 µA seen), so every microampere of
the chain counts; the budget lists each part and warns above a stated limit.
"""

from __future__ import annotations

from dataclasses import dataclass

from ..errors import DesignError, check_nonnegative, check_positive, warn_validity


@dataclass(frozen=True)
class PowerSupply:
    """Supply of the detector electronics.

    Attributes
    ----------
    voltage : float
        Regulated rail [V]; the JFET drain and the op-amps run from it.
    reference_top, reference_bottom : float or None
        Resistors of the mid-rail reference divider [Ω] (None: reference from elsewhere).
    logic_current : float
        Quiescent current of the logic (microcontroller or detector ASIC) [A].
    other_current : float
        Anything else: regulator ground current, LED, relay driver at rest [A].
    limit : float or None
        Budget limit [A]; above it a warning is raised.
    """

    voltage: float = 3.3
    reference_top: float | None = 1e6
    reference_bottom: float | None = 1e6
    logic_current: float = 5e-6
    other_current: float = 0.0
    limit: float | None = None

    def __post_init__(self):
        check_positive("supply.voltage", self.voltage, "V")
        if (self.reference_top is None) != (self.reference_bottom is None):
            raise DesignError(
                "supply.reference_bottom",
                self.reference_bottom,
                "both reference resistors or neither",
            )
        if self.reference_top is not None:
            check_positive("supply.reference_top", self.reference_top, "Ω")
            check_positive("supply.reference_bottom", self.reference_bottom, "Ω")
        check_nonnegative("supply.logic_current", self.logic_current, "A")
        check_nonnegative("supply.other_current", self.other_current, "A")
        if self.limit is not None:
            check_positive("supply.limit", self.limit, "A")

    @property
    def reference(self) -> float:
        """Reference divider output (unloaded) [V]."""
        if self.reference_top is None:
            return self.voltage / 2
        return self.voltage * self.reference_bottom / (self.reference_top + self.reference_bottom)


@dataclass(frozen=True)
class SupplyBudget:
    """Current drawn by each part of the chain.

    Attributes
    ----------
    items : tuple of (str, float)
        Part and its current [A].
    limit : float or None
        Budget limit [A].
    """

    items: tuple[tuple[str, float], ...]
    limit: float | None

    @property
    def total(self) -> float:
        """Sum of all parts [A]."""
        return float(sum(i for _, i in self.items))

    @property
    def exceeds_limit(self) -> bool:
        """True when a limit is set and the total is above it."""
        return self.limit is not None and self.total > self.limit

    def table(self) -> str:
        """Plain-text table in µA."""
        rows = [f"{name:<48s} {cur * 1e6:10.3f} µA" for name, cur in self.items]
        rows.append(f"{'total':<48s} {self.total * 1e6:10.3f} µA")
        if self.limit is not None:
            flag = "  EXCEEDS LIMIT" if self.exceeds_limit else ""
            rows.append(f"{'limit':<48s} {self.limit * 1e6:10.3f} µA{flag}")
        return "\n".join(rows)


def supply_budget(supply: PowerSupply, follower, stages, comparator, logic) -> SupplyBudget:
    """Per-part supply current of a detector; warns when the total exceeds the limit."""
    items = [("JFET follower drain current", follower.drain_current)]
    level = follower.offset
    for i, st in enumerate(stages):
        if st.opamp is not None:
            items.append((f"op-amp of stage {i + 1} ({st.name})", st.opamp.quiescent_current))
        leak = st.leakage_current(level)
        if leak > 0:
            items.append((f"C1 leakage of stage {i + 1}", leak))
        level = st.output_dc(level)
    if supply.reference_top is not None:
        items.append(
            ("reference divider", supply.voltage / (supply.reference_top + supply.reference_bottom))
        )
    if comparator is not None:
        items.append(("comparator window divider", comparator.window.current()))
    if logic is not None and logic.daylight is not None:
        items.append(("daylight divider (at 1000 lux)", logic.daylight.current(1000.0)))
    items.append(("logic quiescent", supply.logic_current))
    if supply.other_current:
        items.append(("other", supply.other_current))
    budget = SupplyBudget(tuple((n, float(c)) for n, c in items), supply.limit)
    if budget.exceeds_limit:
        warn_validity(
            f"supply current {budget.total * 1e6:.1f} µA exceeds the limit "
            f"{supply.limit * 1e6:.1f} µA"
        )
    return budget
