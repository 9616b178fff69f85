"""Writing results: atomic, never over an existing file unless asked; JSON that is stable."""

from __future__ import annotations

import json
import math
import os
import re
import stat
import sys
import tempfile

import numpy as np

from ..errors import DesignError

_PSEUDO = ("/proc", "/sys", "/dev")  # kernel views, not places for results


def _umask() -> int:
    old = os.umask(0o077)
    os.umask(old)
    return old


def check_output(path, force: bool = False, field: str = "output") -> str:
    """Refuse an output target before any work is done; returns the path to write.

    Accepted: a new name in an existing folder, or (with ``force``) an existing regular file.
    With ``force``, a symbolic link to a regular file is followed: the file it points to is
    replaced and the link stays. Refused: an empty name, a folder, a device, a pipe or any
    other non-regular file (even with ``force``), and an existing file without ``force``.
    """
    if not isinstance(path, (str, os.PathLike)) or not str(path).strip():
        raise DesignError(field, path, "a file name")
    path = os.fspath(path)
    if "\x00" in path:
        raise DesignError(field, path, "a file name without NUL characters")
    try:
        st = os.stat(path)  # follows links: what would be written
    except FileNotFoundError:
        if os.path.islink(path):  # a dangling link: writing would create its target
            raise DesignError(field, path, "a file or a link to an existing file") from None
        folder = os.path.realpath(os.path.dirname(os.path.abspath(path)))
        if not os.path.isdir(folder):
            raise DesignError(field, path, "a path in an existing folder") from None
        if any(folder == p or folder.startswith(p + "/") for p in _PSEUDO):
            raise DesignError(field, path, "a file on a disk (not /proc, /sys, /dev)") from None
        if not os.access(folder, os.W_OK | os.X_OK):
            raise DesignError(field, path, "a folder you may write in") from None
        return path
    except OSError as err:
        raise DesignError(field, path, f"a usable path ({err.strerror})") from None
    if not stat.S_ISREG(st.st_mode):
        raise DesignError(field, path, "a regular file (not a folder, device or pipe)")
    if not force:
        raise DesignError(field, path, "a file that does not exist yet (or pass --force)")
    return os.path.realpath(path)


def write_new(path, data: bytes | str, force: bool = False, field: str = "output") -> str:
    """Write ``data`` to ``path`` atomically; refuse to replace an existing file unless ``force``.

    The data go to a temporary file in the same folder first, so an interrupted run leaves
    no half-written file under the target name. A new file gets the mode the umask allows
    (0666 less the umask); a replaced file keeps its mode. See :func:`check_output` for what
    is refused.
    """
    target = check_output(path, force, field)
    raw = data.encode("utf-8") if isinstance(data, str) else data
    folder = os.path.dirname(os.path.abspath(target))
    replacing = os.path.exists(target)
    mode = stat.S_IMODE(os.stat(target).st_mode) if replacing else 0o666 & ~_umask()
    tmp = None
    try:
        fd, tmp = tempfile.mkstemp(prefix=".pirchain-", dir=folder)
        with os.fdopen(fd, "wb") as fh:
            fh.write(raw)
            fh.flush()
            os.fchmod(fh.fileno(), mode)
            os.fsync(fh.fileno())
        if replacing:
            os.replace(tmp, target)
        else:
            try:
                os.link(tmp, target)  # fails if the name appeared meanwhile
            except FileExistsError:
                raise DesignError(field, path, "a file that does not exist yet") from None
    except OSError as err:
        raise DesignError(field, path, f"a place that can be written ({err.strerror})") from None
    finally:
        if tmp is not None and os.path.lexists(tmp):
            os.unlink(tmp)
    return path


# C0 and C1 controls (but tab and newline), and the bidirectional embedding, override and
# isolate controls (Unicode UAX #9) that would reorder the text after them
_CONTROLS = re.compile("[\x00-\x08\x0b-\x1f\x7f-\x9f\u061c\u200e\u200f\u202a-\u202e\u2066-\u2069]")


def terminal_text(text: str) -> str:
    """``text`` without control characters: user strings cannot move the cursor, recolour the
    terminal or reverse the text after them."""
    return _CONTROLS.sub("", text)


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
    """Deterministic JSON: sorted keys, non-finite numbers as null, control characters escaped."""
    text = json.dumps(_clean(obj), sort_keys=True, indent=2, ensure_ascii=False)
    return _CONTROLS.sub(lambda m: f"\\u{ord(m.group()):04x}", text)  # still valid JSON


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


def span(interval, digits: int = 2) -> str:
    """An interval (low, high) as "low–high", or "—" for None."""
    if interval is None:
        return "—"
    return f"{interval[0]:.{digits}f}–{interval[1]:.{digits}f}"


def columns_csv(columns: dict) -> str:
    """Named columns of equal length as CSV text: a header line, then rows to 9 digits."""
    rows = zip(*columns.values(), strict=True)
    lines = [",".join(columns)] + [",".join(f"{v:.9g}" for v in row) for row in rows]
    return "\n".join(lines) + "\n"
