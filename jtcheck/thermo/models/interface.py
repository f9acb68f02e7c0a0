"""The model functions the compiled flash algorithms call: the one place a model family is wired in.

Every module of :mod:`jtcheck.thermo.kernels` imports model functions and conventions from here and
from nowhere else.  The contract (arguments, units, what each function fills and returns) is in the
docstring of :mod:`jtcheck.thermo.models`.

Two families are wired in: the generic cubic (:mod:`jtcheck.thermo.models.cubic.kernels`) and GERG-2008
(:mod:`jtcheck.thermo.models.gerg2008.kernels`).  Each interface name is a generic function: a Python
stub with a ``numba.extending.overload`` that, at compile time, looks at the numba type of the parameter
tuple ``prm`` and returns the matching family's implementation (GERG-2008's tuple starts with a
``uint16`` marker, the cubic's with an ``int64`` alpha code).  numba compiles each algorithm once per
family and caches each signature; at run time there is no dispatch.  The stubs also work when called
from Python (they dispatch on the marker).
"""
from __future__ import annotations

import numpy as np
from numba.core import types
from numba.extending import overload

from jtcheck.thermo.models.conventions import GIBBS, LIQUID, VAPOUR, R
from jtcheck.thermo.models.cubic import kernels as _cubic
from jtcheck.thermo.models.gerg2008 import kernels as _gerg

__all__ = [
    "GIBBS",
    "LIQUID",
    "VAPOUR",
    "R",
    "critical_constants",
    "fug_derivs",
    "ln_phi",
    "pip",
    "polar_flags",
    "props",
]


def _family_py(prm):
    """The kernels module of a parameter tuple, at Python level."""
    return _gerg if isinstance(prm[0], np.uint16) else _cubic


def _is_gerg_type(prm) -> bool:
    """Whether a numba type is GERG-2008's parameter tuple (first element typed uint16)."""
    return isinstance(prm, types.BaseTuple) and len(prm) > 0 and prm[0] == types.uint16


def _is_cubic_type(prm) -> bool:
    """Whether a numba type is the cubic family's parameter tuple (first element an integer alpha code)."""
    return isinstance(prm, types.BaseTuple) and len(prm) > 0 and isinstance(prm[0], types.Integer) \
        and prm[0] != types.uint16


def ln_phi(prm, T, P, x, phase, out):
    """ln phi_i into ``out``; returns Z (contract: :mod:`jtcheck.thermo.models`)."""
    return _family_py(prm).ln_phi(prm, T, P, x, phase, out)


def props(prm, T, P, x, phase):
    """(Z, v, h, s, cp, cv, dP_dT_v, dP_dv_T, h_res, s_res) (contract: :mod:`jtcheck.thermo.models`)."""
    return _family_py(prm).props(prm, T, P, x, phase)


def fug_derivs(prm, T, P, x, phase, lnphi, dn, dT, dP, vbar):
    """ln phi and its n, T, P derivatives and partial molar volumes; returns Z (contract: models)."""
    return _family_py(prm).fug_derivs(prm, T, P, x, phase, lnphi, dn, dT, dP, vbar)


def pip(prm, T, P, x, phase):
    """Phase identification parameter [-] (contract: :mod:`jtcheck.thermo.models`)."""
    return _family_py(prm).pip(prm, T, P, x, phase)


def critical_constants(prm):
    """(tcs [K], pcs [Pa], omegas [-]) (contract: :mod:`jtcheck.thermo.models`)."""
    return _family_py(prm).critical_constants(prm)


def polar_flags(prm):
    """Components seeded as near-pure trial phases (contract: :mod:`jtcheck.thermo.models`)."""
    return _family_py(prm).polar_flags(prm)


_JIT_OPTIONS = {"cache": True, "nogil": True}


def _pick(prm, cubic_fn, gerg_fn):
    if _is_gerg_type(prm):
        return gerg_fn
    if _is_cubic_type(prm):
        return cubic_fn
    return None


@overload(ln_phi, jit_options=_JIT_OPTIONS, inline="always")
def _ol_ln_phi(prm, T, P, x, phase, out):
    fn = _pick(prm, _cubic.ln_phi, _gerg.ln_phi)
    if fn is None:
        return None

    def impl(prm, T, P, x, phase, out):
        return fn(prm, T, P, x, phase, out)
    return impl


@overload(props, jit_options=_JIT_OPTIONS, inline="always")
def _ol_props(prm, T, P, x, phase):
    fn = _pick(prm, _cubic.props, _gerg.props)
    if fn is None:
        return None

    def impl(prm, T, P, x, phase):
        return fn(prm, T, P, x, phase)
    return impl


@overload(fug_derivs, jit_options=_JIT_OPTIONS, inline="always")
def _ol_fug_derivs(prm, T, P, x, phase, lnphi, dn, dT, dP, vbar):
    fn = _pick(prm, _cubic.fug_derivs, _gerg.fug_derivs)
    if fn is None:
        return None

    def impl(prm, T, P, x, phase, lnphi, dn, dT, dP, vbar):
        return fn(prm, T, P, x, phase, lnphi, dn, dT, dP, vbar)
    return impl


@overload(pip, jit_options=_JIT_OPTIONS, inline="always")
def _ol_pip(prm, T, P, x, phase):
    fn = _pick(prm, _cubic.pip, _gerg.pip)
    if fn is None:
        return None

    def impl(prm, T, P, x, phase):
        return fn(prm, T, P, x, phase)
    return impl


@overload(critical_constants, jit_options=_JIT_OPTIONS, inline="always")
def _ol_critical_constants(prm):
    fn = _pick(prm, _cubic.critical_constants, _gerg.critical_constants)
    if fn is None:
        return None

    def impl(prm):
        return fn(prm)
    return impl


@overload(polar_flags, jit_options=_JIT_OPTIONS, inline="always")
def _ol_polar_flags(prm):
    fn = _pick(prm, _cubic.polar_flags, _gerg.polar_flags)
    if fn is None:
        return None

    def impl(prm):
        return fn(prm)
    return impl
