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
``$XDG_CACHE_HOME/pirchain``, else ``~/.cache/pirchain``. If none can be written numba
falls back to its own locations, and compiles in memory as a last resort.
"""

import hashlib
import os
import sys
from pathlib import Path

import numba

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


def cache_dir() -> str:
    """Where the compiled kernels are cached."""
    base = os.environ.get("PIRCHAIN_CACHE_DIR")
    if not base:
        xdg = os.environ.get("XDG_CACHE_HOME") or os.path.join(os.path.expanduser("~"), ".cache")
        base = os.path.join(xdg, "pirchain")
    return os.path.join(base, f"kernels-{fingerprint()}")


_previous = numba.config.CACHE_DIR
numba.config.CACHE_DIR = cache_dir()
try:
    from . import chain, logic, optics, sensor, stages  # noqa: F401  (decorated under it)
finally:
    numba.config.CACHE_DIR = _previous
