"""Hydrate equilibrium temperature of a water-saturated gas, with the range in which it is claimed.

The model is van der Waals and Platteeuw (Adv. Chem. Phys. 2 (1959) 1-57) with the parameter set of
Munck, Skjold-Jorgensen and Rasmussen (Chem. Eng. Sci. 43 (1988) 2661-2672), the guest fugacities
from the fluid's own equation of state (:mod:`jtcheck.thermo.hydrate.kernels`), and the gas dissolved
in the water by Henry's law (Holder, Corbin and Papadopoulos 1980).

Range (fail closed): a point is screened only inside the range over which the model was checked
against published data (tests/thermo/test_hydrate.py, test_hydrate_mixtures.py); outside it the result carries no
temperature that could reassure, only the reason:

* pressure from :data:`P_RANGE_PA` (0.04 to 30 MPa);
* hydrate temperature from :data:`T_RANGE_K` (245 to 300 K);
* composition of the water-free gas: at least one hydrate former of the model (methane, ethane,
  propane, isobutane, n-butane, nitrogen, CO2, H2S); components that are not formers at most
  :data:`NON_FORMER_MAX` (they dilute the gas through the equation of state, but no data with much
  of them were checked); nitrogen at most :data:`NITROGEN_MAX` (pure-nitrogen data deviate most), and
  at most :data:`NITROGEN_ICE_MAX` where the hydrate forms with ice; hydrogen sulfide at most
  :data:`H2S_MIXTURE_MAX` beside other formers, or pure (from :data:`H2S_PURE_MIN`): the only mixture data,
  methane + H2S at 7-22 mol% H2S, lie up to 3.0 K below the model (tests/thermo/test_hydrate_mixtures.py).

The largest deviation found in that range is :data:`CHECKED_DEVIATION_K`, which screening adds to
the hydrate temperature.
"""
from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from jtcheck.errors import InputError
from jtcheck.thermo.hydrate import parameters as _par
from jtcheck.thermo.hydrate.kernels import HY_ABOVE, HY_FAIL_FLASH, HY_NONE, HY_OK, hydrate_t, hydrate_t_many

__all__ = [
    "CHECKED_DEVIATION_K",
    "H2S_MIXTURE_MAX",
    "H2S_PURE_MIN",
    "METHOD",
    "METHOD_NAME",
    "NITROGEN_MAX",
    "NON_FORMER_MAX",
    "P_RANGE_PA",
    "T_RANGE_K",
    "HydrateEquilibrium",
    "check_fluid",
    "eos_name",
    "hydrate_temperature",
]

#: Short name of the method, the same in results, pages, records, batch and API.
METHOD_NAME = "van der Waals-Platteeuw (Munck et al. 1988)"

#: The method in full, for records.
METHOD = ("van der Waals and Platteeuw, Adv. Chem. Phys. 2 (1959) 1, with the Langmuir constants and empty-"
          "lattice properties of Munck, Skjold-Jorgensen and Rasmussen, Chem. Eng. Sci. 43 (1988) 2661; guest "
          "fugacities from the case's equation of state; gas dissolved in the water by Henry's law (Holder, "
          "Corbin and Papadopoulos, Ind. Eng. Chem. Fundam. 19 (1980) 282); ice below the melting point of the "
          "water phase; the structure (sI or sII) stable at the higher temperature is reported")

#: Pressure range of the checks [Pa].
P_RANGE_PA = (0.04e6, 30.0e6)
#: Hydrate-temperature range of the checks [K].
T_RANGE_K = (245.0, 300.0)
#: Largest mole fraction of non-formers in the water-free gas [-] (a screening choice of jtcheck).
NON_FORMER_MAX = 0.05
#: Largest mole fraction of nitrogen in the water-free gas [-] (a screening choice of jtcheck: the
#: pure-nitrogen data deviate most, by 1.35 K at 25 MPa, and far more in the ice region).
NITROGEN_MAX = 0.5
#: Largest mole fraction of nitrogen in the water-free gas when the hydrate forms with ice [-] (a screening choice
#: of jtcheck: pure-nitrogen data with ice, 269-271 K at 11-13 MPa, lie 4 to 8.7 K above the model, and no
#: nitrogen-rich mixture data with ice were checked).
NITROGEN_ICE_MAX = 0.10
#: Largest mole fraction of hydrogen sulfide in a water-free gas with other formers [-] (a screening choice of
#: jtcheck: methane + H2S data of Noaker and Katz (1951) lie within 0.62 K of the model at 1.7 and 3.1 mol% H2S,
#: but 0.8 to 3.0 K below it at 7.2 to 22 mol%, 7 of 13 points beyond 2 K; no other mixture data with H2S were
#: checked).
H2S_MIXTURE_MAX = 0.032
#: Smallest mole fraction of hydrogen sulfide taken as pure H2S, whose data (Selleck et al. 1952) were checked [-].
H2S_PURE_MIN = 0.999
#: Largest deviation from the published data inside the claimed range [K] (1.98 K, propane with ice
#: near 271 K; tests/thermo/test_hydrate.py; binary gases within 1.83 K, tests/thermo/test_hydrate_mixtures.py),
#: rounded up.
CHECKED_DEVIATION_K = 2.0

_T_WINDOW = (150.0, 340.0)
_TOL_K = 1e-3
#: Start of every temperature iteration [K]: fixed, so that a pressure gives the same answer however it is asked.
_T_START = 280.0
#: Answers kept per fluid (pressure, ln a_w) before the store is emptied.
_CACHE_MAX = 200_000
_STRUCTURES = ("sI", "sII")
_REF = tuple(_par.REFERENCE[k] for k in ("dmu0", "dh_ice", "dv_ice", "dh_liq", "dv_liq", "dcp_liq"))


@dataclass(frozen=True)
class HydrateEquilibrium:
    """Hydrate equilibrium temperatures of a water-saturated gas at one or more pressures.

    Scalars when one pressure was given, arrays (tuples for text) of the pressures' shape otherwise.

    Attributes
    ----------
    p_pa : float or numpy.ndarray
        Pressure, [Pa].
    t_k : float or numpy.ndarray
        Hydrate equilibrium temperature, [K]; NaN where not screened.
    structure : str or tuple of str
        "sI" or "sII", the structure that forms first; "" where not screened.
    water_phase : str or tuple of str
        "liquid water" or "ice" at the hydrate point; "" where not screened.
    screened : bool or numpy.ndarray of bool
        The point lies in the model's claimed range and the calculation converged.
    reason : str or tuple of str
        Why a point is not screened ("" where it is).
    t_model_k : float or numpy.ndarray
        The model's temperature even outside its range, [K], for information only (NaN where none).
    method : str
        :data:`METHOD_NAME`.
    eos : str
        The equation of state of the guest fugacities.
    checked_deviation_k : float
        :data:`CHECKED_DEVIATION_K`, [K].
    water_activity : float
        Activity of the water without dissolved gas (1 for pure water; below 1 with an inhibitor), [-].
    """

    p_pa: object
    t_k: object
    structure: object
    water_phase: object
    screened: object
    reason: object
    t_model_k: object
    method: str
    eos: str
    checked_deviation_k: float
    water_activity: float


def check_fluid(fluid, field: str = "fluid") -> None:
    """Raise :class:`InputError` unless ``fluid`` is a mixture on one of jtcheck's thermodynamic models.

    Any object with the model interface of :mod:`jtcheck.thermo.models` serves (duck typing, not a class
    check): component ``ids``, mole fractions ``zs``, ``with_composition`` (the same model for another
    composition), and a ``mixture`` whose ``kernel_params`` the compiled flash and fugacity kernels take.
    A :class:`jtcheck.thermo.fluid.Fluid` on the cubic equations of state is one; a model family added behind
    the same interface (GERG-2008) serves the hydrate model unchanged, the guest fugacities coming from it.
    """
    missing = [a for a in ("ids", "zs", "with_composition", "mixture") if not hasattr(fluid, a)]
    if not missing and not hasattr(fluid.mixture, "kernel_params"):
        missing.append("mixture.kernel_params")
    if missing:
        raise InputError(field, f"expected a jtcheck Fluid (a mixture on one of its thermodynamic models), got "
                                f"{type(fluid).__name__} without {', '.join(missing)}")


def eos_name(fluid) -> str:
    """Name of the fluid's model (equation of state) as results show it."""
    eos = getattr(fluid, "eos", "")
    return str(getattr(eos, "value", eos))


def _composition_reason(ids, zs) -> str:
    zs = np.asarray(zs, dtype=float)
    keep = [i for i, c in enumerate(ids) if c != "water"]
    if not keep or zs[keep].sum() <= 0.0:
        return "the fluid is water only: no gas to form hydrate"
    z = zs[keep] / zs[keep].sum()
    dry = [ids[i] for i in keep]
    formers = sum(zi for c, zi in zip(dry, z, strict=True) if c in _par.LANGMUIR_AB)
    if formers <= 0.0:
        return ("no hydrate former of the model in the gas (formers: " + ", ".join(_par.GUESTS) + ")")
    if 1.0 - formers > NON_FORMER_MAX + 1e-12:
        others = sorted({c for c in dry if c not in _par.LANGMUIR_AB})
        return (f"components that do not form hydrate in the model ({', '.join(others)}) are "
                f"{100 * (1 - formers):.1f} mol% of the water-free gas, above the checked "
                f"{100 * NON_FORMER_MAX:g} mol%")
    n2 = sum(zi for c, zi in zip(dry, z, strict=True) if c == "nitrogen")
    if n2 > NITROGEN_MAX:
        return (f"nitrogen is {100 * n2:.1f} mol% of the water-free gas, above the checked {100 * NITROGEN_MAX:g} "
                "mol% (the nitrogen hydrate data deviate most from the model)")
    h2s = sum(zi for c, zi in zip(dry, z, strict=True) if c == "hydrogen sulfide")
    if H2S_MIXTURE_MAX < h2s < H2S_PURE_MIN:
        return (f"hydrogen sulfide is {100 * h2s:.1f} mol% of the water-free gas: beside other formers the model is "
                f"checked up to {100 * H2S_MIXTURE_MAX:g} mol% only (methane + H2S data at 7-22 mol% lie up to 3 K "
                "from it)")
    return ""


def _setup(fluid):
    """The water-free fluid on the same model basis, its kernel parameters and the model arrays (kept on the fluid)."""
    cached = getattr(fluid, "_hydrate_setup", None)
    if cached is not None:
        return cached
    ids = list(fluid.ids)
    zs = np.asarray(fluid.zs, dtype=float)
    reason = _composition_reason(ids, zs)
    if reason:
        setup = (reason, None, None, None, None, None, None)
    else:
        keep = [i for i, c in enumerate(ids) if c != "water"]
        total = float(zs[keep].sum())
        dry = fluid if len(keep) == len(ids) else fluid.with_composition(
            [(ids[i], float(zs[i]) / total) for i in keep])
        a, b = _par.langmuir_arrays(dry.ids)
        ha, hb = _par.henry_arrays(dry.ids)
        setup = ("", dry.mixture.kernel_params, np.ascontiguousarray(dry.zs, dtype=float), a, b, ha, hb)
        fluid._hydrate_n2 = float(sum(z for c, z in zip(dry.ids, dry.zs, strict=True) if c == "nitrogen"))
    fluid._hydrate_setup = setup
    fluid._hydrate_cache = {}
    return setup


def _point(pk: float, st: int, tk: float, s: int, ice: int, n2: float) -> tuple[float, float, str, str, str]:
    """(t_k, t_model_k, structure, water phase, reason) of one pressure [Pa] from the kernel's answer; ``n2`` is the
    nitrogen fraction of the water-free gas [-]."""
    t_model = tk if st == HY_OK else np.nan
    if not (P_RANGE_PA[0] <= pk <= P_RANGE_PA[1]):
        reason = (f"pressure {pk / 1e5:.3g} bar outside the model's checked range "
                  f"{P_RANGE_PA[0] / 1e5:g}-{P_RANGE_PA[1] / 1e5:g} bar")
    elif st == HY_NONE:
        reason = (f"no hydrate found down to {_T_WINDOW[0]:g} K: far below the model's checked range "
                  f"{T_RANGE_K[0]:g}-{T_RANGE_K[1]:g} K")
    elif st == HY_ABOVE:
        reason = f"hydrate still stable at {_T_WINDOW[1]:g} K: above the model's checked range"
    elif st == HY_FAIL_FLASH:
        reason = "the isothermal flash of the gas failed"
    elif st != HY_OK:
        reason = "the hydrate temperature iteration did not converge"
    elif not (T_RANGE_K[0] <= tk <= T_RANGE_K[1]):
        reason = (f"hydrate temperature {tk:.1f} K outside the model's checked range "
                  f"{T_RANGE_K[0]:g}-{T_RANGE_K[1]:g} K")
    elif ice and n2 > NITROGEN_ICE_MAX:
        reason = (f"hydrate with ice at {tk:.1f} K and nitrogen {100 * n2:.1f} mol% of the water-free gas: with ice "
                  f"the model is checked up to {100 * NITROGEN_ICE_MAX:g} mol% nitrogen only")
    else:
        return tk, t_model, _STRUCTURES[s], "ice" if ice else "liquid water", ""
    return np.nan, t_model, "", "", reason


def hydrate_point(fluid, p_pa: float, ln_water_activity: float = 0.0) -> tuple[float, float, str, str, str]:
    """One pressure, without the checks of :func:`hydrate_temperature` (for callers that made them):
    (t_k, t_model_k, structure, water phase, reason), the same numbers :func:`hydrate_temperature` gives."""
    reason_fluid = _setup(fluid)[0]
    if reason_fluid:
        return np.nan, np.nan, "", "", reason_fluid
    key = (float(p_pa), float(ln_water_activity))
    got = fluid._hydrate_cache.get(key)
    if got is None:
        _, prm, z, a, b, ha, hb = fluid._hydrate_setup
        out = hydrate_t(prm, key[0], z, np.inf, key[1], a, b, _par.CAVITIES_PER_WATER, _REF, ha, hb,
                        _T_WINDOW[0], _T_WINDOW[1], _T_START, _TOL_K)
        got = fluid._hydrate_cache[key] = _point(key[0], *out[:4], fluid._hydrate_n2)
    return got


def hydrate_temperature(fluid, p_pa, *, water_activity: float = 1.0) -> HydrateEquilibrium:
    """Hydrate equilibrium temperature of a water-saturated gas at the given pressure(s).

    van der Waals and Platteeuw (1959) with the parameters of Munck et al. (1988); the guest
    fugacities come from the fluid's own equation of state (the water-free gas, flashed at each
    trial temperature), liquid water above its melting point and ice below; the structure stable at
    the higher temperature is reported.  Outside the claimed range (module docstring) a point is not
    screened: ``t_k`` is NaN and ``reason`` says why.

    Parameters
    ----------
    fluid : jtcheck.thermo.fluid.Fluid
        The gas, on any of jtcheck's models (:func:`check_fluid`): the guest fugacities come from the
        fluid's own model; water among its components is left out of the gas (it is taken as saturating it).
    p_pa : float or array_like
        Pressure(s), [Pa].
    water_activity : float
        Activity of the water phase without its dissolved gas, [-], in (0, 1]; 1 for pure water,
        lower with a thermodynamic inhibitor.

    Returns
    -------
    HydrateEquilibrium

    Raises
    ------
    InputError
        ``fluid`` is not a Fluid; a pressure not finite or not positive; ``water_activity`` outside (0, 1].
    """
    check_fluid(fluid)
    try:
        p = np.asarray(p_pa, dtype=float)
    except (TypeError, ValueError):
        raise InputError("p", f"pressure must be a number or an array of numbers [Pa], got {p_pa!r}") from None
    if p.size == 0:
        raise InputError("p", "no pressure given [Pa]")
    if not np.all(np.isfinite(p)) or np.any(p <= 0.0):
        bad = p[~np.isfinite(p) | (p <= 0.0)].flat[0]
        raise InputError("p", f"pressure must be finite and above 0 Pa, got {bad!r}")
    try:
        aw = float(water_activity)
    except (TypeError, ValueError):
        raise InputError("water_activity", f"must be a number in (0, 1], got {water_activity!r}") from None
    if not (0.0 < aw <= 1.0):
        raise InputError("water_activity", f"must lie above 0 and at most 1, got {water_activity!r}")

    reason_fluid, prm, z, a, b, ha, hb = _setup(fluid)
    flat = p.ravel()
    n = flat.size
    t = np.full(n, np.nan)
    t_model = np.full(n, np.nan)
    structure = [""] * n
    water = [""] * n
    reasons = [""] * n
    if reason_fluid:
        reasons = [reason_fluid] * n
    else:
        cache = fluid._hydrate_cache
        key_aw = float(np.log(aw))
        todo = np.array(sorted({float(pk) for pk in flat if (float(pk), key_aw) not in cache}), dtype=float)
        if todo.size:
            if todo.size == 1:
                out = hydrate_t(prm, float(todo[0]), z, np.inf, key_aw, a, b, _par.CAVITIES_PER_WATER, _REF, ha, hb,
                                _T_WINDOW[0], _T_WINDOW[1], _T_START, _TOL_K)
                rows = [out[:4]]
            else:
                st, tt, ss, ii = hydrate_t_many(prm, todo, z, np.inf, key_aw, a, b, _par.CAVITIES_PER_WATER, _REF,
                                                ha, hb, _T_WINDOW[0], _T_WINDOW[1], _T_START, _TOL_K)
                rows = list(zip(st.tolist(), tt.tolist(), ss.tolist(), ii.tolist(), strict=True))
            if len(cache) > _CACHE_MAX:
                cache.clear()
            for pk, row in zip(todo.tolist(), rows, strict=True):
                cache[(pk, key_aw)] = _point(pk, *row, fluid._hydrate_n2)
        for k, pk in enumerate(flat.tolist()):
            t[k], t_model[k], structure[k], water[k], reasons[k] = cache[(pk, key_aw)]
    screened = np.isfinite(t)
    eos = eos_name(fluid)
    if p.ndim == 0:
        return HydrateEquilibrium(float(p), float(t[0]), structure[0], water[0], bool(screened[0]), reasons[0],
                                  float(t_model[0]), METHOD_NAME, eos, CHECKED_DEVIATION_K, aw)
    shape = p.shape
    return HydrateEquilibrium(p.copy(), t.reshape(shape), tuple(structure), tuple(water), screened.reshape(shape),
                              tuple(reasons), t_model.reshape(shape), METHOD_NAME, eos, CHECKED_DEVIATION_K, aw)


def required_ln_water_activity(fluid, p_pa: float, t_k: float) -> float | None:
    """Largest ln(water activity) [-] of the inhibited water (without its dissolved gas) at which neither
    structure is stable at ``t_k`` [K], ``p_pa`` [Pa], and the solution stays liquid (no ice).

    From the same terms as :func:`hydrate_temperature` (van der Waals and Platteeuw 1959; Munck et al. 1988):
    hydrate is not stable while dmu_W >= dmu_H for both structures, i.e. ln a_w <= dmu_W(a_w=1) - dmu_H.
    None when the fluid is outside the model's composition range or the flash fails.
    """
    from jtcheck.thermo.hydrate.kernels import dissolved_gas, guest_fugacities, hydrate_side

    reason, prm, z, a, b, ha, hb = _setup(fluid)
    if reason:
        return None
    n = z.size
    x, y, lnphi, f = np.empty(n), np.empty(n), np.empty(n), np.empty(n)
    st = guest_fugacities(prm, float(t_k), float(p_pa), z, np.inf, x, y, lnphi, f)
    if st >= 10:
        return None
    ln_gas = float(np.log(1.0 - dissolved_gas(float(t_k), f, ha, hb)))
    best = np.inf
    for s in range(2):
        ice_term = _ice_term(float(t_k), float(p_pa), s)
        liq0 = _liquid_term(float(t_k), float(p_pa), s)
        h = hydrate_side(float(t_k), f, s, a, b, _par.CAVITIES_PER_WATER)
        best = min(best, liq0 - h, liq0 - ice_term)
    return float(best - ln_gas)


def _ice_term(t: float, p: float, s: int) -> float:
    dmu0, dh_ice, dv_ice = _REF[0][s], _REF[1][s], _REF[2][s]
    r = 8.314462618
    return dmu0 / (r * 273.15) - dh_ice / r * (1.0 / 273.15 - 1.0 / t) + dv_ice * p / (r * t)


def _liquid_term(t: float, p: float, s: int) -> float:
    dmu0, dh, dv, dcp = _REF[0][s], _REF[3][s], _REF[4][s], _REF[5][s]
    r = 8.314462618
    return (dmu0 / (r * 273.15) - dh / r * (1.0 / 273.15 - 1.0 / t)
            - dcp / r * (np.log(t / 273.15) + 273.15 / t - 1.0) + dv * p / (r * t))
