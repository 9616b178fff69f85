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
from dataclasses import dataclass

import numpy as np

from ..chain.power_stage import initial_state, run_power_stage
from ..circuit.two_wire import Lamp, TwoWireSwitch

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
    from dataclasses import replace

    return replace(switch, off_current_limit=float(limit))


def _flashes(switch, lamp, vrms, current_limit=None):
    """(grid, loop, cap) of the cycle-averaged LED model and whether it flashes."""
    v = np.linspace(0.0, math.sqrt(2) * vrms, GRID)
    loop, cap = cap_currents(switch, lamp, v, vrms, current_limit)
    bleed = v / lamp.bleeder if lamp.bleeder else np.zeros_like(v)
    up = v <= lamp.start_voltage
    return v, loop, cap, bool(np.all(cap[up] - bleed[up] > 0.0))


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
        k = int(np.flatnonzero(net <= 0.0)[0])
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


def on_state(switch: TwoWireSwitch, lamp: Lamp, chain_draw: float) -> OnState:
    """The on state of ``switch`` with ``lamp`` and a chain drawing ``chain_draw`` [A]."""
    mains = switch.mains
    cyc = _cycle(switch)
    n = SETTLE_CYCLES + STEADY_CYCLES
    peak = math.sqrt(2) * mains.voltage

    def run(vrms, keep):
        st = initial_state(switch, lamp, hot=True, v_cap=0.95 * peak, running=True)
        return run_power_stage(switch, lamp, chain_draw, n * cyc, on=(0.0, math.inf),
                               state=st, stat_from=SETTLE_CYCLES * cyc, keep=keep,
                               mains_voltage=vrms)  # fmt: skip

    low, nom = run(mains.low, 10**6), run(mains.voltage, 1)
    steps = int(round(cyc / (nom.time[1] - nom.time[0])))
    thd, third = _harmonics(nom.current, steps)
    expected = 2 * STEADY_CYCLES
    if lamp.kind == "resistive":
        r_hot = mains.voltage**2 / lamp.power
        full = mains.voltage**2 / (r_hot + switch.triac_resistance)
        ratio = nom.light_power / full
        ran = True
    else:
        ratio = 1.0 if nom.vc_min > lamp.stop_voltage else nom.light_power / (
            lamp.power / lamp.efficiency)  # fmt: skip
        ran = nom.vc_min > lamp.stop_voltage
    holds = nom.fires >= 0.9 * expected and ran
    return OnState(lamp.label, low.harvest, chain_draw + switch.extra_draw(True), nom.alpha,
                   float(ratio), nom.lamp_power, thd, third, nom.lamp_rms, bool(holds),
                   nom.lamp_rms <= switch.max_current,
                   nom.vc_min if lamp.kind == "led" else math.nan)  # fmt: skip


@dataclass(frozen=True)
class LampRow:
    """One lamp's verdict: both states and the reasons it fails (empty: it works)."""

    off: OffState
    on: OnState
    reasons: tuple[str, ...]

    @property
    def works(self) -> bool:
        return not self.reasons


def lamp_row(switch, lamp, chain_draw) -> LampRow:
    """Both states of one lamp and why it fails, if it does."""
    off, on = off_state(switch, lamp, chain_draw), on_state(switch, lamp, chain_draw)
    why = []
    if off.margin < 0:
        why.append(f"off: short by {-off.margin * 1e6:.1f} µA")
    if off.glow == "flashes":
        why.append(f"flashes every {off.flash_interval:.3g} s while off")
    if on.margin < 0:
        why.append(f"on: short by {-on.margin * 1e3:.3g} mA")
    if not on.holds:
        why.append("on: the triac does not stay on (below the minimum load)")
    if not on.within_rating:
        why.append(f"on: {on.rms_current:.3g} A rms above the switch's rating")
    return LampRow(off, on, tuple(why))
