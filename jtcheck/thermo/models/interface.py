"""The model functions the compiled flash algorithms call: the one place a model family is wired in.

Every module of :mod:`jtcheck.thermo.kernels` imports model functions and conventions from here and
from nowhere else, so that a second family changes this module only.  The contract (arguments,
units, what each function fills and returns, and how a second family will be dispatched) is in the
docstring of :mod:`jtcheck.thermo.models`.  Today there is one family, the generic cubic, and its
kernels are bound directly.
"""
from __future__ import annotations

from jtcheck.thermo.models.conventions import GIBBS, LIQUID, VAPOUR, R
from jtcheck.thermo.models.cubic.kernels import critical_constants, fug_derivs, ln_phi, pip, polar_flags, props

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
