"""Surface temperatures of people and animals from their heat balance.

References
----------
.. [1] Fanger, P. O., *Thermal Comfort* (1970): mean skin temperature of a person in comfort,
   t_sk = 35.7 − 0.0275 (M − W) °C.
.. [2] ISO 7730:2005, annex D: clothing surface temperature t_cl by iteration of the clothing
   heat balance (radiation and convection from the clothing surface equal conduction
   through the clothing).
"""

from __future__ import annotations

import numpy as np

from ..errors import DesignError, check_array

#: One met of metabolic rate [W m⁻²] (ISO 7730).
MET = 58.15
#: One clo of clothing insulation [m² K W⁻¹] (ISO 7730).
CLO = 0.155


def skin_temperature_c(met=1.2, external_work_met=0.0):
    """Fanger's mean skin temperature of a person in thermal comfort [°C].

    Parameters
    ----------
    met : array_like
        Metabolic rate [met], 1 met = 58.15 W m⁻².
    external_work_met : array_like
        External work [met].
    """
    m = check_array("met", met, positive=True) * MET
    w = check_array("external_work_met", external_work_met) * MET
    return 35.7 - 0.0275 * (m - w)


def clothing_surface_temperature_c(
    air_c, radiant_c=None, clo=1.0, met=1.2, air_speed=0.1, external_work_met=0.0
):
    """Clothing surface temperature by the ISO 7730 heat-balance iteration [°C].

    Parameters
    ----------
    air_c : array_like
        Air temperature [°C].
    radiant_c : array_like, optional
        Mean radiant temperature [°C]; defaults to the air temperature.
    clo : array_like
        Clothing insulation [clo], > 0.
    met : array_like
        Metabolic rate [met].
    air_speed : array_like
        Relative air speed [m s⁻¹], ≥ 0.
    external_work_met : array_like
        External work [met].

    Returns
    -------
    numpy.ndarray
        t_cl [°C], broadcast over the inputs.

    Notes
    -----
    Follows the fixed-point iteration printed in ISO 7730 annex D, with the same
    convergence criterion (1.5e-4 on t_cl/100 K), run on whole arrays at once.
    """
    ta = check_array("air_c", air_c)
    tr = ta if radiant_c is None else check_array("radiant_c", radiant_c)
    icl = check_array("clo", clo, positive=True) * CLO
    mw = (
        check_array("met", met, positive=True) - check_array("external_work_met", external_work_met)
    ) * MET
    vel = check_array("air_speed", air_speed)
    if np.any(vel < 0):
        raise DesignError("air_speed", air_speed, "a speed >= 0 m/s")
    ta, tr, icl, mw, vel = np.broadcast_arrays(ta, tr, icl, mw, vel)
    fcl = np.where(icl <= 0.078, 1.0 + 1.29 * icl, 1.05 + 0.645 * icl)
    hcf = 12.1 * np.sqrt(vel)
    taa = ta + 273.0
    tra = tr + 273.0
    tcla = taa + (35.5 - ta) / (3.5 * icl + 0.1)
    p1 = icl * fcl
    p2 = p1 * 3.96
    p3 = p1 * 100.0
    p4 = p1 * taa
    p5 = 308.7 - 0.028 * mw + p2 * (tra / 100.0) ** 4
    xn = tcla / 100.0
    xf = tcla / 50.0
    for _ in range(500):
        if np.all(np.abs(xn - xf) <= 1.5e-4):
            break
        xf = (xf + xn) / 2.0
        hcn = 2.38 * np.abs(100.0 * xf - taa) ** 0.25
        hc = np.maximum(hcf, hcn)
        xn = (p5 + p4 * hc - p2 * xf**4) / (100.0 + p3 * hc)
    return 100.0 * xn - 273.0


def fur_surface_temperature_c(air_c, core_c=38.5, fur_clo=1.5, surface_conductance=8.0):
    """Surface temperature of a furred animal from a series thermal resistance [°C].

    t_s = t_a + (t_core − t_a) / (1 + R_fur h), with R_fur = clo × 0.155 m² K W⁻¹ and a
    combined radiative + convective surface conductance h (about 8 W m⁻² K⁻¹ in still
    indoor air: common practice).
    """
    ta = check_array("air_c", air_c)
    r = check_array("fur_clo", fur_clo, positive=True) * CLO
    h = check_array("surface_conductance", surface_conductance, positive=True)
    return ta + (check_array("core_c", core_c) - ta) / (1.0 + r * h)
