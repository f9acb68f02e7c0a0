"""Single-phase states of any model family, from Python: properties, ln phi and its derivatives, the PIP.

Model-generic counterparts of the cubic's numpy functions: each call goes through the model interface of
:mod:`jtcheck.thermo.models` (compiled loops of :mod:`jtcheck.thermo.kernels.evaluate`), so the phase
envelope, the derived properties and the CO2 solids screening work on a cubic mixture and on GERG-2008
alike.  ``mix`` is any mixture object with ``kernel_params`` and ``n`` (``CubicMixture``, ``GergMixture``).

Broadcasting: ``T`` and ``P`` of shape (...) with ``x`` of shape (n,) or (..., n); ``phase`` is
``"gibbs"`` (the stable density root), ``"liquid"`` (the densest) or ``"vapour"`` (the lightest).
"""
from __future__ import annotations

import numpy as np

from jtcheck.errors import InputError
from jtcheck.thermo.kernels import evaluate as _ev
from jtcheck.thermo.models.conventions import GIBBS, LIQUID, VAPOUR
from jtcheck.thermo.models.cubic.mixture import CubicMixture
from jtcheck.thermo.models.cubic.properties import FugacityDerivatives, PhaseProperties
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


#: The properties of one phase (the cubic's result type, shared by every family): Z, v, h, s, cp, cv,
#: (dP/dT)_v, (dP/dv)_T, h_res, s_res (SI, per mole of phase).
ModelState = PhaseProperties


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
    lnphi, dT, dP, vbar = (np.empty(x.size) for _ in range(4))
    dn = np.empty((x.size, x.size))
    Z = _ev.fug_derivs_one(mix.kernel_params, float(T), float(P), x, phase_code(phase), lnphi, dn, dT, dP, vbar)
    return FugacityDerivatives(lnphi=lnphi, dn=dn, dT=dT, dP=dP, Z=float(Z), v_partial=vbar)


def phase_identification_parameter(mix: Mixture, T, P, x, phase: str = "gibbs"):
    """Phase identification parameter of Venkatarathnam and Oellrich (2011) [-] (above 1 liquid-like)."""
    shape, Tf, Pf, Xf = _flat(mix, T, P, x)
    out = np.empty(Tf.size)
    _ev.pip_many(mix.kernel_params, Tf, Pf, Xf, phase_code(phase), out)
    return float(out[0]) if shape == () else out.reshape(shape)
