"""Walk-test sheets from the bench: a CSV whose header names at least distance, bearing,
speed and detected (optionally kind and target), one walk per row; read into
:class:`pirchain.calibration.walk_results.WalkRow`, every error naming the file, the line
and the column."""

from __future__ import annotations

from ..calibration.walk_results import WalkRow
from ..errors import DesignError
from ..physics.scene import TARGET_PRESETS
from ..settings import WALK_SPEED_RANGE
from ..units import parse_quantity
from .capture_file import _cells, _open_regular

MAX_ROWS = 2000
_YES, _NO = ("yes", "y", "1", "true", "detected", "hit"), ("no", "n", "0", "false", "missed")
COLUMNS = ("distance", "bearing", "speed", "detected")


def read_walk_results(path, default_target: str = "") -> list[WalkRow]:
    """Read a walk-test sheet (CSV with a header naming at least distance, bearing, speed and
    detected; optional kind and target). Errors name the file, line and column."""
    path = str(path)
    _open_regular(path)
    rows, header = [], None
    with open(path, encoding="utf-8", errors="replace") as fh:
        for n, raw in enumerate(fh, start=1):
            text = raw.strip().lstrip("\ufeff")
            if not text or text.startswith("#"):
                continue
            cells = [c.lower() for c in _cells(text)]
            if header is None:
                missing = [c for c in COLUMNS if c not in cells]
                if missing:
                    raise DesignError(
                        f"{path}:{n}",
                        text[:60],
                        "a header naming " + ", ".join(COLUMNS) + " (and optionally kind, target)",
                    )
                header = {c: i for i, c in enumerate(cells)}
                continue
            if len(cells) < len(header):
                raise DesignError(f"{path}:{n}", text[:60], f"{len(header)} columns")
            rows.append(_row(path, n, cells, header, default_target))
            if len(rows) > MAX_ROWS:
                raise DesignError(
                    "walk results",
                    path,
                    f"at most {MAX_ROWS} rows",
                    f"walk results {path}: expected at most {MAX_ROWS} rows",
                )
    if not rows:
        raise DesignError(path, "no rows", "at least one walked row under the header")
    return rows


def _row(path, n, cells, header, default_target) -> WalkRow:
    def cell(name):
        return cells[header[name]]

    def where(name):
        return f"{path}:{n} column {header[name] + 1}"

    vals = {}
    for name, unit, lo, hi in (
        ("distance", "m", 0.1, 100.0),
        ("bearing", None, -180.0, 180.0),
        ("speed", "m/s", *WALK_SPEED_RANGE),
    ):
        v = parse_quantity(cell(name), where(name), unit)
        if not lo <= v <= hi:
            raise DesignError(where(name), cell(name), f"a {name} between {lo:g} and {hi:g}")
        vals[name] = v
    det = cell("detected")
    if det not in _YES + _NO:
        raise DesignError(where("detected"), det, "yes or no (or 1/0, true/false)")
    kind = cell("kind") if "kind" in header else "tangential"
    if kind not in ("tangential", "radial"):
        raise DesignError(where("kind"), kind, "'tangential' or 'radial'")
    target = cell("target") if "target" in header else default_target
    if target and target not in TARGET_PRESETS:
        raise DesignError(where("target"), target, "one of " + ", ".join(TARGET_PRESETS))
    return WalkRow(vals["distance"], vals["bearing"], vals["speed"], det in _YES, kind, target, n)
