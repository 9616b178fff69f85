"""SPICE netlist of a two-wire switch's power stage (:mod:`pirchain.circuit.two_wire`), and a
runner for ngspice, so the model can be checked against an outside simulator and the user
can check the stage in their own.

The same circuit as the model: a sine mains source; the switch's bridge of four diodes; the
off-state regulator as a behavioural current source I_lim·min(1, max(0, v/V_do)) from the
bridge's positive node into the storage capacitor; in the on state the charging path (a
diode and the series resistor) and the triac, a conductance set by a control that is on
while the voltage across it exceeds the firing voltage or its current the holding current
(smoothed through a 1 µs RC, which breaks the algebraic loop); a zener (breakdown at the
clamp, its knee from I_ZT and the slope) across the storage capacitor; the chain's draw as
a current source. A filament lamp is a resistor at its present resistance; an LED lamp a
bridge, its input resistor and capacitor, the bleeder, and the driver as a hysteretic switch
(on at the start voltage, off at the stop voltage) into a constant-power behavioural load.
Diodes are junctions whose forward drop equals the model's ``diode_drop`` at the current
where it matters (the model's drops are constant): the charging current at the firing
threshold in the on state, the regulator's limit in the off state; with 10 pF of junction
capacitance and 10 mΩ of series resistance (numerical stability of the floating bridge),
at 27 °C; 1 TΩ resistors give the floating nodes a DC path.
"""

from __future__ import annotations

import math
import os
import tempfile

from ..errors import PirchainError
from .netlist import _g, _ngspice, ngspice_available
from .two_wire import Lamp, TwoWireSwitch

VT_27 = 0.025852  # kT/q at 27 °C [V]


def _diode_model(name: str, drop: float, current: float, extra: str = "") -> str:
    i_s = current / math.exp(drop / VT_27)
    return f".model {name} D(IS={_g(i_s)} N=1 RS=0.01 CJO=10p {extra})".replace(" )", ")")


def power_stage_netlist(
    switch: TwoWireSwitch,
    lamp: Lamp,
    chain_draw: float,
    duration: float,
    *,
    on: bool = False,
    mains_voltage: float | None = None,
    v_store: float | None = None,
    v_cap: float = 0.0,
    filament_resistance: float | None = None,
    max_step: float = 5e-6,
    output_file: str | None = None,
    diode_current: float | None = None,
) -> str:
    """The power stage as an ngspice netlist (one state, held for ``duration`` [s]).

    Parameters
    ----------
    chain_draw : float
        Current drawn from the storage capacitor [A] (plus the switch's own draw in the
        state).
    on : bool
        The on state (triac and charging path present) or the off state.
    v_store, v_cap : float
        Initial storage and LED input-capacitor voltages [V] (default: the zener voltage,
        0).
    filament_resistance : float, optional
        A filament lamp's resistance [Ω] (default: its hot value when on, cold when off).
    diode_current : float, optional
        Current at which the junction diodes drop the model's ``diode_drop`` [A] (default:
        where the drop matters, the charging current at the firing threshold in the on
        state, the regulator's limit in the off state).
    """
    m = switch.mains
    vrms = m.voltage if mains_voltage is None else mains_voltage
    draw = chain_draw + switch.extra_draw(on)
    vs0 = switch.zener_voltage if v_store is None else v_store
    if diode_current is None:
        head = switch.fire_voltage - switch.zener_voltage - 3 * switch.diode_drop
        diode_current = head / switch.on_charge_resistance if on else switch.off_current_limit
    lines = [
        "* pirchain: two-wire switch power stage ("
        + ("on" if on else "off") + f" state), {lamp.label}",
        ".options temp=27 tnom=27 reltol=1e-5 abstol=1e-12 vntol=1e-7",
        f"VMAINS live 0 SIN(0 {_g(math.sqrt(2) * vrms)} {_g(m.frequency)} 0 0 0)",
        "* switch bridge: A = live, B = lampa",
        "DB1 live dcp DSW", "DB2 lampa dcp DSW", "DB3 dcn live DSW", "DB4 dcn lampa DSW",
        "RFLOAT dcn 0 1e12", "RFLOAT2 dcp dcn 1e12",
        f"BOFF dcp hoff I = {_g(switch.off_current_limit)} * "
        f"min(1, max(0, v(dcp,vs) / {_g(switch.regulator_dropout)}))",
        "VHOFF hoff vs DC 0",
        f"CS vs dcn {_g(switch.storage_capacitance)} IC={_g(vs0)}",
        "DZ dcn vs DZENER",
        f"IDRAW vs dcn DC {_g(draw)}",
    ]  # fmt: skip
    if on:
        lines += [
            "DON dcp onx DSW",
            f"RON onx hon {_g(switch.on_charge_resistance)}",
            "VHON hon vs DC 0",
            "* triac: on while |v| > the firing voltage or |i| > the holding current",
            f"BCTL ctlr 0 V = ((abs(v(live,lampa)) > {_g(switch.fire_voltage)}) || "
            f"(abs(i(VTS)) > {_g(switch.holding_current)})) ? 1 : 0",
            "RCTL ctlr ctl 1k", "CCTL ctl 0 1n",
            f"BTRIAC live tsw I = v(live,tsw) * (1e-12 + v(ctl) / {_g(switch.triac_resistance)})",
            "VTS tsw lampa DC 0",
        ]  # fmt: skip
    if lamp.kind == "resistive":
        r_hot = m.voltage**2 / lamp.power
        r = filament_resistance or (r_hot if on else r_hot * lamp.cold_ratio)
        lines.append(f"RLAMP lampa 0 {_g(r)}")
    else:
        mid = 0.5 * (lamp.start_voltage + lamp.stop_voltage)
        half = 0.5 * (lamp.start_voltage - lamp.stop_voltage)
        lines += [
            "DL1 lampa ldp DLED", "DL2 0 ldp DLED", "DL3 ldn lampa DLED", "DL4 ldn 0 DLED",
            f"RIN ldp cin {_g(lamp.input_resistance)}",
            f"CIN cin ldn {_g(lamp.input_capacitance)} IC={_g(v_cap)}",
            "* driver: a hysteretic switch sets its run flag (1 V on dctl), a constant power",
            "VONE one 0 DC 1", "SDRV one dctl cin ldn SDRVM", "RDCTL dctl 0 1meg",
            f".model SDRVM SW(VT={_g(mid)} VH={_g(half)} RON=0.01 ROFF=1e12)",
            f"BDRV cin ldn I = v(dctl) * {_g(lamp.power / lamp.efficiency)} / max(v(cin,ldn), 1)",
        ]  # fmt: skip
        if lamp.bleeder:
            lines.append(f"RBLEED cin ldn {_g(lamp.bleeder)}")
        lines.append(_diode_model("DLED", lamp.diode_drop, diode_current))
    if lamp.bypass:
        lines.append(f"RBYPASS lampa 0 {_g(lamp.bypass)}")
    lines += [
        _diode_model("DSW", switch.diode_drop, diode_current),
        _diode_model("DZENER", 0.7, diode_current,
                     f"BV={_g(switch.zener_voltage)} IBV={_g(switch.zener_test_current)} "
                     f"NBV={_g(switch.zener_slope / VT_27)}"),
        f".ic v(vs)={_g(vs0)} v(dcn)=0 v(dcp)=0",
        f".tran {_g(max_step)} {_g(duration)} 0 {_g(max_step)} uic",
    ]  # fmt: skip
    if output_file is not None:
        vecs = {"vstore": "v(vs)-v(dcn)", "ioff": "i(VHOFF)", "vsw": "v(live)-v(lampa)"}
        if on:
            vecs.update({"ion": "i(VHON)", "itriac": "i(VTS)"})
        if lamp.kind == "led":
            vecs["vcap"] = "v(cin)-v(ldn)"
        names = " ".join(vecs)
        lines += [
            ".control", "set wr_singlescale", "set wr_vecnames", "run",
            *(f"let {k} = {e}" for k, e in vecs.items()),
            f"linearize {names}", f"wrdata {output_file} {names}", "quit", ".endc",
        ]  # fmt: skip
    lines.append(".end")
    return "\n".join(lines) + "\n"


def run_power_stage_ngspice(switch, lamp, chain_draw, duration, timeout=600.0, **kw):
    """Run :func:`power_stage_netlist` in ngspice; returns (time [s], {vector: values}) with
    ``v_store``, ``i_off``, ``v_switch`` and, as present, ``i_on``, ``i_triac``, ``v_cap``."""
    if not ngspice_available():
        raise PirchainError("ngspice is not installed (Debian: apt-get install ngspice)")
    names = ["v_store", "i_off", "v_switch"] + (["i_on", "i_triac"] if kw.get("on") else [])
    names += ["v_cap"] if lamp.kind == "led" else []
    with tempfile.TemporaryDirectory() as tmp:
        out = os.path.join(tmp, "power.txt")
        text = power_stage_netlist(switch, lamp, chain_draw, duration, output_file=out, **kw)
        data = _ngspice(text, out, tmp, timeout)
    return data[:, 0], {n: data[:, k + 1] for k, n in enumerate(names)}
