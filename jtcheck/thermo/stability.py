"""Phase stability by the tangent-plane distance (Michelsen 1982).

A phase of composition z at T, P is stable when the tangent-plane distance
tm(W) = 1 + sum_i W_i (ln W_i + ln phi_i(w) - d_i - 1),  d_i = ln z_i + ln phi_i(z),
has no negative minimum (Michelsen, Fluid Phase Equilib. 9 (1982) 1-19, doi:10.1016/0378-3812(82)85001-2).
Minima are sought by successive substitution ln W_i <- d_i - ln phi_i(w) from several trial phases
(Wilson K-values both ways, and near-pure trial phases of water-like components and of the heaviest
component, so that an incipient aqueous or heavy phase is not missed), finished by Newton steps in
alpha_i = 2 sqrt(W_i) (Michelsen and Mollerup 2007, ch. 10) where substitution is slow.  The
compiled implementation is :func:`jtcheck.thermo.kernels.stability.stability`.
"""
from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from jtcheck.thermo.kernels import stability as _stability_kernels
from jtcheck.thermo.kernels import wilson as _wilson_kernels
from jtcheck.thermo.states import Mixture

#: Tangent-plane distance below which a feed is declared unstable [-].
TPD_UNSTABLE = -1e-8


@dataclass(frozen=True, slots=True)
class StabilityResult:
    """Outcome of a stability test.

    Attributes
    ----------
    stable : bool
    tpd_min : float
        Lowest tangent-plane distance found [-] (0 for the trivial solution).
    trial : numpy.ndarray or None
        Normalised composition of the most unstable trial phase [-].
    trial_is_lighter : bool
        Whether that trial phase is less dense than the feed (then K = w/z, else z/w).
    converged : bool
        False if some trial did not converge within the iteration limit.
    """

    stable: bool
    tpd_min: float
    trial: np.ndarray | None
    trial_is_lighter: bool
    converged: bool

    def k_values(self, z) -> np.ndarray:
        """K-values (y/x) to start a phase split from the unstable trial phase [-]."""
        z = np.asarray(z, float)
        if self.trial is None:
            raise ValueError("no trial phase: the feed is stable")
        return self.trial / z if self.trial_is_lighter else z / self.trial


def wilson_k(mix: Mixture, T: float, P: float) -> np.ndarray:
    """Wilson K-values, ln K_i = ln(Pc_i/P) + 5.373 (1 + w_i)(1 - Tc_i/T) [-].

    Wilson, *A modified Redlich-Kwong equation of state*, 64th AIChE National Meeting (1968).
    """
    K = np.empty(mix.n)
    _wilson_kernels.wilson_k(mix.kernel_params, float(T), float(P), K)
    return K


def stability_test(mix: Mixture, T: float, P: float, z) -> StabilityResult:
    """Michelsen's tangent-plane stability test of feed ``z`` at ``T`` [K], ``P`` [Pa].

    Parameters
    ----------
    mix : CubicMixture or GergMixture
    T : float
        Temperature [K].
    P : float
        Pressure [Pa].
    z : array_like
        Feed mole fractions [-], all positive.
    """
    z = np.ascontiguousarray(z, dtype=float)
    if z.size == 1:
        return StabilityResult(True, 0.0, None, False, True)
    W = np.empty(z.size)
    stable, tpd, lighter, conv = _stability_kernels.stability(mix.kernel_params, float(T), float(P), z, W, 80, 1e-10)
    if stable:
        return StabilityResult(True, float(tpd), None, False, bool(conv))
    return StabilityResult(False, float(tpd), W, bool(lighter), bool(conv))
