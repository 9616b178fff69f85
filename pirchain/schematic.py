"""Schematic of the analog chain with its component values, drawn with schemdraw.

schemdraw (a well-kept general-purpose schematic drawer) does the layout and symbols better
than hand-made matplotlib lines would; the result is embedded in the report as SVG.
"""

from __future__ import annotations

import schemdraw
import schemdraw.elements as elm

from .frontend import InvertingBandPass, NonInvertingBandPass, RCHighPass, RCLowPass
from .units import format_eng


def _to_ground(d, element, label: str, loc: str = "bottom") -> None:
    """A component from the current point down to ground."""
    d += element().down().label(label, loc=loc, fontsize=9)
    d += elm.Ground()


def _feedback_below(d, node, op, st, k, drop):
    """Rf ∥ Cf from the − node, routed below the op-amp to its output."""
    d += elm.Line().at(node).down(drop)
    tap = d.here
    d += (
        elm.Resistor()
        .right()
        .tox(op.out)
        .label(f"R{k}f {format_eng(st.rf, 'Ω')}", loc="bottom", fontsize=9)
    )
    d += elm.Line().up().toy(op.out)
    d += elm.Line().at(tap).down(1.3)
    d += (
        elm.Capacitor()
        .right()
        .tox(op.out)
        .label(f"C{k}f {format_eng(st.cf, 'F')}", loc="bottom", fontsize=9)
    )
    d += elm.Line().up(1.3)
    return tap


def _opamp_stage(d, st, k):
    inv = isinstance(st, InvertingBandPass)
    if inv:
        d += elm.Capacitor().right().label(f"C{k}1 {format_eng(st.c1, 'F')}", fontsize=9)
        d += elm.Resistor().right().label(f"R{k}1 {format_eng(st.r1, 'Ω')}", fontsize=9)
        node = d.here
        d += elm.Line().right(0.6)
        op = d.add(elm.Opamp(leads=True, flip=True).anchor("in1"))
        d += elm.Line().at(op.in2).left(0.6)
        d += elm.Line().up(0.6)
        d += (
            elm.Ground()
            if st.v_ref == 0
            else elm.Vdd().label(f"v_ref {st.v_ref:.3g} V", fontsize=8)
        )
        _feedback_below(d, node, op, st, k, 1.2)
    else:
        d += elm.Line().right(0.6)
        op = d.add(elm.Opamp(leads=True, flip=True).anchor("in2"))
        d += elm.Line().at(op.in1).left(0.6)
        node = d.here
        tap = _feedback_below(d, node, op, st, k, 1.2)
        d += elm.Line().at(tap).left(1.5)
        d += (
            elm.Resistor().down().label(f"R{k}1 {format_eng(st.r1, 'Ω')}", loc="bottom", fontsize=9)
        )
        d += (
            elm.Capacitor()
            .down()
            .label(f"C{k}1 {format_eng(st.c1, 'F')}", loc="bottom", fontsize=9)
        )
        d += elm.Ground()
    d += elm.Dot().at(op.out).label(f"out{k}", loc="top", fontsize=8)
    d.move_from(op.out, 0, 0)


def schematic_svg(detector) -> bytes:
    """SVG bytes of the analog chain."""
    s, fol = detector.sensor, detector.follower
    with schemdraw.Drawing(show=False) as d:
        d.config(unit=2.2, fontsize=9)
        d += elm.Ground()
        d += elm.SourceI().up().label("i_pyro", loc="top", fontsize=9)
        gate = d.here
        d += elm.Line().right(2.0)
        _to_ground(d, elm.Resistor, f"R_G {format_eng(s.gate_resistance, 'Ω')}")
        d += elm.Line().at(gate).right(4.0)
        _to_ground(d, elm.Capacitor, f"C_gate {format_eng(s.gate_capacitance, 'F')}")
        d += elm.Line().at(gate).right(6.0)
        j = d.add(
            elm.JFetN()
            .anchor("gate")
            .label(
                f"I_DSS {format_eng(fol.jfet.idss, 'A')}\n|V_P| {fol.jfet.pinch_off:g} V",
                loc="left",
                fontsize=8,
            )
        )
        d += elm.Line().at(j.drain).up(0.5)
        d += elm.Vdd().label("V_DD", fontsize=8)
        d += elm.Line().at(j.source).right(1.2)
        src = d.here
        _to_ground(d, elm.Resistor, f"R_S {format_eng(fol.source_resistance, 'Ω')}", "top")
        d += elm.Line().at(src).right(2.5)
        for k, st in enumerate(detector.stages, start=1):
            if isinstance(st, (NonInvertingBandPass, InvertingBandPass)):
                _opamp_stage(d, st, k)
            elif isinstance(st, (RCHighPass, RCLowPass)):
                r = (elm.Resistor, format_eng(st.r, "Ω"))
                c = (elm.Capacitor, format_eng(st.c, "F"))
                series, shunt = (c, r) if isinstance(st, RCHighPass) else (r, c)
                d += series[0]().right().label(series[1], fontsize=9)
                n = d.here
                _to_ground(d, shunt[0], shunt[1], "top")
                d += elm.Line().at(n).right(1)
            else:
                d += elm.Line().right(0.5)
                d += elm.Box(w=2.4, h=1.2).anchor("W").label(f"stage {k}\nH(s)", fontsize=9)
        d += elm.Line().right(0.8)
        d += elm.Dot().label("to window comparator", loc="right", fontsize=9)
        return d.get_imagedata("svg")
