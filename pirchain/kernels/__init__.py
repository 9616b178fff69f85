"""Kernels: the chain's single compiled pass (numba), and nothing else.

Owns the machine-code implementations of the model's time-domain rules — element power
from the beam overlaps (static body parts and swinging-arm segments), the sensor's
section, the JFET follower, the rail-pinned stage sections, the window comparator and the
pulse rules — and the per-walk pass that chains them (:mod:`pirchain.kernels.chain`); and
the two-wire switch's power stage stepped in time (:mod:`pirchain.kernels.power_stage`). The
pass reads named tables built by :mod:`pirchain.chain.tables`; scalar rules that Python
code needs too (the square law, the rail-mode rule, the latch, the pose rules) are written
once in their domain module and compiled here with :func:`pirchain.kernels.jit.rule`. May
import :mod:`pirchain.physics`, :mod:`pirchain.circuit` and :mod:`pirchain.logic`; nothing
imports the kernels except :mod:`pirchain.chain`.

Compiled code is cached on disk, keyed by a fingerprint of every source file the pass is
compiled from (numba itself checks only each function's own file, which would let a
changed rule in another module load stale machine code): ``$PIRCHAIN_CACHE_DIR``, else
``$XDG_CACHE_HOME/pirchain``, else ``~/.cache/pirchain``, in a folder named by the
fingerprint, which is also the cache's freshness stamp: the same sources installed in
another place (another environment) load the compiled code instead of compiling again.
Folders of other fingerprints unused for :data:`STALE_DAYS` days are removed when a new one
is made (other versions in other environments keep theirs while they are used). If
the folder cannot be written numba falls back to its own locations (next to the sources)
and compiles in memory as a last resort, with a one-line note.
"""

import hashlib
import os
import sys
from pathlib import Path

import numba
from numba.core import caching as _caching

_ROOT = Path(__file__).resolve().parent.parent
#: Every source the compiled pass is built from (checked by the tests against the imports).
SOURCES = (
    "kernels/__init__.py",
    "kernels/jit.py",
    "kernels/optics.py",
    "kernels/sensor.py",
    "kernels/stages.py",
    "kernels/logic.py",
    "kernels/chain.py",
    "kernels/power_stage.py",
    "circuit/two_wire.py",
    "physics/pose.py",
    "physics/optics.py",
    "circuit/follower.py",
    "circuit/rails.py",
    "circuit/comparator.py",
)


def fingerprint() -> str:
    """Hash of the kernel sources, the Python and the numba version."""
    h = hashlib.sha256(f"{sys.version_info[:2]} {numba.__version__}".encode())
    for rel in SOURCES:
        h.update(rel.encode())
        h.update((_ROOT / rel).read_bytes())
    return h.hexdigest()[:16]


STALE_DAYS = 30  #: a cache folder of another fingerprint unused this long is removed


def prune_stale(base: str, keep: str, now: float | None = None) -> list[str]:
    """Remove ``kernels-*`` folders in ``base`` other than ``keep`` whose newest file is
    older than :data:`STALE_DAYS` days; returns the removed paths. Errors are ignored (a
    folder in use by another process, or not ours to remove, stays)."""
    import shutil
    import time

    now = time.time() if now is None else now
    removed = []
    try:
        names = os.listdir(base)
    except OSError:
        return removed
    for name in names:
        path = os.path.join(base, name)
        if not name.startswith("kernels-") or path == keep or os.path.islink(path):
            continue
        try:
            newest = max(
                [os.path.getmtime(path)]
                + [e.stat().st_mtime for e in os.scandir(path) if e.is_file()]
            )
        except OSError:
            continue
        if now - newest > STALE_DAYS * 86400:
            shutil.rmtree(path, ignore_errors=True)
            removed.append(path)
    return removed


def cache_dir() -> str:
    """Where the compiled kernels are cached."""
    base = os.environ.get("PIRCHAIN_CACHE_DIR")
    if not base:
        xdg = os.environ.get("XDG_CACHE_HOME") or os.path.join(os.path.expanduser("~"), ".cache")
        base = os.path.join(xdg, "pirchain")
    return os.path.join(base, f"kernels-{fingerprint()}")


class _ContentKeyedLocator(_caching._CacheLocator):
    """Numba's cache locator for these kernels: one folder per :func:`fingerprint`, and the
    fingerprint as the sources' freshness stamp. Numba's own locators key a cache by the
    source file's absolute folder, so the same version installed in another place (a new
    virtual environment, a user install beside a system one) would compile everything again;
    the fingerprint already covers every source, the Python and the numba version."""

    def __init__(self, py_func, path):
        self._lineno = py_func.__code__.co_firstlineno
        self._path = path

    def get_cache_path(self):
        return self._path

    def get_source_stamp(self):
        return _FINGERPRINT

    def get_disambiguator(self):
        return str(self._lineno)

    @classmethod
    def from_function(cls, py_func, py_file):
        if os.path.dirname(os.path.abspath(py_file)) != str(_ROOT / "kernels"):
            return None
        self = cls(py_func, _CACHE)
        try:
            if not os.path.isdir(_CACHE):  # a new fingerprint: old ones may be stale
                prune_stale(os.path.dirname(_CACHE), _CACHE)
            self.ensure_cache_path()
        except OSError:
            _note_once()
            return None  # numba's own locators next; in memory when none can write
        return self


def _note_once():
    global _NOTED
    if not _NOTED:
        _NOTED = True
        print(
            f"pirchain: note: no writable cache folder ({_CACHE}); the numerical kernels "
            "are compiled for this run only (set PIRCHAIN_CACHE_DIR)",
            file=sys.stderr,
        )


_FINGERPRINT = fingerprint()
_CACHE = cache_dir()
_NOTED = False
if _ContentKeyedLocator not in _caching.CacheImpl._locator_classes:
    _caching.CacheImpl._locator_classes.insert(0, _ContentKeyedLocator)
from . import chain, logic, optics, power_stage, sensor, stages  # noqa: E402, F401
