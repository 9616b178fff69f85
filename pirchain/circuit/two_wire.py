"""The power stage of a two-wire (no-neutral) switch: the mains, the lamp in series with the
switch, and the switch's own supply in both states.

Circuit (one topology, common practice for such switches; every value a design-file key)::

    live ──┬── power switch (triac: fires when the voltage across it reaches
           │   ``fire_voltage`` in the on state; holds while |i| > ``holding_current``)
           └── bridge (4 diodes) ─┬─ off path: current-limited regulator,
                                  │  i = I_lim · clip((v_dc − V_s)/V_do, 0, 1)
                                  └─ on path (on state only): diode + resistor
                                     both into the storage capacitor C_s, clamped by a zener;
                                     the chain draws from C_s
    ── lamp ── neutral

Off, the regulator's current flows through the lamp: that is the off-state leakage the lamp
sees. On, the triac fires late in each half-cycle (when the voltage across the switch reaches
the threshold) so that the storage capacitor can be charged through the on path from the few
volts left before firing; the lamp loses that part of each half-cycle.

Lamps: a resistive (filament) lamp, whose resistance follows the filament's temperature from
about a tenth of its hot value when cold (common practice) with a first-order thermal time
constant; an LED lamp: a bridge and input resistor into an input capacitor, an optional
bleeder across it, and a driver that starts when the capacitor reaches ``start_voltage``,
draws a constant power until it falls to ``stop_voltage`` and runs continuously when the
lamp is on. Off, the leakage charges the LED lamp's input capacitor: without enough bleed the
driver starts, empties it in a flash and waits for the next charge — the lamp flashes, and
the switch, whose own supply is that same current, starves while the capacitor blocks it.

The scalar functions here are the model's rules, written once; the compiled time stepping
(:mod:`pirchain.kernels.power_stage`) calls them.

References
----------
.. [1] Mohan, N., Undeland, T. M. and Robbins, W. P., *Power Electronics*, 3rd ed., Wiley
   (2003), ch. 5 and 6: diode rectifiers, phase control; the power of a resistive load under
   leading-edge phase control P/P_full = 1 − α/π + sin 2α/(2π).
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

from ..errors import DesignError, check_choice, check_positive, check_range

MAINS_PRESETS = {"230V50Hz": (230.0, 50.0), "120V60Hz": (120.0, 60.0)}
LAMP_KINDS = ("resistive", "led")
RESISTIVE, LED = 0, 1
# layout of the flat parameter vectors the compiled stepping reads
SWITCH_FIELDS = (
    "off_current_limit", "regulator_dropout", "zener_voltage", "storage_capacitance",
    "diode_drop", "fire_voltage", "on_charge_resistance", "holding_current",
    "triac_resistance", "zener_test_current", "zener_slope",
)  # fmt: skip
LAMP_FIELDS = (
    "kind", "hot_resistance", "cold_ratio", "filament_time_constant", "input_capacitance",
    "input_resistance", "start_voltage", "stop_voltage", "bleeder_conductance",
    "driver_power", "bypass_conductance", "diode_drop",
)  # fmt: skip


@dataclass(frozen=True)
class Mains:
    """The supply the switch sits on.

    Attributes
    ----------
    voltage : float
        Nominal rms voltage [V] (230 or 120, or a user value).
    frequency : float
        [Hz].
    tolerance : float
        ± fraction of the nominal voltage the switch must work across (e.g. 0.1).
    """

    voltage: float = 230.0
    frequency: float = 50.0
    tolerance: float = 0.10

    def __post_init__(self):
        check_range("two_wire.mains_voltage", self.voltage, 12.0, 480.0, "V rms")
        check_range("two_wire.mains_frequency", self.frequency, 16.0, 400.0, "Hz")
        check_range("two_wire.mains_tolerance", self.tolerance, 0.0, 0.3)

    @property
    def low(self) -> float:
        """Lowest rms voltage [V]."""
        return self.voltage * (1.0 - self.tolerance)

    @property
    def high(self) -> float:
        """Highest rms voltage [V]."""
        return self.voltage * (1.0 + self.tolerance)


@dataclass(frozen=True)
class Lamp:
    """A load in series with the switch.

    Attributes
    ----------
    kind : {"resistive", "led"}
    power : float
        Rated power at the nominal mains voltage [W].
    name : str
    cold_ratio : float
        Resistive: cold over hot filament resistance (common practice: about 0.1).
    filament_time_constant : float
        Resistive: thermal time constant of the filament [s] (from memory: about 0.1 s for a
        60 W lamp).
    input_capacitance : float
        LED: input (bulk) capacitor after the bridge [F].
    input_resistance : float
        LED: series input resistor (fusible) [Ω].
    start_voltage, stop_voltage : float
        LED: input-capacitor voltages at which the driver starts and stops [V].
    bleeder : float or None
        LED: resistor across the input capacitor [Ω] (None: none).
    efficiency : float
        LED: driver efficiency (driver input power = power / efficiency).
    bypass : float or None
        A resistor across the lamp's terminals [Ω], as fitted by installers to carry a
        two-wire switch's leakage (None: none).
    diode_drop : float
        LED: forward drop of each bridge diode [V].
    """

    kind: str = "resistive"
    power: float = 60.0
    name: str = ""
    cold_ratio: float = 0.1
    filament_time_constant: float = 0.1
    input_capacitance: float = 4.7e-6
    input_resistance: float = 22.0
    start_voltage: float = 120.0
    stop_voltage: float = 50.0
    bleeder: float | None = None
    efficiency: float = 0.85
    bypass: float | None = None
    diode_drop: float = 0.7

    def __post_init__(self):
        check_choice("lamp.kind", self.kind, LAMP_KINDS)
        check_range("lamp.power", self.power, 0.1, 5000.0, "W")
        check_range("lamp.cold_ratio", self.cold_ratio, 0.02, 1.0)
        check_range("lamp.filament_time_constant", self.filament_time_constant, 1e-3, 10.0, "s")
        check_range("lamp.input_capacitance", self.input_capacitance, 1e-9, 1e-3, "F")
        check_range("lamp.input_resistance", self.input_resistance, 0.1, 1e4, "Ω")
        check_range("lamp.start_voltage", self.start_voltage, 5.0, 700.0, "V")
        check_range("lamp.stop_voltage", self.stop_voltage, 1.0, 700.0, "V")
        if self.stop_voltage >= self.start_voltage:
            raise DesignError(
                "lamp.stop_voltage", self.stop_voltage, "a voltage below lamp.start_voltage"
            )
        for key in ("bleeder", "bypass"):
            if getattr(self, key) is not None:
                check_range(f"lamp.{key}", getattr(self, key), 1e2, 1e10, "Ω")
        check_range("lamp.efficiency", self.efficiency, 0.2, 1.0)
        check_range("lamp.diode_drop", self.diode_drop, 0.0, 2.0, "V")

    @property
    def label(self) -> str:
        """Name, or kind and power."""
        return self.name or f"{'LED' if self.kind == 'led' else 'filament'} {self.power:g} W"

    def vector(self, mains: Mains) -> np.ndarray:
        """The lamp as the flat vector of :data:`LAMP_FIELDS` at ``mains`` (SI units)."""
        r_hot = mains.voltage**2 / self.power
        return np.array([
            RESISTIVE if self.kind == "resistive" else LED, r_hot, self.cold_ratio,
            self.filament_time_constant, self.input_capacitance, self.input_resistance,
            self.start_voltage, self.stop_voltage,
            0.0 if self.bleeder is None else 1.0 / self.bleeder,
            self.power / self.efficiency, 0.0 if self.bypass is None else 1.0 / self.bypass,
            self.diode_drop,
        ], dtype=np.float64)  # fmt: skip


@dataclass(frozen=True)
class TwoWireSwitch:
    """The switch's power stage and its own draws besides the detector chain.

    Attributes
    ----------
    mains : Mains
    off_current_limit : float
        Current limit of the off-state regulator [A] (tens of µA, common practice).
    regulator_dropout : float
        Headroom below which the regulator's current falls linearly to zero [V].
    zener_voltage : float
        Clamp of the storage capacitor [V], at ``zener_test_current``.
    zener_test_current : float
        Current at which the zener is at its voltage [A] (a datasheet's I_ZT).
    zener_slope : float
        Voltage per e-fold of zener current [V] (the knee: I = I_ZT exp((V − V_Z)/slope);
        0.0259 V is an ideal junction at 27 °C, a real zener's knee is softer).
    storage_capacitance : float
        [F].
    diode_drop : float
        Each bridge diode and the on-path diode [V].
    fire_voltage : float
        Voltage across the switch at which the triac fires in the on state (zener + gate
        trigger) [V].
    on_charge_resistance : float
        Series resistance of the on-state charging path [Ω].
    holding_current : float
        Triac holding current [A].
    triac_resistance : float
        On-state resistance of the triac [Ω] (its drop, linearised).
    max_current : float
        The switch's rated rms load current [A].
    ldo_dropout : float
        Dropout of the regulator from the storage capacitor to the chain's rail [V].
    rail_minimum : float or None
        Lowest rail at which the chain works [V] (None: 90 % of the supply voltage).
    gate_current, gate_pulse : float
        Gate drive drawn from the storage capacitor at each firing [A] for [s] (0: the
        triac is fired from its own main terminal).
    indicator_current : float
        Indicator LED [A], lit in ``indicator_when``.
    indicator_when : {"off", "on", "both", "never"}
    relay_current : float
        A relay coil held while on [A] (0: none).
    """

    mains: Mains = Mains()
    off_current_limit: float = 40e-6
    regulator_dropout: float = 5.0
    zener_voltage: float = 12.0
    zener_test_current: float = 1e-3
    zener_slope: float = 0.0259
    storage_capacitance: float = 220e-6
    diode_drop: float = 0.7
    fire_voltage: float = 24.0
    on_charge_resistance: float = 100.0
    holding_current: float = 10e-3
    triac_resistance: float = 0.05
    max_current: float = 4.0
    ldo_dropout: float = 0.3
    rail_minimum: float | None = None
    gate_current: float = 0.0
    gate_pulse: float = 100e-6
    indicator_current: float = 0.0
    indicator_when: str = "never"
    relay_current: float = 0.0

    def __post_init__(self):
        check_range("two_wire.off_current_limit", self.off_current_limit, 1e-7, 0.1, "A")
        check_range("two_wire.regulator_dropout", self.regulator_dropout, 0.01, 100.0, "V")
        check_range("two_wire.zener_voltage", self.zener_voltage, 2.0, 60.0, "V")
        check_range("two_wire.zener_test_current", self.zener_test_current, 1e-7, 1.0, "A")
        check_range("two_wire.zener_slope", self.zener_slope, 0.005, 2.0, "V")
        check_range("two_wire.storage_capacitance", self.storage_capacitance, 1e-8, 1.0, "F")
        check_range("two_wire.diode_drop", self.diode_drop, 0.0, 2.0, "V")
        check_range("two_wire.fire_voltage", self.fire_voltage, 1.0, 800.0, "V")
        if self.fire_voltage <= self.zener_voltage + 3 * self.diode_drop:
            raise DesignError(
                "two_wire.fire_voltage", self.fire_voltage,
                "a firing voltage above zener_voltage + 3 diode drops (else the on state "
                "cannot charge the storage capacitor)",
            )  # fmt: skip
        check_range("two_wire.on_charge_resistance", self.on_charge_resistance, 0.1, 1e6, "Ω")
        check_range("two_wire.holding_current", self.holding_current, 1e-5, 1.0, "A")
        check_range("two_wire.triac_resistance", self.triac_resistance, 1e-4, 100.0, "Ω")
        check_positive("two_wire.max_current", self.max_current, "A")
        check_range("two_wire.ldo_dropout", self.ldo_dropout, 0.0, 10.0, "V")
        if self.rail_minimum is not None:
            check_range("two_wire.rail_minimum", self.rail_minimum, 0.5, 60.0, "V")
        for key in ("gate_current", "indicator_current", "relay_current"):
            check_range(f"two_wire.{key}", getattr(self, key), 0.0, 1.0, "A")
        check_range("two_wire.gate_pulse", self.gate_pulse, 0.0, 5e-3, "s")
        check_choice("two_wire.indicator_when", self.indicator_when, ("off", "on", "both", "never"))

    def vector(self) -> np.ndarray:
        """The switch as the flat vector of :data:`SWITCH_FIELDS` (SI units)."""
        return np.array([getattr(self, k) for k in SWITCH_FIELDS], dtype=np.float64)

    def extra_draw(self, on: bool) -> float:
        """Steady draw besides the chain in a state: indicator and relay [A]."""
        lit = self.indicator_when in ("both", "on" if on else "off")
        return (self.indicator_current if lit else 0.0) + (self.relay_current if on else 0.0)


# ---------------------------------------------------------------------------------------
# rules (scalar; compiled by the kernel)


def switch_current(x, v_store, on_path, sw):
    """Current into the switch's bridge at ``x`` ≥ 0 V across it, triac off [A]."""
    head = x - 2.0 * sw[4] - v_store
    i = sw[0] * min(1.0, max(0.0, head / sw[1]))
    if on_path:
        i += max(0.0, (head - sw[4]) / sw[6])
    return i


def lamp_current(y, v_cap, r_fil, lamp):
    """Current through the lamp at ``y`` ≥ 0 V across it [A] (filament at ``r_fil`` Ω, LED
    input capacitor at ``v_cap`` V)."""
    if lamp[0] == 0.0:
        return y / r_fil + y * lamp[10]
    return max(0.0, (y - 2.0 * lamp[11] - v_cap) / lamp[5]) + y * lamp[10]


def loop_split(u, v_store, v_cap, r_fil, on_path, sw, lamp):
    """Voltage across the switch [V] with ``u`` ≥ 0 V of mains across switch and lamp, triac
    off: the smallest x with switch_current(x) ≥ lamp_current(u − x) (bisection; both are
    monotonic, so the split is unique up to a span where neither conducts, in which the
    lamp takes all it blocks)."""
    lo, hi = 0.0, u
    for _ in range(60):
        mid = 0.5 * (lo + hi)
        if switch_current(mid, v_store, on_path, sw) >= lamp_current(u - mid, v_cap, r_fil, lamp):
            hi = mid
        else:
            lo = mid
    return hi


def zener_step(v0, charge, c, dt, v_z, i_zt, slope):
    """Storage-capacitor voltage after a step [V]: ``charge`` [C] in from the switch less the
    draw, the zener's current I_ZT exp((V − V_Z)/slope) out, solved implicitly (backward
    Euler; the knee is stiff against the step) by Newton's method from above, where the
    convex residual makes it converge monotonically."""
    v = v0 + charge / c
    if v <= 0.0:
        return 0.0
    for _ in range(60):
        iz = i_zt * math.exp((v - v_z) / slope)
        g = c * (v - v0) + dt * iz - charge
        if g <= 0.0:
            break
        v_next = v - g / (c + dt * iz / slope)
        if v - v_next < 1e-13:
            v = v_next
            break
        v = v_next
    return max(v, 0.0)


def conduction_loss(alpha):
    """P/P_full of a resistive load fired at angle ``alpha`` [rad] of each half-cycle
    (leading-edge phase control; Mohan et al. 2003)."""
    return 1.0 - alpha / math.pi + math.sin(2.0 * alpha) / (2.0 * math.pi)


# ---------------------------------------------------------------------------------------
# lamp presets (invented-but-typical values; marked)


def lamp_presets(power: float) -> tuple[Lamp, ...]:
    """A filament lamp, an LED lamp without and one with a bleeder, of ``power`` W. LED
    values are from memory of typical non-isolated drivers: 4.7 µF per 10 W of input
    capacitance (at least 1 µF), 22 Ω input resistor, start at 120 V, stop at 50 V,
    efficiency 0.85; the bleeder 470 kΩ."""
    c = max(1e-6, 4.7e-6 * power / 10.0)
    return (
        Lamp("resistive", power),
        Lamp("led", power, input_capacitance=c),
        Lamp("led", power, name=f"LED {power:g} W with bleeder", input_capacitance=c,
             bleeder=470e3),
    )  # fmt: skip


@dataclass(frozen=True)
class TwoWireSupply:
    """A design's two-wire supply: the switch, the lamps it must work with, and the lamp as
    the detector sees it.

    Attributes
    ----------
    switch : TwoWireSwitch
    lamps : tuple of Lamp
        The lamps the designer names (the first is used across the on/off change); the
        lamp table adds the presets of :func:`lamp_presets` at ``table_powers``.
    table_powers : tuple of float
        Rated powers of the lamp table [W].
    view : pirchain.physics.disturbance.LampInView or None
        The lamp's heat and light at the detector (None: out of view).
    on_time : float
        How long the change study keeps the lamp on [s].
    """

    switch: TwoWireSwitch = TwoWireSwitch()
    lamps: tuple = (Lamp("led", 9.0),)
    table_powers: tuple = (5.0, 10.0, 25.0, 60.0, 100.0)
    view: object = None
    on_time: float = 3.0

    def __post_init__(self):
        object.__setattr__(self, "lamps", tuple(self.lamps))
        object.__setattr__(self, "table_powers", tuple(float(p) for p in self.table_powers))
        if not 1 <= len(self.lamps) <= 20:
            raise DesignError("two_wire.lamps", len(self.lamps), "between 1 and 20 lamps")
        if not 0 <= len(self.table_powers) <= 20:
            raise DesignError("two_wire.table_powers", len(self.table_powers), "at most 20")
        for k, p in enumerate(self.table_powers):
            check_range(f"two_wire.table_powers[{k}]", p, 0.1, 5000.0, "W")
        check_range("two_wire.on_time", self.on_time, 0.1, 60.0, "s")
