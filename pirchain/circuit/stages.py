"""The analog stage types by name, as the design file knows them.

Every stage type is one class implementing :class:`pirchain.circuit.stage.Stage` in its
own module; this registry is the only place that lists them.
"""

from __future__ import annotations

from .opamp_stages import InvertingBandPass, NonInvertingBandPass
from .passive_stages import RCHighPass, RCLowPass
from .stage import Stage, chain_transfer_function
from .transfer_stage import TransferStage

STAGE_TYPES: dict[str, type[Stage]] = {
    "non_inverting_band_pass": NonInvertingBandPass,
    "inverting_band_pass": InvertingBandPass,
    "rc_high_pass": RCHighPass,
    "rc_low_pass": RCLowPass,
    "transfer_function": TransferStage,
}

__all__ = [
    "STAGE_TYPES",
    "InvertingBandPass",
    "NonInvertingBandPass",
    "RCHighPass",
    "RCLowPass",
    "Stage",
    "TransferStage",
    "chain_transfer_function",
]
