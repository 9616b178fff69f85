"""Writing results: atomic, never over an existing file unless asked; JSON that is stable."""

from __future__ import annotations

import json
import math
import os
import sys
import tempfile

import numpy as np

from ..errors import DesignError


def write_new(path: str, data: bytes | str, force: bool = False) -> str:
    """Write ``data`` to ``path`` atomically; refuse to replace an existing file unless ``force``.

    The data go to a temporary file in the same folder first, so an interrupted run leaves
    no half-written file under the target name.
    """
    raw = data.encode("utf-8") if isinstance(data, str) else data
    folder = os.path.dirname(os.path.abspath(path))
    if not os.path.isdir(folder):
        raise DesignError("output", path, "a path in an existing folder")
    if os.path.exists(path) and not force:
        raise DesignError("output", path, "a file that does not exist yet (or pass --force)")
    fd, tmp = tempfile.mkstemp(prefix=".pirchain-", dir=folder)
    try:
        with os.fdopen(fd, "wb") as fh:
            fh.write(raw)
            fh.flush()
            os.fsync(fh.fileno())
        if force:
            os.replace(tmp, path)
        else:
            try:
                os.link(tmp, path)  # fails if the name appeared meanwhile
            except FileExistsError:
                raise DesignError("output", path, "a file that does not exist yet") from None
            os.unlink(tmp)
    finally:
        if os.path.exists(tmp):
            os.unlink(tmp)
    return path


def free_name(stem: str, suffix: str) -> str:
    """``stem+suffix``, or ``stem-2+suffix``, ``stem-3+suffix`` … whichever does not exist."""
    name, k = stem + suffix, 2
    while os.path.exists(name):
        name, k = f"{stem}-{k}{suffix}", k + 1
    return name


def _clean(x):
    if isinstance(x, dict):
        return {str(k): _clean(v) for k, v in x.items()}
    if isinstance(x, (list, tuple)):
        return [_clean(v) for v in x]
    if isinstance(x, np.ndarray):
        return [_clean(v) for v in x.tolist()]
    if isinstance(x, (np.floating, float)):
        v = float(x)
        return v if math.isfinite(v) else None
    if isinstance(x, (np.integer,)):
        return int(x)
    if isinstance(x, np.bool_):
        return bool(x)
    return x


def to_json(obj) -> str:
    """Deterministic JSON: sorted keys, non-finite numbers as null."""
    return json.dumps(_clean(obj), sort_keys=True, indent=2, ensure_ascii=False)


class Progress:
    """A one-line progress bar on standard error (shown when it is a terminal, or forced)."""

    def __init__(self, label: str, enabled: bool | None = None):
        self.label = label
        self.enabled = sys.stderr.isatty() if enabled is None else enabled

    def __call__(self, fraction: float) -> None:
        if not self.enabled:
            return
        n = int(30 * fraction)
        sys.stderr.write(f"\r{self.label} [{'#' * n}{'.' * (30 - n)}] {100 * fraction:5.1f}%")
        if fraction >= 1:
            sys.stderr.write("\n")
        sys.stderr.flush()
