"""SPICE netlist export of the analog chain, and a runner for ngspice.

The netlist holds the sensor as the equivalent pyroelectric current (a PWL source) into
R_G ∥ C_gate, the JFET follower (square-law NJF model with the same I_DSS and V_P), and
each stage as its own class writes it (:meth:`pirchain.circuit.stage.Stage.netlist_lines`),
with op-amp macromodels from :class:`NetlistWriter`. The reference voltages are ideal
sources, as in the model. The JFET's gate leakage is a DC current into the gate node (it
lifts the gate by I_G R_G, as in the model), and the circuit runs at the detector's
temperature (``.options temp`` and ``tnom`` both at it: the part values are already those
at that temperature).

With ``noise=True`` the netlist carries every electrical noise source of the model for a
``.noise`` analysis: resistors and the JFET's channel and flicker noise (KF, AF) are
ngspice's own; each op-amp's e_n and i_n and the gate leakage's shot noise 2qI_G come from
noise generators (a resistor on an isolated node whose thermal noise 4kTR and, through the
resistor model's KF and AF, flicker noise set the density, copied by a controlled source).
The element dielectric loss and temperature fluctuations have no circuit element here (the
capacitors are lossless), and a datasheet JFET e_n override is not exported (ngspice takes
the channel noise from g_m).

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

from ..errors import PirchainError
from ..physics.constants import K_B


def _g(x: float) -> str:
    return f"{x:.10g}"


class NetlistWriter:
    """What a stage needs to write its netlist lines: reference nodes (one ideal source per
    distinct voltage), op-amp macromodels and number formatting."""

    def __init__(self, temperature: float = 298.15, noise: bool = False):
        self.refs: dict[float, str] = {}
        self.subckts: dict[str, str] = {}
        self.temperature = temperature
        self.noise = noise
        self.models: list[str] = []

    num = staticmethod(_g)

    def noise_generator(self, name: str, white: float, flicker: float) -> list[str]:
        """Lines of a noise voltage between nodes ``{name}`` and ``{name}r`` with density²
        ``white`` + ``flicker``/f [V² Hz⁻¹] and no DC difference.

        A resistor R = white/(4kT) on an isolated node fed with 1 V / R of DC; its resistor
        model's flicker term KF I^2 R²/f = KF (1 V)²/f gives ``flicker`` with KF = flicker.
        """
        r = white / (4 * K_B * self.temperature)
        lines = [f"I{name} 0 {name} DC {_g(1.0 / r)}", f"V{name}R {name}r 0 DC 1"]
        if flicker > 0:
            lines.append(f"R{name} {name} 0 {_g(r)} RM{name}")
            self.models.append(f".model RM{name} R(kf={_g(flicker)} af=2)")
        else:
            lines.append(f"R{name} {name} 0 {_g(r)}")
        return lines

    def reference(self, v: float) -> str:
        """Node of an ideal reference source at ``v`` [V] (ground for 0 V)."""
        if v == 0.0:
            return "0"
        if v not in self.refs:
            self.refs[v] = f"ref{len(self.refs) + 1}"
        return self.refs[v]

    def opamp(self, index: int, amp) -> str:
        """Name of the op-amp macromodel of stage ``index`` (added to the netlist).

        A transconductor into R ∥ C gives the open-loop gain A0 and the gain-bandwidth;
        diodes clamp that node near the rails against wind-up, and a behavioural buffer
        limits the output exactly to the rails.
        """
        name = f"OPAMP{index}"
        gm = 1e-3
        inp, extra = "inp", []
        if amp.offset != 0:  # the input offset in series with the + input
            inp = "inpo"
            extra.append(f"VOS inpo inp DC {_g(amp.offset)}")
        if self.noise and amp.e_n > 0:  # e_n in series with the + input
            extra += self.noise_generator(f"NV{index}", amp.e_n**2, amp.e_n**2 * amp.e_n_corner)
            extra.append(f"EN{index} inpn {inp} NV{index} NV{index}r 1")
            inp = "inpn"
        if self.noise and amp.i_n > 0:  # i_n into the − input, through a 1 µS copy
            g_i = 1e-6
            extra += self.noise_generator(
                f"NI{index}", (amp.i_n / g_i) ** 2, (amp.i_n / g_i) ** 2 * amp.i_n_corner
            )
            extra.append(f"GN{index} inn 0 NI{index} NI{index}r {_g(g_i)}")
        self.subckts[name] = "\n".join(
            [
                f".subckt {name} inp inn out",
                *extra,
                f"G1 0 x {inp} inn {_g(gm)}",
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
        return name

    def reference_lines(self) -> list[str]:
        """The reference sources."""
        return [f"V{n.upper()} {n} 0 DC {_g(v)}" for v, n in self.refs.items()]


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
    noise: tuple[float, float, int] | None = None,
) -> str:
    """SPICE netlist of the analog chain of ``detector``.

    Parameters
    ----------
    detector : Detector
        Needs a sensor, a follower, stages and a supply (or the default 3.3 V).
    current : array_like, optional
        Equivalent pyroelectric current into the gate node at ``sample_rate`` [A]
        (:func:`pirchain.physics.sensor.gate_current`); default: none (power-up or AC use).
    duration : float, optional
        Transient length [s]; default: the current's length.
    power_up : bool
        Start the transient with every capacitor discharged (``uic``) instead of from the
        operating point.
    output_file : str, optional
        If given, a ``.control`` block writes the node voltages (or, with ``noise``, the
        output noise density at the comparator input) to this file.
    noise : (f_start, f_stop, points per decade), optional
        Add the noise generators and a ``.noise`` analysis at the last stage's output
        instead of a transient.
    """
    detector.require_analog()
    s, fol = detector.sensor, detector.follower
    vdd = detector.supply.voltage if detector.supply is not None else 3.3
    writer = NetlistWriter(detector.temperature, noise is not None)
    t_c = detector.temperature - 273.15
    kf = fol.spice_kf(detector.temperature)
    lines = [
        f"* pirchain netlist: {detector.name}",
        "* sensor as the equivalent pyroelectric current into R_G || C_gate",
        f"VDD vdd 0 DC {_g(vdd)}",
        "* pyroelectric currents are sub-pA: tighten the current tolerance and keep the",
        "* junction shunt conductance from biasing the 10 GΩ-class gate node",
        ".options abstol=1e-16 gmin=1e-20 reltol=1e-5",
        f"* parts at {t_c:.4g} °C (values already at that temperature)",
        f".options temp={_g(t_c)} tnom={_g(t_c)}",
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
        f"BETA={_g(fol.jfet.idss / fol.jfet.pinch_off**2)} LAMBDA=0 IS=1e-20"
        + (f" KF={_g(kf)} AF={_g(fol.jfet.af)})" if kf > 0 else ")"),
    ]
    if fol.jfet.gate_leakage > 0:
        lines += [
            "* JFET gate leakage, out of the gate into R_G",
            f"IGLEAK 0 gate DC {_g(fol.jfet.gate_leakage)}",
        ]
    if noise is not None and fol.current_noise() > 0:
        g_s = 1e-9  # the gate current noise (2qI_G or the datasheet i_n), through a 1 nS copy
        lines += writer.noise_generator("NG", fol.current_noise() / g_s**2, 0.0)
        lines.append(f"GSHOT gate 0 NG NGr {_g(g_s)}")
    node = "src"
    for k, st in enumerate(detector.stages, start=1):
        out = f"out{k}"
        lines += st.netlist_lines(k, node, out, writer)
        node = out
    lines += writer.reference_lines()
    lines += list(writer.subckts.values())
    lines += writer.models
    if noise is not None:
        out = f"out{len(detector.stages)}"
        lines += [
            "* noise referred to a dummy input; the output density is what is compared",
            "VNIN nin 0 DC 0 AC 1",
            "RNIN nin 0 1",
            f".noise v({out}) VNIN dec {int(noise[2])} {_g(noise[0])} {_g(noise[1])}",
        ]
        if output_file is not None:
            lines += [
                ".control", "run", "setplot noise1", "set wr_singlescale",
                f"wrdata {output_file} onoise_spectrum", "quit", ".endc",
            ]  # fmt: skip
        output_file = None
        duration = None
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


def _ngspice(text: str, out: str, tmp: str, timeout: float) -> np.ndarray:
    cir = os.path.join(tmp, "chain.cir")
    with open(cir, "w", encoding="utf-8") as fh:
        fh.write(text)
    proc = subprocess.run(
        ["ngspice", "-n", "-b", cir] if ".noise" in text else ["ngspice", "-n", cir],
        capture_output=True,
        text=True,
        timeout=timeout,
        check=False,
        stdin=subprocess.DEVNULL,
    )
    if proc.returncode != 0 or not os.path.exists(out):
        raise PirchainError("ngspice failed: " + (proc.stderr or proc.stdout)[-2000:])
    return np.loadtxt(out, skiprows=1)


def ngspice_noise(detector, f_start=0.01, f_stop=100.0, per_decade=10, timeout=120.0):
    """Output noise density at the comparator input from ngspice's ``.noise`` analysis of
    the exported netlist (with its noise generators).

    Returns
    -------
    frequency : numpy.ndarray
        [Hz].
    density : numpy.ndarray
        [V Hz⁻¹ᐟ²].
    """
    if not ngspice_available():
        raise PirchainError("ngspice is not installed (Debian: apt-get install ngspice)")
    with tempfile.TemporaryDirectory() as tmp:
        out = os.path.join(tmp, "noise.txt")
        text = netlist(detector, output_file=out, noise=(f_start, f_stop, per_decade))
        data = _ngspice(text, out, tmp, timeout)
    return data[:, 0], data[:, 1]


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
        text = netlist(detector, current, sample_rate, duration, power_up, out)
        data = _ngspice(text, out, tmp, timeout)
    names = stage_nodes(detector)
    return data[:, 0], {n: data[:, k + 1] for k, n in enumerate(names)}
