"""SPICE netlist export of the analog chain, and a runner for ngspice.

The netlist holds the sensor as the equivalent pyroelectric current (a PWL source) into
R_G ∥ C_gate, the JFET follower (square-law NJF model with the same I_DSS and V_P), and each
stage with real components. Op-amps are a macromodel: a transconductor into R ∥ C gives the
open-loop gain A0 and the gain-bandwidth product; diodes clamp that node near the rails to
avoid wind-up, and a behavioural output buffer limits the output exactly to the rails. A stage
given as a transfer function becomes its state equations built from behavioural integrators.
The reference voltages are ideal sources, as in the model.

References
----------
.. [1] Nagel, L. W., SPICE2 (1975); the ngspice manual (element syntax, B sources, PWL).
"""

from __future__ import annotations

import math
import os
import shutil
import subprocess
import tempfile

import numpy as np

from .errors import DesignError, PirchainError
from .frontend import (
    InvertingBandPass,
    NonInvertingBandPass,
    RCHighPass,
    RCLowPass,
    TransferStage,
)


def _g(x: float) -> str:
    return f"{x:.10g}"


def _opamp_subckt(name: str, amp) -> str:
    gm = 1e-3
    return "\n".join(
        [
            f".subckt {name} inp inn out",
            f"G1 0 x inp inn {_g(gm)}",
            f"RX x 0 {_g(amp.open_loop_gain / gm)}",
            f"CX x 0 {_g(gm / (2 * math.pi * amp.gbw))}",
            f"VHI hi 0 {_g(amp.v_high)}",
            f"VLO lo 0 {_g(amp.v_low)}",
            "DHI x hi DCLAMP",
            "DLO lo x DCLAMP",
            f"BOUT out 0 V = max(min(V(x), {_g(amp.v_high)}), {_g(amp.v_low)})",
            ".model DCLAMP D(IS=1e-15 N=0.05)",
            ".ends",
        ]
    )


class _Refs:
    """Ideal reference sources, one per distinct voltage."""

    def __init__(self):
        self.nodes: dict[float, str] = {}

    def node(self, v: float) -> str:
        if v == 0.0:
            return "0"
        if v not in self.nodes:
            self.nodes[v] = f"ref{len(self.nodes) + 1}"
        return self.nodes[v]

    def lines(self) -> list[str]:
        return [f"V{n.upper()} {n} 0 DC {_g(v)}" for v, n in self.nodes.items()]


def _stage_lines(k: int, st, inp: str, out: str, refs: _Refs, subckts: dict) -> list[str]:
    p = f"S{k}"
    if isinstance(st, (NonInvertingBandPass, InvertingBandPass)):
        sub = f"OPAMP{k}"
        subckts[sub] = _opamp_subckt(sub, st.opamp)
        ref = refs.node(st.v_ref)
        n, a = f"{p}n", f"{p}a"
        if isinstance(st, NonInvertingBandPass):
            lines = [
                f"R{p}1 {n} {a} {_g(st.r1)}",
                f"C{p}1 {a} {ref} {_g(st.c1)}",
                f"X{p} {inp} {n} {out} {sub}",
            ]
        else:
            lines = [
                f"C{p}1 {inp} {a} {_g(st.c1)}",
                f"R{p}1 {a} {n} {_g(st.r1)}",
                f"X{p} {ref} {n} {out} {sub}",
            ]
        return (
            [f"* stage {k}: {st.name}"]
            + lines
            + [f"R{p}F {out} {n} {_g(st.rf)}", f"C{p}F {out} {n} {_g(st.cf)}"]
        )
    if isinstance(st, RCHighPass):
        return [
            f"* stage {k}: {st.name}",
            f"C{p} {inp} {out} {_g(st.c)}",
            f"R{p} {out} {refs.node(st.v_ref)} {_g(st.r)}",
        ]
    if isinstance(st, RCLowPass):
        return [
            f"* stage {k}: {st.name}",
            f"R{p} {inp} {out} {_g(st.r)}",
            f"C{p} {out} {refs.node(st.v_ref)} {_g(st.c)}",
        ]
    if isinstance(st, TransferStage):
        m = st.state_model()
        lines = [f"* stage {k}: {st.name} (state equations, 1 F integrators)"]
        n = m.A.shape[0]
        du = f"(V({inp})-{_g(st.v_ref)})"
        for i in range(n):
            terms = [f"{_g(m.A[i, j])}*V({p}x{j})" for j in range(n)] + [f"{_g(m.B[i])}*{du}"]
            lines += [
                f"C{p}x{i} {p}x{i} 0 1",
                f"R{p}x{i} {p}x{i} 0 1e15",
                f"B{p}x{i} 0 {p}x{i} I = {' + '.join(terms)}",
            ]
        expr = " + ".join(
            [_g(st.v_ref)] + [f"{_g(m.C[j])}*V({p}x{j})" for j in range(n)] + [f"{_g(m.D)}*{du}"]
        )
        if st.opamp is not None:
            expr = f"max(min({expr}, {_g(st.opamp.v_high)}), {_g(st.opamp.v_low)})"
        return lines + [f"B{p}out {out} 0 V = {expr}"]
    raise DesignError("stage", type(st).__name__, "a stage type that pirchain can export")


def stage_nodes(detector) -> list[str]:
    """SPICE node names: gate, source, then every stage output."""
    return ["gate", "src"] + [f"out{k}" for k in range(1, len(detector.stages) + 1)]


def netlist(
    detector,
    current=None,
    sample_rate: float = 100.0,
    duration: float | None = None,
    power_up: bool = False,
    output_file: str | None = None,
) -> str:
    """SPICE netlist of the analog chain of ``detector``.

    Parameters
    ----------
    detector : Detector
        Needs a sensor, a follower, stages and a supply (or the default 3.3 V).
    current : array_like, optional
        Equivalent pyroelectric current into the gate node at ``sample_rate`` [A]
        (:func:`pirchain.sensor.gate_current`); default: none (power-up or AC use).
    duration : float, optional
        Transient length [s]; default: the current's length.
    power_up : bool
        Start the transient with every capacitor discharged (``uic``) instead of from the
        operating point.
    output_file : str, optional
        If given, a ``.control`` block writes the node voltages to this file.
    """
    detector._need_analog()
    s, fol = detector.sensor, detector.follower
    vdd = detector.supply.voltage if detector.supply is not None else 3.3
    refs, subckts = _Refs(), {}
    lines = [
        f"* pirchain netlist: {detector.name}",
        "* sensor as the equivalent pyroelectric current into R_G || C_gate",
        f"VDD vdd 0 DC {_g(vdd)}",
        "* pyroelectric currents are sub-pA: tighten the current tolerance and keep the",
        "* junction shunt conductance from biasing the 10 GΩ-class gate node",
        ".options abstol=1e-16 gmin=1e-20 reltol=1e-5",
    ]
    if current is not None:
        i = np.asarray(current, dtype=float).ravel()
        t = np.arange(i.size) / sample_rate
        pts = " ".join(f"{_g(a)} {_g(b)}" for a, b in zip(t, i, strict=True))
        lines.append(f"IPYRO 0 gate PWL({pts})")
        duration = duration if duration is not None else (i.size - 1) / sample_rate
    lines += [
        f"RG gate 0 {_g(s.gate_resistance)}",
        f"CG gate 0 {_g(s.gate_capacitance)}",
        "* JFET source follower (square law; gate diode negligible)",
        "J1 vdd gate src JF1",
        f"RS src 0 {_g(fol.source_resistance)}",
        f".model JF1 NJF(VTO={_g(-fol.jfet.pinch_off)} "
        f"BETA={_g(fol.jfet.idss / fol.jfet.pinch_off**2)} LAMBDA=0 IS=1e-20)",
    ]
    node = "src"
    for k, st in enumerate(detector.stages, start=1):
        out = f"out{k}"
        lines += _stage_lines(k, st, node, out, refs, subckts)
        node = out
    lines += refs.lines()
    lines += list(subckts.values())
    if duration is not None:
        step = 1.0 / sample_rate
        lines.append(
            f".tran {_g(step)} {_g(duration)} 0 {_g(step / 4)}" + (" uic" if power_up else "")
        )
    if output_file is not None:
        vecs = " ".join(f"v({n})" for n in stage_nodes(detector))
        lines += [
            ".control",
            "set wr_singlescale",
            "set wr_vecnames",
            "run",
            f"linearize {vecs}",
            f"wrdata {output_file} {vecs}",
            "quit",
            ".endc",
        ]
    lines.append(".end")
    return "\n".join(lines) + "\n"


def ngspice_available() -> bool:
    """True if an ``ngspice`` executable is on the PATH."""
    return shutil.which("ngspice") is not None


def run_ngspice(
    detector,
    current=None,
    sample_rate: float = 100.0,
    duration=None,
    power_up: bool = False,
    timeout: float = 600.0,
):
    """Run the exported netlist in ngspice (batch mode) and read the node voltages back.

    Returns
    -------
    time : numpy.ndarray
        [s], uniform at ``1/sample_rate``.
    voltages : dict of str to numpy.ndarray
        Node name → voltage [V] (``gate``, ``src``, ``out1`` …).
    """
    if not ngspice_available():
        raise PirchainError("ngspice is not installed (Debian: apt-get install ngspice)")
    with tempfile.TemporaryDirectory() as tmp:
        out = os.path.join(tmp, "result.txt")
        cir = os.path.join(tmp, "chain.cir")
        with open(cir, "w", encoding="utf-8") as fh:
            fh.write(netlist(detector, current, sample_rate, duration, power_up, out))
        proc = subprocess.run(
            ["ngspice", "-n", cir],
            capture_output=True,
            text=True,
            timeout=timeout,
            check=False,
            stdin=subprocess.DEVNULL,
        )
        if proc.returncode != 0 or not os.path.exists(out):
            raise PirchainError("ngspice failed: " + (proc.stderr or proc.stdout)[-2000:])
        data = np.loadtxt(out, skiprows=1)
    names = stage_nodes(detector)
    return data[:, 0], {n: data[:, k + 1] for k, n in enumerate(names)}
