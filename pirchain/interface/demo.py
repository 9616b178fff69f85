"""The built-in demo design (an invented product in an invented room).

The design lives as a design file in :mod:`pirchain.interface.demo_text` so that the demo is exactly
what ``pirchain demo-design`` writes for a user to start from.
"""

from __future__ import annotations

from functools import lru_cache

from ..chain.detector import Detector
from ..design import Design
from ..physics.scene import Environment
from .demo_text import DEMO_TOML
from .design_file import loads


@lru_cache(maxsize=1)
def demo_design() -> Design:
    """The demo design file, parsed."""
    return loads(DEMO_TOML)


def demo_detector() -> Detector:
    """The demo detector, every stage populated."""
    return demo_design().detector


def demo_environment() -> Environment:
    """The reading room on a winter afternoon: 21 °C air and walls."""
    return demo_design().environment
