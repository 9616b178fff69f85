"""Schematic of the analog chain with its component values, drawn with schemdraw.

schemdraw (a well-kept general-purpose schematic drawer) does the layout and symbols better
than hand-made matplotlib lines would; the result is embedded in the report as SVG. The
sensor, follower and comparator connection are drawn here; each stage draws itself
(:meth:`pirchain.circuit.stage.Stage.draw`) with the helpers of :class:`SchematicPen`.
"""

from __future__ import annotations

from ..units import format_eng


class SchematicPen:
    """A schemdraw drawing with the helpers stages draw with.

    Attributes
    ----------
    drawing : schemdraw.Drawing
    elm : module
        ``schemdraw.elements``.
    """

    def __init__(self, drawing, elements):
        self.drawing = drawing
        self.elm = elements

    @staticmethod
    def value(name: str, x: float, unit: str) -> str:
        """A component label, e.g. "R11 10kΩ"."""
        return f"{name} {format_eng(x, unit)}".strip()

    def to_ground(self, element, label: str, loc: str = "bottom") -> None:
        """A component from the current point down to ground."""
        self.drawing += element().down().label(label, loc=loc, fontsize=11)
        self.drawing += self.elm.Ground()

    def feedback_below(self, node, op, rf: float, cf: float, index: int, drop: float):
        """Rf ∥ Cf from the − node ``node``, routed below the op-amp to its output; returns
        the tap point below the node."""
        d, elm = self.drawing, self.elm
        d += elm.Line().at(node).down(drop)
        tap = d.here
        d += (
            elm.Resistor().right().tox(op.out)
            .label(self.value(f"R{index}f", rf, "Ω"), loc="bottom", fontsize=11)
        )  # fmt: skip
        d += elm.Line().up().toy(op.out)
        d += elm.Line().at(tap).down(1.3)
        d += (
            elm.Capacitor().right().tox(op.out)
            .label(self.value(f"C{index}f", cf, "F"), loc="bottom", fontsize=11)
        )  # fmt: skip
        d += elm.Line().up(1.3)
        return tap

    def output(self, op, index: int) -> None:
        """Mark an op-amp's output as the stage output and continue from it."""
        self.drawing += self.elm.Dot().at(op.out).label(f"out{index}", loc="top", fontsize=10)
        self.drawing.move_from(op.out, 0, 0)


def schematic_svg(detector) -> bytes:
    """SVG bytes of the analog chain."""
    import schemdraw
    import schemdraw.elements as elm

    s, fol = detector.sensor, detector.follower
    # schemdraw's own SVG writer: no timestamp, no random ids (the same design gives the same
    # bytes), text as SVG text that scales with the page
    with schemdraw.Drawing(canvas="svg", show=False) as d:
        d.config(unit=2.6, fontsize=12)
        pen = SchematicPen(d, elm)
        d += elm.Ground()
        d += elm.SourceI().up().label("i_pyro", loc="top", fontsize=11)
        gate = d.here
        d += elm.Line().right(2.6)
        pen.to_ground(elm.Resistor, pen.value("R_G", s.gate_resistance, "Ω"))
        d += elm.Line().at(gate).right(5.6)
        pen.to_ground(elm.Capacitor, pen.value("C_gate", s.gate_capacitance, "F"))
        d += elm.Line().at(gate).right(8.6)
        j = d.add(
            elm.JFetN()
            .anchor("gate")
            .label(
                f"I_DSS {format_eng(fol.jfet.idss, 'A')}\n|V_P| {fol.jfet.pinch_off:g} V",
                loc="right",
                ofst=(0.9, 0.6),
                fontsize=10,
            )
        )
        d += elm.Line().at(j.drain).up(0.5)
        d += elm.Vdd().label("V_DD", fontsize=10)
        d += elm.Line().at(j.source).right(2.4)
        src = d.here
        pen.to_ground(elm.Resistor, pen.value("R_S", fol.source_resistance, "Ω"), "top")
        d += elm.Line().at(src).right(2.5)
        for k, st in enumerate(detector.stages, start=1):
            st.draw(pen, k)
        d += elm.Line().right(0.8)
        d += elm.Dot().label("to the window\ncomparator", loc="bottom", fontsize=11)
        return d.get_imagedata("svg")
