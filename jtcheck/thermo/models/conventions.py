"""Conventions every model family shares with the flash kernels: phase codes, gas constant, reference state.

A model family (:mod:`jtcheck.thermo.models`) and the algorithms that call it
(:mod:`jtcheck.thermo.kernels`) agree on these numbers; they are plain module constants, so numba
compiles them in as literals.
"""
from __future__ import annotations

#: Molar gas constant [J/(mol K)] (CODATA 2018, exact since the 2019 SI).
R = 8.314462618

#: Reference temperature [K]: the ideal gas at T_REF has zero enthalpy and, at :data:`P_REF`, zero entropy.
T_REF = 298.15

#: Reference pressure of ideal-gas entropies [Pa].
P_REF = 101325.0

#: Phase codes of the ``phase`` argument of the model functions: ``GIBBS`` the stable density root at
#: (T, P) (lowest Gibbs energy), ``LIQUID`` the liquid-like (densest) root, ``VAPOUR`` the vapour-like
#: (lightest) root.
GIBBS, LIQUID, VAPOUR = 0, 1, 2
