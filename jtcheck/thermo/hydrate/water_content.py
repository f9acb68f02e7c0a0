"""Water content of a natural gas saturated with water (Bukacek 1955), and the water dew point.

* Saturated water content of a sweet natural gas, Bukacek's correlation (R. F. Bukacek, "Equilibrium
  moisture content of natural gases", Institute of Gas Technology Research Bulletin 8 (1955); in the form
  given by Carroll, Natural Gas Hydrates, 3rd ed. (2014) ch. 10 and the GPSA Engineering Data Book
  sec. 20, from memory)::

      W [lb/MMscf] = 47484 p_v [psia] / P [psia] + B,     log10 B = -3083.87 / (T [degF] + 459.6) + 6.69449

  with p_v the vapour pressure of water at T.  Range used here (a screening choice, from memory of the
  correlation's stated span): 233 to 450 K, 0.1 to 70 MPa, sweet gas (CO2 plus H2S at most 5 mol%).
  Below 273.16 K the vapour pressure is that over ice, so W is the content in equilibrium with ice.
* Vapour pressure of water: Wagner and Pruss, J. Phys. Chem. Ref. Data 31 (2002) 387, eq. 2.5 (IAPWS
  saturation line); over ice: Wagner, Riethmann, Feistel and Harvey, J. Phys. Chem. Ref. Data 40 (2011)
  043103, eq. 6 (IAPWS sublimation line).  Checked against CoolProp in the tests.

Units: SI in and out; the water content is given in mg per standard cubic metre (15 degC, 101.325 kPa),
1 lb/MMscf = 16.018 mg/Sm3 (the MMscf at 60 degF, 14.696 psia; 15 degC and 60 degF differ by 0.03 K).
"""
from __future__ import annotations

import math

from jtcheck.errors import InputError

__all__ = ["BUKACEK_P_RANGE_PA", "BUKACEK_T_RANGE_K", "LB_PER_MMSCF_MG_PER_SM3", "SOURCE",
           "saturated_water_content", "water_dew_point", "water_vapour_pressure"]

SOURCE = ("Bukacek, IGT Research Bulletin 8 (1955) (saturated water content of sweet natural gas); water vapour "
          "pressure by Wagner and Pruss (2002) over liquid and Wagner et al. (2011) over ice")

#: 1 lb/MMscf in mg/Sm3: 453592.37 mg per 28316.847 m3 (10^6 ft3).
LB_PER_MMSCF_MG_PER_SM3 = 453592.37 / 28316.846592
#: Range of the correlation as used here [K] and [Pa] (module docstring).
BUKACEK_T_RANGE_K = (233.15, 450.0)
BUKACEK_P_RANGE_PA = (0.1e6, 70.0e6)

_PSI = 6894.757293168361
_TC, _PC = 647.096, 22.064e6
_A = (-7.85951783, 1.84408259, -11.7866497, 22.6807411, -15.9618719, 1.80122502)
_TT, _PT = 273.16, 611.657


def water_vapour_pressure(t_k: float) -> float:
    """Vapour pressure of water [Pa] over liquid (at or above 273.16 K) or over ice (below).

    Wagner and Pruss (2002) eq. 2.5; Wagner et al. (2011) eq. 6 for ice.
    """
    t = float(t_k)
    if t >= _TT:
        tau = 1.0 - t / _TC
        a1, a2, a3, a4, a5, a6 = _A
        s = a1 * tau + a2 * tau**1.5 + a3 * tau**3 + a4 * tau**3.5 + a5 * tau**4 + a6 * tau**7.5
        return _PC * math.exp(_TC / t * s)
    theta = t / _TT
    s = (-21.2144006 * theta**0.00333333333 + 27.3203819 * theta**1.20666667 - 6.10598130 * theta**1.70333333)
    return _PT * math.exp(s / theta)


def _check(p_pa: float, t_k: float) -> None:
    if not (BUKACEK_P_RANGE_PA[0] <= p_pa <= BUKACEK_P_RANGE_PA[1]):
        raise InputError("p", f"pressure {p_pa:g} Pa outside the range of Bukacek's correlation "
                              f"{BUKACEK_P_RANGE_PA[0]:g}-{BUKACEK_P_RANGE_PA[1]:g} Pa")
    if not (BUKACEK_T_RANGE_K[0] <= t_k <= BUKACEK_T_RANGE_K[1]):
        raise InputError("t", f"temperature {t_k:g} K outside the range of Bukacek's correlation "
                              f"{BUKACEK_T_RANGE_K[0]:g}-{BUKACEK_T_RANGE_K[1]:g} K")


def saturated_water_content(p_pa: float, t_k: float) -> float:
    """Water content of a water-saturated sweet natural gas [mg/Sm3], Bukacek (1955).

    Parameters
    ----------
    p_pa : float
        Pressure, [Pa], 0.1 to 70 MPa.
    t_k : float
        Temperature, [K], 233.15 to 450 K.

    Returns
    -------
    float
        Water content, [mg/Sm3] (15 degC, 101.325 kPa).

    Raises
    ------
    InputError
        Pressure or temperature outside the range (the field is named).
    """
    p, t = float(p_pa), float(t_k)
    _check(p, t)
    t_f = (t - 273.15) * 1.8 + 32.0
    b = 10.0 ** (-3083.87 / (t_f + 459.6) + 6.69449)
    w_lb = 47484.0 * (water_vapour_pressure(t) / _PSI) / (p / _PSI) + b
    return w_lb * LB_PER_MMSCF_MG_PER_SM3


def water_dew_point(water_mg_per_sm3: float, p_pa: float) -> float:
    """Water dew point [K] (or frost point below 273.16 K) of a sweet natural gas at ``p_pa`` [Pa].

    The temperature at which :func:`saturated_water_content` equals the gas's content (bisection).

    Parameters
    ----------
    water_mg_per_sm3 : float
        Water content, [mg/Sm3], above 0.
    p_pa : float
        Pressure, [Pa].

    Returns
    -------
    float
        Water dew point, [K]; raises if it lies outside 233.15-450 K.
    """
    w = float(water_mg_per_sm3)
    if not (w > 0.0 and math.isfinite(w)):
        raise InputError("water_content", f"water content must be a number above 0 mg/Sm3, got {water_mg_per_sm3!r}")
    lo, hi = BUKACEK_T_RANGE_K
    if saturated_water_content(p_pa, lo) > w:
        raise InputError("water_content", f"water dew point below {lo:g} K at {p_pa / 1e5:g} bar: outside the range "
                                          "of Bukacek's correlation")
    if saturated_water_content(p_pa, hi) < w:
        raise InputError("water_content", f"water dew point above {hi:g} K at {p_pa / 1e5:g} bar: outside the range "
                                          "of Bukacek's correlation")
    for _ in range(36):          # 217 K / 2^36: far below 1e-6 K
        mid = 0.5 * (lo + hi)
        if saturated_water_content(p_pa, mid) > w:
            hi = mid
        else:
            lo = mid
    return 0.5 * (lo + hi)
