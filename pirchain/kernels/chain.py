"""The chain's single compiled pass: from the scene (or a signal driven in at a node) to
decisions, one walk at a time, walks split over the CPU cores.

For each walk, on buffers the size of one walk, :func:`run_walk` runs the optics
(:func:`pirchain.kernels.optics.walk_power`, straight into the equivalent gate power
Σ c_k P_k, or per element when that node is tapped), the sensor's section and the JFET
follower (:mod:`pirchain.kernels.sensor`), every stage section with its rails
(:mod:`pirchain.kernels.stages`), any voltage added at the comparator input, and the
comparator and rules (:func:`pirchain.kernels.logic.logic_walk`). It copies the signal
into a tap only where the caller asked for that node, so a run that keeps every waveform
and one that keeps only outcomes are the same code.
"""

from __future__ import annotations

import numba
import numpy as np

from .jit import JIT
from .logic import logic_walk
from .optics import walk_power
from .sensor import gate_walk, source_walk
from .stages import run_pair, run_single

#: Nodes a run can start at (where its input signal enters): the scene, Σ c_k P_k (or an
#: element current, with the gate impedance as the sensor's section), the gate, the
#: comparator input, a stage's input (``drive.first_section``).
START_OPTICS, START_EQUIVALENT_POWER, START_GATE, START_COMPARATOR, START_STAGE = 0, 1, 2, 3, 4


@numba.njit(**JIT)
def _record(tap, w, sig):
    if tap.shape[0] > 0:
        row = tap[w]
        for t in range(sig.shape[0]):
            row[t] = sig[t]


@numba.njit(**JIT)
def _stages(sig, st, w, taps, discharged, first):
    n_s = st.n_sections
    if taps.stages.shape[0] > 0:  # every stage output recorded: one section at a time
        for s in range(first, n_s):
            k = st.stage_of[s]
            if st.last_of_stage[s]:
                run_single(sig, st, s, discharged, taps.pinned[k, w])
                row = taps.stages[k, w]
                for t in range(sig.shape[0]):
                    row[t] = sig[t]
            else:
                run_single(sig, st, s, discharged, None)
        return
    s = first
    while s + 1 < n_s:
        run_pair(sig, st, s, discharged)
        s += 2
    if s < n_s:
        run_single(sig, st, s, discharged, None)


@numba.njit(**JIT)
def run_walk(w, walks, parts, optics, sensor, follower, stages, logic, drive, taps, out):
    """Walk ``w`` through the chain from ``drive.start``; fills row ``w`` of ``out`` and of
    every tap that has rows (the tables are those of :mod:`pirchain.chain.tables`).

    Not inlined into the parallel loop: tried, numba's parallel transform of the inlined body
    then lost every pulse of the decision rules (no walk detected)."""
    n_t = out.n_samples
    start = drive.start
    if start == START_OPTICS:
        n_out = optics.n_outputs
        acc = np.zeros((n_out, n_t))
        out.step[w], out.closest[w] = walk_power(
            walks.position[w], walks.heading[w], parts, optics, acc
        )
        if taps.element_power.shape[0] == 0:  # the beams summed straight into Σ c_k P_k
            sig = acc[0]
        else:  # per element: keep them, then Σ c_k P_k
            sig = np.zeros(n_t)
            for k in range(n_out):
                c = optics.coupling[k]
                for t in range(n_t):
                    sig[t] += c * acc[k, t]
                    taps.element_power[w, t, k] = acc[k, t]
    else:
        sig = drive.signal[w].copy()
    if start <= START_EQUIVALENT_POWER:
        _record(taps.equivalent_power, w, sig)
        gate_walk(sig, sensor)
    if start <= START_GATE:
        _record(taps.gate, w, sig)
        source_walk(sig, follower)
        _record(taps.source, w, sig)
        _stages(sig, stages, w, taps, drive.discharged, 0)
    elif start == START_STAGE:
        _stages(sig, stages, w, taps, drive.discharged, drive.first_section)
    if drive.extra.shape[1] > 0:
        ex = drive.extra[w]
        for t in range(n_t):
            sig[t] += ex[t]
    _record(taps.comparator, w, sig)
    peak = 0.0
    rest = out.rest
    for t in range(n_t):
        peak = max(peak, abs(sig[t] - rest))
    n_pul, n_tr, n_on, first = logic_walk(sig, logic, drive.daylight, w, taps)
    out.counts[w, 0], out.counts[w, 1], out.counts[w, 2] = n_pul, n_tr, n_on
    out.first_on[w] = first
    out.peak[w] = peak


@numba.njit(cache=True, parallel=True, error_model="numpy", fastmath={"contract"})
def run_batch(walks, parts, optics, sensor, follower, stages, logic, drive, taps, out):
    """:func:`run_walk` for every walk of the batch, walks split over the CPU cores."""
    for w in numba.prange(out.first_on.shape[0]):
        run_walk(
            np.int64(w), walks, parts, optics, sensor, follower, stages, logic, drive, taps, out
        )
