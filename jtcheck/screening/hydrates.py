"""Hydrate screening of a gas letdown outlet: van der Waals-Platteeuw, water at the outlet, inhibitor dose.

Screening (:func:`assess_hydrates`)
-----------------------------------
* Hydrate temperature: van der Waals and Platteeuw (1959) with the parameters of Munck et al. (1988), guest
  fugacities from the case's own equation of state (:mod:`jtcheck.thermo.hydrate`); outside the model's
  checked range the outlet is "not screened" with the reason (fail closed).  The model's largest checked
  deviation (:data:`METHOD_UNCERTAINTY_K`) is a margin term.
* Water: saturated at the inlet (default), a water content or a water dew point; free water at the outlet
  by Bukacek's correlation (:mod:`jtcheck.thermo.hydrate.water_content`).  Without free water, hydrate can
  still form from the gas below the hydrate temperature at the gas's water activity (same model); above it
  the gas is dry enough and the result says so.
* Inhibitor dose: the larger of the model's (water activity of the inhibited water by original UNIFAC,
  :mod:`jtcheck.thermo.hydrate.inhibitors`) and Hammerschmidt's, each inside its range (methanol, MEG);
  otherwise no dose, with the reason.  Above the concentration up to which UNIFAC's water activity is checked
  against published freezing points the dose is marked an upper bound.  Injection rate: the free water of the
  case's flow times the dose, plus methanol lost to the gas and to a hydrocarbon liquid
  (:mod:`jtcheck.thermo.hydrate.losses`).

Cross-checks kept from the earlier screening (the rest of this module)
----------------------------------------------------------------------
* Hydrate formation temperature: the gas-gravity method of Katz (D. L. Katz, "Prediction of conditions
  for hydrate formation in natural gases", Trans. AIME 160 (1945) 140-149), evaluated with the curve
  fit of the Katz chart by Motiee (M. Motiee, "Estimate possibility of hydrates", Hydrocarbon
  Processing 70(7) (1991) 98-99)::

      T [degF] = -238.24469 + 78.99667 x - 5.352544 x**2 + 349.473877 g - 150.854675 g**2 - 27.604065 g x

  with ``x = log10(P [psia])`` and ``g`` the gas gravity relative to air.
* Inhibitor: Hammerschmidt (E. G. Hammerschmidt, "Formation of gas hydrates in natural gas
  transmission lines", Ind. Eng. Chem. 26 (1934) 851-855)::

      dT [degF] = K W / (M (100 - W)),        W = 100 M dT / (K + M dT)

  with W the inhibitor mass percent in the free-water phase, M its molar mass [g/mol] and K the
  Hammerschmidt constant [degF].

Both are screening methods for sweet natural gas with free water.  They are not a phase-equilibrium
hydrate model: the gas-gravity method ignores composition beyond the gravity (CO2, H2S, nitrogen and
heavy ends move the real curve), and Hammerschmidt ignores the inhibitor lost to the gas and to any
hydrocarbon liquid.  Every limit of validity is carried into the result so that the page can show it.

Sources and checks of the numbers
---------------------------------
* Motiee's coefficients (:data:`MOTIEE_COEFFICIENTS`): Motiee's paper itself could not be read.
  The six numbers are those of the docstring of ``Motiee_hydrate_formation_T`` in the open-source
  ``thermo`` library (C. Bell, Chemical Engineering Design Library, MIT licence; stored public copy
  read with the search tool), which cites Motiee (1991), states that Chavoshi, Safamirzaei and
  Pajoum Shariati, Gas Processing Journal 6 (2018) 15-36 show this form, and that Abdel Fattah, Oil
  and Gas Business (2004) gives sample points confirming it; the same six numbers appear in several
  independent stored implementations.  That docstring also records that Carroll, Natural Gas Hydrates (2014) prints a
  constant of -283.24469 with K and kPa, taken there as a misprint; a 0.6-gravity gas at 1000 psia
  gives 56 degF with -238.24469 but 11 degF with -283.24469, far from the chart's ~60 degF, which
  supports that.  The
  docstring's worked example (600 psi, gravity 0.555 -> 280.2819 K) is reproduced to 1e-9 by
  the tests here.
* Checked against (tests/screening/test_hydrates.py): methane hydrate at 0 degC and 26 bar
  (Handbook of Multiphase Flow Assurance, 2019 (T. Y. Makogon; author and publisher from memory),
  p. 130: "as a check point, methane hydrate stability at 0 degC is 26 bar"; the fit gives +3.1 K); a 0.7-gravity
  gas at 900 psia forming hydrate at 64 degF as read from the Katz chart in a published methanol
  injection worked example (the fit gives -1.1 K); a 0.6-gravity gas at 1000 psia near 60-62 degF
  (Katz chart, from memory; the fit gives 56.3 degF, -2.6 K against 61 degF); methane hydrate near
  283 K at 7.1 MPa (Sloan and Koh, Clathrate Hydrates of Natural Gases, 3rd ed. 2008, methane table,
  from memory; the fit gives +1.3 K).  The largest deviation found, 3.1 K, is the basis of
  :data:`MOTIEE_CHECKED_DEVIATION_K`; it is measured here, not a figure Motiee states.
* Fit shape: in gravity the fit is a parabola with its maximum at
  ``g* = (349.473877 - 27.604065 x) / (2 * 150.854675)``, 0.83 at 4000 psia and 0.88 at 1000 psia.
  Above g* the fitted temperature falls slightly (by about 2 degF from g* to gravity 1.0 at 1000 psia),
  which the chart does not show; hydrate temperature rises with gravity only below g*.  In pressure
  the fit rises over the whole range of validity.

Units: SI in and out (Pa, K); the fits are evaluated in their field units (psia, degF) inside.
"""
from __future__ import annotations

import enum
import math
from dataclasses import dataclass

import numpy as np

from jtcheck import marks
from jtcheck.errors import InputError
from jtcheck.thermo.components import find_component
from jtcheck.thermo.fluid import Fluid
from jtcheck.thermo.hydrate import CHECKED_DEVIATION_K as _HYDRATE_CHECKED_DEVIATION_K
from jtcheck.thermo.hydrate import METHOD_NAME as _HYDRATE_METHOD_NAME
from jtcheck.thermo.hydrate.inhibitors import MOLAR_MASS_G_PER_MOL

__all__ = [
    "ACID_GAS_NOTE_FRACTION",
    "AIR_MOLAR_MASS_G_PER_MOL",
    "INERT_NOTE_FRACTION",
    "KATZ_GRAVITY_RANGE",
    "KATZ_PRESSURE_RANGE_PA",
    "KATZ_TEMPERATURE_RANGE_K",
    "KATZ_METHOD",
    "METHOD",
    "METHOD_UNCERTAINTY_BASIS",
    "METHOD_UNCERTAINTY_K",
    "MOTIEE_CHECKED_DEVIATION_K",
    "MOTIEE_COEFFICIENTS",
    "PSI_PA",
    "HydrateAssessment",
    "WaterAtOutlet",
    "WaterBasis",
    "Inhibitor",
    "InhibitorDose",
    "KatzRangeCheck",
    "assess_hydrates",
    "model_dose",
    "water_at_outlet",
    "gas_specific_gravity",
    "hammerschmidt_depression_degf",
    "hammerschmidt_depression_k",
    "hammerschmidt_dose",
    "hammerschmidt_weight_percent",
    "hammerschmidt_weight_percent_degf",
    "hydrate_temperature_k",
    "in_katz_range",
    "inhibitor_mass_ratio",
    "katz_range_check",
]

# --------------------------------------------------------------------------------------------------
# Constants

#: One pound-force per square inch [Pa] (exact: 0.45359237 kg * 9.80665 m/s^2 / (0.0254 m)^2).
PSI_PA = 0.45359237 * 9.80665 / 0.0254**2

#: Molar mass of dry air used for the gas gravity [g/mol].  Published values lie between 28.9586 and
#: 28.9647 g/mol; the spread moves the gravity by less than 0.03 %.
AIR_MOLAR_MASS_G_PER_MOL = 28.9647

#: Motiee (1991) fit of the Katz chart, T [degF] = b0 + b1 x + b2 x^2 + b3 g + b4 g^2 + b5 g x with
#: x = log10(P [psia]); see the module docstring for where the numbers were checked.
MOTIEE_COEFFICIENTS = (-238.24469, 78.99667, -5.352544, 349.473877, -150.854675, -27.604065)

#: Largest deviation of the fit from the check points in the module docstring [K], rounded up.
MOTIEE_CHECKED_DEVIATION_K = 3.5

#: The hydrate method's uncertainty the screening adds to the hydrate temperature [K]: an outlet counts as
#: outside the hydrate region only at or above T_hydrate + this + the case's margin.  The fit is "about
#: +-3 K" (README); the checked deviation, rounded up, is used so the largest check point is covered.
METHOD_UNCERTAINTY_K = _HYDRATE_CHECKED_DEVIATION_K
METHOD_UNCERTAINTY_BASIS = (f"{_HYDRATE_METHOD_NAME}: the largest deviation from published hydrate equilibrium data "
                            "inside the model's checked range is 1.98 K (tests/thermo/test_hydrate.py; binary gases "
                            "within 1.83 K, tests/thermo/test_hydrate_mixtures.py), rounded up to "
                            f"{_HYDRATE_CHECKED_DEVIATION_K:g} K (measured by jtcheck)")

#: Gas gravity span of the Katz chart's curves, from pure methane (0.554) to 1.0 [-].  From memory of
#: the chart (Katz 1945; GPSA Engineering Data Book, section 20); the same 0.55-1.0 band accompanies
#: the Motiee fit in the stored implementations read, which are not the paper.
KATZ_GRAVITY_RANGE = (0.55, 1.0)

#: Pressure span used as the chart's range, 100 to 4000 psia [Pa].  From memory of the chart's
#: pressure axis, not checked against a stored copy of the chart.
KATZ_PRESSURE_RANGE_PA = (100.0 * PSI_PA, 4000.0 * PSI_PA)

#: Hydrate-temperature span used as the chart's range, 32 to 80 degF [K].  Below 0 degC the chart's
#: curves (drawn for liquid water) are extrapolations into the ice region; the upper end is from
#: memory of the chart's temperature axis.
KATZ_TEMPERATURE_RANGE_K = (273.15, (80.0 - 32.0) / 1.8 + 273.15)

#: Mole fraction of CO2 plus H2S (dry basis) above which a note says the sweet-gas chart is off [-].
#: A screening choice of jtcheck ("a few percent"), not a published limit.
ACID_GAS_NOTE_FRACTION = 0.03

#: Mole fraction of inert, non-hydrocarbon gases (nitrogen, argon, ...; dry basis) above which a
#: note is given [-].  A screening choice of jtcheck, not a published limit.
INERT_NOTE_FRACTION = 0.05

#: Text naming the method of the hydrate screening, for results and records (findings' bases start with it).
METHOD = _HYDRATE_METHOD_NAME

#: The gas-gravity method and Hammerschmidt, kept as cross-checks.
KATZ_METHOD = ("Katz gas-gravity method (Katz, Trans. AIME 160 (1945) 140) via the curve fit of Motiee, "
               "Hydrocarbon Processing 70(7) (1991) 98; inhibitor by Hammerschmidt, Ind. Eng. Chem. 26 (1934) 851")

_T0_K = 273.15
_P_MAX_PA = 1.0e9
_T_MAX_K = 1000.0
_DEPRESSION_MAX_K = 150.0
_MARGIN_MAX_K = 50.0


def _degf_to_k(t_degf):
    return (t_degf - 32.0) / 1.8 + _T0_K


def _k(t_k: float) -> str:
    """A temperature [K] in a sentence, marked (:mod:`jtcheck.marks`)."""
    return marks.T(t_k)


# --------------------------------------------------------------------------------------------------
# Input checks


def _finite_array(field: str, value, what: str, unit: str) -> np.ndarray:
    try:
        arr = np.asarray(value, dtype=float)
    except (TypeError, ValueError):
        raise InputError(field, f"{what} must be a number [{unit}], got {value!r}") from None
    if arr.size == 0:
        raise InputError(field, f"no value given; {what} is required [{unit}]")
    bad = ~np.isfinite(arr)
    if bad.any():
        raise InputError(field, f"{what} must be a finite number [{unit}], got {arr[bad].flat[0]!r}")
    return arr


def _check_range(field: str, value, what: str, unit: str, lo: float, hi: float, lo_open: bool = False) -> np.ndarray:
    arr = _finite_array(field, value, what, unit)
    below = arr <= lo if lo_open else arr < lo
    if below.any() or (arr > hi).any():
        bad = arr[below | (arr > hi)].flat[0]
        left = "above" if lo_open else "from"
        if unit == "K" and "temperature" in what and "depression" not in what:   # a reading: in the user's units
            raise InputError(field, f"{what} {marks.T(float(bad), '', 2)} is outside the range of the hydrate screen "
                                    f"({left} {marks.T(lo)} to {marks.T(hi)})")
        raise InputError(field, f"{what} must lie {left} {lo:g} and at most {hi:g} {unit}, got {bad:g}")
    return arr


def _as_output(arr: np.ndarray, scalar: bool):
    return float(arr) if scalar else arr


# --------------------------------------------------------------------------------------------------
# Gas gravity


def gas_specific_gravity(fluid: Fluid) -> float:
    """Gas gravity relative to air, on the water-free (dry) basis.

    The ideal-gas ratio of molar masses, ``M_gas / M_air`` with M_air = 28.9647 g/mol
    (:data:`AIR_MOLAR_MASS_G_PER_MOL`), as used by the gas-gravity method of Katz (1945).  Water
    is left out and the other mole fractions renormalised, because the chart is read with the
    gravity of the gas, not of the gas-water mixture.

    Parameters
    ----------
    fluid : jtcheck.thermo.fluid.Fluid
        The gas, possibly with water.

    Returns
    -------
    float
        Gas gravity, [-].

    Raises
    ------
    InputError
        ``fluid`` is not a Fluid, or it holds nothing but water.
    """
    if not isinstance(fluid, Fluid):
        raise InputError("fluid", f"expected a jtcheck Fluid, got {type(fluid).__name__}")
    zs, mws = _dry_basis(fluid)
    if zs.size == 0:
        raise InputError("composition", "the fluid is pure water; the gas-gravity method needs a gas "
                                        "(give at least one component other than water)")
    return float(zs @ mws) / AIR_MOLAR_MASS_G_PER_MOL


def _dry_basis(fluid: Fluid) -> tuple[np.ndarray, np.ndarray]:
    """Mole fractions (renormalised) and molar masses [g/mol] of the non-water components."""
    keep = [i for i, cid in enumerate(fluid.ids) if cid != "water"]
    zs = np.asarray(fluid.zs, dtype=float)[keep]
    mws = np.array([fluid.components[i].molar_mass_g_per_mol for i in keep], dtype=float)
    total = float(zs.sum()) if zs.size else 0.0
    if total <= 0.0:
        return np.empty(0), np.empty(0)
    return zs / total, mws


# --------------------------------------------------------------------------------------------------
# Hydrate formation temperature


def hydrate_temperature_k(p_pa, gas_gravity: float):
    """Hydrate formation temperature of a sweet natural gas with free water.

    The gas-gravity method of Katz (Trans. AIME 160 (1945) 140), by the curve fit of Motiee
    (Hydrocarbon Processing 70(7) (1991) 98)::

        T [degF] = -238.24469 + 78.99667 x - 5.352544 x^2 + 349.473877 g - 150.854675 g^2 - 27.604065 g x

    with x = log10(P [psia]).  Coefficients as shown by Chavoshi et al., Gas Processing J. 6
    (2018) 15, taken from a stored copy of the thermo library's docstring; checked against the Katz
    chart and methane hydrate data to within 3.1 K (see the module docstring).  The value is
    computed outside the chart's range too; use :func:`katz_range_check` or :func:`in_katz_range`
    to know whether a point is inside it.

    Parameters
    ----------
    p_pa : float or array_like
        Pressure, [Pa] (absolute).  Vectorised.
    gas_gravity : float
        Gas gravity relative to air, dry basis, [-].

    Returns
    -------
    float or numpy.ndarray
        Hydrate formation temperature, [K]; an array of the shape of ``p_pa`` when it is one.

    Raises
    ------
    InputError
        ``p_pa`` not finite or outside (0, 1e9] Pa; ``gas_gravity`` not finite or outside (0, 10].
    """
    scalar = np.ndim(p_pa) == 0
    p = _check_range("p", p_pa, "pressure", "Pa", 0.0, _P_MAX_PA, lo_open=True)
    g = float(_check_range("gas_gravity", gas_gravity, "gas gravity", "(air = 1)", 0.0, 10.0, lo_open=True))
    b0, b1, b2, b3, b4, b5 = MOTIEE_COEFFICIENTS
    x = np.log10(p / PSI_PA)
    t_degf = b0 + b1 * x + b2 * x * x + b3 * g + b4 * g * g + b5 * g * x
    return _as_output(_degf_to_k(t_degf), scalar)


@dataclass(frozen=True)
class KatzRangeCheck:
    """Whether a point lies inside the range of the Katz chart.

    Attributes
    ----------
    within : bool
        All three checks pass.
    gravity_ok, pressure_ok, temperature_ok : bool
        Gas gravity within :data:`KATZ_GRAVITY_RANGE`, pressure within :data:`KATZ_PRESSURE_RANGE_PA`,
        hydrate temperature within :data:`KATZ_TEMPERATURE_RANGE_K`.
    reasons : tuple of str
        One sentence for each failed check (empty when ``within``).
    """

    within: bool
    gravity_ok: bool
    pressure_ok: bool
    temperature_ok: bool
    reasons: tuple[str, ...]

    @property
    def note(self) -> str:
        """One line for the page."""
        if self.within:
            return "inside the range of the Katz gas-gravity chart"
        return "outside the range of the Katz gas-gravity chart: " + "; ".join(self.reasons)


def in_katz_range(p_pa, gas_gravity: float):
    """Vectorised range test of the Katz chart (gravity, pressure and fitted hydrate temperature).

    The range is :data:`KATZ_GRAVITY_RANGE`, :data:`KATZ_PRESSURE_RANGE_PA` and
    :data:`KATZ_TEMPERATURE_RANGE_K` of the gas-gravity method (Katz 1945; Motiee 1991 fit).

    Parameters
    ----------
    p_pa : float or array_like
        Pressure, [Pa].
    gas_gravity : float
        Gas gravity relative to air, [-].

    Returns
    -------
    bool or numpy.ndarray of bool
        True where the point is inside all three ranges.
    """
    scalar = np.ndim(p_pa) == 0
    t = np.asarray(hydrate_temperature_k(p_pa, gas_gravity), dtype=float)
    p = np.asarray(p_pa, dtype=float)
    g_lo, g_hi = KATZ_GRAVITY_RANGE
    p_lo, p_hi = KATZ_PRESSURE_RANGE_PA
    t_lo, t_hi = KATZ_TEMPERATURE_RANGE_K
    ok = (g_lo <= gas_gravity <= g_hi) & (p >= p_lo) & (p <= p_hi) & (t >= t_lo) & (t <= t_hi)
    return bool(ok) if scalar else ok


def katz_range_check(p_pa: float, gas_gravity: float) -> KatzRangeCheck:
    """Range check of one point of the gas-gravity method (Katz 1945; Motiee 1991 fit), with reasons.

    Parameters
    ----------
    p_pa : float
        Pressure, [Pa].
    gas_gravity : float
        Gas gravity relative to air, [-].

    Returns
    -------
    KatzRangeCheck
    """
    if np.ndim(p_pa) != 0:
        raise InputError("p", "katz_range_check takes one pressure; use in_katz_range for arrays")
    t = float(hydrate_temperature_k(p_pa, gas_gravity))
    p = float(p_pa)
    g_lo, g_hi = KATZ_GRAVITY_RANGE
    p_lo, p_hi = KATZ_PRESSURE_RANGE_PA
    t_lo, t_hi = KATZ_TEMPERATURE_RANGE_K
    gravity_ok = g_lo <= gas_gravity <= g_hi
    pressure_ok = p_lo <= p <= p_hi
    temperature_ok = t_lo <= t <= t_hi
    reasons = []
    if not gravity_ok:
        reasons.append(f"gas gravity {gas_gravity:.3f} outside the chart's range {g_lo:g}-{g_hi:g}")
    if not pressure_ok:
        reasons.append(f"pressure {p / 1e5:.2f} bar outside the chart's range {p_lo / 1e5:.1f}-{p_hi / 1e5:.0f} bar "
                       f"(100-4000 psia)")
    if not temperature_ok:
        reasons.append(f"hydrate temperature {_k(t)} outside the chart's range {_k(t_lo)} to {_k(t_hi)}"
                       + (": below 0 degC the curve is extrapolated into the ice region" if t < t_lo else ""))
    return KatzRangeCheck(gravity_ok and pressure_ok and temperature_ok, gravity_ok, pressure_ok, temperature_ok,
                          tuple(reasons))


# --------------------------------------------------------------------------------------------------
# Inhibitors (Hammerschmidt 1934)


class Inhibitor(enum.Enum):
    """Thermodynamic hydrate inhibitors with their Hammerschmidt constants.

    ``value`` is the name shown to users.  The molar mass is read from jtcheck's component library.
    """

    METHANOL = "methanol"
    MONOETHYLENE_GLYCOL = "MEG"
    ETHANOL = "ethanol"
    DIETHYLENE_GLYCOL = "DEG"
    TRIETHYLENE_GLYCOL = "TEG"

    @property
    def component_id(self) -> str:
        """Id in the component library."""
        return _INHIBITOR_DATA[self][0]

    @property
    def molar_mass_g_per_mol(self) -> float:
        """Molar mass, [g/mol], from the component library (DEG, not in it: from its formula C4H10O3)."""
        if self.component_id is None:
            return MOLAR_MASS_G_PER_MOL[self.value]
        return find_component(self.component_id).molar_mass_g_per_mol

    @property
    def hammerschmidt_k_degf(self) -> float | None:
        """Hammerschmidt constant K, [degF] (per mass percent, times g/mol); None where no constant is held."""
        return _INHIBITOR_DATA[self][1]

    @property
    def max_weight_percent(self) -> float:
        """Upper end of the concentration range in which Hammerschmidt's equation is used, [wt%]."""
        return _INHIBITOR_DATA[self][2]

    @property
    def source(self) -> str:
        """Where K and the concentration limit come from."""
        return _INHIBITOR_DATA[self][3]

    @classmethod
    def parse(cls, value: str | Inhibitor, field: str = "inhibitor") -> Inhibitor:
        """Return the inhibitor named by ``value`` (case-insensitive name, member name or synonym).

        Raises
        ------
        InputError
            Unknown name; the message lists the valid ones.
        """
        if isinstance(value, Inhibitor):
            return value
        key = str(value).strip().lower().replace("_", " ").replace("-", " ")
        for member in cls:
            names = {member.value.lower(), member.name.lower().replace("_", " ")}
            if member.component_id is not None:
                names.add(member.component_id)
                names.update(s.replace("-", " ") for s in find_component(member.component_id).synonyms)
            if key in names:
                return member
        raise InputError(field, f"unknown inhibitor {value!r}; allowed: " + ", ".join(m.value for m in cls))


# (component id, K [degF], upper wt% of use, source)
_INHIBITOR_DATA = {
    # K = 2335 degF: Hammerschmidt's constant (Ind. Eng. Chem. 26 (1934) 851), as carried in the GPSA
    # Engineering Data Book section 20 for methanol; the same value is used in the published methanol
    # injection worked example checked in the tests (24 degF -> 24.75 wt%).  The 20-25 wt% limit of
    # use: GPSA Engineering Data Book section 20, from memory, and common practice.
    Inhibitor.METHANOL: ("methanol", 2335.0, 25.0,
                         "K = 2335 degF (Hammerschmidt 1934, as in GPSA Engineering Data Book sec. 20); "
                         "used up to about 20-25 wt% (GPSA sec. 20, from memory; common practice)"),
    # K = 2700 degF for the glycols: GPSA Engineering Data Book section 20 (12th ed., Hammerschmidt
    # equation), FROM MEMORY - not verified against the book.  A stored public page (Midstream
    # Calculator, "Hydrate inhibition - engineering fundamentals") lists the same 2700 for MEG; other
    # stored sources use 2200, 2222 or 4000, so the constant is uncertain.  Limit of use 60-70 wt% for
    # the glycols: GPSA sec. 20, from memory.
    Inhibitor.MONOETHYLENE_GLYCOL: ("monoethylene glycol", 2700.0, 70.0,
                                    "K = 2700 degF for glycols (GPSA Engineering Data Book sec. 20, from memory, "
                                    "not verified; stored sources use values from 2200 to 4000); used up to about "
                                    "60-70 wt% (GPSA sec. 20, from memory)"),
    # No Hammerschmidt constant is held for these (none verified); their dose needs a checked water-activity model.
    Inhibitor.ETHANOL: ("ethanol", None, 0.0, "no Hammerschmidt constant held"),
    Inhibitor.DIETHYLENE_GLYCOL: (None, None, 0.0, "no Hammerschmidt constant held"),
    Inhibitor.TRIETHYLENE_GLYCOL: ("triethylene glycol", None, 0.0, "no Hammerschmidt constant held"),
}


def hammerschmidt_depression_degf(weight_percent, k_degf: float, molar_mass_g_per_mol: float):
    """Hydrate temperature depression in field units, Hammerschmidt (Ind. Eng. Chem. 26 (1934) 851).

    ``dT = K W / (M (100 - W))``.

    Parameters
    ----------
    weight_percent : float or array_like
        Inhibitor in the free-water phase, [wt%], 0 <= W < 100.
    k_degf : float
        Hammerschmidt constant, [degF].
    molar_mass_g_per_mol : float
        Molar mass of the inhibitor, [g/mol].

    Returns
    -------
    float or numpy.ndarray
        Depression of the hydrate temperature, [degF] (a temperature difference).
    """
    scalar = np.ndim(weight_percent) == 0
    w = _check_range("weight_percent", weight_percent, "inhibitor concentration", "wt%", 0.0, 99.999)
    k = float(_check_range("k", k_degf, "Hammerschmidt constant", "degF", 0.0, 1e5, lo_open=True))
    m = float(_check_range("molar_mass", molar_mass_g_per_mol, "molar mass", "g/mol", 0.0, 1e4, lo_open=True))
    return _as_output(k * w / (m * (100.0 - w)), scalar)


def hammerschmidt_weight_percent_degf(depression_degf, k_degf: float, molar_mass_g_per_mol: float):
    """Inhibitor concentration for a depression in field units, Hammerschmidt (1934) inverted.

    ``W = 100 M dT / (K + M dT)``.

    Parameters
    ----------
    depression_degf : float or array_like
        Required depression of the hydrate temperature, [degF], >= 0.
    k_degf : float
        Hammerschmidt constant, [degF].
    molar_mass_g_per_mol : float
        Molar mass of the inhibitor, [g/mol].

    Returns
    -------
    float or numpy.ndarray
        Inhibitor in the free-water phase, [wt%].
    """
    scalar = np.ndim(depression_degf) == 0
    d = _check_range("depression", depression_degf, "hydrate temperature depression", "degF",
                     0.0, 1.8 * _DEPRESSION_MAX_K)
    k = float(_check_range("k", k_degf, "Hammerschmidt constant", "degF", 0.0, 1e5, lo_open=True))
    m = float(_check_range("molar_mass", molar_mass_g_per_mol, "molar mass", "g/mol", 0.0, 1e4, lo_open=True))
    return _as_output(100.0 * m * d / (k + m * d), scalar)


def hammerschmidt_depression_k(weight_percent, inhibitor: Inhibitor | str = Inhibitor.METHANOL):
    """Hydrate temperature depression by an inhibitor, Hammerschmidt (Ind. Eng. Chem. 26 (1934) 851).

    ``dT [degF] = K W / (M (100 - W))``, returned as a kelvin difference (dT [degF] / 1.8).

    Parameters
    ----------
    weight_percent : float or array_like
        Inhibitor in the free-water phase, [wt%], 0 <= W < 100.  Vectorised.
    inhibitor : Inhibitor or str
        ``Inhibitor.METHANOL`` ("methanol") or ``Inhibitor.MONOETHYLENE_GLYCOL`` ("MEG").

    Returns
    -------
    float or numpy.ndarray
        Depression of the hydrate temperature, [K] (a temperature difference).

    Raises
    ------
    InputError
        Concentration outside [0, 100) wt%, or an unknown inhibitor (the message lists the valid ones).
    """
    inh = _hammerschmidt_inhibitor(inhibitor)
    d = hammerschmidt_depression_degf(weight_percent, inh.hammerschmidt_k_degf, inh.molar_mass_g_per_mol)
    return d / 1.8


def _hammerschmidt_inhibitor(inhibitor) -> Inhibitor:
    inh = Inhibitor.parse(inhibitor)
    if inh.hammerschmidt_k_degf is None:
        raise InputError("inhibitor", f"no Hammerschmidt constant is held for {inh.value}; allowed: "
                                      + ", ".join(m.value for m in Inhibitor if m.hammerschmidt_k_degf is not None))
    return inh


def hammerschmidt_weight_percent(depression_k, inhibitor: Inhibitor | str = Inhibitor.METHANOL):
    """Inhibitor concentration that depresses the hydrate temperature by ``depression_k``.

    Hammerschmidt (Ind. Eng. Chem. 26 (1934) 851) solved for W: ``W = 100 M dT / (K + M dT)``, dT
    in degF (= 1.8 x the kelvin difference).

    Parameters
    ----------
    depression_k : float or array_like
        Required depression of the hydrate temperature, [K] (a difference), 0 to 150 K.  Vectorised.
    inhibitor : Inhibitor or str
        ``Inhibitor.METHANOL`` ("methanol") or ``Inhibitor.MONOETHYLENE_GLYCOL`` ("MEG").

    Returns
    -------
    float or numpy.ndarray
        Inhibitor in the free-water phase, [wt%].

    Raises
    ------
    InputError
        Depression outside [0, 150] K, or an unknown inhibitor (the message lists the valid ones).
    """
    inh = _hammerschmidt_inhibitor(inhibitor)
    scalar = np.ndim(depression_k) == 0
    d = _check_range("depression", depression_k, "hydrate temperature depression", "K", 0.0, _DEPRESSION_MAX_K)
    w = hammerschmidt_weight_percent_degf(1.8 * d, inh.hammerschmidt_k_degf, inh.molar_mass_g_per_mol)
    return _as_output(np.asarray(w), scalar)


def inhibitor_mass_ratio(weight_percent):
    """Mass of inhibitor per mass of water in the aqueous phase, ``W / (100 - W)``.

    The mass balance that goes with Hammerschmidt's concentration W (Ind. Eng. Chem. 26 (1934) 851):
    it counts the inhibitor dissolved in the free water only, not the part lost to the gas or to a
    hydrocarbon liquid (large for methanol).

    Parameters
    ----------
    weight_percent : float or array_like
        Inhibitor in the free-water phase, [wt%], 0 <= W < 100.

    Returns
    -------
    float or numpy.ndarray
        Inhibitor per water, [kg/kg].
    """
    scalar = np.ndim(weight_percent) == 0
    w = _check_range("weight_percent", weight_percent, "inhibitor concentration", "wt%", 0.0, 99.999)
    return _as_output(w / (100.0 - w), scalar)


@dataclass(frozen=True)
class InhibitorDose:
    """Hammerschmidt dose for one required depression.

    Attributes
    ----------
    inhibitor : str
        Inhibitor name ("methanol", "MEG").
    depression_k : float
        Required depression of the hydrate temperature, [K].
    weight_percent : float
        Inhibitor in the free-water phase, [wt%].
    kg_per_kg_water : float
        Inhibitor per water in the aqueous phase, [kg/kg] (losses to gas and condensate excluded).
    within_validity : bool
        The concentration is within the range in which Hammerschmidt's equation is used.
    note : str
        The validity statement, with its source.
    """

    inhibitor: str
    depression_k: float
    weight_percent: float
    kg_per_kg_water: float
    within_validity: bool
    note: str


def hammerschmidt_dose(depression_k: float, inhibitor: Inhibitor | str = Inhibitor.METHANOL) -> InhibitorDose:
    """Inhibitor dose for a required depression by Hammerschmidt (Ind. Eng. Chem. 26 (1934) 851), with its validity.

    Parameters
    ----------
    depression_k : float
        Required depression of the hydrate temperature, [K] (a difference), 0 to 150 K.
    inhibitor : Inhibitor or str
        ``Inhibitor.METHANOL`` ("methanol") or ``Inhibitor.MONOETHYLENE_GLYCOL`` ("MEG").

    Returns
    -------
    InhibitorDose
    """
    inh = _hammerschmidt_inhibitor(inhibitor)
    if np.ndim(depression_k) != 0:
        raise InputError("depression", "hammerschmidt_dose takes one depression; use hammerschmidt_weight_percent "
                                       "for arrays")
    w = float(hammerschmidt_weight_percent(depression_k, inh))
    ratio = float(inhibitor_mass_ratio(w))
    ok = w <= inh.max_weight_percent
    if ok:
        note = (f"{w:.1f} wt% {inh.value} is within the range of Hammerschmidt's equation "
                f"(up to about {inh.max_weight_percent:g} wt%; {inh.source})")
    else:
        note = (f"{w:.1f} wt% {inh.value} is beyond the range of Hammerschmidt's equation "
                f"(up to about {inh.max_weight_percent:g} wt%; {inh.source}); the dose is indicative only: "
                f"the equation's error grows with concentration; confirm with a method valid there")
    return InhibitorDose(inh.value, float(depression_k), w, ratio, ok, note)


# --------------------------------------------------------------------------------------------------
# Assessment


class WaterBasis(enum.Enum):
    """How the water the gas carries is given."""

    SATURATED_INLET = "saturated at inlet"      # default and conservative
    CONTENT = "water content"                   # mg/Sm3 (the edge converts lb/MMscf)
    DEW_POINT = "water dew point"               # at a stated pressure

    @classmethod
    def parse(cls, value, field: str = "water_basis") -> WaterBasis:
        if isinstance(value, WaterBasis):
            return value
        key = str(value).strip().lower().replace("_", " ")
        for m in cls:
            if key in (m.value, m.name.lower().replace("_", " ")):
                return m
        raise InputError(field, f"unknown water basis {value!r}; allowed: " + ", ".join(m.value for m in cls))


@dataclass(frozen=True)
class WaterAtOutlet:
    """Whether free water can exist at the outlet, by Bukacek's correlation (see
    :mod:`jtcheck.thermo.hydrate.water_content`).

    Attributes
    ----------
    basis : str
        :class:`WaterBasis` value.
    content_mg_per_sm3 : float
        Water the gas carries, [mg/Sm3]; NaN when the correlation does not apply.
    saturated_outlet_mg_per_sm3 : float
        Water the gas can hold at the outlet, [mg/Sm3]; NaN when the correlation does not apply.
    dew_point_outlet_k : float
        Water dew point at the outlet pressure, [K]; NaN when outside the correlation's range.
    free_water : bool
        Free water (or ice) can exist at the outlet; True whenever the correlation does not apply
        (fail closed).
    free_water_kg_per_sm3 : float
        Water dropped out at the outlet per standard cubic metre of gas, [kg/Sm3]; NaN when unknown.
    note : str
    """

    basis: str
    content_mg_per_sm3: float
    saturated_outlet_mg_per_sm3: float
    dew_point_outlet_k: float
    free_water: bool
    free_water_kg_per_sm3: float
    note: str


def water_at_outlet(fluid: Fluid, p_out_pa: float, t_out_k: float, *,
                    basis: WaterBasis | str = WaterBasis.SATURATED_INLET,
                    p_in_pa: float | None = None, t_in_k: float | None = None,
                    content_mg_per_sm3: float | None = None, dew_point_k: float | None = None,
                    dew_point_p_pa: float | None = None) -> WaterAtOutlet:
    """Water the gas carries and whether free water can exist at the outlet (Bukacek 1955).

    ``basis`` "saturated at inlet" (default) takes the saturated content at ``p_in_pa``, ``t_in_k``;
    "water content" takes ``content_mg_per_sm3``; "water dew point" takes ``dew_point_k`` at
    ``dew_point_p_pa`` (the outlet pressure when None).  The correlation is for sweet natural gas; with
    more than 5 mol% CO2 plus H2S (dry basis), or outside its range, free water is assumed (fail closed).
    """
    from jtcheck.thermo.hydrate import water_content as wc

    b = WaterBasis.parse(basis)
    nan = float("nan")
    zs = np.asarray(fluid.zs, dtype=float)
    keep = [i for i, c in enumerate(fluid.ids) if c != "water"]
    dry = zs[keep] / zs[keep].sum()
    acid = sum(z for i, z in zip(keep, dry, strict=True) if fluid.ids[i] in ("carbon dioxide", "hydrogen sulfide"))
    if acid > 0.05:
        return WaterAtOutlet(b.value, nan, nan, nan, True, nan,
                             f"CO2 and H2S are {100 * acid:.1f} mol% of the gas: Bukacek's water-content correlation "
                             "is "
                             "for sweet gas, so free water is assumed at the outlet")
    try:
        if b is WaterBasis.SATURATED_INLET:
            if p_in_pa is None or t_in_k is None:
                raise InputError("water_basis", "saturated at inlet needs the inlet pressure and temperature")
            w = wc.saturated_water_content(p_in_pa, t_in_k)
        elif b is WaterBasis.CONTENT:
            if content_mg_per_sm3 is None or not (content_mg_per_sm3 > 0.0):
                raise InputError("water_content",
                                 f"the water content must be above 0 mg/Sm3, got {content_mg_per_sm3!r}")
            w = float(content_mg_per_sm3)
        else:
            if dew_point_k is None:
                raise InputError("water_dew_point", "a water dew point [K] is needed for this water basis")
            w = wc.saturated_water_content(dew_point_p_pa if dew_point_p_pa is not None else p_out_pa, dew_point_k)
        w_out = wc.saturated_water_content(p_out_pa, t_out_k)
    except InputError as exc:
        if exc.field in ("water_content", "water_dew_point", "water_basis"):
            raise
        return WaterAtOutlet(b.value, nan, nan, nan, True, nan,
                             f"outside the range of Bukacek's water-content correlation ({exc.message}): free water "
                             "is assumed at the outlet")
    free = w > w_out
    dp = nan
    if not free:
        try:
            dp = wc.water_dew_point(w, p_out_pa)
        except InputError:
            dp = nan
    drop = (w - w_out) * 1e-6 if free else 0.0
    if free:
        note = (f"the gas carries {w:.0f} mg/Sm3 of water and can hold {w_out:.0f} mg/Sm3 at the outlet: "
                f"{w - w_out:.0f} mg/Sm3 drops out as free water (Bukacek)")
    else:
        note = (f"the gas carries {w:.0f} mg/Sm3 of water and can hold {w_out:.0f} mg/Sm3 at the outlet "
                + (f"(water dew point {_k(dp)} at the outlet pressure)" if math.isfinite(dp) else "")
                + ": no free water at the outlet (Bukacek)")
    return WaterAtOutlet(b.value, w, w_out, dp, bool(free), drop, note)


@dataclass(frozen=True)
class HydrateAssessment:
    """Hydrate screening of one letdown outlet.

    The hydrate temperature is that of the van der Waals-Platteeuw model
    (:func:`jtcheck.thermo.hydrate.hydrate_temperature`) inside its checked range; outside it the
    outlet is not screened and ``reason`` says why (the gas-gravity chart is shown only as a
    cross-check, inside its own range, never in its place).

    Attributes
    ----------
    applies : bool
        Water is present (in the composition, declared, or from the water basis) and free water or
        hydrate can form at the outlet: the outlet is screened for hydrates.
    screened : bool
        A method inside its range gave the hydrate temperature (when ``applies``).
    reason : str
        Why the outlet is not screened, or why hydrates do not apply ("" otherwise).
    method : str
        Short name of the method (:data:`jtcheck.thermo.hydrate.METHOD_NAME`).
    p_pa, t_out_k : float
        Outlet pressure [Pa] and temperature [K].
    t_hydrate_k : float
        Hydrate temperature at ``p_pa`` without inhibitor [K] (NaN when not screened).
    structure, water_phase : str
        Structure that forms first ("sI", "sII") and the water phase ("liquid water", "ice").
    subcooling_k : float
        ``t_hydrate_k - t_out_k`` [K] (NaN when not screened).
    in_hydrate_region : bool
    checked_deviation_k : float
        The method's largest checked deviation [K] (a margin term).
    design_margin_k : float
        Entered margin [K].
    required_depression_k : float
        Depression of the hydrate temperature that keeps the outlet ``checked_deviation_k +
        design_margin_k`` outside the hydrate region [K] (0 when none).
    inhibitor : str
    inhibitor_weight_percent : float
        Dose in the free water [mass %]: the larger of the model's and Hammerschmidt's where both hold;
        NaN when no dose can be given (``dose_note`` says why); 0 when none is needed.
    inhibitor_kg_per_kg_water : float
    model_weight_percent, hammerschmidt_weight_percent : float
        The two doses [mass %] (NaN where that method does not apply).
    injection_kg_per_s : float
        Inhibitor injection for the case's flow [kg/s]: what the free water at the outlet needs (its water
        times the dose ratio) plus, for methanol, what is lost to the gas and to a hydrocarbon liquid
        (:mod:`jtcheck.thermo.hydrate.losses`); NaN when the flow, the free water or the losses are unknown.
    injection_to_water_kg_per_s, injection_lost_to_gas_kg_per_s, injection_lost_to_liquid_kg_per_s : float
        Its three parts [kg/s] (NaN when unknown).
    dose_upper_bound : bool
        The model's dose lies above the concentration up to which its water activity is checked
        (:data:`jtcheck.thermo.hydrate.inhibitors.ACTIVITY_CHECKED_MASS_PERCENT`): the dose is an upper bound,
        not a checked number.
    loss_note : str
        The losses in words, or why they were not computed.
    dose_note : str
    gas_gravity : float
    katz_t_hydrate_k : float
        Katz gas-gravity chart (Motiee fit) cross-check [K]; NaN outside the chart's range or for a gas
        that is not a sweet natural gas.
    water : WaterAtOutlet or None
    within_validity : bool
        Screened, and any dose given inside its methods' ranges.
    validity_note : str
    notes : tuple of str
    """

    applies: bool
    screened: bool
    reason: str
    method: str
    p_pa: float
    t_out_k: float
    t_hydrate_k: float
    structure: str
    water_phase: str
    subcooling_k: float
    in_hydrate_region: bool
    checked_deviation_k: float
    design_margin_k: float
    required_depression_k: float
    inhibitor: str
    inhibitor_weight_percent: float
    inhibitor_kg_per_kg_water: float
    model_weight_percent: float
    hammerschmidt_weight_percent: float
    injection_kg_per_s: float
    injection_to_water_kg_per_s: float
    injection_lost_to_gas_kg_per_s: float
    injection_lost_to_liquid_kg_per_s: float
    dose_upper_bound: bool
    loss_note: str
    dose_note: str
    gas_gravity: float
    katz_t_hydrate_k: float
    water: WaterAtOutlet | None
    within_validity: bool
    validity_note: str
    notes: tuple[str, ...]

    @property
    def hydrate_risk(self) -> bool:
        """Water is present and the outlet lies inside the hydrate region."""
        return self.applies and self.screened and self.in_hydrate_region


def _katz_cross_check(fluid: Fluid, p: float, gravity: float) -> float:
    """Katz chart temperature [K] when the gas is a sweet natural gas inside the chart's range, else NaN."""
    sweet = getattr(fluid, "_katz_sweet", None)
    if sweet is None:
        sweet = not _composition_notes(fluid)
        fluid._katz_sweet = sweet
    if not sweet:
        return float("nan")
    b0, b1, b2, b3, b4, b5 = MOTIEE_COEFFICIENTS
    x = math.log10(p / PSI_PA)
    t = _degf_to_k(b0 + b1 * x + b2 * x * x + b3 * gravity + b4 * gravity * gravity + b5 * gravity * x)
    inside = (KATZ_GRAVITY_RANGE[0] <= gravity <= KATZ_GRAVITY_RANGE[1]
              and KATZ_PRESSURE_RANGE_PA[0] <= p <= KATZ_PRESSURE_RANGE_PA[1]
              and KATZ_TEMPERATURE_RANGE_K[0] <= t <= KATZ_TEMPERATURE_RANGE_K[1])
    return t if inside else float("nan")


def _composition_notes(fluid: Fluid) -> list[str]:
    keep = [i for i, cid in enumerate(fluid.ids) if cid != "water"]
    zs = np.asarray(fluid.zs, dtype=float)[keep]
    zs = zs / zs.sum()
    comps = [fluid.components[i] for i in keep]
    notes = []
    acid = sum(z for c, z in zip(comps, zs, strict=True) if c.id in ("carbon dioxide", "hydrogen sulfide"))
    if acid > ACID_GAS_NOTE_FRACTION:
        notes.append("acid gas")
    if sum(z for c, z in zip(comps, zs, strict=True) if c.family == "inert") > INERT_NOTE_FRACTION:
        notes.append("inerts")
    if sum(z for c, z in zip(comps, zs, strict=True) if c.family not in ("hydrocarbon", "inert", "acid gas")) > 0.01:
        notes.append("other")
    return notes


def model_dose(fluid: Fluid, p_pa: float, t_target_k: float, inhibitor: Inhibitor) -> tuple[float, str]:
    """Inhibitor [mass % in the free water] that puts the hydrate temperature at ``t_target_k`` [K], by van der
    Waals-Platteeuw with the water activity of original UNIFAC (:mod:`jtcheck.thermo.hydrate.inhibitors`);
    NaN with the reason where no checked dose exists.

    The solution must also stay liquid at ``t_target_k``: the dose is at least the one that keeps ice out.
    Only methanol and MEG are dosed (original UNIFAC under-predicts the freezing-point depression of the
    others, and no second method is held to guard them)."""
    from jtcheck.thermo.hydrate import inhibitors as inh_mod
    from jtcheck.thermo.hydrate.equilibrium import required_ln_water_activity

    if inhibitor not in (Inhibitor.METHANOL, Inhibitor.MONOETHYLENE_GLYCOL):
        return float("nan"), (f"no dose for {inhibitor.value}: its water activity by original UNIFAC is not checked "
                               "(it under-predicts the freezing-point depression) and no Hammerschmidt constant "
                               "is held")
    ln_a = required_ln_water_activity(fluid, p_pa, t_target_k)
    if ln_a is None:
        return float("nan"), "the model could not evaluate the outlet (flash failed or outside its range)"
    if ln_a >= 0.0:
        return 0.0, ""
    name = inhibitor.value
    w = inh_mod.mass_percent_for_activity(ln_a, name, t_target_k)
    if not math.isfinite(w):
        return float("nan"), (f"more than {inh_mod.MAX_MASS_PERCENT[name]:g} mass% {name} would be needed: beyond "
                              "the range in which a dose is given")
    return w, ""


def assess_hydrates(fluid: Fluid, p_out_pa: float, t_out_k: float, *, water_present: bool | None = None,
                    inhibitor: Inhibitor | str = Inhibitor.METHANOL, design_margin_k: float = 0.0,
                    water_basis: WaterBasis | str | None = None, p_in_pa: float | None = None,
                    t_in_k: float | None = None, water_content_mg_per_sm3: float | None = None,
                    water_dew_point_k: float | None = None,
                    mass_flow_kg_per_s: float | None = None) -> HydrateAssessment:
    """Screen a letdown outlet for gas hydrates and size a thermodynamic inhibitor.

    Hydrate temperature by van der Waals and Platteeuw (1959) with the parameters of Munck et al.
    (1988), guest fugacities from the fluid's own equation of state
    (:func:`jtcheck.thermo.hydrate.hydrate_temperature`).  Outside the model's checked range the
    outlet is "not screened" with the reason.  The Katz gas-gravity chart (Motiee 1991 fit) is shown as
    a cross-check for a sweet natural gas inside its range.  The dose keeps the inhibited hydrate
    temperature ``checked deviation + design_margin_k`` below the outlet: the larger of the model's
    dose (water activity by original UNIFAC) and Hammerschmidt's (1934), each inside its range.

    Parameters
    ----------
    fluid : jtcheck.thermo.fluid.Fluid
    p_out_pa : float
        Outlet pressure, [Pa].
    t_out_k : float
        Outlet temperature, [K].
    water_present : bool or None
        None: water among the components, or a ``water_basis`` given, decides.  True: the gas is
        declared water-saturated.  False: declared free of water (not screened for hydrates).
    inhibitor : Inhibitor or str
        methanol (default), MEG, ethanol, DEG or TEG.
    design_margin_k : float
        Entered margin, [K], 0 to 50 K.
    water_basis : WaterBasis or str or None
        How the water is given ("saturated at inlet", "water content", "water dew point"); with None,
        water among the components gives the content (its mole fraction), otherwise the gas is taken as
        saturated at the inlet when the inlet is given, else free water is assumed at the outlet.
    p_in_pa, t_in_k : float, optional
        Inlet pressure [Pa] and temperature [K] (saturated-at-inlet basis).
    water_content_mg_per_sm3 : float, optional
        Water content, [mg/Sm3] (basis "water content").
    water_dew_point_k : float, optional
        Water dew point at the outlet pressure, [K] (basis "water dew point").
    mass_flow_kg_per_s : float, optional
        Gas mass flow, [kg/s], for the injection rate.

    Returns
    -------
    HydrateAssessment

    Raises
    ------
    InputError
        Bad fluid, pressure, temperature, margin, water input or inhibitor; the field is named.
    """
    from jtcheck.thermo.hydrate import CHECKED_DEVIATION_K, METHOD_NAME
    from jtcheck.thermo.hydrate.equilibrium import T_RANGE_K, check_fluid, hydrate_point
    from jtcheck.thermo.hydrate.inhibitors import ACTIVITY_CHECKED_MASS_PERCENT
    from jtcheck.thermo.hydrate.losses import inhibitor_losses

    check_fluid(fluid)
    if np.ndim(p_out_pa) != 0:
        raise InputError("p_out", "assess_hydrates takes one outlet pressure [Pa]")
    if np.ndim(t_out_k) != 0:
        raise InputError("t_out", "assess_hydrates takes one outlet temperature [K]")
    p = float(_check_range("p_out", p_out_pa, "outlet pressure", "Pa", 0.0, _P_MAX_PA, lo_open=True))
    t = float(_check_range("t_out", t_out_k, "outlet temperature", "K", 0.0, _T_MAX_K, lo_open=True))
    margin = float(_check_range("design_margin", design_margin_k, "design margin", "K", 0.0, _MARGIN_MAX_K))
    if water_present is not None and not isinstance(water_present, bool | np.bool_):
        raise InputError("water_present", f"must be True, False or None (decide from the composition), "
                                          f"got {water_present!r}")
    inh = Inhibitor.parse(inhibitor, field="inhibitor")
    nan = float("nan")
    gravity = getattr(fluid, "_gas_gravity", None)
    if gravity is None:
        gravity = fluid._gas_gravity = gas_specific_gravity(fluid)
    notes: list[str] = []

    has_water = "water" in fluid.ids
    if water_present is False:
        applies = False
        reason = "the gas is declared free of water: not screened for hydrates"
    elif water_present is None and not has_water and water_basis is None:
        applies = False
        reason = ("no water in the composition and the gas is not declared water-saturated: not screened for "
                  "hydrates (declare the gas water-saturated or give its water content to screen it)")
    else:
        applies, reason = True, ""
        notes.append("water is among the components" if has_water else "the gas is declared water-saturated"
                     if water_present else "the water content is given")

    # water at the outlet (Bukacek); no basis and no inlet: free water assumed
    water = None
    if applies:
        basis = water_basis
        if basis is None and has_water:
            # the composition states the water: its content [mg/Sm3] (ideal gas at 15 degC, 101.325 kPa)
            z_w = float(np.asarray(fluid.zs)[fluid.ids.index("water")])
            basis = WaterBasis.CONTENT
            water_content_mg_per_sm3 = z_w * 101325.0 / (8.314462618 * 288.15) * 18015.28
        elif basis is None and p_in_pa is not None and t_in_k is not None:
            basis = WaterBasis.SATURATED_INLET
        if basis is not None:
            water = water_at_outlet(fluid, p, t, basis=basis, p_in_pa=p_in_pa, t_in_k=t_in_k,
                                    content_mg_per_sm3=water_content_mg_per_sm3, dew_point_k=water_dew_point_k)
            notes.append(water.note)
        else:
            notes.append("free water is assumed at the outlet (no inlet conditions or water content given)")

    if applies:
        t_eq, _, eq_structure, eq_water, eq_reason = hydrate_point(fluid, p)
    else:   # not screened for hydrates: the model is not run
        t_eq, eq_structure, eq_water, eq_reason = nan, "", "", reason
    screened = applies and not eq_reason
    t_hyd = float(t_eq) if screened else nan
    aw_vapour = 1.0
    if applies and water is not None and not water.free_water and math.isfinite(water.saturated_outlet_mg_per_sm3):
        # no free water: hydrate can still form from the undersaturated gas below T_hydrate at the gas's
        # water activity (content / saturated content), the same model with a_w < 1
        aw_vapour = min(1.0, water.content_mg_per_sm3 / water.saturated_outlet_mg_per_sm3)
        _, t_dry, _, _, dry_reason = hydrate_point(fluid, p, math.log(aw_vapour))
        bound = None
        if not dry_reason:
            bound = t_dry
        elif math.isfinite(t_dry) and t_dry < T_RANGE_K[0]:
            bound = T_RANGE_K[0]      # the model puts it below its checked range: take the range's lower end
        if bound is not None:
            notes.append(f"with no free water, hydrate could form from the gas only below {_k(bound)} (the gas's water "
                         f"activity {aw_vapour:.3f}, same model)")
            if t >= bound + CHECKED_DEVIATION_K + margin:
                applies = False
                reason = ("the gas is dry enough: no free water at the outlet, and the outlet is above the temperature "
                          f"at which hydrate could form from the undersaturated gas with the margin ({water.note})")
    if applies and not screened:
        reason = f"not screened for hydrates: {eq_reason}"
    subcooling = t_hyd - t if screened else nan
    in_region = bool(screened and subcooling > 0.0)

    # dose
    total_margin = CHECKED_DEVIATION_K + margin
    required = max(0.0, subcooling + total_margin) if (applies and screened) else 0.0
    w_model = w_ham = nan
    dose_note = ""
    weight, ratio, dose_ok = 0.0, 0.0, True
    upper_bound = False
    if required > 0.0:
        w_model, why = model_dose(fluid, p, t - total_margin, inh)
        parts = []
        if why:
            parts.append(why)
        if inh.hammerschmidt_k_degf is not None and required <= _DEPRESSION_MAX_K:
            m_inh, d_f = inh.molar_mass_g_per_mol, 1.8 * required   # Hammerschmidt (1934), W = 100 M dT / (K + M dT)
            w_h = 100.0 * m_inh * d_f / (inh.hammerschmidt_k_degf + m_inh * d_f)
            w_ham = w_h if w_h <= inh.max_weight_percent else nan
            if not math.isfinite(w_ham):
                parts.append(f"{w_h:.1f} wt% {inh.value} by Hammerschmidt is beyond its range (up to about "
                             f"{inh.max_weight_percent:g} wt%; {inh.source})")
        candidates = [w for w in (w_model, w_ham) if math.isfinite(w)]
        if math.isfinite(w_model) and candidates:
            weight = max(candidates)
            ratio = float(inhibitor_mass_ratio(weight))
            checked = ACTIVITY_CHECKED_MASS_PERCENT.get(inh.value, 0.0)
            upper_bound = w_model > checked
            dose_note = (f"dose {weight:.1f} mass% {inh.value} in the free water: the larger of van der "
                         "Waals-Platteeuw "
                         f"with UNIFAC water activity ({w_model:.1f} mass%)"
                         + (f" and Hammerschmidt ({w_ham:.1f} mass%)" if math.isfinite(w_ham)
                               else " (Hammerschmidt not applicable)"))
            if upper_bound:
                dose_note += (f"; an upper bound, not a checked dose: above {checked:g} mass% {inh.value} UNIFAC "
                              "under-predicts the freezing-point depression of the solution (published freezing "
                              "points), so it gives too small a suppression and too large a dose; the need may be "
                              "smaller (confirm with inhibited hydrate data)")
        else:
            weight, ratio, dose_ok = nan, nan, False
            dose_note = "no dose can be given: " + "; ".join(parts or ["no method holds"])
        if parts and math.isfinite(weight):
            dose_note += "; " + "; ".join(parts)
    injection = to_water = to_gas = to_liquid = nan
    loss_note = ""
    if math.isfinite(weight) and weight > 0.0 and mass_flow_kg_per_s and water is not None and \
            math.isfinite(water.free_water_kg_per_sm3):
        m_gas = fluid.molar_mass        # kg/mol
        sm3_per_s = mass_flow_kg_per_s / m_gas * 8.314462618 * 288.15 / 101325.0
        to_water = sm3_per_s * water.free_water_kg_per_sm3 * ratio
        loss = inhibitor_losses(fluid, p, t, weight, inh.value)
        loss_note = loss.note
        if loss.computed:
            to_gas = mass_flow_kg_per_s * loss.gas_mass_fraction * loss.gas_kg_per_kg
            to_liquid = mass_flow_kg_per_s * loss.liquid_mass_fraction * loss.liquid_kg_per_kg
            injection = to_water + to_gas + to_liquid
            dose_note += (f"; injection {injection * 3600:.3g} kg/h for the case's flow: {to_water * 3600:.3g} kg/h "
                          f"to the free water, {to_gas * 3600:.3g} kg/h lost to the gas"
                          + (f", {to_liquid * 3600:.3g} kg/h lost to the hydrocarbon liquid" if to_liquid > 0.0 else
                             "") + f" ({loss.note}; {loss.method})")
        elif inh is Inhibitor.METHANOL:
            dose_note += (f"; no injection rate: {loss.note} (the free water alone would take {to_water * 3600:.3g} "
                          "kg/h)")
        else:
            injection = to_water
            dose_note += f"; injection {injection * 3600:.3g} kg/h for the free water of the case's flow ({loss.note})"

    katz = _katz_cross_check(fluid, p, gravity)
    validity = [f"{METHOD_NAME}: " + ("inside its checked range (largest checked deviation "
                                       f"{CHECKED_DEVIATION_K:g} K)" if screened else eq_reason)]
    if math.isfinite(katz):
        validity.append(f"cross-check: Katz gas-gravity chart (Motiee fit) {_k(katz)}")
    else:
        validity.append("Katz gas-gravity chart not applicable here (sweet natural gas inside the chart's range only)")
    if dose_note:
        validity.append(dose_note)
    if screened:
        notes.append(f"structure {eq_structure} forms first, with {eq_water}")
    return HydrateAssessment(
        applies=applies, screened=screened, reason=reason, method=METHOD_NAME, p_pa=p, t_out_k=t, t_hydrate_k=t_hyd,
        structure=eq_structure, water_phase=eq_water, subcooling_k=subcooling, in_hydrate_region=in_region,
        checked_deviation_k=CHECKED_DEVIATION_K, design_margin_k=margin, required_depression_k=required,
        inhibitor=inh.value, inhibitor_weight_percent=weight, inhibitor_kg_per_kg_water=ratio,
        model_weight_percent=w_model, hammerschmidt_weight_percent=w_ham, injection_kg_per_s=injection,
        injection_to_water_kg_per_s=to_water, injection_lost_to_gas_kg_per_s=to_gas,
        injection_lost_to_liquid_kg_per_s=to_liquid, dose_upper_bound=upper_bound, loss_note=loss_note,
        dose_note=dose_note, gas_gravity=gravity, katz_t_hydrate_k=katz, water=water,
        within_validity=bool(screened and dose_ok), validity_note="; ".join(validity), notes=tuple(notes))
