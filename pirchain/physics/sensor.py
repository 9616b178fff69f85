"""Dual- (or quad-) element pyroelectric sensor: thermal stage, pyro current, gate node.

Each element obeys H dθ/dt + G θ = η P(t) (τ_T = H/G) and delivers i = p A dθ/dt. The
elements are wired in opposition; the gate node is R_G ∥ C_gate with τ_E = R_G C_gate:

* ``series`` (pairs in series opposition): each pair is a source (i_A − i_B)/2 into C_el/2;
  pairs (quad sensors) are in parallel.
* ``parallel``: i_A − i_B (− …) into n C_el.
* ``single``: one element, for characterisation.

The JFET input capacitance adds to C_gate. The voltage responsivity of one lit element is

    R_V(ω) = c · η p A ω R_G / (G √(1 + ω²τ_T²) √(1 + ω²τ_E²)),

with c the element's share of the gate current (1/2 series, 1 parallel or single). Element
mismatch m = (R_+ − R_−)/R_mean scales the + elements by 1 + m/2 and the − elements by
1 − m/2, so uniform illumination of a dual gives m × the nominal one-element response; the
datasheet balance |V_A − V_B|/(V_A + V_B) is m/2.

Temperature (:meth:`PyroSensor.at_temperature`, 25 °C reference): a material with a Curie
point T_C follows the mean-field (Landau–Devonshire) law of a ferroelectric below T_C,
P_s ∝ (T_C − T)^½, so p = −dP_s/dT ∝ (T_C − T)^−½ and ε_r ∝ 1/(T_C − T); the current
responsivity scales as p and the element capacitance as ε_r. Within 2 K of T_C the law
diverges and above it the element depoles: both are refused. A material without a Curie
point in range (a polymer) or a datasheet sensor uses linear coefficients. The gate
resistor moves by its own coefficient.

References
----------
.. [1] Putley, E. H., "The pyroelectric detector", Semiconductors and Semimetals 5 (1970).
.. [2] Porter, S. G., "A brief guide to pyroelectric detectors", Ferroelectrics 33, 193 (1981).
.. [3] Whatmore, R. W., "Pyroelectric devices and materials", Rep. Prog. Phys. 49, 1335 (1986).
.. [4] Lines, M. E. and Glass, A. M., *Principles and Applications of Ferroelectrics and
   Related Materials*, Oxford (1977), ch. 3 and 15: mean-field temperature dependence of the
   spontaneous polarisation and permittivity; pyroelectric detectors.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, replace
from typing import TYPE_CHECKING

import numpy as np

from ..errors import DesignError, check_choice, check_positive, check_range
from .constants import EPSILON_0

if TYPE_CHECKING:  # python-control loads on first use (start-up time)
    import control

EPS0 = EPSILON_0
REFERENCE_K = 298.15  # part values are given at 25 °C [K]
CURIE_MARGIN = 2.0  # K below T_C where the mean-field law stops being usable


@dataclass(frozen=True)
class PyroMaterial:
    """Pyroelectric material constants.

    Attributes
    ----------
    name : str
        Label.
    pyro_coefficient : float
        p [C m⁻² K⁻¹].
    permittivity : float
        Relative permittivity ε_r.
    loss_tangent : float
        Dielectric loss tan δ.
    heat_capacity : float
        Volumetric heat capacity c' [J m⁻³ K⁻¹].
    curie_temperature : float or None
        T_C [K] (None: no Curie point below the material's working limit).
    pyro_tempco, permittivity_tempco : float
        Linear relative coefficients of p and ε_r [K⁻¹], used without a Curie point.
    """

    name: str
    pyro_coefficient: float
    permittivity: float
    loss_tangent: float
    heat_capacity: float
    curie_temperature: float | None = None
    pyro_tempco: float = 0.0
    permittivity_tempco: float = 0.0

    @property
    def voltage_figure_of_merit(self) -> float:
        """F_V = p / (c' ε0 ε_r) [m² C⁻¹]."""
        return self.pyro_coefficient / (self.heat_capacity * EPS0 * self.permittivity)

    @property
    def detectivity_figure_of_merit(self) -> float:
        """F_D = p / (c' √(ε0 ε_r tan δ)) [Pa⁻¹/²]."""
        return self.pyro_coefficient / (
            self.heat_capacity * math.sqrt(EPS0 * self.permittivity * self.loss_tangent)
        )


#: Materials table after Whatmore (1986) (figures from memory; docs/validation.md checks
#: them through the figures of merit). Curie points after Lines and Glass (1977), from
#: memory: LiTaO3 ≈ 610 °C, TGS 49 °C, DTGS ≈ 61 °C, a modified lead zirconate ceramic
#: ≈ 230 °C; PVDF has none below its melting point and rises ≈ 0.4 %/K in p (from memory).
MATERIALS = {
    "LiTaO3": PyroMaterial("LiTaO3", 230e-6, 47.0, 0.005, 3.2e6, 883.15),
    "TGS": PyroMaterial("TGS", 550e-6, 55.0, 0.025, 2.6e6, 322.15),
    "DTGS": PyroMaterial("DTGS", 550e-6, 43.0, 0.02, 2.4e6, 334.15),
    "PZ ceramic": PyroMaterial("PZ ceramic", 380e-6, 290.0, 0.003, 2.5e6, 503.15),
    "PVDF": PyroMaterial("PVDF", 27e-6, 12.0, 0.015, 2.43e6, None, 4e-3, 2e-3),
}


@dataclass(frozen=True)
class SensingElement:
    """One sensing element in the focal plane.

    Attributes
    ----------
    x, y : float
        Centre in the sensor plane [m] (x across, y along the long side of a dual).
    width, height : float
        Size along x and y [m].
    polarity : {+1, -1}
        Sign with which the element's charge reaches the gate.
    """

    x: float
    y: float
    width: float
    height: float
    polarity: int = 1

    def __post_init__(self):
        check_positive("sensor.element.width", self.width, "m")
        check_positive("sensor.element.height", self.height, "m")
        if self.polarity not in (1, -1):
            raise DesignError("sensor.element.polarity", self.polarity, "+1 or -1")

    @property
    def area(self) -> float:
        """Element area [m²]."""
        return self.width * self.height


def dual_elements(width=1e-3, height=2e-3, spacing=2e-3):
    """Two opposed elements side by side, centre-to-centre ``spacing`` apart [m]."""
    check_positive("sensor.element_width", width, "m")
    if check_positive("sensor.element_spacing", spacing, "m") < width:
        raise DesignError(
            "sensor.element_spacing", spacing, f"at least the element width {width} m"
        )
    return (
        SensingElement(spacing / 2, 0.0, width, height, +1),
        SensingElement(-spacing / 2, 0.0, width, height, -1),
    )


def quad_elements(width=1e-3, height=1e-3, spacing=2e-3):
    """Four elements on a square grid with checkerboard polarity (two opposed pairs)."""
    s = check_positive("sensor.element_spacing", spacing, "m") / 2
    return tuple(
        SensingElement(x, y, width, height, pol)
        for x, y, pol in ((s, s, 1), (-s, s, -1), (-s, -s, 1), (s, -s, -1))
    )


def single_element(width=2e-3, height=1e-3):
    """One element at the centre (for characterisation)."""
    return (SensingElement(0.0, 0.0, width, height, +1),)


@dataclass(frozen=True)
class PyroSensor:
    """A pyroelectric sensor reduced to the quantities its response depends on.

    Build it with :meth:`from_material` (material + geometry) or :meth:`from_datasheet`
    (responsivity and time constants); both give this one model.

    Attributes
    ----------
    elements : tuple of SensingElement
        Element geometry and polarity.
    current_responsivity : float
        High-frequency current responsivity of one element, η p A / H [A W⁻¹].
    thermal_time_constant : float
        τ_T = H/G [s].
    element_capacitance : float
        Capacitance of one element [F].
    gate_resistance : float
        R_G [Ω].
    input_capacitance : float
        JFET gate capacitance in parallel with the elements [F].
    connection : {"series", "parallel", "single"}
        Element wiring.
    mismatch : float
        (R_+ − R_−)/R_mean of the opposed elements.
    loss_tangent : float
        tan δ of the element dielectric (noise).
    heat_capacity : float or None
        Heat capacity of one element H [J K⁻¹] (temperature-fluctuation noise), if known.
    band : tuple of float
        Optical pass band of the window (λ1, λ2) [m].
    window_transmittance : float
        In-band window transmittance.
    curie_temperature : float or None
        Curie point of the element material [K] (mean-field temperature law); None: the
        linear coefficients below.
    pyro_tempco, permittivity_tempco : float
        Relative change of p and ε_r per kelvin [K⁻¹] (without a Curie point).
    gate_resistance_tempco : float
        Relative change of R_G per kelvin [K⁻¹].
    """

    elements: tuple[SensingElement, ...]
    current_responsivity: float
    thermal_time_constant: float
    element_capacitance: float
    gate_resistance: float
    input_capacitance: float = 3e-12
    connection: str = "series"
    mismatch: float = 0.0
    loss_tangent: float = 0.005
    heat_capacity: float | None = None
    band: tuple[float, float] = (5e-6, 14e-6)
    window_transmittance: float = 0.75
    curie_temperature: float | None = None
    pyro_tempco: float = 0.0
    permittivity_tempco: float = 0.0
    gate_resistance_tempco: float = 0.0

    def __post_init__(self):
        if not self.elements:
            raise DesignError("sensor.elements", self.elements, "at least one element")
        object.__setattr__(self, "elements", tuple(self.elements))
        check_choice("sensor.connection", self.connection, ("series", "parallel", "single"))
        n = len(self.elements)
        if self.connection == "single" and n != 1:
            raise DesignError(
                "sensor.connection", self.connection, "'single' with exactly one element"
            )
        if self.connection == "series" and n % 2:
            raise DesignError("sensor.elements", n, "an even number of elements for series pairs")
        check_positive("sensor.current_responsivity", self.current_responsivity, "A/W")
        check_positive("sensor.thermal_time_constant", self.thermal_time_constant, "s")
        check_positive("sensor.element_capacitance", self.element_capacitance, "F")
        check_positive("sensor.gate_resistance", self.gate_resistance, "Ω")
        check_range("sensor.input_capacitance", self.input_capacitance, 0.0, 1e-9, "F")
        check_range("sensor.mismatch", self.mismatch, -1.0, 1.0)
        check_range("sensor.loss_tangent", self.loss_tangent, 0.0, 1.0)
        check_range("sensor.window_transmittance", self.window_transmittance, 0.0, 1.0)
        if self.heat_capacity is not None:
            check_positive("sensor.heat_capacity", self.heat_capacity, "J/K")
        if self.curie_temperature is not None:
            check_range("sensor.curie_temperature", self.curie_temperature, 200.0, 2000.0, "K")
        for key in ("pyro_tempco", "permittivity_tempco", "gate_resistance_tempco"):
            check_range(f"sensor.{key}", getattr(self, key), -0.02, 0.02, "1/K")

    def temperature_factors(self, temperature: float) -> tuple[float, float]:
        """(p(T)/p(25 °C), ε_r(T)/ε_r(25 °C)) of the element material at ``temperature`` [K]."""
        delta = temperature - REFERENCE_K
        tc = self.curie_temperature
        if tc is None:
            p, e = 1.0 + self.pyro_tempco * delta, 1.0 + self.permittivity_tempco * delta
            if p <= 0 or e <= 0:
                raise DesignError(
                    "detector temperature", f"{temperature - 273.15:.4g} °C",
                    "a temperature where the sensor's linear coefficients keep p and ε_r "
                    "positive",
                )  # fmt: skip
            return p, e
        if temperature > tc - CURIE_MARGIN:
            raise DesignError(
                "detector temperature", f"{temperature - 273.15:.4g} °C",
                f"more than {CURIE_MARGIN:g} K below the element material's Curie point "
                f"{tc - 273.15:.4g} °C (near it the response diverges; above it the element "
                "depoles)",
            )  # fmt: skip
        ratio = (tc - REFERENCE_K) / (tc - temperature)
        return math.sqrt(ratio), ratio

    def at_temperature(self, temperature: float) -> PyroSensor:
        """The sensor at ``temperature`` [K]: responsivity with p, element capacitance with
        ε_r, gate resistor with its coefficient."""
        p, e = self.temperature_factors(temperature)
        k_rg = 1.0 + self.gate_resistance_tempco * (temperature - REFERENCE_K)
        return replace(
            self,
            current_responsivity=self.current_responsivity * p,
            element_capacitance=self.element_capacitance * e,
            gate_resistance=self.gate_resistance * k_rg,
        )

    # -- construction routes ------------------------------------------------------------
    @classmethod
    def from_material(
        cls,
        material="LiTaO3",
        elements=None,
        thickness=25e-6,
        absorptance=0.8,
        thermal_time_constant=None,
        thermal_conductance=None,
        gate_resistance=50e9,
        **kw,
    ):
        """Sensor from material constants and element geometry.

        Parameters
        ----------
        material : str or PyroMaterial
            A key of :data:`MATERIALS` or a material.
        elements : tuple of SensingElement, optional
            Default: :func:`dual_elements`.
        thickness : float
            Element thickness d [m].
        absorptance : float
            η, fraction of incident power absorbed.
        thermal_time_constant, thermal_conductance : float
            Give exactly one: τ_T [s] or G [W K⁻¹].
        gate_resistance : float
            R_G [Ω].
        **kw
            Other :class:`PyroSensor` fields (connection, mismatch, input_capacitance, …).
        """
        mat = (
            MATERIALS[check_choice("sensor.material", material, MATERIALS)]
            if isinstance(material, str)
            else material
        )
        elements = dual_elements() if elements is None else tuple(elements)
        d = check_positive("sensor.thickness", thickness, "m")
        eta = check_range("sensor.absorptance", absorptance, 1e-6, 1.0)
        area = elements[0].area
        heat_cap = mat.heat_capacity * area * d
        if (thermal_time_constant is None) == (thermal_conductance is None):
            raise DesignError(
                "sensor.thermal_time_constant",
                thermal_time_constant,
                "exactly one of thermal_time_constant or thermal_conductance",
            )
        tau_t = (
            heat_cap / check_positive("sensor.thermal_conductance", thermal_conductance, "W/K")
            if thermal_time_constant is None
            else check_positive("sensor.thermal_time_constant", thermal_time_constant, "s")
        )
        return cls(
            elements=elements,
            current_responsivity=eta * mat.pyro_coefficient / (mat.heat_capacity * d),
            thermal_time_constant=tau_t,
            element_capacitance=EPS0 * mat.permittivity * area / d,
            gate_resistance=gate_resistance,
            loss_tangent=mat.loss_tangent,
            heat_capacity=heat_cap,
            **{
                "curie_temperature": mat.curie_temperature,
                "pyro_tempco": mat.pyro_tempco,
                "permittivity_tempco": mat.permittivity_tempco,
                **kw,
            },
        )

    @classmethod
    def from_datasheet(
        cls,
        responsivity,
        thermal_time_constant,
        electrical_time_constant,
        element_capacitance=30e-12,
        reference_frequency=1.0,
        elements=None,
        **kw,
    ):
        """Sensor from datasheet-style figures.

        Parameters
        ----------
        responsivity : float
            |R_V| of one lit element at ``reference_frequency``, as the packaged sensor is
            wired [V W⁻¹].
        thermal_time_constant, electrical_time_constant : float
            τ_T and τ_E [s].
        element_capacitance : float
            Capacitance of one element [F].
        reference_frequency : float
            Frequency of the responsivity figure [Hz] (1 Hz is common practice).
        """
        elements = dual_elements() if elements is None else tuple(elements)
        probe = cls(elements, 1.0, thermal_time_constant, element_capacitance, 1.0, **kw)
        r_g = (
            check_positive("sensor.electrical_time_constant", electrical_time_constant, "s")
            / probe.gate_capacitance
        )
        unit = replace(probe, gate_resistance=r_g)
        rv_unit = abs(
            unit.responsivity(
                check_positive("sensor.reference_frequency", reference_frequency, "Hz")
            )
        )
        return replace(
            unit,
            current_responsivity=check_positive("sensor.responsivity", responsivity, "V/W")
            / rv_unit,
        )

    # -- derived quantities -------------------------------------------------------------
    @property
    def gate_capacitance(self) -> float:
        """Total capacitance at the gate node [F]."""
        n, c = len(self.elements), self.element_capacitance
        c_el = {"series": n * c / 4.0, "parallel": n * c, "single": c}[self.connection]
        return c_el + self.input_capacitance

    @property
    def electrical_time_constant(self) -> float:
        """τ_E = R_G C_gate [s]."""
        return self.gate_resistance * self.gate_capacitance

    @property
    def share(self) -> float:
        """Fraction of one element's current that reaches the gate node."""
        return 0.5 if self.connection == "series" else 1.0

    @property
    def coupling(self) -> np.ndarray:
        """Weight of each element's power in the equivalent gate source P_eq = Σ c_k P_k."""
        pol = np.array([e.polarity for e in self.elements], dtype=float)
        return self.share * pol * (1.0 + pol * self.mismatch / 2.0)

    def responsivity(self, frequency, element: int = 0):
        """Complex voltage responsivity of one lit element [V W⁻¹].

        Parameters
        ----------
        frequency : array_like
            Frequency [Hz].
        element : int
            Which element is lit (its polarity and mismatch apply).
        """
        s = 2j * math.pi * np.asarray(frequency, dtype=float)
        return self.coupling[element] * self._h(s)

    def _h(self, s):
        tt, te = self.thermal_time_constant, self.electrical_time_constant
        return (
            self.current_responsivity
            * tt
            * s
            * self.gate_resistance
            / ((1 + s * tt) * (1 + s * te))
        )

    @property
    def peak_frequency(self) -> float:
        """Frequency of maximum |R_V|, 1/(2π √(τ_T τ_E)) [Hz]."""
        return 1.0 / (
            2 * math.pi * math.sqrt(self.thermal_time_constant * self.electrical_time_constant)
        )

    def transfer_function(self) -> control.TransferFunction:
        """V_gate(s) / P_eq(s) as a python-control transfer function [V W⁻¹]."""
        import control

        tt, te = self.thermal_time_constant, self.electrical_time_constant
        k = self.current_responsivity * tt * self.gate_resistance
        return control.tf([k, 0.0], np.polymul([tt, 1.0], [te, 1.0]))

    def sos(self, sample_rate: float) -> np.ndarray:
        """Discrete second-order sections of V_gate/P_eq (bilinear transform)."""
        from scipy import signal

        fs = check_positive("sample_rate", sample_rate, "Hz")
        tt, te = self.thermal_time_constant, self.electrical_time_constant
        k = self.current_responsivity * self.gate_resistance / te
        z, p, g = signal.bilinear_zpk([0.0], [-1.0 / tt, -1.0 / te], k, fs)
        return signal.zpk2sos(z, p, g)

    def impedance_sos(self, sample_rate: float) -> np.ndarray:
        """Sections of the gate node's impedance V_gate / i = R_G / (1 + s τ_E) [Ω] (R_G ∥
        C_gate driven by the pyroelectric current); :meth:`sos` is :meth:`current_sos`
        times these (the bilinear transform of a product is the product of the transforms)."""
        from scipy import signal

        fs = check_positive("sample_rate", sample_rate, "Hz")
        te = self.electrical_time_constant
        z, p, g = signal.bilinear_zpk([], [-1.0 / te], self.gate_resistance / te, fs)
        return signal.zpk2sos(z, p, g)

    def current_sos(self, sample_rate: float) -> np.ndarray:
        """Sections of the gate-source current i_eq / P_eq = R_I τ_T s / (1 + s τ_T) [A W⁻¹]."""
        from scipy import signal

        fs = check_positive("sample_rate", sample_rate, "Hz")
        tt = self.thermal_time_constant
        z, p, g = signal.bilinear_zpk([0.0], [-1.0 / tt], self.current_responsivity, fs)
        return signal.zpk2sos(z, p, g)


def gate_current(sensor: PyroSensor, p_eq, sample_rate: float, steady_start: bool = True):
    """Equivalent pyroelectric current into the gate node [A], shape of ``p_eq``.

    The source that drives R_G ∥ C_gate, as exported to SPICE (the chain's own pass computes
    the gate voltage directly, :func:`pirchain.kernels.sensor.gate_walk`).

    Parameters
    ----------
    sensor : PyroSensor
    p_eq : array_like, shape (..., samples)
        Equivalent gate power Σ c_k P_k [W] (the ``equivalent_power`` tap of a chain run).
    sample_rate : float
        [Hz].
    steady_start : bool
        Treat the first sample's power as having been there for ever.
    """
    from scipy import signal

    p_eq = np.asarray(p_eq, dtype=float)
    if steady_start:
        p_eq = p_eq - p_eq[..., :1]
    return signal.sosfilt(sensor.current_sos(sample_rate), p_eq, axis=-1)
