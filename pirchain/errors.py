"""Error and warning classes shared by every part of pirchain.

A user mistake (bad design value, bad argument) raises :class:`DesignError`, whose message
names the field, the value given and what was expected. Leaving a model's stated range of
validity emits :class:`ValidityWarning`. Anything else is an internal error.
"""

from __future__ import annotations

import math
import warnings
from collections.abc import Iterable

import numpy as np


class PirchainError(Exception):
    """Base class of every error raised on purpose by pirchain."""


class DesignError(PirchainError, ValueError):
    """A value supplied by the user is invalid.

    Parameters
    ----------
    field : str
        Dotted path of the offending value, e.g. ``"sensor.gate_resistance"``.
    value : object
        The value as given.
    expected : str
        What would have been accepted.
    """

    def __init__(self, field: str, value: object, expected: str, message: str | None = None):
        self.field = field
        self.value = value
        self.expected = expected
        super().__init__(message or f"{field} = {_short(value)}: expected {expected}")


class ValidityWarning(UserWarning):
    """A result was computed outside the stated validity range of a model."""


def warn_validity(message: str) -> None:
    """Emit a :class:`ValidityWarning` pointing at the caller of the public function."""
    warnings.warn(message, ValidityWarning, stacklevel=3)


def _short(value: object) -> str:
    text = repr(value)
    return text if len(text) <= 60 else text[:57] + "..."


def check_real(field: str, value: object) -> float:
    """Return ``value`` as a finite float or raise :class:`DesignError`."""
    if isinstance(value, bool) or not isinstance(value, (int, float, np.integer, np.floating)):
        raise DesignError(field, value, "a real number")
    out = float(value)
    if not math.isfinite(out):
        raise DesignError(field, value, "a finite number")
    return out


def check_positive(field: str, value: object, unit: str = "") -> float:
    """Return ``value`` as a finite float > 0 or raise :class:`DesignError`."""
    out = check_real(field, value)
    if out <= 0.0:
        raise DesignError(field, value, f"a value > 0{' ' + unit if unit else ''}")
    return out


def check_nonnegative(field: str, value: object, unit: str = "") -> float:
    """Return ``value`` as a finite float >= 0 or raise :class:`DesignError`."""
    out = check_real(field, value)
    if out < 0.0:
        raise DesignError(field, value, f"a value >= 0{' ' + unit if unit else ''}")
    return out


def check_range(field: str, value: object, low: float, high: float, unit: str = "") -> float:
    """Return ``value`` as a float in the closed interval [low, high]."""
    out = check_real(field, value)
    if not low <= out <= high:
        suffix = f" {unit}" if unit else ""
        raise DesignError(field, value, f"a value between {low:g} and {high:g}{suffix}")
    return out


def check_choice(field: str, value: object, choices: Iterable[str]) -> str:
    """Return ``value`` if it is one of ``choices``."""
    options = tuple(choices)
    if value not in options:
        raise DesignError(field, value, "one of " + ", ".join(repr(c) for c in options))
    return str(value)


def check_array(field: str, value: object, *, positive: bool = False) -> np.ndarray:
    """Return ``value`` as a float array with no NaN or inf (and > 0 if asked)."""
    try:
        arr = np.asarray(value, dtype=float)
    except (TypeError, ValueError):
        raise DesignError(field, value, "an array of real numbers") from None
    if not np.all(np.isfinite(arr)):
        raise DesignError(field, value, "finite numbers (no NaN or inf)")
    if positive and np.any(arr <= 0.0):
        raise DesignError(field, value, "values > 0")
    return arr
