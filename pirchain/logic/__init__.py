"""Decision logic: the pulse-count and timer rules and the daylight inhibit, as parameter
objects, the tick grid of the logic clock, and the typed results (pulses, decisions).

The rules themselves run in one place, the compiled pass
(:func:`pirchain.kernels.logic.logic_walk`). May import :mod:`pirchain.errors` only.
"""
