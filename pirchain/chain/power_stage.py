"""Runs of a two-wire switch's power stage (:mod:`pirchain.kernels.power_stage`) with their
results as a typed object."""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

from ..circuit.two_wire import Lamp, TwoWireSwitch
from ..errors import DesignError
from ..kernels import power_stage as kps

STEPS_PER_CYCLE = 2000
MAX_STEPS = 50_000_000  # about 8 min of 50 Hz mains: refused above (minutes of compute)
MAX_KEPT = 2_000_000


@dataclass(frozen=True)
class PowerRun:
    """One run of the power stage.

    Attributes
    ----------
    time : numpy.ndarray
        Times of the kept samples [s].
    v_store, v_cap, current, lamp_voltage, triac : numpy.ndarray
        Storage capacitor [V], LED input capacitor [V], loop current [A] and lamp voltage
        [V] (signed with the mains), triac conducting (0/1).
    duration : float
        Accumulation time of the figures below [s].
    harvest, off_path, zener, draw, bridge, loop : float
        Mean currents over it [A]: into the storage capacitor from the switch, of which
        through the off-state regulator; shunted by the zener; drawn by the chain and the
        switch's own loads; into an LED lamp's input capacitor; the loop current (mean of
        its magnitude).
    lamp_power, light_power : float
        Mean power into the lamp, and into its light source (filament or LED driver) [W].
    lamp_rms : float
        rms loop current [A].
    fires, flashes : int
        Triac firings; LED driver starts while the switch was off.
    alpha : float
        Mean firing angle in the half-cycle [rad] (nan: never fired).
    vs_min, vs_max, vc_min, vc_max : float
        Extremes of the storage and LED input capacitors [V].
    dropouts : int
        Steps the storage capacitor was empty.
    state : numpy.ndarray
        Final (V_store, V_cap, filament temperature, driver, triac).
    """

    time: np.ndarray
    v_store: np.ndarray
    v_cap: np.ndarray
    current: np.ndarray
    lamp_voltage: np.ndarray
    triac: np.ndarray
    duration: float
    harvest: float
    off_path: float
    zener: float
    draw: float
    bridge: float
    loop: float
    lamp_power: float
    light_power: float
    lamp_rms: float
    fires: int
    flashes: int
    alpha: float
    vs_min: float
    vs_max: float
    vc_min: float
    vc_max: float
    dropouts: int
    state: np.ndarray

    @property
    def ripple(self) -> float:
        """Peak-to-peak of the storage capacitor over the accumulation time [V]."""
        return self.vs_max - self.vs_min


def initial_state(switch: TwoWireSwitch, lamp: Lamp, v_store=None, v_cap=0.0, hot=False,
                  running=False) -> np.ndarray:  # fmt: skip
    """A start state: storage capacitor at ``v_store`` (default: its zener), LED input
    capacitor at ``v_cap`` [V], filament hot or cold, driver running or not, triac off."""
    vs = switch.zener_voltage if v_store is None else float(v_store)
    return np.array([vs, float(v_cap), 1.0 if hot else 0.0, 1.0 if running else 0.0, 0.0])


def run_power_stage(
    switch: TwoWireSwitch,
    lamp: Lamp,
    chain_draw: float,
    duration: float,
    *,
    on=(math.inf, math.inf),
    state=None,
    stat_from: float = 0.0,
    keep: int | None = None,
    mains_voltage: float | None = None,
    lamp_vector: np.ndarray | None = None,
    steps_per_cycle: int = STEPS_PER_CYCLE,
) -> PowerRun:
    """Step the power stage for ``duration`` [s].

    Parameters
    ----------
    chain_draw : float
        The detector chain's supply current [A] (its supply budget).
    on : (float, float)
        The on command from, until [s] (default: off throughout).
    state : numpy.ndarray, optional
        Start state (:func:`initial_state`; default: charged, cold, LED capacitor empty).
    stat_from : float
        Figures are accumulated from this time on [s].
    keep : int, optional
        Keep every ``keep``-th sample (default: as many as fit in 2e6 samples).
    mains_voltage : float, optional
        rms mains voltage [V] (default: the nominal).
    lamp_vector : numpy.ndarray, optional
        The lamp as its parameter vector (default: ``lamp.vector(mains)``), for runs with a
        lamp parameter held (an input capacitor too large to move, say).
    """
    mains = switch.mains
    dt = 1.0 / (mains.frequency * steps_per_cycle)
    n = int(round(duration / dt))
    if not 1 <= n <= MAX_STEPS:
        raise DesignError("duration", duration, f"at most {MAX_STEPS * dt:.4g} s of mains")
    keep = max(1, -(-n // MAX_KEPT)) if keep is None else int(keep)
    st = (initial_state(switch, lamp) if state is None else np.array(state, float)).copy()
    rec = np.zeros((5, -(-n // keep)))
    stats = np.zeros(kps.N_STATS)
    vrms = mains.voltage if mains_voltage is None else float(mains_voltage)
    lv = lamp.vector(mains) if lamp_vector is None else lamp_vector
    gate = switch.gate_current
    draws = np.array([chain_draw, switch.extra_draw(False), switch.extra_draw(True), gate,
                      switch.gate_pulse])  # fmt: skip
    k_stat = int(round(stat_from / dt))
    kps.step_power_stage(switch.vector(), lv, np.array([vrms, mains.frequency, 0.0]),
                         np.array([float(on[0]), float(on[1])]), draws, st, dt, n, k_stat,
                         keep, rec, stats)  # fmt: skip
    t_stat = max(stats[kps.T_STAT], dt)

    def mean(k):
        return float(stats[k] / t_stat)

    fires = int(stats[kps.N_FIRE])
    return PowerRun(
        (np.arange(rec.shape[1]) * keep + 1) * dt, rec[0], rec[1], rec[2], rec[3], rec[4],
        float(stats[kps.T_STAT]), mean(kps.Q_HARVEST), mean(kps.Q_OFF_PATH),
        mean(kps.Q_ZENER), mean(kps.Q_DRAW), mean(kps.Q_BRIDGE), mean(kps.Q_LOOP),
        mean(kps.E_LAMP), mean(kps.E_LIGHT), math.sqrt(mean(kps.I2_LAMP)), fires,
        int(stats[kps.N_FLASH]), float(stats[kps.SUM_ALPHA] / fires) if fires else math.nan,
        float(stats[kps.VS_MIN]), float(stats[kps.VS_MAX]), float(stats[kps.VC_MIN]),
        float(stats[kps.VC_MAX]), int(stats[kps.N_DROPOUT]), st,
    )  # fmt: skip
