"""The Rachford-Rice equation for a two-phase split at fixed K-values.

Solves sum_i z_i (K_i - 1) / (1 + beta (K_i - 1)) = 0 for the vapour fraction beta
(Rachford and Rice, J. Pet. Technol. 4(10) (1952) 19-3, doi:10.2118/952327-G) inside the window
where both phase compositions stay non-negative (Whitson and Michelsen, Fluid Phase Equilib. 53
(1989) 51-71, negative flash), with the tighter bounds of Leibovici and Neoschil, Fluid Phase
Equilib. 74 (1992) 303-308: beta_min = max over K_i > 1 of (K_i z_i - 1)/(K_i - 1), beta_max =
min over K_i < 1 of (1 - z_i)/(1 - K_i).  The function is monotone decreasing there, so a Newton
step safeguarded by bisection on the bracket cannot diverge.  Each term is evaluated as
z_i / (1/(K_i - 1) + beta), the form recommended against round-off near the poles by Nielsen and
Lia, Fluid Phase Equilib. 571 (2023) 113801.  Compiled as :func:`jtcheck.thermo.kernels.rachford_rice.rachford_rice`.
"""
from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from jtcheck.thermo.kernels import rachford_rice as _kernel


@dataclass(frozen=True, slots=True)
class RachfordRiceResult:
    """Solution of the Rachford-Rice equation.

    Attributes
    ----------
    beta : float
        Vapour mole fraction [-]; may lie outside [0, 1] (negative flash), and is -inf or +inf
        when every K-value lies on one side of 1.
    x, y : numpy.ndarray
        Liquid and vapour mole fractions [-].
    converged : bool
    """

    beta: float
    x: np.ndarray
    y: np.ndarray
    converged: bool


def solve_rachford_rice(z, K) -> RachfordRiceResult:
    """Vapour fraction and phase compositions for feed ``z`` and K-values ``K`` [-].

    Parameters
    ----------
    z : array_like
        Feed mole fractions [-], shape (n,).
    K : array_like
        Equilibrium ratios y_i/x_i [-], shape (n,), positive.
    """
    z = np.ascontiguousarray(z, dtype=float)
    K = np.ascontiguousarray(K, dtype=float)
    x = np.empty_like(z)
    y = np.empty_like(z)
    beta, ok = _kernel.rachford_rice(z, K, x, y)
    return RachfordRiceResult(beta=float(beta), x=x, y=y, converged=bool(ok))
