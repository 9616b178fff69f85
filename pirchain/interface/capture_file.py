"""Measured waveforms from the bench: a time column and one value column, from CSV or
``.npy``, checked line by line, cleaned into a uniform record the model can be compared
with.

What real captures carry and how it is handled: header and metadata lines before the data
(skipped while no line parses as numbers; the last of them names the columns); a delimiter of
comma, semicolon, tab or spaces; a time that does not start at zero (kept: ``Capture.t0``,
and the time shifted to start at 0); a DC level (kept: the comparison fits an offset); a
scope's scaling (``scale`` and ``time_scale`` multiply the columns, e.g. 1e-3 for mV or
ms); a sample rate that is not the model's (``resampled`` interpolates linearly onto the
model's grid). Refused, with the file, the line and the column: text among the numbers, an
empty or non-finite value (NaN, inf: a missing sample is not guessed), a time that does not
increase, fewer than two columns or eight rows, and files beyond the size limits (a ``.npy``
header claiming more than the limit is refused before anything is read).
"""

from __future__ import annotations

import os
import re
import stat
from dataclasses import dataclass

import numpy as np

from ..errors import DesignError

MAX_BYTES = 256 << 20  # 256 MiB of capture: tens of millions of samples
MAX_SAMPLES = 20_000_000
MIN_SAMPLES = 8
NODES = ("gate", "source", "comparator") + tuple(f"stage{k}" for k in range(1, 9))
_DELIMITED = re.compile(r"[,;\t]")


def _refused(path: str, expected: str) -> DesignError:
    """An error naming the whole file (a long path is not shortened like a value)."""
    return DesignError("capture", path, expected, f"capture {path}: expected {expected}")


def _number(text: str) -> bool:
    try:
        float(text)
    except ValueError:
        return False
    return True


def _cells(text: str) -> list[str]:
    """A line's cells: split at commas, semicolons or tabs, else at runs of spaces."""
    if _DELIMITED.search(text):
        return [c.strip() for c in _DELIMITED.split(text)]
    return text.split()


@dataclass(frozen=True)
class Capture:
    """A measured waveform.

    Attributes
    ----------
    time : numpy.ndarray
        [s], from 0, strictly increasing.
    value : numpy.ndarray
        [V] (after ``scale``).
    node : str
        Where it was taken (one of :data:`NODES`).
    t0 : float
        Time of the first sample in the file [s] (after ``time_scale``).
    source : str
        The file.
    columns : tuple of str
        Column names from the header ("" when there was none).
    """

    time: np.ndarray
    value: np.ndarray
    node: str
    t0: float
    source: str
    columns: tuple[str, str] = ("", "")

    @property
    def sample_rate(self) -> float:
        """Mean sample rate [Hz]."""
        return (self.time.size - 1) / float(self.time[-1] - self.time[0])

    def resampled(self, sample_rate: float) -> np.ndarray:
        """The value on a uniform grid from 0 at ``sample_rate`` [Hz] (linear interpolation)."""
        if not 1e-3 <= sample_rate <= 1e6:
            raise DesignError("sample_rate", sample_rate, "between 1 mHz and 1 MHz")
        n = int(np.floor(self.time[-1] * sample_rate)) + 1
        if n > MAX_SAMPLES:
            raise DesignError("sample_rate", sample_rate, f"at most {MAX_SAMPLES} samples")
        return np.interp(np.arange(n) / sample_rate, self.time, self.value)


def _open_regular(path: str) -> int:
    try:
        st = os.stat(path)
    except OSError as err:
        raise _refused(path, f"a readable file ({err.strerror})") from None
    if not stat.S_ISREG(st.st_mode):
        raise _refused(path, "a regular file (not a device, pipe or folder)")
    if st.st_size > MAX_BYTES:
        raise _refused(path, f"a capture of at most {MAX_BYTES >> 20} MiB")
    return st.st_size


def _read_npy(path: str) -> np.ndarray:
    with open(path, "rb") as fh:
        try:
            major, _ = np.lib.format.read_magic(fh)
            read = (np.lib.format.read_array_header_1_0 if major == 1
                    else np.lib.format.read_array_header_2_0)  # fmt: skip
            shape, _order, dtype = read(fh)
        except (ValueError, OSError) as err:
            raise _refused(path, f"a .npy file ({err})") from None
    count = int(np.prod(shape, dtype=np.float64)) if shape else 1
    if count > 2 * MAX_SAMPLES:
        raise _refused(path, f"at most {MAX_SAMPLES} samples (header: {shape})")
    if dtype.kind not in "fiu" or len(shape) != 2 or shape[1] < 2:
        raise _refused(path, "a 2-D numeric array with time and value columns")
    data = np.load(path, allow_pickle=False)
    return np.asarray(data[:, :2], dtype=float)


def _read_csv(path: str) -> tuple[np.ndarray, tuple[str, str], list[int]]:
    rows, lines, header = [], [], ("", "")
    started = False
    with open(path, encoding="utf-8", errors="replace") as fh:
        for n, raw in enumerate(fh, start=1):
            text = raw.strip().lstrip("\ufeff")
            if not text or text.startswith("#"):
                continue
            cells = _cells(text)
            try:
                vals = [float(c) for c in cells[:2]]
                ok = len(cells) >= 2
            except ValueError:
                ok = False
            if not started:
                if not ok:
                    if len(cells) >= 2:
                        header = (cells[0], cells[1])
                    elif _number(cells[0]):  # data with one column: say where
                        raise DesignError(f"{path}:{n}", text[:40], "a time and a value column")
                    continue
                started = True
            if len(cells) < 2:
                raise DesignError(f"{path}:{n}", text[:40], "a time and a value column")
            for col, c in enumerate(cells[:2], start=1):
                try:
                    v = float(c)
                except ValueError:
                    raise DesignError(f"{path}:{n} column {col}", c[:40], "a number") from None
                if not np.isfinite(v):
                    raise DesignError(
                        f"{path}:{n} column {col}", c[:40],
                        "a finite number (a missing sample is not guessed)",
                    ) from None  # fmt: skip
                vals[col - 1] = v
            rows.append(vals)
            lines.append(n)
            if len(rows) > MAX_SAMPLES:
                raise _refused(path, f"at most {MAX_SAMPLES} samples")
    return np.array(rows, dtype=float).reshape(-1, 2), header, lines


def read_capture(
    path, node: str, scale: float = 1.0, time_scale: float = 1.0, nodes=NODES
) -> Capture:
    """Read a capture file (CSV or ``.npy``) taken at ``node``.

    Parameters
    ----------
    path : str
    node : str
        One of ``nodes``.
    scale, time_scale : float
        Multipliers of the value and time columns (1e-3 for mV or ms; a probe's ratio).
    nodes : sequence of str
        The nodes a capture may name (default :data:`NODES`, where the bench measures; a
        signal to inject may name the engine's drive nodes instead).
    """
    path = str(path)
    if node not in nodes:
        raise DesignError("capture.node", node, "one of " + ", ".join(nodes))
    for name, k in (("capture.scale", scale), ("capture.time_scale", time_scale)):
        if not (isinstance(k, (int, float)) and np.isfinite(k) and k != 0 and abs(k) < 1e12):
            raise DesignError(name, k, "a finite, non-zero multiplier")
    _open_regular(path)
    if path.endswith(".npy"):
        data, header = _read_npy(path), ("", "")
        lines = list(range(1, data.shape[0] + 1))
        bad = np.argwhere(~np.isfinite(data))
        if bad.size:
            r, c = bad[0]
            raise DesignError(f"{path}: row {r + 1} column {c + 1}", data[r, c],
                              "a finite number (a missing sample is not guessed)")  # fmt: skip
    else:
        data, header, lines = _read_csv(path)
    if data.shape[0] < MIN_SAMPLES:
        raise DesignError(path, f"{data.shape[0]} rows",
                          f"at least {MIN_SAMPLES} rows of time and value")  # fmt: skip
    t = data[:, 0] * time_scale
    step = np.diff(t)
    if not np.all(step > 0):
        k = int(np.flatnonzero(~(step > 0))[0]) + 1
        raise DesignError(f"{path}:{lines[k]} column 1", float(data[k, 0]),
                          "a time later than the row before (time must increase)")  # fmt: skip
    return Capture(t - t[0], data[:, 1] * scale, node, float(t[0]), path, header)
