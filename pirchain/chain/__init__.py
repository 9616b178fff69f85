"""The chain: the detector object that wires the stages, and the one engine that runs them.

Owns :class:`pirchain.chain.detector.Detector`, the named tables built from it
(:mod:`pirchain.chain.tables`) and the engine that runs the compiled pass with taps
(:mod:`pirchain.chain.engine`). May import the domain packages (physics, circuit, logic)
and, inside the engine, :mod:`pirchain.kernels`; the analyses and the user's edge build on
it.
"""

from .detector import Detector
from .engine import TAPS, ChainRun, CompiledChain, WalkOutcomes

__all__ = ["TAPS", "ChainRun", "CompiledChain", "Detector", "WalkOutcomes"]
