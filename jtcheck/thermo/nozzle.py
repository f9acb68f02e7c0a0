"""Isentropic nozzle flow of a real fluid at many stagnation states (a vessel blowdown's valve).

Thin wrapper over the compiled kernel :func:`jtcheck.thermo.kernels.nozzle.throat`: the greatest mass flux
along the isentrope, G = rho sqrt(2 (h0 - h)) (API Standard 520 Part I, 10th ed. (2020), Annex B, direct
integration; homogeneous equilibrium when two-phase), choked at the critical pressure or at the back
pressure when that is higher.  SI units: Pa, K, J/mol, kg/(m^2 s).
"""
from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

from jtcheck.thermo.fluid import Fluid
from jtcheck.thermo.kernels.flash_uv import phase_props as props
from jtcheck.thermo.kernels.nozzle import throat as _throat_kernel
from jtcheck.thermo.models.conventions import GIBBS, VAPOUR


@dataclass(frozen=True)
class ThroatFlow:
    """Throat of an ideal (frictionless, isentropic) nozzle.

    Attributes
    ----------
    converged : bool
        False when a PS flash on the isentrope failed (then the flow values are NaN).
    choked : bool
        True when the throat is at the critical pressure (back pressure at or below it).
    mass_flux_kg_per_m2_s : float
        G at the throat [kg/(m^2 s)]; the flow through area A with discharge coefficient Cd is Cd A G.
    p_throat_pa, t_throat_k, beta_throat : float
        Throat pressure [Pa], temperature [K] and vapour fraction [-].
    h0_j_per_mol : float
        Stagnation molar enthalpy [J/mol] (translated when the fluid's volume translation is on).
    molar_mass_kg_per_mol : float
        Molar mass of the flowing fluid [kg/mol].
    flashes : int
        PS flashes used.
    """

    converged: bool
    choked: bool
    mass_flux_kg_per_m2_s: float
    p_throat_pa: float
    t_throat_k: float
    beta_throat: float
    h0_j_per_mol: float
    molar_mass_kg_per_mol: float
    flashes: int


def isentropic_throat(fluid: Fluid, x, p0_pa: float, t0_k: float, p_back_pa: float,
                      t_skip_k: float = math.inf, ratio_hint: float = 0.0, vapour: bool = False) -> ThroatFlow:
    """Throat flow of composition ``x`` [-] (one phase at the stagnation state ``p0_pa`` [Pa], ``t0_k`` [K])
    discharging to ``p_back_pa`` [Pa].

    ``t_skip_k`` [K]: above it the isentrope is known to be single-phase (the composition's cricondentherm plus
    a margin); +inf tests stability at every point.  ``ratio_hint`` [-]: a critical pressure ratio found nearby
    (0 for none) narrows the search.  ``vapour``: the stagnation state is the vapour of a two-phase inventory
    (its lighter density root, which for a pure fluid on its saturation line the stable-root choice cannot tell
    from the liquid's)."""
    mix = fluid.mixture
    x = np.ascontiguousarray(x, dtype=float)
    prm = mix.kernel_params
    c = float(x @ fluid.vol_shifts) if fluid.volume_translation else 0.0
    m = float(x @ mix.mws)
    p = props(prm, float(t0_k), float(p0_pa), x, VAPOUR if vapour else GIBBS)
    h0 = p[2] - p0_pa * c
    ok, choked, g, pt, tt, bt, nfl = _throat_kernel(prm, float(p0_pa), float(t0_k), h0, p[3], x, float(p_back_pa), m,
                                                   c, float(t_skip_k), float(ratio_hint))
    return ThroatFlow(bool(ok), bool(choked), float(g), float(pt), float(tt), float(bt), float(h0), m, int(nfl))
