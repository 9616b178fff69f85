"""Preferred-number series of IEC 60063 for resistors and capacitors.

E6, E12 and E24 are the standard's tables (their values are rounded by convention and do not
all follow the formula: 2.7, 3.3, 3.9, 4.7, 8.2 …); E48, E96 and E192 follow its rule
round(10^(i/n), 2), with the one exception the standard lists (9.20 for 9.19 in E192).

References
----------
.. [1] IEC 60063:2015, *Preferred number series for resistors and capacitors*.
"""

from __future__ import annotations

import math

import numpy as np

from ..errors import DesignError, check_choice, check_positive

_TABLES = {
    "E6": (1.0, 1.5, 2.2, 3.3, 4.7, 6.8),
    "E12": (1.0, 1.2, 1.5, 1.8, 2.2, 2.7, 3.3, 3.9, 4.7, 5.6, 6.8, 8.2),
    "E24": (1.0, 1.1, 1.2, 1.3, 1.5, 1.6, 1.8, 2.0, 2.2, 2.4, 2.7, 3.0,
            3.3, 3.6, 3.9, 4.3, 4.7, 5.1, 5.6, 6.2, 6.8, 7.5, 8.2, 9.1),
}  # fmt: skip
SERIES = ("E6", "E12", "E24", "E48", "E96", "E192")


def decade(series: str) -> tuple[float, ...]:
    """The values of one decade, 1 ≤ v < 10."""
    check_choice("series", series, SERIES)
    if series in _TABLES:
        return _TABLES[series]
    n = int(series[1:])
    vals = [round(10 ** (i / n), 2) for i in range(n)]
    if n == 192:
        vals = [9.20 if v == 9.19 else v for v in vals]
    return tuple(vals)


def values_between(series: str, low: float, high: float) -> np.ndarray:
    """Every value of ``series`` in [low, high] (SI units), ascending."""
    check_positive("values.low", low)
    if check_positive("values.high", high) < low:
        raise DesignError("values.high", high, f"at least values.low = {low}")
    if high / low > 1e6:
        raise DesignError("values.high", high, "within six decades of values.low")
    out = []
    for e in range(math.floor(math.log10(low)) - 1, math.ceil(math.log10(high)) + 1):
        for v in decade(series):
            x = float(f"{v * 10.0**e:.6g}")
            if low * (1 - 1e-12) <= x <= high * (1 + 1e-12):
                out.append(x)
    return np.array(sorted(set(out)))


def nearest(series: str, value: float) -> float:
    """The value of ``series`` nearest to ``value`` on a log scale."""
    check_positive("value", value)
    cand = values_between(series, value / 10.0, value * 10.0)
    return float(cand[np.argmin(np.abs(np.log(cand / value)))])
