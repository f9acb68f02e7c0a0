"""Water activity of an aqueous inhibitor solution by original UNIFAC, for the inhibited hydrate temperature.

Thermodynamic inhibitors work by lowering the activity of the water (van der Waals and Platteeuw 1959: the
term ``- ln a_w`` of the water side).  The activity of water in methanol, ethanol, MEG, DEG or TEG solution
is taken from the original UNIFAC group-contribution model:

* Fredenslund, Jones and Prausnitz, AIChE J. 21 (1975) 1086-1099 (the model: combinatorial part of
  Staverman-Guggenheim form with z = 10, residual part from group activity coefficients);
* group volumes R, areas Q and interaction parameters a_mn [K]: Hansen, Rasmussen, Fredenslund, Schiller
  and Gmehling, Ind. Eng. Chem. Res. 30 (1991) 2352-2355 (the revised and extended table).  The numbers
  below were read from the copy of that table distributed with the ``thermo`` library (C. Bell, MIT
  licence), and the model is checked against that library's UNIFAC in tests/thermo/test_hydrate_inhibitors.py.

Groups: CH3, CH2 (main group CH2), OH, CH3OH, H2O, CH2O (ether).  Molecules: water = H2O; methanol =
CH3OH; ethanol = CH3 + CH2 + OH; MEG = 2 CH2 + 2 OH; DEG = 3 CH2 + CH2O + 2 OH; TEG = 4 CH2 + 2 CH2O + 2 OH.

Range (fail closed): the inhibitor concentration in the free water up to :data:`MAX_MASS_PERCENT` for
each inhibitor, 243-300 K.  Beyond, no dose is given.
"""
from __future__ import annotations

import math

import numpy as np

from jtcheck.errors import InputError

__all__ = ["INHIBITORS", "MAX_MASS_PERCENT", "MOLAR_MASS_G_PER_MOL", "SOURCE", "water_activity"]

SOURCE = ("original UNIFAC (Fredenslund, Jones and Prausnitz, AIChE J. 21 (1975) 1086) with the parameters of "
          "Hansen et al., Ind. Eng. Chem. Res. 30 (1991) 2352")

# subgroup: (main group, R, Q)
_SUB = {
    "CH3": (1, 0.9011, 0.848),
    "CH2": (1, 0.6744, 0.540),
    "OH": (5, 1.0000, 1.200),
    "CH3OH": (6, 1.4311, 1.432),
    "H2O": (7, 0.9200, 1.400),
    "CH2O": (13, 0.9183, 0.780),
}
# a[m][n] [K], main groups 1 CH2, 5 OH, 6 CH3OH, 7 H2O, 13 CH2O (Hansen et al. 1991)
_MAIN = (1, 5, 6, 7, 13)
_A = np.array([
    [0.0, 986.5, 697.2, 1318.0, 251.5],
    [156.4, 0.0, -137.1, 353.5, 28.06],
    [16.51, 249.1, 0.0, -180.95, -128.6],
    [300.0, -229.1, 289.6, 0.0, 540.5],
    [83.36, 237.7, 238.4, -314.7, 0.0],
])

#: Inhibitors and their groups.
INHIBITORS: dict[str, dict[str, int]] = {
    "methanol": {"CH3OH": 1},
    "ethanol": {"CH3": 1, "CH2": 1, "OH": 1},
    "MEG": {"CH2": 2, "OH": 2},
    "DEG": {"CH2": 3, "CH2O": 1, "OH": 2},
    "TEG": {"CH2": 4, "CH2O": 2, "OH": 2},
}
_WATER = {"H2O": 1}

#: Molar masses [g/mol] (IUPAC atomic weights: CH4O, C2H6O, C2H6O2, C4H10O3, C6H14O4; water H2O).
MOLAR_MASS_G_PER_MOL = {"methanol": 32.042, "ethanol": 46.069, "MEG": 62.068, "DEG": 106.121, "TEG": 150.174,
                        "water": 18.015}

#: Highest inhibitor concentration in the free water for which a dose is given [mass %] (a screening choice:
#: the range of the common injection practice and of the checks; beyond it no dose is given).
MAX_MASS_PERCENT = {"methanol": 50.0, "ethanol": 40.0, "MEG": 60.0, "DEG": 50.0, "TEG": 50.0}


def _groups(counts: dict[str, int]):
    return [(_SUB[g][0], _SUB[g][1], _SUB[g][2], n, g) for g, n in counts.items()]


def _ln_gamma_water(x_inh: float, inhibitor: str, t_k: float) -> float:
    """ln gamma of water in the binary (water, inhibitor) by original UNIFAC [-]."""
    mols = [_WATER, INHIBITORS[inhibitor]]
    x = np.array([1.0 - x_inh, x_inh])
    r = np.array([sum(_SUB[g][1] * n for g, n in m.items()) for m in mols])
    q = np.array([sum(_SUB[g][2] * n for g, n in m.items()) for m in mols])
    # combinatorial part of water (i = 0)
    phi = r[0] / (x @ r)
    theta = q[0] / (x @ q)
    z = 10.0
    li = z / 2 * (r - q) - (r - 1.0)
    ln_c = math.log(phi) + z / 2 * q[0] * math.log(theta / phi) + li[0] - phi * (x @ li)
    # residual part: group activity coefficients in the mixture and in pure water
    names = sorted({g for m in mols for g in m})
    idx = {g: k for k, g in enumerate(names)}
    qg = np.array([_SUB[g][2] for g in names])
    main = [_MAIN.index(_SUB[g][0]) for g in names]
    psi = np.exp(-_A[np.ix_(main, main)] / t_k)

    def ln_big_gamma(nu_x: np.ndarray) -> np.ndarray:
        xg = nu_x / nu_x.sum()
        th = qg * xg / (qg @ xg)
        s = th @ psi                       # s_k = sum_m theta_m psi_mk
        return qg * (1.0 - np.log(s) - psi @ (th / s))

    nu = np.zeros((2, len(names)))
    for i, m in enumerate(mols):
        for g, n in m.items():
            nu[i, idx[g]] = n
    mix = ln_big_gamma(x @ nu)
    pure_w = ln_big_gamma(nu[0])
    ln_r = float(nu[0] @ (mix - pure_w))
    return ln_c + ln_r


def mole_fraction(mass_percent: float, inhibitor: str) -> float:
    """Mole fraction of the inhibitor in the salt-free aqueous phase [-] from its mass percent [%]."""
    w = mass_percent / 100.0
    m_i = MOLAR_MASS_G_PER_MOL[inhibitor]
    m_w = MOLAR_MASS_G_PER_MOL["water"]
    return (w / m_i) / (w / m_i + (1.0 - w) / m_w)


def water_activity(mass_percent: float, inhibitor: str, t_k: float) -> float:
    """Activity of water in an aqueous inhibitor solution, original UNIFAC (Fredenslund et al. 1975;
    parameters of Hansen et al. 1991).

    Parameters
    ----------
    mass_percent : float
        Inhibitor in the free water (inhibitor + water), [mass %], 0 to :data:`MAX_MASS_PERCENT`.
    inhibitor : str
        One of :data:`INHIBITORS` ("methanol", "ethanol", "MEG", "DEG", "TEG").
    t_k : float
        Temperature, [K], 200 to 330 K.

    Returns
    -------
    float
        Water activity x_w gamma_w, [-].

    Raises
    ------
    InputError
        Unknown inhibitor (the valid ones listed), concentration or temperature outside the range.
    """
    if inhibitor not in INHIBITORS:
        raise InputError("inhibitor", f"unknown inhibitor {inhibitor!r}; allowed: {', '.join(INHIBITORS)}")
    w = float(mass_percent)
    if not (0.0 <= w <= MAX_MASS_PERCENT[inhibitor]):
        raise InputError("inhibitor_mass_percent", f"{inhibitor} in the free water must lie from 0 to "
                                                   f"{MAX_MASS_PERCENT[inhibitor]:g} mass %, got {mass_percent!r}")
    if not (200.0 <= float(t_k) <= 330.0):
        raise InputError("t", f"temperature must lie from 200 to 330 K, got {t_k!r}")
    if w == 0.0:
        return 1.0
    x = mole_fraction(w, inhibitor)
    return (1.0 - x) * math.exp(_ln_gamma_water(x, inhibitor, float(t_k)))
