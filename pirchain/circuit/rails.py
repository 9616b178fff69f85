"""Op-amp stages at their rails: state equations per mode, their discrete tables, and the
rule that switches between the modes.

Model
-----
Each stage is one or more *sections* of at most two capacitor states x whose affine state
equations depend on the op-amp's mode: *linear* (ideal op-amp, virtual short between its
inputs) or *pinned* at the high or low rail (output fixed at the rail, inputs no longer
equal, the feedback network driven by the pinned output). In the pinned mode of a
non-inverting band-pass stage, for instance, the gain-leg capacitor C1 charges through
Rf + R1 instead of R1, so recovery takes (Rf + R1) C1 rather than R1 C1. A section whose
network is not known (a stage given only as a transfer function) has no pinned equations:
its output is clamped at the rails while its states evolve linearly.

The op-amp is pinned when its linear output would pass a rail and returns to linear when
the linear output computed from the capacitor voltages comes back inside (equivalently,
when its differential input changes sign); :func:`mode_after` is that rule. Mode changes
are resolved at sample instants; each mode is integrated with the trapezoidal rule
(:func:`discretise`), which is the bilinear transform of the linear path. The op-amp's
finite gain-bandwidth is left out of the time simulation (valid while GBW ≫ noise gain ×
the highest signal frequency; :func:`gbw_margin` reports it) and kept in the Bode plot and
the noise budget.

The integration itself runs in the chain's compiled pass
(:func:`pirchain.kernels.stages.run_pair`), which calls :func:`mode_after` compiled.

References
----------
.. [1] Ascher, U. M. and Petzold, L. R., *Computer Methods for Ordinary Differential
   Equations and Differential-Algebraic Equations* (1998): trapezoidal rule, switched systems.
.. [2] Oppenheim, A. V. and Schafer, R. W., *Discrete-Time Signal Processing*, 3rd ed. (2010),
   §6.3–6.5: state-space and parallel (modal) realisations.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

#: Rail modes of a section.
LINEAR, HIGH, LOW = 0, 1, 2


def mode_after(mode: int, y_linear: float, v_high: float, v_low: float,
               limited: bool, switches: bool) -> int:  # fmt: skip
    """Rail mode after a step, from the linear output computed from the new states.

    Parameters
    ----------
    mode : int
        Mode during the step (``LINEAR``, ``HIGH`` or ``LOW``).
    y_linear : float
        Output the section would have if its op-amp were linear [V].
    v_high, v_low : float
        Rails [V].
    limited : bool
        The output is limited by an op-amp (False: a passive section, never pinned).
    switches : bool
        The pinned modes have their own state equations (the network is known); otherwise
        the mode is only the output clamp.

    A pinned op-amp whose linear output is back inside leaves its rail; one past the other
    rail is pinned there.
    """
    if not limited:
        return mode
    if not switches:
        return HIGH if y_linear > v_high else (LOW if y_linear < v_low else LINEAR)
    if mode == HIGH and y_linear <= v_high:
        mode = LINEAR
    elif mode == LOW and y_linear >= v_low:
        mode = LINEAR
    if mode == LINEAR and y_linear > v_high:
        mode = HIGH
    elif mode == LINEAR and y_linear < v_low:
        mode = LOW
    return mode


@dataclass(frozen=True)
class StateModel:
    """Affine state equations of a section in one operating mode.

    dx/dt = A x + B u + e ;  y = C x + D u + f (linear mode; pinned modes output the rail).
    """

    A: np.ndarray
    B: np.ndarray
    e: np.ndarray
    C: np.ndarray
    D: float
    f: float


@dataclass(frozen=True)
class Section:
    """A part of a stage with at most two states, in every mode its op-amp can be in.

    Attributes
    ----------
    linear : StateModel
    high, low : StateModel or None
        Equations with the output pinned at the high / low rail; None when the network is
        not known (the output is then clamped while the states stay linear).
    v_high, v_low : float
        Rails [V] (±inf for a section no op-amp limits).
    limited : bool
        An op-amp limits the output.
    x_rest, x_per_volt : numpy.ndarray
        Steady state x = x_rest + x_per_volt · u for a constant input u [V].
    """

    linear: StateModel
    high: StateModel | None
    low: StateModel | None
    v_high: float
    v_low: float
    limited: bool
    x_rest: np.ndarray
    x_per_volt: np.ndarray

    def __post_init__(self):
        if self.linear.A.shape[0] > 2:
            raise ValueError("a section has at most two states")

    @property
    def switches(self) -> bool:
        """Pinned modes have their own state equations."""
        return self.high is not None


@dataclass(frozen=True)
class SectionTables:
    """A section's trapezoidal matrices for one sample period.

    Attributes
    ----------
    P, Q, R : numpy.ndarray
        x[n+1] = P x[n] + Q (u[n] + u[n+1]) + R in the modes linear, high, low (stacked on
        the first axis; a section without pinned equations repeats the linear one).
    C, D, F : numpy.ndarray, float, float
        Output y = C x + D u + F.
    section : Section
        What the tables were made from.
    """

    P: np.ndarray
    Q: np.ndarray
    R: np.ndarray
    C: np.ndarray
    D: float
    F: float
    section: Section


def _trapezoid(m: StateModel, h: float):
    n = m.A.shape[0]
    left = np.eye(n) - 0.5 * h * m.A
    p = np.linalg.solve(left, np.eye(n) + 0.5 * h * m.A)
    q = np.linalg.solve(left, 0.5 * h * m.B)
    r = np.linalg.solve(left, h * m.e)
    return p, q, r


def discretise(section: Section, sample_rate: float) -> SectionTables:
    """Trapezoidal tables of every mode of ``section`` at ``sample_rate`` [Hz]."""
    h = 1.0 / sample_rate
    lin = _trapezoid(section.linear, h)
    modes = (
        (lin, _trapezoid(section.high, h), _trapezoid(section.low, h))
        if section.switches
        else (lin, lin, lin)
    )
    m = section.linear
    return SectionTables(
        np.stack([x[0] for x in modes]),
        np.stack([x[1] for x in modes]),
        np.stack([x[2] for x in modes]),
        np.asarray(m.C, dtype=float),
        float(m.D),
        float(m.f),
        section,
    )


@dataclass(frozen=True)
class ModalForm:
    """The linear mode of a ≤ 2-state section in modal coordinates z = V⁻¹ x (padded to 2).

    Attributes
    ----------
    P, Q, R, C : numpy.ndarray
        V⁻¹ P V, V⁻¹ Q, V⁻¹ R, C V: diagonal P when ``diagonal``.
    basis, basis_inverse : numpy.ndarray
        V and V⁻¹ (the identity when not diagonal).
    diagonal : bool
        Real, distinct, well-conditioned eigenvalues: each state is one multiply-add deep.
    """

    P: np.ndarray
    Q: np.ndarray
    R: np.ndarray
    C: np.ndarray
    basis: np.ndarray
    basis_inverse: np.ndarray
    diagonal: bool


def pad2(a: np.ndarray) -> np.ndarray:
    """A section's vector (n,) or matrix (n, n), n ≤ 2, padded with zeros to 2."""
    a = np.asarray(a, dtype=float)
    out = np.zeros((2,) * a.ndim)
    out[tuple(slice(0, k) for k in a.shape)] = a
    return out


def modal_form(tables: SectionTables) -> ModalForm:
    """Diagonalise the linear-mode recursion when its eigenvalues allow (else V = I)."""
    p0, q0, r0, c = pad2(tables.P[0]), pad2(tables.Q[0]), pad2(tables.R[0]), pad2(tables.C)
    lam, v = np.linalg.eig(p0)
    diag = bool(
        np.all(np.abs(np.imag(lam)) == 0)
        and abs(lam[0] - lam[1]) > 1e-9 * max(abs(lam[0]), abs(lam[1]), 1e-300)
        and np.linalg.cond(v) < 1e8
    )
    if diag:
        lam, v = np.real(lam), np.real(v)
        w = np.linalg.inv(v)
        m = np.diag(lam)
    else:
        v = w = np.eye(2)
        m = p0
    return ModalForm(m, w @ q0, w @ r0, c @ v, v, w, diag)


def gbw_margin(stage, f_max: float) -> float:
    """GBW / (mid-band noise gain × f_max): ≫ 1 means the ideal-op-amp time model holds."""
    if stage.opamp is None:
        return math.inf
    gain = abs(stage.noise_gain()(2j * np.pi * f_max))
    return stage.opamp.gbw / (max(gain, 1.0) * f_max)
