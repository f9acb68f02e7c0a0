"""Single-phase states of any model family, from Python: properties, ln phi and its derivatives, the PIP.

Model-generic counterparts of the cubic's numpy functions: each call goes through the model interface of
:mod:`jtcheck.thermo.models` (compiled loops of :mod:`jtcheck.thermo.kernels.evaluate`), so the phase
envelope, the derived properties and the CO2 solids screening work on a cubic mixture and on GERG-2008
alike.  ``mix`` is any mixture object with ``kernel_params`` and ``n`` (``CubicMixture``, ``GergMixture``).

Broadcasting: ``T`` and ``P`` of shape (...) with ``x`` of shape (n,) or (..., n); ``phase`` is
``"gibbs"`` (the stable density root), ``"liquid"`` (the densest) or ``"vapour"`` (the lightest).
"""
from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from jtcheck.errors import InputError
from jtcheck.thermo.kernels import evaluate as _ev
from jtcheck.thermo.models.conventions import GIBBS, LIQUID, VAPOUR
from jtcheck.thermo.models.cubic.mixture import CubicMixture
from jtcheck.thermo.models.gerg2008 import GergMixture

#: The mixture objects of the model families: parameters with ``kernel_params``, ``n``, ``ids``, ``tcs``,
#: ``pcs``, ``omegas`` and ``mws``.
Mixture = CubicMixture | GergMixture

PHASE_CODES = {"gibbs": GIBBS, "liquid": LIQUID, "vapour": VAPOUR}


def phase_code(phase: str) -> int:
    """The interface's code of a root choice; InputError for an unknown one."""
    try:
        return PHASE_CODES[phase]
    except KeyError:
        raise InputError("phase", f"unknown phase {phase!r}; allowed: {', '.join(PHASE_CODES)}") from None


@dataclass(frozen=True, slots=True)
class ModelState:
    """Thermodynamic state of one phase from the model (SI, per mole of phase).

    Attributes
    ----------
    Z : compressibility factor [-]
    v : molar volume from the model, untranslated [m^3/mol]
    h : molar enthalpy, ideal gas at 298.15 K as zero [J/mol]
    s : molar entropy, ideal gas at 298.15 K and 101325 Pa as zero [J/(mol K)]
    cp, cv : heat capacities [J/(mol K)]
    dP_dT_v : (dP/dT) at constant v [Pa/K]
    dP_dv_T : (dP/dv) at constant T [Pa mol/m^3]
    h_res, s_res : residual enthalpy [J/mol] and entropy [J/(mol K)]
    """

    Z: np.ndarray
    v: np.ndarray
    h: np.ndarray
    s: np.ndarray
    cp: np.ndarray
    cv: np.ndarray
    dP_dT_v: np.ndarray
    dP_dv_T: np.ndarray
    h_res: np.ndarray
    s_res: np.ndarray


@dataclass(frozen=True, slots=True)
class FugacityDerivatives:
    """ln phi and its derivatives for one phase of total amount 1 mol.

    Attributes
    ----------
    lnphi : (n,) [-]
    dn : (n, n) d ln phi_i / d n_j at constant T, P [1/mol]
    dT : (n,) d ln phi_i / d T at constant P, n [1/K]
    dP : (n,) d ln phi_i / d P at constant T, n [1/Pa]
    Z : compressibility factor [-]
    v_partial : (n,) partial molar volumes [m^3/mol]
    """

    lnphi: np.ndarray
    dn: np.ndarray
    dT: np.ndarray
    dP: np.ndarray
    Z: float
    v_partial: np.ndarray


def _flat(mix: Mixture, T, P, x):
    T = np.asarray(T, float)
    P = np.asarray(P, float)
    x = np.asarray(x, float)
    shape = np.broadcast_shapes(T.shape, P.shape, x.shape[:-1])
    N = int(np.prod(shape, dtype=int))
    Tf = np.ascontiguousarray(np.broadcast_to(T, shape).reshape(N))
    Pf = np.ascontiguousarray(np.broadcast_to(P, shape).reshape(N))
    Xf = np.ascontiguousarray(np.broadcast_to(x, shape + (mix.n,)).reshape(N, mix.n))
    return shape, Tf, Pf, Xf


def model_state(mix: Mixture, T, P, x, phase: str = "gibbs") -> ModelState:
    """Properties of one phase at ``T`` [K], ``P`` [Pa], composition ``x`` [-] (broadcast)."""
    shape, Tf, Pf, Xf = _flat(mix, T, P, x)
    out = np.empty((Tf.size, 10))
    _ev.props_many(mix.kernel_params, Tf, Pf, Xf, phase_code(phase), out)
    cols = [out[:, j].reshape(shape) for j in range(10)]
    if shape == ():
        cols = [np.float64(c) for c in cols]
    return ModelState(*cols)


def ln_phi(mix: Mixture, T, P, x, phase: str = "gibbs"):
    """Logarithms of the fugacity coefficients [-], shape (..., n), and Z [-], shape (...)."""
    shape, Tf, Pf, Xf = _flat(mix, T, P, x)
    out = np.empty((Tf.size, mix.n))
    Z = np.empty(Tf.size)
    _ev.ln_phi_many(mix.kernel_params, Tf, Pf, Xf, phase_code(phase), out, Z)
    if shape == ():
        return out[0], np.float64(Z[0])
    return out.reshape(shape + (mix.n,)), Z.reshape(shape)


def fugacity_derivatives(mix: Mixture, T: float, P: float, x, phase: str = "gibbs") -> FugacityDerivatives:
    """ln phi with its composition, temperature and pressure derivatives at one state (see the interface)."""
    x = np.ascontiguousarray(x, dtype=float)
    n = x.size
    lnphi = np.empty(n)
    dn = np.empty((n, n))
    dT = np.empty(n)
    dP = np.empty(n)
    vbar = np.empty(n)
    Z = _ev.fug_derivs_one(mix.kernel_params, float(T), float(P), x, phase_code(phase), lnphi, dn, dT, dP, vbar)
    return FugacityDerivatives(lnphi=lnphi, dn=dn, dT=dT, dP=dP, Z=float(Z), v_partial=vbar)


def phase_identification_parameter(mix: Mixture, T, P, x, phase: str = "gibbs"):
    """Phase identification parameter of Venkatarathnam and Oellrich (2011) [-] (above 1 liquid-like)."""
    shape, Tf, Pf, Xf = _flat(mix, T, P, x)
    out = np.empty(Tf.size)
    _ev.pip_many(mix.kernel_params, Tf, Pf, Xf, phase_code(phase), out)
    return float(out[0]) if shape == () else out.reshape(shape)
