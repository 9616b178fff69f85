"""Surface temperatures of people and animals from their heat balance.

References
----------
.. [1] Fanger, P. O., *Thermal Comfort* (1970): mean skin temperature of a person in comfort,
   t_sk = 35.7 − 0.0275 (M − W) °C.
.. [2] ISO 7730:2005, annex D: clothing surface temperature t_cl by iteration of the clothing
   heat balance (radiation and convection from the clothing surface equal conduction
   through the clothing).
.. [3] Gagge, A. P., Fobelets, A. P. and Berglund, L. G., "A standard predictive index of
   human response to the thermal environment", ASHRAE Trans. 92(2B), 709–731 (1986): the
   two-node (core and skin shell) model of thermoregulation — vasomotor control of skin
   blood flow, regulatory sweating and shivering driven by skin, core and body signals —
   stepped minute by minute; as printed in ANSI/ASHRAE Standard 55-2020, normative
   appendix D (the code behind the standard effective temperature).
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


def _p_sat_torr(t_c):
    """Saturation vapour pressure of water [torr] (the fit used by the two-node model)."""
    return np.exp(18.6686 - 4030.183 / (t_c + 235.0))


def two_node_temperatures(
    air_c, radiant_c=None, air_speed=0.1, relative_humidity=50.0, met=1.2, clo=0.5,
    minutes: int = 60, external_work_met=0.0,
):  # fmt: skip
    """Skin, core and clothing-surface temperatures of a person by the two-node model [°C].

    A standard person (70 kg, 1.8258 m², standing) enters the room at thermal neutrality
    (skin 33.7 °C, core 36.8 °C) and is followed for ``minutes`` one-minute steps, as in
    Gagge et al. (1986) and ASHRAE 55-2020 appendix D: dry heat leaves the skin through the
    clothing (0.155 m² K W⁻¹ per clo) and the air layer (convection, with the activity's
    own air movement, and linearised radiation between clothing and surroundings), moisture
    through the clothing's and air's evaporative resistances; skin blood flow dilates and
    constricts on the core and skin signals, sweating starts on the body signal, shivering
    on the cold signals. In a warm room the skin warms and sweats, so the skin and the
    clothing follow the room instead of staying at a comfort value.

    Parameters
    ----------
    air_c : array_like
        Air temperature [°C].
    radiant_c : array_like, optional
        Mean radiant temperature [°C]; default the air temperature.
    air_speed : array_like
        Air speed [m s⁻¹] (at least 0.1 m/s is used, as in the model).
    relative_humidity : array_like
        [%].
    met : array_like
        Metabolic rate [met] (58.2 W m⁻² per met in this model).
    clo : array_like
        Clothing insulation [clo] (0: bare skin).
    minutes : int
        Exposure [min]; 60 is the model's convention.
    external_work_met : array_like
        [met].

    Returns
    -------
    skin, core, clothing : numpy.ndarray
        Mean skin, core and clothing-surface temperatures [°C], broadcast over the inputs
        (clothing equals skin where ``clo`` is 0).
    """
    ta = check_array("air_c", air_c)
    tr = ta if radiant_c is None else check_array("radiant_c", radiant_c)
    v = check_array("air_speed", air_speed)
    rh = check_array("relative_humidity", relative_humidity)
    met_ = check_array("met", met, positive=True)
    clo_ = check_array("clo", clo)
    wme = check_array("external_work_met", external_work_met)
    if np.any(v < 0):
        raise DesignError("air_speed", air_speed, "a speed >= 0 m/s")
    if np.any((rh < 0) | (rh > 100)):
        raise DesignError("relative_humidity", relative_humidity, "0 to 100 %")
    if np.any(clo_ < 0):
        raise DesignError("clo", clo, "an insulation >= 0 clo")
    ta, tr, v, rh, met_, clo_, wme = np.broadcast_arrays(ta, tr, v, rh, met_, clo_, wme)
    weight, area, met_w, sbc = 70.0, 1.8258, 58.2, 5.6697e-8
    t_sk_n, t_cr_n, flow_n = 33.7, 36.8, 6.3  # neutral skin, core [°C], blood flow [L/(m² h)]
    alfa = np.full(ta.shape, 0.1)  # skin share of the body mass
    t_bd_n = 0.1 * t_sk_n + 0.9 * t_cr_n
    pv = rh * _p_sat_torr(ta) / 100.0  # vapour pressure [torr]
    v = np.maximum(v, 0.1)
    r_clo = 0.155 * clo_
    f_cl = 1.0 + 0.15 * clo_
    lewis = 2.2  # [K/torr] at sea level
    rm = (met_ - wme) * met_w
    m = met_ * met_w
    i_cl = np.where(clo_ > 0, 0.45, 1.0)
    w_max = np.where(clo_ > 0, 0.59 * v**-0.08, 0.38 * v**-0.29)
    h_c = np.maximum(3.0, 8.600001 * v**0.53)
    h_c = np.where(met_ > 0.85, np.maximum(h_c, 5.66 * np.maximum(met_ - 0.85, 0) ** 0.39), h_c)
    h_r = np.full(ta.shape, 4.7)
    r_a = 1.0 / (f_cl * (h_r + h_c))
    t_op = (h_r * tr + h_c * ta) / (h_r + h_c)
    t_sk, t_cr, flow = (
        np.full(ta.shape, t_sk_n),
        np.full(ta.shape, t_cr_n),
        np.full(ta.shape, flow_n),
    )
    e_sk = 0.1 * met_
    q_res = 0.0023 * m * (44.0 - pv)  # respiration, latent and sensible [W/m²]
    c_res = 0.0014 * m * (34.0 - ta)
    t_cl = t_sk
    for _ in range(int(minutes) - 1):
        t_cl = (r_a * t_sk + r_clo * t_op) / (r_a + r_clo)
        for _ in range(150):  # clothing surface: radiation linearised about (t_cl + t_r)/2
            h_r = 4.0 * 0.95 * sbc * ((t_cl + tr) / 2.0 + 273.15) ** 3 * 0.73
            r_a = 1.0 / (f_cl * (h_r + h_c))
            t_op = (h_r * tr + h_c * ta) / (h_r + h_c)
            new = (r_a * t_sk + r_clo * t_op) / (r_a + r_clo)
            done = np.all(np.abs(new - t_cl) <= 0.01)
            t_cl = new
            if done:
                break
        dry = (t_sk - t_op) / (r_a + r_clo)
        core_to_skin = (t_cr - t_sk) * (5.28 + 1.163 * flow)
        s_core = m - core_to_skin - q_res - c_res - wme * met_w
        s_skin = core_to_skin - dry - e_sk
        t_sk = t_sk + s_skin * area / (0.97 * alfa * weight * 60.0)
        t_cr = t_cr + s_core * area / (0.97 * (1.0 - alfa) * weight * 60.0)
        t_bd = alfa * t_sk + (1.0 - alfa) * t_cr
        warm_sk, cold_sk = np.maximum(t_sk - t_sk_n, 0), np.maximum(t_sk_n - t_sk, 0)
        warm_cr, cold_cr = np.maximum(t_cr - t_cr_n, 0), np.maximum(t_cr_n - t_cr, 0)
        warm_bd = np.maximum(t_bd - t_bd_n, 0)
        flow = np.clip((flow_n + 120.0 * warm_cr) / (1.0 + 0.5 * cold_sk), 0.5, 90.0)
        e_rsw = 0.68 * np.minimum(170.0 * warm_bd * np.exp(warm_sk / 10.7), 500.0)
        r_ea = 1.0 / (lewis * f_cl * h_c)
        r_ecl = r_clo / (lewis * i_cl)
        e_max = (_p_sat_torr(t_sk) - pv) / (r_ea + r_ecl)
        e_max = np.where(e_max == 0, 0.001, e_max)
        w = 0.06 + 0.94 * e_rsw / e_max
        e_diff = w * e_max - e_rsw
        capped = w > w_max  # wettedness at its limit (the inverse of w = 0.06 + 0.94 p_rsw)
        p_cap = (w_max - 0.06) / 0.94
        e_rsw = np.where(capped, p_cap * e_max, e_rsw)
        e_diff = np.where(capped, 0.06 * (1.0 - p_cap) * e_max, e_diff)
        e_rsw, e_diff = np.where(e_max < 0, 0.0, e_rsw), np.where(e_max < 0, 0.0, e_diff)
        e_sk = e_rsw + e_diff
        m = rm + 19.4 * cold_sk * cold_cr  # shivering
        alfa = 0.0417737 + 0.7451833 / (flow + 0.585417)
    t_cl = np.where(clo_ > 0, t_cl, t_sk)
    return t_sk, t_cr, t_cl
