"""pirchain: an end-to-end model of passive-infrared motion detectors.

From a person's infrared emission through the segmented lens onto a dual-element
pyroelectric sensor, its front end and decision logic, for batches of walks at once.
"""

from .cautions import CAUTIONS
from .chain import Detector, FrontEndResult
from .errors import DesignError, PirchainError, ValidityWarning

__version__ = "0.1.0"

__all__ = [
    "CAUTIONS",
    "Detector",
    "DesignError",
    "FrontEndResult",
    "PirchainError",
    "ValidityWarning",
    "__version__",
]
