"""Parameters of the van der Waals-Platteeuw hydrate model: one published set, Munck et al. (1988).

Every number of this module comes from one paper, so that the Langmuir constants and the reference
properties of the empty lattice fit together (they were regressed together against hydrate data):

    J. Munck, S. Skjold-Jorgensen and P. Rasmussen, "Computations of the formation of gas hydrates",
    Chem. Eng. Sci. 43 (1988) 2661-2672, doi:10.1016/0009-2509(88)80010-0.

* Langmuir constants, Munck et al. (1988) Table 1, in the temperature form
  ``C = (A / T) exp(B / T)`` with A [K/atm] and B [K] (C in 1/atm, the guest fugacity in atm).
  The values are as recalled by the author of this module and checked, number by number, against an
  independent public transcription of the same table (a C++ reproduction of Munck's model in a
  public repository, read with the project's search tool; not the paper itself).  A guest with
  A = 0 in a cavity does not enter it (ethane and the C3-C4 paraffins are too large for the small
  cavities; propane and the butanes too large for the large cavity of structure I).
* Reference properties of the empty lattice, Munck et al. (1988) Table 2: the chemical-potential
  difference at T0 = 273.15 K and zero pressure, and the enthalpy and volume differences against ice
  and against liquid water (the liquid values are the ice values less the enthalpy of fusion of ice,
  6009 J/mol, and plus its volume change, 1.6 cm3/mol), with the heat-capacity difference against
  liquid water of 39.16 J/(mol K), the same transcription as above, used as Munck's set is used:
  ``dh(T) = dh0 + dcp (T - T0)`` with dcp = +39.16 J/(mol K).  Physically the lattice, like ice,
  holds less heat than liquid water, so the sign looks odd; but the set was regressed as a whole,
  and with this sign the model reproduces the checked data (tests/thermo/test_hydrate.py) while the
  opposite sign falls up to 2 K short (on the unsafe side) near 295-300 K, measured here.
* Cavities per water molecule (nu): structure I has 2 small (5^12) and 6 large (5^12 6^2) cavities
  per 46 water molecules, structure II 16 small (5^12) and 8 large (5^12 6^4) per 136 (Sloan and Koh,
  Clathrate Hydrates of Natural Gases, 3rd ed. (2008) Table 2.1; a crystallographic fact).

Components other than the eight guests below do not enter the cavities; they dilute the gas (lower
the guests' fugacities) and are accounted for by the equation of state.
"""
from __future__ import annotations

import numpy as np

__all__ = [
    "CAVITIES_PER_WATER",
    "GUESTS",
    "HENRY_AB",
    "HENRY_SOURCE",
    "LANGMUIR_AB",
    "REFERENCE",
    "henry_arrays",
    "SOURCE",
    "STRUCTURES",
    "T0_K",
    "langmuir_arrays",
]

#: The published set used for every number of this module.
SOURCE = ("Munck, Skjold-Jorgensen and Rasmussen, Chem. Eng. Sci. 43 (1988) 2661 (Langmuir constants, "
          "Table 1; empty-lattice reference properties, Table 2)")

#: Structures, in the order of every array of this module.
STRUCTURES = ("sI", "sII")

#: Reference temperature of the reference properties [K].
T0_K = 273.15

#: Cavities of each kind per water molecule, (small, large) for sI and sII [-].
CAVITIES_PER_WATER = np.array([[2.0 / 46.0, 6.0 / 46.0],
                               [16.0 / 136.0, 8.0 / 136.0]])

#: Langmuir constants of Munck et al. (1988) Table 1: component id -> ((A, B) small sI, (A, B) large sI,
#: (A, B) small sII, (A, B) large sII), A [K/atm], B [K].
LANGMUIR_AB: dict[str, tuple[tuple[float, float], ...]] = {
    "methane": ((0.7228e-3, 3187.0), (23.35e-3, 2653.0), (0.2207e-3, 3453.0), (100.0e-3, 1916.0)),
    "ethane": ((0.0, 0.0), (3.039e-3, 3861.0), (0.0, 0.0), (240.0e-3, 2967.0)),
    "propane": ((0.0, 0.0), (0.0, 0.0), (0.0, 0.0), (5.455e-3, 4638.0)),
    "isobutane": ((0.0, 0.0), (0.0, 0.0), (0.0, 0.0), (189.3e-3, 3800.0)),
    "n-butane": ((0.0, 0.0), (0.0, 0.0), (0.0, 0.0), (30.51e-3, 3699.0)),
    "nitrogen": ((1.617e-3, 2905.0), (6.078e-3, 2431.0), (0.1742e-3, 3082.0), (18.0e-3, 1728.0)),
    "carbon dioxide": ((0.2474e-3, 3410.0), (42.46e-3, 2813.0), (0.0845e-3, 3615.0), (851.0e-3, 2025.0)),
    "hydrogen sulfide": ((0.025e-3, 4568.0), (16.34e-3, 3737.0), (0.0298e-3, 4878.0), (87.2e-3, 2633.0)),
}

#: Component ids that form hydrate in this model.
GUESTS = tuple(LANGMUIR_AB)

#: Reference properties of the empty lattice, Munck et al. (1988) Table 2, per structure (sI, sII):
#: dmu0 [J/mol] at T0 and zero pressure; against ice: dh [J/mol], dv [m^3/mol]; against liquid water:
#: dh [J/mol] at T0, dv [m^3/mol], dcp [J/(mol K)] in dh = dh0 + dcp (T - T0) (see the module docstring).
REFERENCE = {
    "dmu0": np.array([1264.0, 883.0]),
    "dh_ice": np.array([1151.0, 808.0]),
    "dv_ice": np.array([3.0e-6, 3.4e-6]),
    "dh_liq": np.array([-4858.0, -5201.0]),
    "dv_liq": np.array([4.6e-6, 5.0e-6]),
    "dcp_liq": np.array([39.16, 39.16]),
}


#: Where the Henry's constants come from.
HENRY_SOURCE = ("Holder, Corbin and Papadopoulos, Ind. Eng. Chem. Fundam. 19 (1980) 282 (Henry's constants of the "
                "hydrate formers in water, ln H [atm] = A + B / T), from memory; checked against the solubility of "
                "methane and CO2 in water at 25 degC (H about 4.0e4 and 1.6e3 atm; handbook values, from memory)")

#: Henry's constants of the guests in water, ``ln H [atm] = A + B / T`` with T [K] (Holder, Corbin and
#: Papadopoulos 1980, the set used with Munck's parameters): the dissolved gas lowers the activity of the
#: water, x_w = 1 - sum_j f_j / H_j.  Components not listed are taken as insoluble.
HENRY_AB: dict[str, tuple[float, float]] = {
    "methane": (15.826277, -1559.0631),
    "ethane": (18.400368, -2410.4807),
    "propane": (20.958631, -3109.3918),
    "isobutane": (22.150557, -3407.2181),
    "n-butane": (22.150557, -3407.2181),
    "nitrogen": (17.934347, -1933.381),
    "carbon dioxide": (14.283146, -2050.3269),
    "hydrogen sulfide": (15.103508, -2603.9795),
}


def henry_arrays(ids) -> tuple[np.ndarray, np.ndarray]:
    """Henry's-constant coefficients A [-] and B [K] (ln H [atm] = A + B/T) for ``ids``; A = -inf: insoluble."""
    a = np.full(len(ids), -np.inf)
    b = np.zeros(len(ids))
    for k, cid in enumerate(ids):
        if cid in HENRY_AB:
            a[k], b[k] = HENRY_AB[cid]
    return a, b


def langmuir_arrays(ids) -> tuple[np.ndarray, np.ndarray]:
    """Langmuir A [K/atm] and B [K] of Munck et al. (1988) for the components ``ids``.

    Parameters
    ----------
    ids : sequence of str
        Component ids of jtcheck's component library.

    Returns
    -------
    A, B : numpy.ndarray
        Shape (2, 2, n): structure (sI, sII), cavity (small, large), component; zero for a
        component that does not enter that cavity (and for every non-guest).
    """
    n = len(ids)
    a = np.zeros((2, 2, n))
    b = np.zeros((2, 2, n))
    for k, cid in enumerate(ids):
        row = LANGMUIR_AB.get(cid)
        if row is None:
            continue
        for s in range(2):
            for m in range(2):
                a[s, m, k], b[s, m, k] = row[2 * s + m]
    return a, b
