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
from numba import njit

from jtcheck.errors import InputError

__all__ = ["ACTIVITY_CHECKED_MASS_PERCENT", "INHIBITORS", "MAX_MASS_PERCENT", "MOLAR_MASS_G_PER_MOL", "SOURCE",
           "alkane", "ln_gamma_in_alkane", "ln_gamma_inhibitor", "mass_percent_for_activity", "water_activity"]

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


#: Highest inhibitor concentration in the free water up to which the water activity of original UNIFAC is checked
#: [mass %]: up to it the freezing point of the solution that the model gives lies within 1.5 K of the published
#: freezing points (Melinder, Properties of secondary working fluids for indirect systems, IIR, 2nd ed. (2010), as
#: fitted in CoolProp 8.0.0's incompressible mixtures MMA (methanol) and MEG; tests/thermo/test_hydrate_inhibitors.py).
#: Above it the model under-predicts the depression more and more (methanol 20 mass%: 3.5 K; 40 mass%: 13 K; MEG
#: 40 mass%: 10 K): its water activity is too high, the suppression it gives too small and the dose it gives too
#: large, so a dose above this is reported as an upper bound (the need may be smaller), never as a checked number.
ACTIVITY_CHECKED_MASS_PERCENT = {"methanol": 13.0, "MEG": 17.0}


_jit = njit(cache=True, nogil=True)


def _pair_tables(mol0: dict[str, int], mol1: dict[str, int]):
    """Arrays of the binary (mol0, mol1): r, q (2,), group counts nu (2, G), group areas Q (G,) and interaction
    parameters a (G, G) [K] (kept once made)."""
    key = (tuple(sorted(mol0.items())), tuple(sorted(mol1.items())))
    got = _TABLES.get(key)
    if got is not None:
        return got
    mols = [mol0, mol1]
    names = sorted({g for m in mols for g in m})
    r = np.array([sum(_SUB[g][1] * n for g, n in m.items()) for m in mols])
    q = np.array([sum(_SUB[g][2] * n for g, n in m.items()) for m in mols])
    nu = np.array([[m.get(g, 0) for g in names] for m in mols], dtype=float)
    qg = np.array([_SUB[g][2] for g in names])
    main = [_MAIN.index(_SUB[g][0]) for g in names]
    amat = np.ascontiguousarray(_A[np.ix_(main, main)])
    _TABLES[key] = (r, q, nu, qg, amat)
    return _TABLES[key]


def _tables(inhibitor: str):
    """The binary (water, inhibitor) (:func:`_pair_tables`)."""
    return _pair_tables(_WATER, INHIBITORS[inhibitor])


def alkane(carbon_number: float) -> dict[str, int]:
    """UNIFAC groups of the n-alkane with about ``carbon_number`` carbons (2 CH3 and the rest CH2; at least ethane)."""
    n = max(2, int(round(carbon_number)))
    return {"CH3": 2, "CH2": n - 2} if n > 2 else {"CH3": 2}


_TABLES: dict[tuple, tuple] = {}


@_jit
def _big_gamma(nu_x, qg, psi, out):
    """ln Gamma_k of the groups in a mixture of group amounts ``nu_x`` (original UNIFAC residual part)."""
    g = qg.size
    tot = 0.0
    for k in range(g):
        tot += nu_x[k]
    area = 0.0
    for k in range(g):
        area += qg[k] * nu_x[k] / tot
    th = np.empty(g)
    for k in range(g):
        th[k] = qg[k] * nu_x[k] / tot / area
    s = np.empty(g)
    for k in range(g):
        acc = 0.0
        for m in range(g):
            acc += th[m] * psi[m, k]
        s[k] = acc
    for k in range(g):
        acc = 0.0
        for m in range(g):
            acc += th[m] * psi[k, m] / s[m]
        out[k] = qg[k] * (1.0 - math.log(s[k]) - acc)


@_jit
def _ln_gamma_water_kernel(x_inh, t_k, r, q, nu, qg, amat):
    """ln gamma of water (component 0) in the binary (water, inhibitor), original UNIFAC (Fredenslund et al. 1975)."""
    x0 = 1.0 - x_inh
    rx = x0 * r[0] + x_inh * r[1]
    qx = x0 * q[0] + x_inh * q[1]
    phi = r[0] / rx
    theta = q[0] / qx
    l0 = 5.0 * (r[0] - q[0]) - (r[0] - 1.0)
    l1 = 5.0 * (r[1] - q[1]) - (r[1] - 1.0)
    ln_c = math.log(phi) + 5.0 * q[0] * math.log(theta / phi) + l0 - phi * (x0 * l0 + x_inh * l1)
    g = qg.size
    psi = np.empty((g, g))
    for i in range(g):
        for j in range(g):
            psi[i, j] = math.exp(-amat[i, j] / t_k)
    mix = np.empty(g)
    pure = np.empty(g)
    nu_x = np.empty(g)
    for k in range(g):
        nu_x[k] = x0 * nu[0, k] + x_inh * nu[1, k]
    _big_gamma(nu_x, qg, psi, mix)
    _big_gamma(nu[0], qg, psi, pure)
    ln_r = 0.0
    for k in range(g):
        if nu[0, k] > 0.0:
            ln_r += nu[0, k] * (mix[k] - pure[k])
    return ln_c + ln_r


def _ln_gamma_water(x_inh: float, inhibitor: str, t_k: float) -> float:
    """ln gamma of water in the binary (water, inhibitor) by original UNIFAC [-]."""
    r, q, nu, qg, amat = _tables(inhibitor)
    return float(_ln_gamma_water_kernel(float(x_inh), float(t_k), r, q, nu, qg, amat))


def ln_gamma_inhibitor(mass_percent: float, inhibitor: str, t_k: float) -> float:
    """ln gamma of the inhibitor in its aqueous solution [-] (pure-liquid reference), original UNIFAC
    (Fredenslund et al. 1975; Hansen et al. 1991 parameters); ``mass_percent`` [mass %] in the free water,
    ``t_k`` [K]."""
    x_w = 1.0 - mole_fraction(float(mass_percent), inhibitor)
    r, q, nu, qg, amat = _pair_tables(INHIBITORS[inhibitor], _WATER)
    return float(_ln_gamma_water_kernel(x_w, float(t_k), r, q, nu, qg, amat))


def ln_gamma_in_alkane(inhibitor: str, carbon_number: float, x_inh: float, t_k: float) -> float:
    """ln gamma of the inhibitor [-] (pure-liquid reference) at mole fraction ``x_inh`` [-] in a liquid n-alkane of
    ``carbon_number`` carbons (the stand-in for a hydrocarbon condensate), original UNIFAC as above, ``t_k`` [K]."""
    r, q, nu, qg, amat = _pair_tables(INHIBITORS[inhibitor], alkane(carbon_number))
    return float(_ln_gamma_water_kernel(1.0 - float(x_inh), float(t_k), r, q, nu, qg, amat))


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


def mass_percent_for_activity(ln_a_target: float, inhibitor: str, t_k: float) -> float:
    """Inhibitor [mass % in the free water] whose solution has ln(water activity) ``ln_a_target`` at ``t_k`` [K]
    (bisection on :func:`water_activity`, which falls with concentration); NaN beyond
    :data:`MAX_MASS_PERCENT`.  0 when ``ln_a_target`` >= 0."""
    if ln_a_target >= 0.0:
        return 0.0
    w_max = MAX_MASS_PERCENT[inhibitor]
    r, q, nu, qg, amat = _tables(inhibitor)
    t = min(max(float(t_k), 200.0), 330.0)

    def ln_a(w: float) -> float:
        x = mole_fraction(w, inhibitor)
        return math.log(1.0 - x) + float(_ln_gamma_water_kernel(x, t, r, q, nu, qg, amat))

    if ln_a(w_max) > ln_a_target:
        return float("nan")
    lo, hi = 0.0, w_max
    for _ in range(36):          # 60 mass% / 2^36: far below 1e-9 mass%
        mid = 0.5 * (lo + hi)
        if ln_a(mid) > ln_a_target:
            lo = mid
        else:
            hi = mid
    return hi
