"""Whether a two-wire switch can power its chain through the lamp, in each state, and for
which lamps.

Off state (at the low mains limit, where the least is harvested): the storage capacitor's
charge per second through the current-limited regulator against the chain's draw, and the
leakage the lamp carries. A filament passes it freely. An LED lamp's input capacitor is
charged by it: cycle-averaged, the capacitor's current Ī(V) at each voltage V (one mains
cycle of the power stage at V held, :mod:`pirchain.chain.power_stage`) against its bleeder;
if the capacitor can charge to the driver's start voltage, the driver starts, empties it to
its stop voltage in a flash and the cycle repeats: the flash interval is ∫ C dV /
(Ī(V) − V/R_b) up and ∫ C dV / (P/V + V/R_b − Ī(V)) down. Otherwise the capacitor settles
where Ī(V*) = V*/R_b and the switch harvests only that: with no bleeder, nothing. The glow
threshold is the regulator current limit at which the flashes begin (bisection), checked at
the high mains limit.

On state (steady cycles at the low mains limit): the charge harvested before each firing
against the draw; at the nominal voltage the firing angle, the lamp's power against full
conduction (for a filament, P/P_full = 1 − α/π + sin 2α/(2π) when nothing flows before
firing), the current's harmonics (FFT of two steady cycles), whether the triac stays on
(the load's current above the holding current) and within the switch's rating.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, replace

import numpy as np

from ..chain.power_stage import initial_state, run_power_stage
from ..circuit.two_wire import Lamp, TwoWireSwitch, lamp_presets

HARMONICS = 40
SETTLE_CYCLES, STEADY_CYCLES = 15, 10
GRID = 48  # capacitor voltages of the cycle-averaged LED model
FAST_STEPS = 500  # steps per cycle of the cycle-averaged runs


@dataclass(frozen=True)
class OffState:
    """The off state with one lamp.

    Attributes
    ----------
    lamp : str
    harvest : float
        Mean current into the storage capacitor the switch can get [A] (at the low mains
        limit, the capacitor held at its zener voltage).
    draw : float
        The chain's and the switch's own draw while off [A].
    leakage : float
        Mean current through the lamp [A].
    glow : str
        "none", "flashes" or "not applicable" (a filament).
    flash_interval : float
        Seconds between flashes (nan without).
    flash_energy : float
        Energy of one flash from the LED input capacitor [J] (nan without).
    settles_at : float
        LED input-capacitor voltage without flashes [V] (nan for a filament).
    glow_threshold : float
        Regulator current limit above which the LED lamp flashes [A] (inf: never; nan: a
        filament).
    """

    lamp: str
    harvest: float
    draw: float
    leakage: float
    glow: str
    flash_interval: float = math.nan
    flash_energy: float = math.nan
    settles_at: float = math.nan
    glow_threshold: float = math.nan

    @property
    def margin(self) -> float:
        """harvest − draw [A] (negative: the switch cannot power itself)."""
        return self.harvest - self.draw


@dataclass(frozen=True)
class OnState:
    """The on state with one lamp.

    Attributes
    ----------
    lamp : str
    harvest, draw : float
        Mean harvested current and draw [A] at the low mains limit.
    alpha : float
        Firing angle [rad] at the nominal voltage.
    power_ratio : float
        Lamp power over full conduction (a filament; 1 for an LED lamp whose driver keeps
        running).
    lamp_power : float
        [W] at the nominal voltage.
    thd : float
        Total harmonic distortion of the lamp current (harmonics 2–40 over the fundamental).
    third : float
        Third harmonic over the fundamental.
    rms_current : float
        [A].
    holds : bool
        The triac fired in every half-cycle and the lamp ran.
    fires : int
        Firings over the steady cycles at the nominal voltage.
    harvest_at_need : float
        The harvest with the storage capacitor at the lowest voltage the chain's rail allows
        [A] (the most the on state can give before the rail falls below its minimum).
    within_rating : bool
        rms current within the switch's ``max_current``.
    cap_min : float
        An LED lamp's lowest input-capacitor voltage [V] (nan for a filament).
    """

    lamp: str
    harvest: float
    draw: float
    alpha: float
    power_ratio: float
    lamp_power: float
    thd: float
    third: float
    rms_current: float
    holds: bool
    within_rating: bool
    cap_min: float = math.nan
    fires: int = 0
    harvest_at_need: float = math.nan

    @property
    def margin(self) -> float:
        """harvest − draw [A]."""
        return self.harvest - self.draw


def _cycle(switch):
    return 1.0 / switch.mains.frequency


def cap_currents(switch, lamp, voltages, vrms, current_limit=None):
    """Cycle-averaged (loop, into the input capacitor) currents [A] of an LED lamp with its
    input capacitor held at each of ``voltages`` [V], the storage capacitor at its zener."""
    sw = switch if current_limit is None else _with_limit(switch, current_limit)
    base = lamp.vector(switch.mains)
    loop, cap = np.zeros(len(voltages)), np.zeros(len(voltages))
    for k, v in enumerate(voltages):
        lv = base.copy()
        lv[4], lv[6], lv[8] = 1e6, 1e9, 0.0  # capacitor too large to move, driver never on
        st = initial_state(sw, lamp, v_cap=v)
        r = run_power_stage(
            sw, lamp, 0.0, _cycle(sw), state=st, keep=10**6, mains_voltage=vrms,
            lamp_vector=lv, steps_per_cycle=FAST_STEPS,
        )  # fmt: skip
        loop[k], cap[k] = r.loop, r.bridge
    return loop, cap


def _with_limit(switch, limit):
    return replace(switch, off_current_limit=float(limit))


def _flashes(switch, lamp, vrms, current_limit=None):
    """(grid, loop, cap) of the cycle-averaged LED model and whether it flashes."""
    v = np.linspace(0.0, math.sqrt(2) * vrms, GRID)
    loop, cap = cap_currents(switch, lamp, v, vrms, current_limit)
    bleed = v / lamp.bleeder if lamp.bleeder else np.zeros_like(v)
    up = v <= lamp.start_voltage
    floor = 1e-6 * (switch.off_current_limit if current_limit is None else current_limit)
    return v, loop, cap, bool(np.all(cap[up] - bleed[up] > floor))  # ppm: numerically none


def glow_threshold(switch, lamp, vrms) -> float:
    """The regulator current limit [A] above which an LED lamp flashes (inf: never below
    100 mA), by bisection on the cycle-averaged model."""
    lo, hi = 1e-7, 0.1
    if not _flashes(switch, lamp, vrms, hi)[3]:
        return math.inf
    if _flashes(switch, lamp, vrms, lo)[3]:
        return 0.0
    for _ in range(24):
        mid = math.sqrt(lo * hi)
        lo, hi = (lo, mid) if _flashes(switch, lamp, vrms, mid)[3] else (mid, hi)
    return hi


def off_state(switch: TwoWireSwitch, lamp: Lamp, chain_draw: float) -> OffState:
    """The off state of ``switch`` with ``lamp`` and a chain drawing ``chain_draw`` [A]."""
    mains = switch.mains
    draw = chain_draw + switch.extra_draw(False)
    if lamp.kind == "resistive":
        n = SETTLE_CYCLES + STEADY_CYCLES
        r = run_power_stage(
            switch, lamp, 0.0, n * _cycle(switch), stat_from=SETTLE_CYCLES * _cycle(switch),
            mains_voltage=mains.low,
        )  # fmt: skip
        return OffState(lamp.label, r.harvest, draw, r.loop, "not applicable")
    v, loop, cap, flashes = _flashes(switch, lamp, mains.low)
    c = lamp.input_capacitance
    bleed = v / lamp.bleeder if lamp.bleeder else np.zeros_like(v)
    net = cap - bleed
    threshold = glow_threshold(switch, lamp, mains.high)
    if not flashes:
        k = int(np.flatnonzero(net <= 1e-6 * switch.off_current_limit)[0])
        v_star = 0.0 if k == 0 else float(np.interp(0.0, -net[k - 1 : k + 1], v[k - 1 : k + 1]))
        harvest = float(np.interp(v_star, v, loop))
        return OffState(lamp.label, harvest, draw, harvest, "none", settles_at=v_star,
                        glow_threshold=threshold)  # fmt: skip
    fine = np.linspace(lamp.stop_voltage, lamp.start_voltage, 400)
    n_up = np.interp(fine, v, net)
    drv = lamp.power / lamp.efficiency
    n_down = drv / fine + np.interp(fine, v, bleed) - np.interp(fine, v, cap)
    t_up = np.trapezoid(c / n_up, fine)
    t_down = np.trapezoid(c / n_down, fine)
    lp = np.interp(fine, v, loop)
    harvest = float((np.trapezoid(c * lp / n_up, fine) + np.trapezoid(c * lp / n_down, fine))
                    / (t_up + t_down))  # fmt: skip
    energy = 0.5 * c * (lamp.start_voltage**2 - lamp.stop_voltage**2)
    return OffState(lamp.label, harvest, draw, harvest, "flashes", float(t_up + t_down), energy,
                    glow_threshold=threshold)  # fmt: skip


def _harmonics(current, steps):
    """(THD, third/fundamental) of a current over whole cycles of ``steps`` samples."""
    n = (current.size // steps) * steps
    if n == 0:
        return math.nan, math.nan
    cycles = n // steps
    spec = np.abs(np.fft.rfft(current[-n:]))
    idx = cycles * np.arange(1, HARMONICS + 1)
    h = spec[idx[idx < spec.size]]
    if h[0] <= 0.0:
        return math.nan, math.nan
    return float(np.sqrt(np.sum(h[1:] ** 2)) / h[0]), float(h[2] / h[0])


def on_state(switch: TwoWireSwitch, lamp: Lamp, chain_draw: float, v_need=None) -> OnState:
    """The on state of ``switch`` with ``lamp`` and a chain drawing ``chain_draw`` [A]; the
    harvest is what a storage capacitor held at its zener voltage (and at ``v_need``, the
    lowest it may fall to, default: the zener voltage) receives at the low mains limit."""
    mains = switch.mains
    cyc = _cycle(switch)
    n = SETTLE_CYCLES + STEADY_CYCLES
    peak = math.sqrt(2) * mains.voltage
    held = replace(switch, storage_capacitance=1e3 * switch.storage_capacitance)

    def run(sw, vrms, keep, v_store=None):
        st = initial_state(sw, lamp, v_store, hot=True, v_cap=0.95 * peak, running=True)
        return run_power_stage(sw, lamp, chain_draw, n * cyc, on=(0.0, math.inf), state=st,
                               stat_from=SETTLE_CYCLES * cyc, keep=keep,
                               mains_voltage=vrms)  # fmt: skip

    low, nom = run(held, mains.low, 10**6), run(switch, mains.voltage, 1)
    need = low if v_need is None else run(held, mains.low, 10**6, v_need)
    steps = int(round(cyc / (nom.time[1] - nom.time[0])))
    thd, third = _harmonics(nom.current, steps)
    expected = 2 * STEADY_CYCLES
    if lamp.kind == "resistive":
        r_hot = mains.voltage**2 / lamp.power
        full = mains.voltage**2 / (r_hot + switch.triac_resistance)
        ratio = nom.light_power / full
        holds = nom.fires >= 0.9 * expected
    else:  # an LED lamp may skip firings while its capacitor is full: it must keep running
        holds = nom.vc_min > lamp.stop_voltage and nom.fires > 0
        ratio = 1.0 if holds else nom.light_power / (lamp.power / lamp.efficiency)
    return OnState(lamp.label, low.harvest, chain_draw + switch.extra_draw(True), nom.alpha,
                   float(ratio), nom.lamp_power, thd, third, nom.lamp_rms, bool(holds),
                   nom.lamp_rms <= switch.max_current,
                   nom.vc_min if lamp.kind == "led" else math.nan, nom.fires,
                   need.harvest)  # fmt: skip


@dataclass(frozen=True)
class LampRow:
    """One lamp's verdict: both states and the reasons it fails (empty: it works)."""

    off: OffState
    on: OnState
    reasons: tuple[str, ...]

    @property
    def works(self) -> bool:
        return not self.reasons


def lamp_row(switch, lamp, chain_draw, v_need=None) -> LampRow:
    """Both states of one lamp and why it fails, if it does (``v_need``: the lowest storage
    voltage the chain's rail allows [V])."""
    off = off_state(switch, lamp, chain_draw)
    on = on_state(switch, lamp, chain_draw, v_need)
    why = []
    if off.margin < 0:
        why.append(f"off: short by {-off.margin * 1e6:.1f} µA")
    if off.glow == "flashes":
        why.append(f"flashes every {off.flash_interval:.3g} s while off")
    if on.harvest_at_need < on.draw:
        why.append(f"on: short by {(on.draw - on.harvest_at_need) * 1e3:.3g} mA even with the "
                   "storage capacitor at the rail's minimum")  # fmt: skip
    if on.fires == 0:
        why.append("on: the triac never fires (the charging path holds the switch below its "
                   "firing voltage: too small a load)")  # fmt: skip
    elif not on.holds:
        why.append("on: the triac does not stay on (below the minimum load)")
    if not on.within_rating:
        why.append(f"on: {on.rms_current:.3g} A rms above the switch's rating")
    return LampRow(off, on, tuple(why))


@dataclass(frozen=True)
class TwoWireStudy:
    """Everything the two-wire supply of a design must answer.

    Attributes
    ----------
    chain_draw : float
        The chain's supply budget [A].
    rows : tuple of LampRow
        The design's lamps, then the lamp table.
    design_lamps : int
        How many of ``rows`` are the design's own lamps.
    change : ChangeStudy
    self_trigger : LampSelfTrigger or None
    storage : (float, float)
        Minimum and recommended storage capacitance [F] (inf: none suffices, because a
        state's steady harvest is below its draw).
    current_limit : (float, float, float)
        Lowest regulator current limit that powers the chain off (with 20 % margin), the
        highest the listed LED lamps tolerate without flashing (inf: none limits it), and
        the recommended value (nan: none works) [A].
    verdicts : tuple of str
        The findings that need action, plainly (empty: none).
    """

    chain_draw: float
    rows: tuple
    design_lamps: int
    change: object
    self_trigger: object
    storage: tuple
    current_limit: tuple
    verdicts: tuple


def current_limits(switch, chain_draw, rows) -> tuple[float, float, float]:
    """(lowest, highest, recommended) regulator current limit [A]: the lowest covers the
    off-state draw with 20 % margin at the conduction fraction a filament load gives at the
    low mains limit; the highest is the smallest glow threshold among the LED lamps that
    have one (a lamp that flashes at any leakage needs a bleeder, whatever the limit)."""
    ref = off_state(switch, Lamp("resistive", 60.0), 0.0)
    fraction = ref.harvest / switch.off_current_limit
    low = 1.2 * (chain_draw + switch.extra_draw(False)) / fraction
    limits = [r.off.glow_threshold for r in rows
              if math.isfinite(r.off.glow_threshold) and r.off.glow_threshold > 0]  # fmt: skip
    high = min(limits) if limits else math.inf
    if not low < high:
        return low, high, math.nan
    rec = _round_up(low)
    return low, high, rec if rec <= high else low


def _round_up(x: float) -> float:
    """``x`` rounded up to two significant digits."""
    step = 10.0 ** (math.floor(math.log10(x)) - 1)
    return math.ceil(x / step - 1e-9) * step


def bypass_for(lamp: Lamp, switch: TwoWireSwitch) -> float:
    """The largest resistor across the lamp's terminals [Ω] that carries the off-state
    leakage with the lamp's terminals at half its driver's start voltage, so its input
    capacitor cannot reach the start voltage (rounded down to two digits)."""
    r = 0.5 * lamp.start_voltage / switch.off_current_limit
    step = 10.0 ** (math.floor(math.log10(r)) - 1)
    return math.floor(r / step) * step


def two_wire_study(design) -> TwoWireStudy:
    """The full study of ``design.two_wire`` (:class:`pirchain.circuit.two_wire.TwoWireSupply`)."""
    from .two_wire_change import change_study, lamp_self_trigger, recommended_storage

    tw = design.two_wire
    sw = tw.switch
    draw = design.operating.supply_budget().total
    lamps = list(tw.lamps) + [lamp for p in tw.table_powers for lamp in lamp_presets(p)]
    from .two_wire_change import rail_minimum

    v_need = rail_minimum(design) + sw.ldo_dropout
    rows = tuple(lamp_row(sw, lamp, draw, v_need) for lamp in lamps)
    change = change_study(design)
    trig = lamp_self_trigger(design)
    first = rows[0]
    steady = first.off.margin >= 0 and first.on.harvest_at_need >= first.on.draw
    storage = recommended_storage(design) if steady else (math.inf, math.inf)
    limits = current_limits(sw, draw, rows)
    why = []
    if first.off.margin < 0:
        why.append(
            f"OFF-STATE SHORTFALL: the chain and the switch draw {first.off.draw * 1e6:.1f} µA "
            f"while off, the supply through {first.off.lamp} gives {first.off.harvest * 1e6:.1f}"
            f" µA at {sw.mains.low:.0f} V: {-first.off.margin * 1e6:.1f} µA short; the "
            "detector cannot power itself off"
        )
    for r, lamp in zip(rows[: len(tw.lamps)], tw.lamps, strict=True):
        for x in r.reasons:
            if r is first and "off: short" in x:
                continue
            if x.startswith("flashes"):
                x += (f": fit a bleeder, or a bypass of at most "
                      f"{bypass_for(lamp, sw) / 1e6:.2g} MΩ across the lamp")  # fmt: skip
            why.append(f"{r.off.lamp}: {x}")
    if change.dips_below:
        why.append(
            f"the rail dips to {change.rail_min:.2f} V across the change, below the chain's "
            f"minimum {change.rail_minimum:.2f} V for {change.below_s * 1e3:.0f} ms"
        )
    if change.supply_turn_ons:
        n = change.supply_turn_ons
        why.append("the rail's movement turns the output on by itself ("
                   + ("once" if n == 1 else f"{n} times") + " across the change)")  # fmt: skip
    if trig is not None and not trig.covered:
        why.append(
            f"the lamp's own heat keeps the comparator outside its window until "
            f"{trig.last_outside_s:.1f} s after switch-off, beyond the {trig.lockout_s:.1f} s "
            "lockout: raise the lockout or move the lamp out of the beams"
        )
    if trig is not None and trig.inhibits_itself:
        why.append("the lamp's own light sets the daylight inhibit")
    if not math.isfinite(limits[2]):
        why.append(
            f"no regulator current limit both powers the chain off ({limits[0] * 1e6:.1f} µA "
            f"needed) and keeps the listed LED lamps dark ({limits[1] * 1e6:.1f} µA at most)"
        )
    return TwoWireStudy(draw, rows, len(tw.lamps), change, trig, storage, limits, tuple(why))
