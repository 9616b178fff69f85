"""Error and warning classes shared by every part of pirchain.

A user mistake (bad design value, bad argument) raises :class:`DesignError`, whose message
names the field, the value given and what was expected. Leaving a model's stated range of
validity emits :class:`ValidityWarning`. Anything else is an internal error.
"""

from __future__ import annotations

import contextlib
import math
import numbers
import re
import warnings
from collections.abc import Iterable
from typing import TYPE_CHECKING

if TYPE_CHECKING:
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


class RepeatedWarning(ValidityWarning):
    """One :class:`ValidityWarning` standing for ``count`` alike ones of a run."""

    def __init__(self, message: str, count: int):
        super().__init__(message if count == 1 else f"{message} (said {count} times this run)")
        self.base, self.count = message, count


def warn_validity(message: str) -> None:
    """Emit a :class:`ValidityWarning` pointing at the caller of the public function."""
    warnings.warn(message, ValidityWarning, stacklevel=3)


_NUMBER = re.compile(r"[-+]?\d+(?:\.\d*)?(?:e[-+]?\d+)?")


@contextlib.contextmanager
def warnings_once():
    """Say each kind of :class:`ValidityWarning` raised in the block once, with a count.

    Warnings alike but for their numbers ("crossings reach 27.7 Hz", "… 11 Hz") are one kind;
    the one kept is the one with the largest first number (the worst case). Other warning
    categories pass through unchanged. Nested blocks add their counts up.
    """
    with warnings.catch_warnings(record=True) as caught:
        warnings.simplefilter("always")
        yield
    kinds: dict[str, list] = {}
    for w in caught:
        if not issubclass(w.category, ValidityWarning):
            warnings.warn_explicit(w.message, w.category, w.filename, w.lineno)
            continue
        base = getattr(w.message, "base", str(w.message))
        n = getattr(w.message, "count", 1)
        key = _NUMBER.sub("#", base)
        nums = [float(x) for x in _NUMBER.findall(base)[:1]] or [0.0]
        if key not in kinds:
            kinds[key] = [base, nums[0], 0]
        kept = kinds[key]
        if nums[0] > kept[1]:
            kept[0], kept[1] = base, nums[0]
        kept[2] += n
    for base, _worst, n in kinds.values():
        warnings.warn(RepeatedWarning(base, n), stacklevel=3)


def _short(value: object) -> str:
    text = repr(value)
    return text if len(text) <= 60 else text[:57] + "..."


def check_real(field: str, value: object) -> float:
    """Return ``value`` as a finite float or raise :class:`DesignError`."""
    if isinstance(value, bool) or not isinstance(value, numbers.Real):  # numpy scalars too
        raise DesignError(field, value, "a real number")
    out = float(value)
    if not math.isfinite(out):
        raise DesignError(field, value, "a finite number")
    return out


# The magnitudes a part of a detector can have, by unit: far outside them no such part is
# made and the numerics fail (a 1e308 F capacitor gives an infinite time constant and a NaN
# rest level). One table, used by every positive quantity that names its unit.
PLAUSIBLE = {
    "Ω": (1e-3, 1e16),
    "F": (1e-16, 10.0),
    "A": (1e-18, 100.0),
    "V": (1e-9, 1e4),
    "Hz": (1e-9, 1e12),
    "s": (1e-9, 1e8),
    "m": (1e-9, 1e5),
}


def check_positive(field: str, value: object, unit: str = "") -> float:
    """Return ``value`` as a finite float > 0 or raise :class:`DesignError`.

    With a unit of :data:`PLAUSIBLE` (the first word of ``unit``), the value must also lie
    within the magnitudes a real part has.
    """
    out = check_real(field, value)
    if out <= 0.0:
        raise DesignError(field, value, f"a value > 0{' ' + unit if unit else ''}")
    lim = PLAUSIBLE.get(unit.split(" ")[0]) if unit else None
    if lim is not None and not lim[0] <= out <= lim[1]:
        raise DesignError(field, value, f"a value between {lim[0]:g} and {lim[1]:g} {unit}")
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
    import numpy as np  # here, so that ``import pirchain`` (and the command's start) stays light

    try:
        arr = np.asarray(value, dtype=float)
    except (TypeError, ValueError):
        raise DesignError(field, value, "an array of real numbers") from None
    if not np.all(np.isfinite(arr)):
        raise DesignError(field, value, "finite numbers (no NaN or inf)")
    if positive and np.any(arr <= 0.0):
        raise DesignError(field, value, "values > 0")
    return arr
