"""Parameters of a mixture under one cubic equation of state, and the tuple the compiled kernels take.

:class:`CubicMixture` holds parameters only (no state, no solving).  :func:`make_mixture` derives the
constants of the generic cubic (Michelsen and Mollerup, *Thermodynamic Models: Fundamentals and
Computational Aspects*, 2nd ed., 2007, ch. 3): b_i = omega_b R Tc_i / Pc_i and
sqrt(a_i(T)) = sqrt(omega_a R^2 Tc_i^2 / Pc_i) alpha_i(T)^(1/2), and packs them, with the ideal-gas
coefficients and the critical constants, into ``CubicMixture.kernel_params``, the parameter tuple
``prm`` of :mod:`jtcheck.thermo.models.cubic.kernels` (its layout is documented there).
"""
from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np

from jtcheck.thermo.eos import EOS, AlphaKind, R, soave_m
from jtcheck.thermo.models.cubic import kernels
from jtcheck.thermo.models.idealgas import ideal_gas_reference


@dataclass(frozen=True, eq=False)
class CubicMixture:
    """Parameters of a mixture under one cubic EOS (no state, no solving).

    Build with :func:`make_mixture`.  Vectors are per component, in the order of ``ids``.

    Attributes
    ----------
    eos : EOS
    ids : tuple of str
        Component ids.
    tcs, pcs, omegas : numpy.ndarray
        Critical temperatures [K], critical pressures [Pa], acentric factors [-].
    mws : numpy.ndarray
        Molar masses [kg/mol].
    kij : numpy.ndarray
        Binary interaction parameters [-], (n, n).
    vol_shifts : numpy.ndarray
        Peneloux volume shifts c_i [m^3/mol] (translated v = v_EOS - sum x_i c_i).
    cp_abcde : tuple of numpy.ndarray
        Aly-Lee ideal-gas heat-capacity coefficients A, B [J/(mol K)], C [K], D [J/(mol K)], E [K].
    kernel_params : tuple
        The parameter tuple ``prm`` of the compiled kernels (layout in
        :mod:`jtcheck.thermo.models.cubic.kernels`); the flash kernels receive it unopened.
    """

    eos: EOS
    ids: tuple[str, ...]
    tcs: np.ndarray
    pcs: np.ndarray
    omegas: np.ndarray
    mws: np.ndarray
    kij: np.ndarray
    vol_shifts: np.ndarray
    cp_abcde: tuple
    # derived constants
    ms: np.ndarray = field(repr=False)         # Soave slopes [-]
    bs: np.ndarray = field(repr=False)         # co-volumes [m^3/mol]
    one_minus_kij: np.ndarray = field(repr=False)
    d1: float = 0.0
    d2: float = 0.0
    # sqrt(a_i(T)) = s_c1 - s_c2 sqrt(T) (Soave), s_c1 T^-1/4 (Redlich-Kwong), s_c1 (van der Waals)
    s_c1: np.ndarray = field(default=None, repr=False)
    s_c2: np.ndarray = field(default=None, repr=False)
    kernel_params: tuple = field(default=None, repr=False)

    @property
    def n(self) -> int:
        return len(self.ids)


def make_mixture(eos: EOS, ids, tcs, pcs, omegas, mws, kij, vol_shifts, cp_abcde) -> CubicMixture:
    """Assemble a :class:`CubicMixture` and its derived constants.

    Parameters
    ----------
    eos : EOS
        Model.
    ids : sequence of str
        Component ids.
    tcs, pcs, omegas : array_like
        Critical temperatures [K], critical pressures [Pa], acentric factors [-].
    mws : array_like
        Molar masses [kg/mol].
    kij : array_like
        Symmetric (n, n) interaction parameters [-].
    vol_shifts : array_like
        Peneloux shifts [m^3/mol].
    cp_abcde : sequence of 5 array_like
        Aly-Lee coefficients A, B [J/(mol K)], C [K], D [J/(mol K)], E [K].
    """
    c = eos.constants
    tcs = np.ascontiguousarray(tcs, dtype=float)
    pcs = np.ascontiguousarray(pcs, dtype=float)
    omegas = np.ascontiguousarray(omegas, dtype=float)
    kij = np.ascontiguousarray(kij, dtype=float)
    ms = soave_m(eos, omegas) if c.alpha is AlphaKind.SOAVE else np.zeros_like(tcs)
    sqrt_acs = np.sqrt(c.omega_a * (R * tcs) ** 2 / pcs)
    if c.alpha is AlphaKind.SOAVE:
        s_c1, s_c2 = sqrt_acs * (1.0 + ms), sqrt_acs * ms / np.sqrt(tcs)
    elif c.alpha is AlphaKind.INVERSE_SQRT:
        s_c1, s_c2 = sqrt_acs * tcs ** 0.25, np.zeros_like(tcs)
    else:
        s_c1, s_c2 = sqrt_acs, np.zeros_like(tcs)
    bs = c.omega_b * R * tcs / pcs
    cps = tuple(np.ascontiguousarray(v, dtype=float) for v in cp_abcde)
    h_ref, s_ref = ideal_gas_reference(*cps)
    polar = np.array([cid in POLAR_IDS for cid in ids], dtype=np.bool_)
    prm = (_ALPHA_CODES[c.alpha], s_c1, s_c2, bs, 1.0 - kij, float(c.d1), float(c.d2), *cps,
           tcs, pcs, omegas, polar, h_ref, s_ref)
    return CubicMixture(
        eos=eos, ids=tuple(ids), tcs=tcs, pcs=pcs, omegas=omegas, mws=np.asarray(mws, float), kij=kij,
        vol_shifts=np.asarray(vol_shifts, float), cp_abcde=cps, ms=ms, bs=bs, one_minus_kij=1.0 - kij,
        d1=c.d1, d2=c.d2, s_c1=s_c1, s_c2=s_c2, kernel_params=prm)


#: Components seeded as near-pure trial phases in stability tests (they can form their own liquid).
POLAR_IDS = frozenset({"water", "methanol", "ethanol", "monoethylene glycol", "ammonia",
                       "diethylene glycol", "triethylene glycol"})

_ALPHA_CODES = {AlphaKind.SOAVE: kernels.SOAVE, AlphaKind.INVERSE_SQRT: kernels.INV_SQRT,
                AlphaKind.CONSTANT: kernels.CONSTANT}
