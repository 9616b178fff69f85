"""Circuit: the electronics from the sensor's gate to the comparator input, and what
surrounds them.

Owns the JFET source follower, the op-amp, the analog stages (one class per stage type,
each implementing :class:`pirchain.circuit.stage.Stage` once: transfer function, state
equations per rail mode, discrete tables, noise sources, netlist lines, schematic drawing),
the rail modes and their trapezoidal tables, the window comparator, the supply budget,
noise (budget and synthesis), the SPICE netlist and the schematic. May import
:mod:`pirchain.errors`, :mod:`pirchain.units` and :mod:`pirchain.physics`; never the
kernels, the chain, the analyses or the user's edge.
"""
