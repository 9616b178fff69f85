"""Engineering notation at the user's edge: "47k", "4k7", "2u2", "75G", "10uF", "3.3 V".

Accepted forms: plain numbers; a number with an SI prefix (a f p n u µ m k K M G T); the
IEC 60062 letter-in-place-of-decimal-point code ("4k7" = 4.7 k, "2u2" = 2.2 µ, "4R7" = 4.7,
"R47" = 0.47); each optionally followed by the expected unit ("47kΩ", "47k ohm", "10uF").
A wrong unit, or a string that is none of these, is a :class:`DesignError` naming the field.
"""

from __future__ import annotations

import math
import re

from .errors import DesignError

EXPONENT = {
    "a": -18,
    "f": -15,
    "p": -12,
    "n": -9,
    "u": -6,
    "µ": -6,
    "μ": -6,
    "m": -3,
    "": 0,
    "k": 3,
    "K": 3,
    "M": 6,
    "G": 9,
    "T": 12,
    "R": 0,
}
UNIT_ALIASES = {
    "ohm": ("Ω", "ohm", "ohms", "Ohm", "R"),
    "F": ("F",),
    "V": ("V",),
    "A": ("A",),
    "Hz": ("Hz",),
    "s": ("s",),
    "m": ("m",),
    "W": ("W",),
    "m2": ("m2", "m²"),
    "K": ("K",),
    "V/W": ("V/W",),
    "A/W": ("A/W",),
    "V/rtHz": ("V/rtHz", "V/√Hz"),
    "A/rtHz": ("A/rtHz", "A/√Hz"),
    "lux": ("lux", "lx"),
    "V/K": ("V/K",),
    "1/K": ("1/K", "/K"),
}
_NUM = r"[0-9]+(?:\.[0-9]*)?(?:[eE][-+]?[0-9]+)?|\.[0-9]+(?:[eE][-+]?[0-9]+)?"
_PLAIN = re.compile(rf"^\s*([-+]?(?:{_NUM}))\s*([afpnuµμmkKMGT]?)\s*(.*?)\s*$")
_RKM = re.compile(r"^\s*([0-9]*)([afpnuµμmkKMGTR])([0-9]+)\s*(.*?)\s*$")


def parse_quantity(value, field: str, unit: str | None = None) -> float:
    """Parse a number or an engineering-notation string into a float in SI units.

    Parameters
    ----------
    value : int, float or str
    field : str
        Key path for error messages.
    unit : str, optional
        Expected unit (a key of ``UNIT_ALIASES``); a different unit is an error.
    """
    if isinstance(value, bool):
        raise DesignError(field, value, _expect(unit))
    if isinstance(value, (int, float)):
        out = float(value)
    elif isinstance(value, str):
        out = _parse_text(value, field, unit)
    else:
        raise DesignError(field, value, _expect(unit))
    if not math.isfinite(out):
        raise DesignError(field, value, "a finite number")
    return out


def _expect(unit):
    return "a number" + (f" in {unit} (SI prefixes allowed, e.g. 4k7, 10u)" if unit else "")


def _parse_text(text: str, field: str, unit: str | None) -> float:
    m = _RKM.match(text)
    if m and m.group(1) + m.group(3):
        whole, letter, frac, suffix = m.groups()
        number = float(f"{whole or '0'}.{frac}e{EXPONENT[letter]}")
    else:
        m = _PLAIN.match(text)
        if m is None:
            raise DesignError(field, text, _expect(unit))
        num, prefix, suffix = m.groups()
        # "m" alone with unit m (metres) is the unit, not milli
        if unit == "m" and prefix == "m" and suffix == "":
            prefix, suffix = "", "m"
        mant, _, e = num.lower().partition("e")
        number = float(f"{mant}e{int(e or 0) + EXPONENT[prefix]}")
    if suffix:
        allowed = UNIT_ALIASES.get(unit, (unit,)) if unit else ()
        if suffix not in allowed:
            want = f"unit {unit}" if unit else "no unit"
            raise DesignError(field, text, f"{want} (got '{suffix}')")
    return number


def parse_celsius(value, field: str) -> float:
    """A temperature in °C: a number, or a string ending in °C / C (kelvin is refused)."""
    if isinstance(value, str):
        t = value.strip().replace("°", "")
        if t.endswith("K") and not t.endswith("degK"):
            raise DesignError(field, value, "a temperature in °C (not kelvin)")
        t = t.rstrip("C").rstrip()
        return parse_quantity(t, field)
    return parse_quantity(value, field)


def format_eng(x: float, unit: str = "") -> str:
    """Engineering notation with an SI prefix: 4700 → "4.7k"."""
    if x == 0 or not math.isfinite(x):
        return f"{x:g}{unit}"
    exp = int(math.floor(math.log10(abs(x)) / 3) * 3)
    exp = max(-12, min(12, exp))
    sym = {-12: "p", -9: "n", -6: "µ", -3: "m", 0: "", 3: "k", 6: "M", 9: "G", 12: "T"}[exp]
    return f"{x / 10**exp:.4g}{sym}{unit}"
