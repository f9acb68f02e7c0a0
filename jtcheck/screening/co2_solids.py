"""Dry ice (solid CO2) in letdowns below the CO2 triple-point pressure.

The project's cubic equations of state have no solid phase.  A CO2-rich fluid let down below the
triple-point pressure (0.51795 MPa, 216.592 K) is then reported as a metastable vapour-liquid state
that is too cold (pure CO2 let down to 1 atm comes out near 185 K with the Peng-Robinson EOS, where
the real outlet is dry ice and vapour at the sublimation temperature, 194.7 K).  This module finds
the real outlet by an energy balance against the CO2 sublimation line.

Model
-----
* Sublimation line of pure CO2: Span and Wagner, J. Phys. Chem. Ref. Data 25 (1996) 1509, eq. (3.12).
* Solid CO2 is pure.  Its fugacity is that of saturated vapour on the sublimation line, carried to the
  outlet pressure by the Poynting factor of an incompressible solid:
  f_s(T, p) = p_sub(T) phi_sat(T, p_sub) exp(v_s (p - p_sub) / (R T)).
* Its molar enthalpy is that of saturated vapour from the fluid's own EOS minus the sublimation
  enthalpy from the Clausius-Clapeyron equation, plus v_s (p - p_sub):
  h_s(T, p) = h_vap,EOS(T, p_sub, pure CO2) - dh_sub(T) + v_s (p - p_sub).
* Outlet: unknowns T and s (mol solid per mol feed); vapour y = (z - s e_CO2)/(1 - s);
  (a) f_CO2,vapour(T, p, y) = f_s(T, p);  (b) (1 - s) h_v(T, p, y) + s h_s(T, p) = h_in.

The vapour enthalpy, fugacity and volume come from the fluid's EOS (cubic or GERG-2008), with the Peneloux shift
applied exactly as :class:`jtcheck.thermo.fluid.Fluid` applies it (h - p sum y_i c_i, v - sum y_i c_i,
ln phi_i - c_i p / (R T)) when the fluid has volume translation on; the inlet enthalpy of a letdown
(``LetdownResult.h``) is in the same convention.

Engineering layer: imports only numpy, scipy, :mod:`jtcheck.thermo`, :mod:`jtcheck.letdown` and
:mod:`jtcheck.errors`; SI in and out (Pa, K, J/mol).
"""
from __future__ import annotations

import functools
import math
from dataclasses import dataclass

import numpy as np
from scipy.optimize import brentq

from jtcheck.errors import InputError
from jtcheck.letdown.plain import plain
from jtcheck.letdown.throttle import CO2_TRIPLE_P_PA, CO2_TRIPLE_T_K, LetdownResult
from jtcheck.thermo import flash as _flash
from jtcheck.thermo.components import find_component
from jtcheck.thermo.eos import R
from jtcheck.thermo.fluid import Fluid
from jtcheck.thermo.states import ln_phi, model_state

__all__ = [
    "CO2_SOLID_DENSITY_KG_PER_M3",
    "CO2_SOLID_MOLAR_VOLUME_M3_PER_MOL",
    "SUBLIMATION_T_MIN_K",
    "SolidCO2Outlet",
    "co2_solid_enthalpy_j_per_mol",
    "co2_solid_outlet",
    "co2_sublimation_pressure_pa",
    "co2_sublimation_temperature_k",
    "screen_co2_solids",
    "sublimation_enthalpy_j_per_mol",
]

#: Component id of carbon dioxide in :mod:`jtcheck.thermo.components`.
CO2_ID = "carbon dioxide"

#: Coefficients a1, a2, a3 and exponents of the CO2 sublimation-pressure equation, Span and Wagner,
#: J. Phys. Chem. Ref. Data 25 (1996) 1509, eq. (3.12).  Checked against independent transcriptions:
#: idaholab/moose CO2FluidProperties.C (sublimationPressure) and equinor open_petro_elastic
#: (span_wagner, "equation 3.12 of Span & Wagner").
_SW_A = (-14.740846, 2.4327015, -5.3061778)
_SW_EXP = (1.0, 1.9, 2.9)

#: Lowest temperature [K] accepted on the sublimation line.  Eq. (3.12) is fitted to sublimation data
#: reaching down to about 154 K (Giauque and Egan, J. Chem. Phys. 5 (1937) 45, measured 154-196 K);
#: 150 K is a mild extrapolation, the limit this module allows.
SUBLIMATION_T_MIN_K = 150.0

#: Density of solid CO2 near 195 K [kg/m^3]: 1.562 g/cm^3 (CRC Handbook of Chemistry and Physics value
#: for dry ice at -78.5 degC, as listed by the SSHADE solid-phase database entry "Carbon dioxide ice");
#: taken constant.  It enters the sublimation enthalpy only through v_s/v_vap (about 0.2 %).
CO2_SOLID_DENSITY_KG_PER_M3 = 1562.0

#: Molar volume of solid CO2 [m^3/mol], from the density above and the project's molar mass of CO2.
CO2_SOLID_MOLAR_VOLUME_M3_PER_MOL = find_component(CO2_ID).molar_mass_g_per_mol / 1000.0 / CO2_SOLID_DENSITY_KG_PER_M3

_METHOD = ("Solid CO2 (pure) in equilibrium with the EOS vapour: sublimation line of Span and Wagner, J. Phys. Chem. "
           "Ref. Data 25 (1996) 1509, eq. (3.12); solid fugacity p_sub phi_sat exp(v_s (p - p_sub)/RT); sublimation "
           "enthalpy by Clausius-Clapeyron, dh = T (v_vap - v_s) dp_sub/dT, with the EOS saturated-vapour volume "
           f"and a solid density of {CO2_SOLID_DENSITY_KG_PER_M3:g} kg/m3; outlet temperature and solid fraction from "
           "the steady-flow energy balance (1 - s) h_vap + s h_solid = h_in")

#: Energy-balance tolerance [J/mol] relative to max(|h_in|, 1000 J/mol).
_ENERGY_RTOL = 1e-8


# ---------------------------------------------------------------------------------------------
# sublimation line of pure CO2
# ---------------------------------------------------------------------------------------------

def _p_sub_t_range_text() -> str:
    return f"{SUBLIMATION_T_MIN_K:g} K to the triple point {CO2_TRIPLE_T_K} K"


def _check_t_sub(t_k, field: str) -> np.ndarray:
    t = np.asarray(t_k, dtype=float)
    if t.size == 0:
        raise InputError(field, "no temperature given [K]")
    if not np.all(np.isfinite(t)):
        raise InputError(field, f"temperature must be a finite number [K], allowed {_p_sub_t_range_text()}")
    lo = t < SUBLIMATION_T_MIN_K
    hi = t > CO2_TRIPLE_T_K * (1.0 + 1e-12)
    if lo.any() or hi.any():
        bad = t[lo | hi].flat[0]
        raise InputError(field, f"temperature {bad:g} K is outside the range of the CO2 sublimation equation "
                                f"(Span and Wagner 1996, eq. 3.12): {_p_sub_t_range_text()}")
    return np.minimum(t, CO2_TRIPLE_T_K)


def _ln_p_sub_and_slope(t: np.ndarray):
    """ln(p_sub/p_t) and d ln p_sub / dT [1/K] of Span and Wagner (1996), eq. (3.12), unchecked."""
    theta = np.maximum(1.0 - t / CO2_TRIPLE_T_K, 0.0)
    f = sum(a * theta ** e for a, e in zip(_SW_A, _SW_EXP, strict=True))
    # d/dtheta of sum a_i theta^e_i; e_i >= 1, so finite at theta = 0
    df = sum(a * e * theta ** (e - 1.0) for a, e in zip(_SW_A, _SW_EXP, strict=True))
    ln_ratio = CO2_TRIPLE_T_K / t * f
    # d/dT [(T_t/T) f(theta)] with dtheta/dT = -1/T_t
    slope = -CO2_TRIPLE_T_K / (t * t) * f - df / t
    return ln_ratio, slope


def _scalar_or_array(a: np.ndarray, like):
    return float(a) if np.ndim(like) == 0 else a


def co2_sublimation_pressure_pa(t_k):
    """Sublimation pressure of pure CO2 [Pa].

    Span and Wagner, J. Phys. Chem. Ref. Data 25 (1996) 1509, eq. (3.12):
    ln(p_sub/p_t) = (T_t/T) [a1 (1 - T/T_t) + a2 (1 - T/T_t)^1.9 + a3 (1 - T/T_t)^2.9],
    a1 = -14.740846, a2 = 2.4327015, a3 = -5.3061778, T_t = 216.592 K, p_t = 0.51795 MPa.

    Parameters
    ----------
    t_k : float or array_like
        Temperature [K], from 150 K to the triple point 216.592 K.

    Returns
    -------
    float or numpy.ndarray
        Sublimation pressure [Pa], same shape as ``t_k``.

    Raises
    ------
    jtcheck.errors.InputError
        For a temperature outside 150 K to 216.592 K or not finite (field ``t_k``).
    """
    t = _check_t_sub(t_k, "t_k")
    ln_ratio, _ = _ln_p_sub_and_slope(t)
    return _scalar_or_array(CO2_TRIPLE_P_PA * np.exp(ln_ratio), t_k)


def _p_sub_and_slope(t: np.ndarray):
    """(p_sub [Pa], dp_sub/dT [Pa/K]) by Span and Wagner (1996), eq. (3.12), for checked t."""
    ln_ratio, slope = _ln_p_sub_and_slope(t)
    p = CO2_TRIPLE_P_PA * np.exp(ln_ratio)
    return p, p * slope


#: Sublimation pressure at the lowest accepted temperature [Pa] (about 1.0 kPa).
P_SUB_MIN_PA = float(CO2_TRIPLE_P_PA * np.exp(_ln_p_sub_and_slope(np.array(SUBLIMATION_T_MIN_K))[0]))


def co2_sublimation_temperature_k(p_pa):
    """Sublimation temperature of pure CO2 [K] at pressure ``p_pa``: inverse of eq. (3.12).

    Span and Wagner, J. Phys. Chem. Ref. Data 25 (1996) 1509, eq. (3.12), solved for T by Newton
    steps on ln p_sub(T) (monotonic), started from the one-term (Clausius-Clapeyron) form
    ln(p/p_t) = a1 (T_t/T - 1).

    Parameters
    ----------
    p_pa : float or array_like
        Pressure, absolute [Pa], from the sublimation pressure at 150 K (about 1.0 kPa) to the triple
        point pressure 0.51795 MPa.

    Returns
    -------
    float or numpy.ndarray
        Temperature [K], same shape as ``p_pa``.

    Raises
    ------
    jtcheck.errors.InputError
        For a pressure outside that range or not finite (field ``p_pa``).
    """
    p = np.asarray(p_pa, dtype=float)
    if p.size == 0:
        raise InputError("p_pa", "no pressure given [Pa]")
    allowed = f"allowed {P_SUB_MIN_PA:.6g} Pa (150 K) to {CO2_TRIPLE_P_PA:g} Pa (triple point)"
    if not np.all(np.isfinite(p)):
        raise InputError("p_pa", f"pressure must be a finite number [Pa], {allowed}")
    bad = (p < P_SUB_MIN_PA * (1.0 - 1e-12)) | (p > CO2_TRIPLE_P_PA * (1.0 + 1e-12))
    if bad.any():
        raise InputError("p_pa", f"pressure {p[bad].flat[0]:g} Pa is outside the CO2 sublimation line "
                                 f"(Span and Wagner 1996, eq. 3.12): {allowed}")
    target = np.log(np.clip(p, P_SUB_MIN_PA, CO2_TRIPLE_P_PA) / CO2_TRIPLE_P_PA)
    t = CO2_TRIPLE_T_K / (1.0 + target / _SW_A[0])
    for _ in range(50):
        t = np.clip(t, SUBLIMATION_T_MIN_K, CO2_TRIPLE_T_K)
        ln_ratio, slope = _ln_p_sub_and_slope(t)
        step = (ln_ratio - target) / slope
        t = t - step
        if np.all(np.abs(step) < 1e-11 * t):
            break
    t = np.clip(t, SUBLIMATION_T_MIN_K, CO2_TRIPLE_T_K)
    return _scalar_or_array(t, p_pa)


# ---------------------------------------------------------------------------------------------
# EOS helpers: pure CO2 saturated vapour and vapour of composition y (Peneloux shift as the Fluid)
# ---------------------------------------------------------------------------------------------

@functools.lru_cache(maxsize=1)
def _pure_co2_pr() -> Fluid:
    return Fluid({CO2_ID: 1.0}, eos="PR")


def _co2_index(fluid: Fluid) -> int | None:
    return fluid.ids.index(CO2_ID) if CO2_ID in fluid.ids else None


def _unit(fluid: Fluid, k: int) -> np.ndarray:
    e = np.zeros(len(fluid.ids))
    e[k] = 1.0
    return e


def _shift(fluid: Fluid) -> np.ndarray:
    """Peneloux shifts c_i [m^3/mol] as the fluid applies them (zero when translation is off)."""
    return np.asarray(fluid.vol_shifts, float) if fluid.volume_translation else np.zeros(len(fluid.ids))


def _vapour_state(fluid: Fluid, t, p, x):
    """(ln phi [-], v [m^3/mol], h [J/mol]) of the vapour root, translated as the fluid translates.

    The fluid's model (a cubic, Michelsen and Mollerup 2007, ch. 3, or GERG-2008, Kunz and Wagner 2012), through
    the model interface (:mod:`jtcheck.thermo.states`); Peneloux translation (cubic only): v - x.c, h - p x.c,
    ln phi_i - c_i p/(R T).
    """
    t = np.asarray(t, float)
    p = np.asarray(p, float)
    x = np.asarray(x, float)
    c = _shift(fluid)
    props = model_state(fluid.mixture, t, p, x, "vapour")
    lnphi, _ = ln_phi(fluid.mixture, t, p, x, "vapour")
    xc = np.sum(x * c, axis=-1)
    lnphi = lnphi - c * (p / (R * t))[..., None]
    return lnphi, props.v - xc, props.h - p * xc


def sublimation_enthalpy_j_per_mol(t_k, fluid_for_vapour_volume: Fluid | None = None):
    """Molar sublimation enthalpy of CO2 [J/mol] by the Clausius-Clapeyron equation.

    dh_sub = T (v_vap - v_s) dp_sub/dT (Clapeyron 1834, exact for a first-order transition), with
    p_sub(T) and its slope from Span and Wagner, J. Phys. Chem. Ref. Data 25 (1996) 1509, eq. (3.12),
    v_vap the saturated-vapour volume of pure CO2 at (T, p_sub) from the fluid's EOS (vapour root,
    Peneloux-shifted if the fluid applies the shift) and v_s the solid molar volume from a density of
    1562 kg/m^3 (:data:`CO2_SOLID_DENSITY_KG_PER_M3`).

    Parameters
    ----------
    t_k : float or array_like
        Temperature on the sublimation line [K], 150 K to 216.592 K.
    fluid_for_vapour_volume : Fluid, optional
        Fluid whose EOS gives the vapour volume of pure CO2 (it must contain CO2; its other
        components play no part).  Default: pure CO2 with Peng-Robinson.

    Returns
    -------
    float or numpy.ndarray
        Sublimation enthalpy [J/mol], same shape as ``t_k``.

    Raises
    ------
    jtcheck.errors.InputError
        For a temperature outside 150 K to 216.592 K (``t_k``) or a fluid without CO2
        (``fluid_for_vapour_volume``).
    """
    t = _check_t_sub(t_k, "t_k")
    fluid = _pure_co2_pr() if fluid_for_vapour_volume is None else fluid_for_vapour_volume
    if not isinstance(fluid, Fluid):
        raise InputError("fluid_for_vapour_volume", f"expected a jtcheck Fluid, got {type(fluid).__name__}")
    k = _co2_index(fluid)
    if k is None:
        raise InputError("fluid_for_vapour_volume", "the fluid must contain carbon dioxide")
    dh = _dh_sub(fluid, k, t)
    return _scalar_or_array(dh, t_k)


def _dh_sub(fluid: Fluid, k: int, t: np.ndarray) -> np.ndarray:
    """Clausius-Clapeyron sublimation enthalpy [J/mol] for checked temperatures (see the public function)."""
    p_sub, dpdt = _p_sub_and_slope(t)
    e = np.broadcast_to(_unit(fluid, k), t.shape + (len(fluid.ids),))
    _, v_vap, _ = _vapour_state(fluid, t, p_sub, e)
    return t * (v_vap - CO2_SOLID_MOLAR_VOLUME_M3_PER_MOL) * dpdt


def _solid_state(fluid: Fluid, k: int, t: float, p: float):
    """(ln f_s [ln Pa], h_s [J/mol]) of pure solid CO2 at (t, p) (see the module docstring)."""
    tt = np.asarray(t, float)
    p_sub, _ = _p_sub_and_slope(tt)
    lnphi_sat, _, h_sat = _vapour_state(fluid, tt, p_sub, _unit(fluid, k))
    dh = _dh_sub(fluid, k, tt)
    v_s = CO2_SOLID_MOLAR_VOLUME_M3_PER_MOL
    ln_f = math.log(float(p_sub)) + float(lnphi_sat[k]) + v_s * (p - float(p_sub)) / (R * t)
    h_s = float(h_sat) - float(dh) + v_s * (p - float(p_sub))
    return ln_f, h_s


def co2_solid_enthalpy_j_per_mol(fluid: Fluid, t_k: float, p_pa: float) -> float:
    """Molar enthalpy of pure solid CO2 [J/mol] on the fluid's enthalpy scale.

    h_s(T, p) = h_vap(T, p_sub(T)) - dh_sub(T) + v_s (p - p_sub(T)): saturated CO2 vapour from the
    fluid's EOS (Peneloux-shifted if the fluid applies the shift), the Clausius-Clapeyron sublimation
    enthalpy of :func:`sublimation_enthalpy_j_per_mol` and the sublimation line of Span and Wagner,
    J. Phys. Chem. Ref. Data 25 (1996) 1509, eq. (3.12); the solid is taken incompressible.

    Parameters
    ----------
    fluid : Fluid
        A fluid containing CO2 (sets the EOS and the enthalpy scale).
    t_k : float
        Temperature [K], 150 K to 216.592 K.
    p_pa : float
        Pressure [Pa], positive.

    Returns
    -------
    float
        Molar enthalpy of the solid [J/mol] (ideal gas at 298.15 K is zero, as for the fluid).
    """
    if not isinstance(fluid, Fluid):
        raise InputError("fluid", f"expected a jtcheck Fluid, got {type(fluid).__name__}")
    k = _co2_index(fluid)
    if k is None:
        raise InputError("fluid", "the fluid must contain carbon dioxide")
    t = float(_check_t_sub(t_k, "t_k"))
    p = float(p_pa)
    if not math.isfinite(p) or p <= 0.0:
        raise InputError("p_pa", f"pressure must be a finite number greater than 0 Pa, got {p_pa!r}")
    return _solid_state(fluid, k, t, p)[1]


# ---------------------------------------------------------------------------------------------
# the outlet
# ---------------------------------------------------------------------------------------------

@dataclass(frozen=True)
class SolidCO2Outlet:
    """Outlet of a letdown allowing for solid CO2.  All values SI.

    Attributes
    ----------
    applies : bool
        True when the feed holds CO2, the outlet pressure is below the CO2 triple-point pressure and
        the feed's frost point at that pressure lies within the sublimation equation's range
        (150 K to 216.592 K).  When False, no solid is predicted by this module (see ``message``).
    forms_solid : bool
        True when solid CO2 is in the outlet.
    t_out_k : float
        Outlet temperature [K]: on the solid-vapour equilibrium when solid forms, else the fluid-only
        EOS answer (which then holds).  NaN when not converged.
    solid_fraction : float
        Solid CO2 [mol per mol feed].
    vapour_fraction : float
        Vapour [mol per mol feed] (1 - solid_fraction when solid forms, else the EOS vapour fraction).
    p_out_pa : float
        Outlet pressure [Pa].
    t_eos_k : float
        Outlet temperature of the fluid-only EOS letdown [K], for comparison; NaN if not given and not
        computed.
    converged : bool
        False when the calculation failed or the state is outside the model; ``message`` says why and
        the numbers must not be used.
    message : str
        What was found, or why it failed.
    method : str
        The published methods and balances used.
    t_frost_k : float
        Temperature [K] at which the feed's vapour first deposits solid CO2 at ``p_out_pa`` (the
        sublimation temperature for pure CO2); NaN when there is none in range.
    h_in_j_per_mol : float
        Conserved molar enthalpy [J/mol].
    h_vapour_j_per_mol, h_solid_j_per_mol : float
        Molar enthalpies [J/mol] of the outlet vapour and of solid CO2 at the outlet (NaN without solid).
    energy_residual_j_per_mol : float
        (1 - s) h_vapour + s h_solid - h_in [J/mol] (NaN without solid).
    vapour_composition : tuple of float
        Outlet vapour mole fractions [-], in the order of ``component_ids``.
    component_ids : tuple of str
    """

    applies: bool
    forms_solid: bool
    t_out_k: float
    solid_fraction: float
    vapour_fraction: float
    p_out_pa: float
    t_eos_k: float
    converged: bool
    message: str
    method: str = _METHOD
    t_frost_k: float = math.nan
    h_in_j_per_mol: float = math.nan
    h_vapour_j_per_mol: float = math.nan
    h_solid_j_per_mol: float = math.nan
    energy_residual_j_per_mol: float = math.nan
    vapour_composition: tuple[float, ...] = ()
    component_ids: tuple[str, ...] = ()

    def to_dict(self) -> dict:
        """Plain-JSON representation (SI units; NaN becomes None)."""
        return plain(self)


class _Problem:
    """Equations (a) and (b) of the module docstring for one fluid, h_in and p_out."""

    def __init__(self, fluid: Fluid, k: int, h_in: float, p: float):
        self.fluid = fluid
        self.k = k
        self.h_in = h_in
        self.p = p
        self.z = np.asarray(fluid.zs, float)
        self.zk = float(self.z[k])
        self.pure = 1.0 - self.zk < 1e-12
        self.e = _unit(fluid, k)

    def vapour(self, t: float, y: np.ndarray):
        lnphi, _, h = _vapour_state(self.fluid, t, self.p, y)
        return float(lnphi[self.k]), float(h)

    def frost_function(self, t: float) -> float:
        """ln f_CO2 of the feed as vapour minus ln f of the solid, at (t, p) [-]; > 0: solid forms."""
        lnphi, _ = self.vapour(t, self.z)
        ln_fs, _ = _solid_state(self.fluid, self.k, t, self.p)
        return math.log(self.zk * self.p) + lnphi - ln_fs

    def split(self, t: float):
        """(s, y, h_v, h_s) at t: solid fraction from the fugacity equation (a), solved for y_CO2."""
        ln_fs, h_s = _solid_state(self.fluid, self.k, t, self.p)
        lnphi0, h0 = self.vapour(t, self.z)
        if math.log(self.zk * self.p) + lnphi0 <= ln_fs:
            return 0.0, self.z, h0, h_s
        others = self.z.copy()
        others[self.k] = 0.0
        others_sum = 1.0 - self.zk

        def y_of(u: float) -> np.ndarray:
            y = others * ((1.0 - u) / others_sum)
            y[self.k] = u
            return y

        def resid(ln_u: float) -> float:
            u = math.exp(ln_u)
            return ln_u + self.vapour(t, y_of(u))[0] + math.log(self.p) - ln_fs

        hi = math.log(self.zk)
        lo = min(hi, ln_fs - math.log(self.p)) - 2.0
        while resid(lo) > 0.0:       # a fugacity coefficient far from 1: widen (rare)
            lo -= 5.0
            if lo < -700.0:
                raise ArithmeticError("no CO2 vapour fraction matches the solid fugacity")
        ln_u = brentq(resid, lo, hi, xtol=1e-15, rtol=4.0 * np.finfo(float).eps, maxiter=200)
        u = math.exp(ln_u)
        s = (self.zk - u) / (1.0 - u)
        y = y_of(u)
        return s, y, self.vapour(t, y)[1], h_s

    def energy(self, t: float) -> float:
        """(1 - s) h_v + s h_s - h_in at t on the solid-vapour equilibrium [J/mol]."""
        s, _, h_v, h_s = self.split(t)
        return (1.0 - s) * h_v + s * h_s - self.h_in


def _no_solid(fluid: Fluid, h_in: float, p_out: float, t_eos: float, applies: bool, note: str,
              t_frost: float = math.nan) -> SolidCO2Outlet:
    """Result without solid: the fluid-only EOS outlet holds; run its PH flash for t_out."""
    guess = t_eos if math.isfinite(t_eos) else None
    out = fluid.flash_ph(p_out, h_in, t_guess_k=guess)
    if not out.converged:
        return SolidCO2Outlet(applies, False, math.nan, 0.0, math.nan, p_out, t_eos, False,
                              f"{note}; but the fluid-only PH flash failed: {out.message}", t_frost_k=t_frost,
                              h_in_j_per_mol=h_in, component_ids=fluid.ids)
    t_eos_out = t_eos if math.isfinite(t_eos) else out.T
    return SolidCO2Outlet(applies, False, out.T, 0.0, out.beta, p_out, t_eos_out, True,
                          f"{note}; the fluid-only EOS outlet holds ({out.T:.2f} K, {out.phase})",
                          t_frost_k=t_frost, h_in_j_per_mol=h_in, vapour_composition=tuple(map(float, out.y)),
                          component_ids=fluid.ids)


def _failed(fluid: Fluid, h_in: float, p_out: float, t_eos: float, message: str,
            t_frost: float = math.nan) -> SolidCO2Outlet:
    return SolidCO2Outlet(True, False, math.nan, math.nan, math.nan, p_out, t_eos, False, message,
                          t_frost_k=t_frost, h_in_j_per_mol=h_in, component_ids=fluid.ids)


def co2_solid_outlet(fluid: Fluid, h_in_j_per_mol: float, p_out_pa: float,
                     t_eos_k: float = math.nan) -> SolidCO2Outlet:
    """Whether solid CO2 forms at the outlet of a letdown, and if so the outlet temperature and solid fraction.

    Steady-flow energy balance of an isenthalpic letdown (h_out = h_in) with pure solid CO2 as an extra
    phase, in equilibrium with the EOS vapour: unknowns T and s (mol solid per mol feed), vapour
    y = (z - s e_CO2)/(1 - s), equations

    (a) y_CO2 phi_CO2(T, p, y) p = p_sub(T) phi_sat(T, p_sub) exp(v_s (p - p_sub)/(R T)),
    (b) (1 - s) h_v(T, p, y) + s h_s(T, p) = h_in,

    with p_sub(T) of Span and Wagner, J. Phys. Chem. Ref. Data 25 (1996) 1509, eq. (3.12), and
    h_s from :func:`co2_solid_enthalpy_j_per_mol` (Clausius-Clapeyron sublimation enthalpy).  For
    each T, (a) gives s by Brent's method on ln y_CO2 (Brent 1973); (b) is then solved for T by Brent's
    method between 150 K and the feed's frost point (where (a) holds with s = 0).  Pure CO2 sits at
    T = T_sub(p_out) and s follows from (b) directly.  When the vapour at the frost point already holds
    h_in, no solid forms and the fluid-only EOS outlet is returned.

    Only solid-vapour equilibrium is modelled: if a liquid phase would coexist with the solid and the
    vapour, or the whole stream would freeze (s >= 1), the result has ``converged=False``.

    Parameters
    ----------
    fluid : Fluid
        The flowing fluid.
    h_in_j_per_mol : float
        Conserved molar enthalpy of the letdown [J/mol], on the fluid's scale (``LetdownResult.h``,
        or ``fluid.flash_pt(t_in, p_in).h``).
    p_out_pa : float
        Outlet pressure, absolute [Pa].
    t_eos_k : float, optional
        Outlet temperature [K] of the fluid-only EOS letdown, stored for comparison and used as the
        starting guess of the fluid-only flash when no solid forms.

    Returns
    -------
    SolidCO2Outlet

    Raises
    ------
    jtcheck.errors.InputError
        For a non-Fluid ``fluid``, a non-finite ``h_in``, or a ``p_out`` that is not a finite number
        greater than 0 Pa.
    """
    if not isinstance(fluid, Fluid):
        raise InputError("fluid", f"expected a jtcheck Fluid, got {type(fluid).__name__}")
    h_in = float(h_in_j_per_mol)
    if not math.isfinite(h_in):
        raise InputError("h_in", f"molar enthalpy must be a finite number [J/mol], got {h_in_j_per_mol!r}")
    p = float(p_out_pa)
    if not math.isfinite(p) or p <= 0.0:
        raise InputError("p_out", f"outlet pressure must be a finite number greater than 0 Pa (absolute), "
                                  f"got {p_out_pa!r}")
    t_eos = float(t_eos_k) if t_eos_k is not None else math.nan

    k = _co2_index(fluid)
    if k is None or fluid.zs[k] <= 0.0:
        return _no_solid(fluid, h_in, p, t_eos, False, "no CO2 in the feed: no solid CO2")
    if p >= CO2_TRIPLE_P_PA:
        note = (f"outlet pressure {p:g} Pa is not below the CO2 triple-point pressure {CO2_TRIPLE_P_PA:g} Pa: "
                "no solid from a letdown of pure CO2")
        if fluid.zs[k] < 1.0 - 1e-12:
            note += ("; solid CO2 from a CO2-lean mixture above that pressure (frost out of the vapour, freezing "
                     "out of a liquid) is not screened here")
        return _no_solid(fluid, h_in, p, t_eos, False, note)

    prob = _Problem(fluid, k, h_in, p)
    try:
        return _solve(prob, t_eos)
    except (ArithmeticError, ValueError, RuntimeError) as exc:
        return _failed(fluid, h_in, p, t_eos, f"solid-vapour outlet calculation failed: {exc}")


def _solve(prob: _Problem, t_eos: float) -> SolidCO2Outlet:
    fluid, p, h_in = prob.fluid, prob.p, prob.h_in
    # frost point of the feed at p_out
    if prob.pure:
        t_frost = float(co2_sublimation_temperature_k(p)) if p >= P_SUB_MIN_PA else math.nan
    else:
        f_lo = prob.frost_function(SUBLIMATION_T_MIN_K)
        f_hi = prob.frost_function(CO2_TRIPLE_T_K)
        if f_hi > 0.0:
            return _failed(fluid, h_in, p, t_eos, "the feed's vapour would deposit solid CO2 above the triple-point "
                                                  "temperature at this pressure: outside this model")
        t_frost = (brentq(prob.frost_function, SUBLIMATION_T_MIN_K, CO2_TRIPLE_T_K, xtol=1e-12, maxiter=200)
                   if f_lo > 0.0 else math.nan)
    if not math.isfinite(t_frost):
        # the vapour's CO2 fugacity stays below the solid's everywhere in range: solid only below 150 K
        _, h_v_min = prob.vapour(SUBLIMATION_T_MIN_K, prob.z)
        if h_in < h_v_min:
            return SolidCO2Outlet(False, False, math.nan, math.nan, math.nan, p, t_eos, False,
                                  f"the feed's CO2 frost point at {p:g} Pa is below {SUBLIMATION_T_MIN_K:g} K and the "
                                  f"outlet would be colder than {SUBLIMATION_T_MIN_K:g} K: outside the range of the "
                                  "sublimation equation, solid CO2 cannot be ruled out",
                                  h_in_j_per_mol=h_in, component_ids=fluid.ids)
        return _no_solid(fluid, h_in, p, t_eos, False,
                         f"the feed's CO2 frost point at {p:g} Pa is below {SUBLIMATION_T_MIN_K:g} K and the outlet "
                         f"stays warmer: no solid CO2")

    _, h_v_frost = prob.vapour(t_frost, prob.z)
    if h_in >= h_v_frost:
        return _no_solid(fluid, h_in, p, t_eos, True,
                         f"the vapour at the CO2 frost point ({t_frost:.3f} K) already holds the inlet enthalpy: "
                         "no solid CO2", t_frost=t_frost)

    if prob.pure:
        t = t_frost
        _, h_s = _solid_state(fluid, prob.k, t, p)
        s = (h_v_frost - h_in) / (h_v_frost - h_s)
        y, h_v = prob.z, h_v_frost
    else:
        g_lo = prob.energy(SUBLIMATION_T_MIN_K)
        if g_lo > 0.0:
            return _failed(fluid, h_in, p, t_eos, f"solid CO2 forms and the outlet would be colder than "
                                                  f"{SUBLIMATION_T_MIN_K:g} K, the lower limit of the sublimation "
                                                  "equation", t_frost)
        t = brentq(prob.energy, SUBLIMATION_T_MIN_K, t_frost, xtol=1e-12, rtol=4.0 * np.finfo(float).eps,
                   maxiter=200)
        s, y, h_v, h_s = prob.split(t)
    if s >= 1.0:
        return _failed(fluid, h_in, p, t_eos, f"the whole stream would freeze (solid fraction {s:.4f} >= 1): a "
                                              "subcooled solid is outside this model", t_frost)
    resid = (1.0 - s) * h_v + s * h_s - h_in
    tol = _ENERGY_RTOL * max(abs(h_in), 1000.0)
    common = dict(t_frost_k=t_frost, h_in_j_per_mol=h_in, h_vapour_j_per_mol=h_v, h_solid_j_per_mol=h_s,
                  energy_residual_j_per_mol=resid, vapour_composition=tuple(map(float, y)),
                  component_ids=fluid.ids)
    if not (0.0 < s < 1.0) or abs(resid) > tol:
        return SolidCO2Outlet(True, True, math.nan, math.nan, math.nan, p, t_eos, False,
                              f"energy balance not closed (solid fraction {s:.6g}, residual {resid:.3g} J/mol)",
                              **common)
    # the vapour left with the solid must be a stable single phase: no liquid
    if not prob.pure:
        check = _flash.flash_pt(fluid.mixture, t, p, y)
        if not check.converged or check.phase == "two-phase" or check.beta < 0.5:
            return SolidCO2Outlet(True, True, math.nan, math.nan, math.nan, p, t_eos, False,
                                  f"at {t:.2f} K the vapour in equilibrium with solid CO2 is not a stable single "
                                  f"vapour ({check.phase}): vapour-liquid-solid equilibrium is not modelled",
                                  **common)
    msg = (f"solid CO2 forms: {s:.4f} mol solid per mol feed at {t:.3f} K (frost point {t_frost:.3f} K)")
    if math.isfinite(t_eos):
        msg += f"; the fluid-only EOS gave {t_eos:.2f} K"
    return SolidCO2Outlet(True, True, float(t), float(s), 1.0 - float(s), p, t_eos, True, msg, **common)


def screen_co2_solids(fluid: Fluid, letdown_result: LetdownResult) -> SolidCO2Outlet:
    """Screen a fluid-only letdown result for dry ice: :func:`co2_solid_outlet` on its h and p_out.

    The letdown's conserved enthalpy ``letdown_result.h`` and outlet pressure ``letdown_result.p_out``
    are used; its outlet temperature is stored as ``t_eos_k``.

    Threshold: any CO2 content is screened (the letdown module only warns from a CO2 mole fraction of
    0.5, but a CO2-lean vapour can still deposit dry ice when cold enough).  The physical test is
    used instead of a content threshold: ``applies`` is False when the feed's CO2 fugacity as vapour at
    p_out never reaches that of the solid between 150 K (the lower limit of the sublimation equation)
    and the triple point, i.e. roughly when the CO2 partial pressure is below the sublimation pressure
    at 150 K, about 1.0 kPa.  If the outlet would then still be colder than 150 K the result has
    ``converged=False`` (solid cannot be ruled out) rather than a silent "no solid".

    Parameters
    ----------
    fluid : Fluid
        The fluid of the letdown.
    letdown_result : jtcheck.letdown.throttle.LetdownResult
        A converged single-case letdown of that fluid.

    Returns
    -------
    SolidCO2Outlet

    Raises
    ------
    jtcheck.errors.InputError
        When ``letdown_result`` is not a LetdownResult or belongs to another fluid.
    """
    if not isinstance(fluid, Fluid):
        raise InputError("fluid", f"expected a jtcheck Fluid, got {type(fluid).__name__}")
    if not isinstance(letdown_result, LetdownResult):
        raise InputError("letdown_result", "expected a single-case jtcheck.letdown.throttle.LetdownResult, got "
                                           f"{type(letdown_result).__name__}")
    if letdown_result.component_ids and tuple(letdown_result.component_ids) != tuple(fluid.ids):
        raise InputError("letdown_result", f"the letdown was computed for components {letdown_result.component_ids}, "
                                           f"not for this fluid's {fluid.ids}")
    if not math.isfinite(letdown_result.h):
        return SolidCO2Outlet(False, False, math.nan, math.nan, math.nan, float(letdown_result.p_out), math.nan,
                              False, f"the letdown has no inlet enthalpy: {letdown_result.message}",
                              component_ids=fluid.ids)
    t_eos = letdown_result.t_out if letdown_result.converged else math.nan
    return co2_solid_outlet(fluid, letdown_result.h, letdown_result.p_out, t_eos_k=t_eos)
