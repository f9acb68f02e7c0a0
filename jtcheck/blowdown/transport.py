"""Transport properties of a gas for the inside heat transfer: viscosity and thermal conductivity.

Dilute-gas estimates (low-pressure limit) on Kay's pseudo-critical constants of the mixture:

- viscosity: Chung, Ajlan, Lee and Starling, Ind. Eng. Chem. Res. 27 (1988) 671-679, eq. (9) with the
  collision integral of Neufeld, Janzen and Aziz, J. Chem. Phys. 57 (1972) 1100
  (mu = 40.785 Fc sqrt(M T) / (Vc^(2/3) Omega_v) [micropoise], M [g/mol], Vc [cm^3/mol], Fc = 1 - 0.2756 omega
  for non-polar gases);
- conductivity: the modified Eucken relation lambda M / (mu Cv) = 1.32 + 1.77 R / Cv (Poling, Prausnitz and
  O'Connell, The Properties of Gases and Liquids, 5th ed. (2001), chapter 10; from memory).

The dense-gas rise of viscosity and conductivity is not included: at high pressure mu is underestimated, the
Rayleigh number overestimated and the inside coefficient overestimated by the 1/3 power, which cools the
wall faster (the conservative side for the minimum wall temperature).
"""
from __future__ import annotations

import math

R = 8.314462618


def chung_dilute_viscosity(t_k: float, tc_k: float, vc_m3_per_mol: float, omega: float, m_kg_per_mol: float) -> float:
    """Low-pressure gas viscosity [Pa s] (Chung et al. 1988, eq. 9)."""
    ts = 1.2593 * t_k / tc_k
    omega_v = 1.16145 * ts ** -0.14874 + 0.52487 * math.exp(-0.77320 * ts) + 2.16178 * math.exp(-2.43787 * ts)
    fc = 1.0 - 0.2756 * omega
    mu_micropoise = 40.785 * fc * math.sqrt(m_kg_per_mol * 1e3 * t_k) / ((vc_m3_per_mol * 1e6) ** (2.0 / 3.0) * omega_v)
    return mu_micropoise * 1e-7


def eucken_conductivity(mu_pa_s: float, cv_j_per_mol_k: float, m_kg_per_mol: float) -> float:
    """Gas thermal conductivity [W/(m K)] by the modified Eucken relation."""
    return mu_pa_s / m_kg_per_mol * (1.32 * cv_j_per_mol_k + 1.77 * R)
