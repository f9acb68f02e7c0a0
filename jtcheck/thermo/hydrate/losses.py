"""Methanol lost from the injected inhibitor to the gas and to a liquid hydrocarbon phase.

Methanol is volatile: part of what is injected leaves with the gas, and a hydrocarbon liquid (condensate)
dissolves some too, so the injection rate is the methanol the free water needs plus these losses
(Hammerschmidt's mass balance counts the free water only).  The losses follow from phase equilibrium of
methanol between the inhibited water and the other phases, with the same activity model that gives the dose:

* gas: the gamma-phi form of vapour-liquid equilibrium (Prausnitz, Lichtenthaler and de Azevedo, Molecular
  Thermodynamics of Fluid-Phase Equilibria, 3rd ed. (1999), eq. 10-1 with the Poynting factor)::

      y_M phi_M P = x_M gamma_M P_sat,M exp(v_M (P - P_sat,M) / (R T))

  with x_M, gamma_M the mole fraction and activity coefficient of methanol in the inhibited water (original
  UNIFAC, :mod:`jtcheck.thermo.hydrate.inhibitors`), P_sat,M by the Antoine equation of Ambrose and Sprake,
  J. Chem. Thermodyn. 2 (1970) 631 (the constants as listed by the NIST Chemistry WebBook, attribution from
  memory: log10(P/bar) = 5.20409 - 1581.341 / (T/K - 33.50); fitted 288-357 K, within 4.5 % of the de Reuck and
  Craven (1993) vapour pressure in CoolProp 8.0.0 down to 233 K, tests/thermo/test_hydrate_losses.py), v_M the
  molar volume of liquid methanol (40.5 cm3/mol: 32.04 g/mol at 0.791 g/cm3, 20 degC, from memory) and phi_M
  the fugacity coefficient of methanol at infinite dilution in the gas from the case's own equation of state
  (Peng-Robinson where the case's model does not hold methanol; the result says which).  jtcheck's kij table
  holds no methane-methanol value, so 0 is taken there: that makes the gas too good a solvent for methanol
  (fitted values are positive, from memory), so the loss to the gas is over- rather than under-stated;
* hydrocarbon liquid (when the water-free fluid flashes to two phases at the outlet): equal activity of
  methanol in the water and in the liquid, x_M,HC gamma_M,HC = x_M gamma_M, with the liquid represented by the
  n-alkane of its mean molar mass in the same UNIFAC (a screening simplification: aromatics dissolve more
  methanol than alkanes).

Range (fail closed): methanol only (MEG, DEG and TEG have vapour pressures about a thousand times lower; their
losses are left out and the result says so); 233.15 to 300 K; pressure up to 30 MPa; methanol up to
:data:`jtcheck.thermo.hydrate.inhibitors.MAX_MASS_PERCENT` in the free water.  Outside, no loss (and so no
injection rate) is given.
"""
from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

from jtcheck.errors import JtcheckError
from jtcheck.thermo.hydrate import inhibitors as _inh

__all__ = ["ANTOINE_METHANOL", "LOSS_METHOD", "LOSS_T_RANGE_K", "InhibitorLoss", "inhibitor_losses",
           "methanol_vapour_pressure"]

#: Antoine constants of methanol, log10(P/bar) = A - B / (T/K + C): Ambrose and Sprake (1970) via NIST WebBook.
ANTOINE_METHANOL = (5.20409, 1581.341, -33.50)
#: Temperature range of the loss calculation [K].
LOSS_T_RANGE_K = (233.15, 300.0)
_P_MAX_PA = 30.0e6
_V_METHANOL_M3_PER_MOL = 40.5e-6
_R = 8.314462618

#: The method of the losses, for results and records.
LOSS_METHOD = ("methanol lost to the gas by gamma-phi equilibrium (UNIFAC activity in the inhibited water, Antoine "
               "vapour pressure of Ambrose and Sprake 1970, Poynting factor, fugacity coefficient from the case's "
               "equation of state) and to a hydrocarbon liquid by equal activity (UNIFAC, the liquid as an n-alkane "
               "of its molar mass); 233-300 K, up to 300 bar")


def methanol_vapour_pressure(t_k: float) -> float:
    """Vapour pressure of methanol [Pa], Antoine equation of Ambrose and Sprake (1970) (:data:`ANTOINE_METHANOL`)."""
    a, b, c = ANTOINE_METHANOL
    return 1.0e5 * 10.0 ** (a - b / (float(t_k) + c))


@dataclass(frozen=True)
class InhibitorLoss:
    """Inhibitor that leaves the free water with the other phases at the outlet.

    Attributes
    ----------
    inhibitor : str
    computed : bool
        The losses were computed (False: ``note`` says why; the loss fields are NaN).
    gas_mol_per_mol : float
        Mole fraction of the inhibitor in the gas, [-].
    gas_kg_per_kg : float
        Inhibitor per gas, [kg/kg].
    liquid_kg_per_kg : float
        Inhibitor per hydrocarbon liquid, [kg/kg] (0 without a hydrocarbon liquid).
    gas_mass_fraction, liquid_mass_fraction : float
        Mass fractions of the water-free feed that are gas and hydrocarbon liquid at the outlet, [-].
    kg_per_kg_feed : float
        Inhibitor lost per water-free feed, [kg/kg]: gas and liquid together.
    eos : str
        The model of the fugacity coefficient in the gas.
    method : str
        :data:`LOSS_METHOD`.
    note : str
    """

    inhibitor: str
    computed: bool
    gas_mol_per_mol: float
    gas_kg_per_kg: float
    liquid_kg_per_kg: float
    gas_mass_fraction: float
    liquid_mass_fraction: float
    kg_per_kg_feed: float
    eos: str
    method: str
    note: str


def _not_computed(inhibitor: str, note: str) -> InhibitorLoss:
    nan = float("nan")
    return InhibitorLoss(inhibitor, False, nan, nan, nan, nan, nan, nan, "", LOSS_METHOD, note)


def _ln_phi_methanol(dry, comp: np.ndarray, t_k: float, p_pa: float) -> tuple[float, str]:
    """ln phi of methanol at infinite dilution in a gas of composition ``comp`` (ids of ``dry``), and the model used."""
    from jtcheck.thermo.fluid import Fluid
    from jtcheck.thermo.hydrate.equilibrium import eos_name
    from jtcheck.thermo.models.conventions import VAPOUR
    from jtcheck.thermo.models.interface import ln_phi

    eps = 1e-6
    key = tuple(np.round(comp, 12).tolist())
    store = getattr(dry, "_methanol_mixtures", None)
    if store is None:
        store = dry._methanol_mixtures = {}
    got = store.get(key)
    if got is None:
        pairs = [(c, float(z) * (1.0 - eps)) for c, z in zip(dry.ids, comp, strict=True) if z > 0.0]
        pairs.append(("methanol", eps))
        try:
            mix = dry.with_composition(pairs)
            name = eos_name(mix)
        except (JtcheckError, KeyError, ValueError):
            mix = Fluid(pairs, eos="PR")
            name = "PR (the case's model does not hold methanol)"
        if len(store) > 1000:
            store.clear()
        got = store[key] = (mix, name)
    mix, name = got
    x = np.ascontiguousarray(mix.zs, dtype=float)
    out = np.empty(x.size)
    ln_phi(mix.mixture.kernel_params, float(t_k), float(p_pa), x, VAPOUR, out)
    return float(out[list(mix.ids).index("methanol")]), name


def inhibitor_losses(fluid, p_pa: float, t_k: float, mass_percent: float, inhibitor: str) -> InhibitorLoss:
    """Inhibitor lost to the gas and to a hydrocarbon liquid at the outlet (module docstring).

    Parameters
    ----------
    fluid : jtcheck.thermo.fluid.Fluid
        The fluid (water among its components is left out: it is the free water).
    p_pa : float
        Outlet pressure, [Pa].
    t_k : float
        Outlet temperature, [K].
    mass_percent : float
        Inhibitor in the free water, [mass %].
    inhibitor : str
        "methanol" (the others: not computed, with the reason).

    Returns
    -------
    InhibitorLoss
    """
    if inhibitor != "methanol":
        return _not_computed(inhibitor, f"{inhibitor} lost to the gas and to a hydrocarbon liquid is not included "
                                        "(its vapour pressure is about a thousand times below methanol's)")
    t, p, w = float(t_k), float(p_pa), float(mass_percent)
    if not (LOSS_T_RANGE_K[0] <= t <= LOSS_T_RANGE_K[1]):
        return _not_computed(inhibitor, f"methanol losses not computed at {t:.1f} K: outside {LOSS_T_RANGE_K[0]:g}-"
                                        f"{LOSS_T_RANGE_K[1]:g} K")
    if not (0.0 < p <= _P_MAX_PA):
        return _not_computed(inhibitor, f"methanol losses not computed at {p / 1e5:.3g} bar: above "
                                        f"{_P_MAX_PA / 1e5:g} bar")
    if not (0.0 < w <= _inh.MAX_MASS_PERCENT[inhibitor]):
        return _not_computed(inhibitor, f"methanol losses not computed for {w:g} mass% in the free water")
    ids = list(fluid.ids)
    zs = np.asarray(fluid.zs, dtype=float)
    keep = [i for i, c in enumerate(ids) if c not in ("water", "methanol")]
    if not keep:
        return _not_computed(inhibitor, "no gas to carry methanol")
    dry = getattr(fluid, "_loss_dry", None)       # the water-free fluid, made once per fluid
    if dry is None:
        dry = fluid.with_composition([(ids[i], float(zs[i]) / float(zs[keep].sum())) for i in keep])
        fluid._loss_dry = dry
    res = dry.flash_pt(t, p)
    if not res.converged:
        return _not_computed(inhibitor, f"methanol losses not computed: the outlet flash failed ({res.message})")
    mws = np.asarray(dry.mixture.mws, dtype=float) * 1000.0         # g/mol
    beta = float(res.beta)
    m_vap = float(np.asarray(res.y) @ mws)
    m_liq = float(np.asarray(res.x) @ mws)
    gas_mass = beta * m_vap / (beta * m_vap + (1.0 - beta) * m_liq)
    m_meoh = _inh.MOLAR_MASS_G_PER_MOL["methanol"]

    x_m = _inh.mole_fraction(w, inhibitor)
    ln_g = _inh.ln_gamma_inhibitor(w, inhibitor, t)
    activity = x_m * math.exp(ln_g)
    y = kg_gas = 0.0
    eos = ""
    if beta > 0.0:
        psat = methanol_vapour_pressure(t)
        ln_phi_m, eos = _ln_phi_methanol(dry, np.asarray(res.y, dtype=float), t, p)
        poynting = math.exp(_V_METHANOL_M3_PER_MOL * (p - psat) / (_R * t))
        y = activity * psat * poynting / (math.exp(ln_phi_m) * p)
        kg_gas = y * m_meoh / ((1.0 - y) * m_vap)
    kg_liq = 0.0
    if beta < 1.0:
        carbon = max(2.0, (m_liq - 2.016) / 14.027)
        x_hc = 0.0
        for _ in range(20):               # dilute: the activity coefficient settles in a few steps
            x_new = min(activity / math.exp(_inh.ln_gamma_in_alkane(inhibitor, carbon, x_hc, t)), 0.5)
            if abs(x_new - x_hc) < 1e-10:
                break
            x_hc = x_new
        kg_liq = x_hc * m_meoh / ((1.0 - x_hc) * m_liq)
    per_feed = gas_mass * kg_gas + (1.0 - gas_mass) * kg_liq
    note = (f"methanol lost to the gas {1e6 * kg_gas:.0f} mg per kg of gas (y = {1e6 * y:.0f} ppm mol; fugacity "
            f"coefficient from {eos or 'none'})"
            + (f" and to the hydrocarbon liquid {1e3 * kg_liq:.2f} g per kg of liquid" if beta < 1.0 else "")
            + f"; {1e3 * per_feed:.3f} g per kg of feed")
    return InhibitorLoss(inhibitor, True, y, kg_gas, kg_liq, gas_mass, 1.0 - gas_mass, per_feed, eos, LOSS_METHOD,
                         note)
