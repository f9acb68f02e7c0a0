"""Minimum design metal temperature (MDMT) of a carbon steel from the code's impact-test exemption curves.

The methods are the codes' own:

* ASME BPVC Section VIII Division 1, UCS-66 (Fig. UCS-66, curves A to D against the governing thickness),
  UCS-66.1 (Fig. UCS-66.1: the reduction of the MDMT for a coincident stress ratio below 1, not below
  -55 degF (-48 degC) unless the ratio is 0.35 or less, when the MDMT may go down to -155 degF (-105 degC)),
  UCS-68(c) (a 30 degF (17 degC) reduction for post-weld heat treatment the code did not require).
* ASME B31.3 para. 323.2.2 (Fig. 323.2.2A, the same curves; Fig. 323.2.2B, the reduction for the stress
  ratio, with its General Notes (b) and (c): no impact testing down to -104 degC at a ratio of 0.3 or
  less, and for a ratio above 0.3 not below -48 degC); Table A-1 assigns the curve letters.

The numbers live in one data table (``data/mdmt_curves.csv``; admins may replace it in the register)
with each point's source, edition and provenance ("from memory" where it was recalled, not read):
VERIFY AGAINST THE CODE EDITION IN FORCE.

Pure functions of SI floats: :func:`material_mdmt` (one thickness and stress ratio),
:func:`stress_ratio` (the coincident ratio from the pressure), :class:`MaterialColdSpec` (what a material
carries) and :func:`screen_pressure_path` (a (pressure, temperature) path, e.g. a letdown's outlet or a
vessel's depressurisation, against the allowable temperature at each pressure).
"""
from __future__ import annotations

import csv
import enum
import io
import math
from collections.abc import Iterable, Mapping, Sequence
from dataclasses import dataclass, field
from functools import lru_cache
from importlib import resources
from typing import Any

import numpy as np

from jtcheck import marks
from jtcheck.errors import InputError
from jtcheck.screening.findings import Outcome

_T0 = 273.15
_IN = 0.0254   # [m] per inch
CAUTION = "Exemption curves and reductions: verify against the code edition in force."
#: The data table's columns, in order.
CURVE_COLUMNS = ("code", "table", "curve", "x", "value", "unit", "source", "edition", "provenance")
#: Rules each code's table must give.
RULES = ("low_stress_ratio", "low_stress_floor", "reduced_floor", "pwht_credit", "max_thickness")
#: Allowed stress ratios [-].
STRESS_RATIO_RANGE = (0.0, 10.0)


class Curve(enum.StrEnum):
    """The impact-test exemption curves (warmest A to coldest D)."""

    A = "A"
    B = "B"
    C = "C"
    D = "D"


class Code(enum.StrEnum):
    """The code whose reductions and bounds apply."""

    VIII_1 = "VIII-1"    # ASME BPVC Section VIII Division 1
    B31_3 = "B31.3"      # ASME B31.3 Process Piping

    @property
    def title(self) -> str:
        return {"VIII-1": "ASME BPVC VIII-1 UCS-66/UCS-66.1", "B31.3": "ASME B31.3 para. 323.2.2"}[self.value]


def parse_curve(value: Any, field_name: str = "curve") -> Curve:
    """A :class:`Curve` from its letter; an unknown one names the allowed letters."""
    try:
        return Curve(str(value).strip().upper())
    except ValueError:
        raise InputError(field_name, f"unknown exemption curve {value!r}; allowed: "
                                     f"{', '.join(c.value for c in Curve)}") from None


def parse_code(value: Any, field_name: str = "code") -> Code:
    """A :class:`Code` from its name; an unknown one names the allowed codes."""
    text = str(value).strip().upper().replace("VIII1", "VIII-1")
    for c in Code:
        if text == c.value.upper():
            return c
    raise InputError(field_name, f"unknown code {value!r}; allowed: {', '.join(c.value for c in Code)}")


def _f_to_k(t_f: float) -> float:
    return (t_f - 32.0) / 1.8 + _T0


def _to_si(value: float, unit: str) -> float:
    if unit == "degF":
        return _f_to_k(value)
    if unit == "in":
        return value * _IN
    if unit == "-":
        return value
    raise InputError("unit", f"unknown unit {unit!r} in the curve table; allowed: degF, in, -")


@dataclass(frozen=True)
class CurveTable:
    """The exemption curves, the stress-ratio reductions and the bounds, in SI.

    Attributes
    ----------
    rows : tuple of dict
        The table as given (``CURVE_COLUMNS``, numbers as in the table's units) with its sources.
    label : str
        Where the table came from ("shipped table ..." or "register table, changed ...").
    """

    rows: tuple[dict[str, Any], ...]
    label: str = "shipped table jtcheck/screening/data/mdmt_curves.csv"
    curves: dict[str, tuple[np.ndarray, np.ndarray]] = field(init=False, repr=False, compare=False)
    reductions: dict[str, tuple[np.ndarray, np.ndarray]] = field(init=False, repr=False, compare=False)
    rules: dict[str, dict[str, float]] = field(init=False, repr=False, compare=False)

    def __post_init__(self) -> None:
        curves: dict[str, list[tuple[float, float]]] = {c.value: [] for c in Curve}
        reductions: dict[str, list[tuple[float, float]]] = {c.value: [] for c in Code}
        rules: dict[str, dict[str, float]] = {c.value: {} for c in Code}
        for i, row in enumerate(self.rows, start=1):
            where = f"curve table row {i}"
            table, code = row.get("table"), row.get("code")
            try:
                value = float(row["value"])
            except (TypeError, ValueError, KeyError):
                raise InputError("value", f"{where}: the value must be a number, got {row.get('value')!r}") from None
            if not math.isfinite(value):
                raise InputError("value", f"{where}: the value must be finite")
            if table in ("exemption", "rule") and row.get("unit") == "degF" and _f_to_k(value) <= 0.0 \
                    and row.get("curve") != "pwht_credit":
                raise InputError("value", f"{where}: {value:g} degF is below absolute zero")
            if table == "exemption":
                curve = parse_curve(row.get("curve"), "curve").value
                if row.get("unit") != "degF":
                    raise InputError("unit", f"{where}: exemption values are in degF")
                curves[curve].append((_to_si(float(row["x"]), "in"), _f_to_k(value)))
            elif table == "reduction":
                codes = [c.value for c in Code] if code == "both" else [parse_code(code).value]
                if row.get("unit") != "degF":
                    raise InputError("unit", f"{where}: reductions are in degF")
                for c in codes:
                    reductions[c].append((float(row["x"]), value / 1.8))
            elif table == "rule":
                name = str(row.get("curve"))
                if name not in RULES:
                    raise InputError("curve", f"{where}: unknown rule {name!r}; allowed: {', '.join(RULES)}")
                codes = [c.value for c in Code] if code == "both" else [parse_code(code).value]
                si = value / 1.8 if name == "pwht_credit" else _to_si(value, str(row.get("unit")))
                for c in codes:
                    rules[c][name] = si
            else:
                raise InputError("table", f"{where}: unknown table {table!r}; allowed: exemption, reduction, rule")
        out_c: dict[str, tuple[np.ndarray, np.ndarray]] = {}
        for name, pts in curves.items():
            if len(pts) < 2:
                raise InputError("curve", f"curve {name} needs at least 2 points in the curve table")
            pts.sort()
            xs, ys = np.array([p[0] for p in pts]), np.array([p[1] for p in pts])
            if np.any(np.diff(xs) <= 0) or np.any(np.diff(ys) < 0):
                raise InputError("curve", f"curve {name}: thicknesses must rise and the temperature must not fall "
                                          "with thickness")
            out_c[name] = (xs, ys)
        out_r: dict[str, tuple[np.ndarray, np.ndarray]] = {}
        for name, pts in reductions.items():
            pts.sort()
            xs, ys = np.array([p[0] for p in pts]), np.array([p[1] for p in pts])
            if len(pts) < 2 or xs[-1] != 1.0 or ys[-1] != 0.0 or np.any(np.diff(xs) <= 0) or np.any(np.diff(ys) > 0):
                raise InputError("reduction", f"{name}: the reduction needs 2 or more points ending at ratio 1 with "
                                              "0 reduction, growing as the ratio falls")
            out_r[name] = (xs, ys)
            missing = [r for r in RULES if r not in rules[name]]
            if missing:
                raise InputError("rule", f"{name}: the curve table lacks the rules {', '.join(missing)}")
        object.__setattr__(self, "curves", out_c)
        object.__setattr__(self, "reductions", out_r)
        object.__setattr__(self, "rules", rules)

    def curve_k(self, curve: Curve, thickness_m: float) -> float:
        """The curve temperature at ``thickness_m`` [K] (flat below the first point) by straight-line
        interpolation between the tabulated thicknesses."""
        xs, ys = self.curves[curve.value]
        return float(np.interp(thickness_m, xs, ys))

    def reduction_k(self, code: Code, ratio: float) -> float:
        """The stress-ratio reduction [K] (0 at a ratio of 1 and above)."""
        xs, ys = self.reductions[code.value]
        return 0.0 if ratio >= 1.0 else float(np.interp(ratio, xs, ys))


def read_curve_rows(text: str) -> list[dict[str, Any]]:
    """The rows of a curve table in CSV text (lines starting with ``#`` are comments)."""
    lines = [ln for ln in io.StringIO(text) if not ln.startswith("#")]
    reader = csv.DictReader(lines)
    if tuple(reader.fieldnames or ()) != CURVE_COLUMNS:
        raise InputError("curve table", f"the columns must be {', '.join(CURVE_COLUMNS)}")
    return [dict(r) for r in reader]


@lru_cache(maxsize=1)
def shipped_curve_table() -> CurveTable:
    """The curve table shipped with jtcheck (``jtcheck/screening/data/mdmt_curves.csv``)."""
    text = resources.files("jtcheck.screening").joinpath("data/mdmt_curves.csv").read_text(encoding="utf-8")
    return CurveTable(tuple(read_curve_rows(text)))


def _c(t_k: float) -> str:
    return f"{t_k - _T0:.1f} degC ({t_k:.2f} K)"


@dataclass(frozen=True)
class MdmtWorking:
    """The MDMT of a material at one thickness and stress ratio, with the working a checker repeats by hand.

    Attributes
    ----------
    mdmt_k : float
        The MDMT [K].
    code, curve : str
        The code and the exemption curve ("" for a material known only by its impact test).
    thickness_m : float
        Governing thickness [m].
    stress_ratio : float
        Coincident stress ratio [-].
    curve_k : float or None
        The curve temperature at the thickness [K] (None beyond the curves' thickness range).
    reduction_k : float
        Stress-ratio reduction taken [K].
    pwht_credit_k : float
        Post-weld heat treatment credit taken [K].
    bound_k : float or None
        The bound that stopped the reductions [K] (None when no bound acted).
    impact_test_temperature_k : float or None
        Impact test temperature [K] when the material was impact tested.
    basis : str
        Which way the MDMT was found ("exemption curve", "exemption curve, low-stress exemption",
        "impact test").
    steps : tuple of str
        The working, one line a step.
    """

    mdmt_k: float
    code: str
    curve: str
    thickness_m: float
    stress_ratio: float
    curve_k: float | None
    reduction_k: float
    pwht_credit_k: float
    bound_k: float | None
    impact_test_temperature_k: float | None
    basis: str
    steps: tuple[str, ...]
    table: str = ""

    def __float__(self) -> float:
        return self.mdmt_k

    def to_dict(self) -> dict[str, Any]:
        return {"mdmt_k": self.mdmt_k, "code": self.code, "curve": self.curve, "thickness_m": self.thickness_m,
                "stress_ratio": self.stress_ratio, "curve_k": self.curve_k, "reduction_k": self.reduction_k,
                "pwht_credit_k": self.pwht_credit_k, "bound_k": self.bound_k,
                "impact_test_temperature_k": self.impact_test_temperature_k, "basis": self.basis,
                "steps": list(self.steps), "table": self.table, "caution": CAUTION}


def _check_positive(name: str, value: Any, what: str, unit: str, lo: float, hi: float) -> float:
    try:
        v = float(value)
    except (TypeError, ValueError):
        raise InputError(name, f"the {what} must be a number in {unit}, got {value!r}") from None
    if not math.isfinite(v) or not lo < v <= hi:
        raise InputError(name, f"the {what} must lie above {lo:g} and at most {hi:g} {unit}, got {value!r}")
    return v


def material_mdmt(curve: str | Curve | None, thickness_m: float | None, stress_ratio: float = 1.0, *,
                  code: str | Code = Code.VIII_1, impact_test_temperature_k: float | None = None,
                  pwht_credit: bool = False, table: CurveTable | None = None) -> MdmtWorking:
    """MDMT [K] of a carbon steel from its exemption curve, thickness and coincident stress ratio, with the working.

    Method: ASME BPVC VIII-1 UCS-66 (curve value at the governing thickness), UCS-66.1 (stress-ratio
    reduction, not below -48 degC unless the ratio is at or below 0.35, when down to -105 degC) and
    UCS-68(c) (PWHT credit); or ASME B31.3 para. 323.2.2 with Fig. 323.2.2A/B (ratio at or below 0.3:
    down to -104 degC; above 0.3 not below -48 degC).  The numbers come from ``table`` (the shipped one by
    default; see :func:`shipped_curve_table`): verify against the code edition in force.

    Parameters
    ----------
    curve : {"A", "B", "C", "D"} or None
        Exemption curve of the material (VIII-1 Fig. UCS-66 notes; B31.3 Table A-1).  None for a material
        known only by its impact test (then ``impact_test_temperature_k`` is required).
    thickness_m : float
        Governing thickness [m] (UCS-66(a); B31.3 Fig. 323.2.2A).  Beyond the curves' range (4 in, 102 mm, for
        welded construction) the curves do not apply: only an impact test gives an MDMT.
    stress_ratio : float, optional
        Coincident ratio of the stress (or the required thickness) to its allowable [-] (UCS-66.1; B31.3
        Fig. 323.2.2B General Note (a)); 1 takes no reduction.  Above 1 no reduction is taken.
    code : {"VIII-1", "B31.3"}, optional
        The code whose reduction, bounds and credits apply.
    impact_test_temperature_k : float, optional
        Charpy impact test temperature [K] of a material impact tested to the code; the MDMT is then the
        colder of the test temperature and the curve result.  No stress-ratio credit is taken on the test
        temperature itself (the conservative side).
    pwht_credit : bool, optional
        Post-weld heat treated though the code did not require it (VIII-1 UCS-68(c), P-No. 1 only): 17 degC
        (30 degF) more; not allowed with B31.3.
    table : CurveTable, optional
        The curve table (default: the shipped one).

    Returns
    -------
    MdmtWorking
        ``mdmt_k`` [K] with the curve value, reduction, bound and the steps (``float(result)`` gives the MDMT).

    Raises
    ------
    InputError
        For an unknown curve or code, a thickness or ratio out of range, PWHT credit with B31.3, or neither a
        curve (within its thickness range) nor an impact test.
    """
    table = table or shipped_curve_table()
    code = parse_code(code.value if isinstance(code, Code) else code)
    rules = table.rules[code.value]
    crv = None if curve is None or str(curve).strip() == "" else parse_curve(curve)
    t_test = None
    if impact_test_temperature_k is not None:
        t_test = _check_positive("impact_test_temperature_k", impact_test_temperature_k, "impact test temperature",
                                 "K", 0.0, 473.15)
    if crv is None and t_test is None:
        raise InputError("curve", "give the exemption curve (A, B, C or D) or the impact test temperature")
    ratio = float(stress_ratio)
    lo, hi = STRESS_RATIO_RANGE
    if not math.isfinite(ratio) or not lo <= ratio <= hi:
        raise InputError("stress_ratio", f"the stress ratio must lie between {lo:g} and {hi:g}, got {stress_ratio!r}")
    if pwht_credit and rules["pwht_credit"] <= 0.0:
        raise InputError("pwht_credit", f"{code.value} gives no PWHT credit; allowed only with VIII-1 (UCS-68(c))")
    t_max = rules["max_thickness"]
    thick = None
    if thickness_m is not None:
        thick = _check_positive("thickness_m", thickness_m, "governing thickness", "m", 0.0, 1.0)
    steps: list[str] = [f"Code: {code.title}; table: {table.label}."]
    curve_k = None
    curve_result = None
    reduction = pwht = 0.0
    bound = None
    basis_parts: list[str] = []
    if crv is not None:
        if thick is None:
            raise InputError("thickness_m", "the governing thickness is required with an exemption curve")
        if thick > t_max + 1e-12:
            if t_test is None:
                raise InputError("thickness_m", f"governing thickness {thick * 1000:.1f} mm is beyond the curves' "
                                                f"range ({t_max * 1000:.1f} mm): impact testing is required; give "
                                                "the impact test temperature or a typed limit")
            steps.append(f"Thickness {thick * 1000:.1f} mm is beyond the curves ({t_max * 1000:.1f} mm): "
                         "curve not used.")
        else:
            curve_k = table.curve_k(crv, thick)
            steps.append(f"Curve {crv.value} at governing thickness {thick * 1000:.2f} mm ({thick / _IN:.3f} in): "
                         f"{_c(curve_k)}.")
            floor = rules["reduced_floor"]
            if ratio <= rules["low_stress_ratio"]:
                curve_result = min(curve_k, rules["low_stress_floor"])
                bound = rules["low_stress_floor"]
                steps.append(f"Stress ratio {ratio:.3f} <= {rules['low_stress_ratio']:g}: low-stress exemption, "
                             f"MDMT down to {_c(bound)}.")
                basis_parts.append("exemption curve, low-stress exemption")
            else:
                reduction = table.reduction_k(code, ratio)
                steps.append(f"Stress ratio {ratio:.3f}: reduction {reduction:.1f} K"
                             + (" (ratio 1 or more: none)." if ratio >= 1.0 else "."))
                if pwht_credit:
                    pwht = rules["pwht_credit"]
                    steps.append(f"PWHT not required by the code but done (UCS-68(c)): {pwht:.1f} K more.")
                raw = curve_k - reduction - pwht
                if curve_k < floor:   # a curve colder than the bound (not in the shipped table): no credit taken
                    curve_result = curve_k
                    steps.append(f"The curve value is below the bound {_c(floor)}: no reduction taken.")
                elif raw < floor:
                    bound = floor
                    curve_result = floor
                    steps.append(f"{_c(raw)} is below the bound {_c(floor)} (ratio above "
                                 f"{rules['low_stress_ratio']:g}): bounded.")
                else:
                    curve_result = raw
                basis_parts.append("exemption curve" + (" with stress-ratio reduction" if reduction > 0 else "")
                                   + (" and PWHT credit" if pwht > 0 else ""))
            steps.append(f"MDMT from the curve: {_c(curve_result)}.")
    mdmt = curve_result
    if t_test is not None:
        steps.append(f"Impact tested at {_c(t_test)}: no stress-ratio credit taken on the test temperature.")
        if mdmt is None or t_test < mdmt:
            mdmt = t_test
            basis_parts = ["impact test"]
        steps.append(f"MDMT: the colder of the curve result and the test temperature: {_c(mdmt)}.")
    assert mdmt is not None
    return MdmtWorking(mdmt_k=mdmt, code=code.value, curve="" if crv is None else crv.value,
                       thickness_m=float(thick) if thick is not None else float("nan"), stress_ratio=ratio,
                       curve_k=curve_k, reduction_k=reduction, pwht_credit_k=pwht, bound_k=bound,
                       impact_test_temperature_k=t_test, basis="; ".join(basis_parts), steps=tuple(steps),
                       table=table.label)


def stress_ratio(p_pa: float, *, p_atm_pa: float, allowable_stress_pa: float, outside_diameter_m: float,
                 thickness_m: float, corrosion_allowance_m: float = 0.0, joint_efficiency: float = 1.0,
                 other_stress_pa: float = 0.0) -> float:
    """Coincident stress ratio of a cylinder under internal pressure [-].

    Hoop stress by ASME BPVC VIII-1 UG-27(c)(1) written with the outside diameter,
    ``sigma = P (D_o - 0.8 t) / (2 E t)``, which is also ASME B31.3 eq. (3a) with Y = 0.4, over the
    allowable stress; ``P`` is the gauge pressure, ``t`` the thickness less the corrosion (and mill
    tolerance) allowance.  A vacuum gives 0 pressure stress.  ``other_stress_pa`` (dead loads, displacement
    strain: ASME B31.3 Fig. 323.2.2B General Note (a)(3)) is added to the pressure stress, which is the
    conservative side (the stresses act in different directions).

    Parameters
    ----------
    p_pa : float
        Coincident absolute pressure [Pa].
    p_atm_pa : float
        Atmospheric pressure [Pa].
    allowable_stress_pa : float
        Allowable stress at the design temperature [Pa] (S of ASME II-D; B31.3 Table A-1).
    outside_diameter_m : float
        Outside diameter [m].
    thickness_m : float
        Nominal thickness [m].
    corrosion_allowance_m : float, optional
        Corrosion, erosion and mill-tolerance allowance [m].
    joint_efficiency : float, optional
        Weld joint efficiency E [-] (VIII-1 UW-12; B31.3 E x W).
    other_stress_pa : float, optional
        Stress from other coincident loads (dead loads, displacement strain) [Pa], added.

    Returns
    -------
    float
        Stress ratio [-].
    """
    t = thickness_m - corrosion_allowance_m
    if not t > 0:
        raise InputError("corrosion_allowance_m", "the corrosion allowance must be less than the thickness")
    if not outside_diameter_m > 2 * thickness_m:
        raise InputError("outside_diameter_m", "the outside diameter must exceed twice the thickness")
    p_g = max(p_pa - p_atm_pa, 0.0)
    sigma = p_g * (outside_diameter_m - 0.8 * t) / (2.0 * joint_efficiency * t)
    return (sigma + other_stress_pa) / allowable_stress_pa


#: Fields of :class:`MaterialColdSpec` with their ranges (SI) for the checks of the records and the CLI.
SPEC_RANGES = {"thickness_m": (0.0, 1.0), "allowable_stress_pa": (0.0, 2e9), "outside_diameter_m": (0.0, 20.0),
               "corrosion_allowance_m": (0.0, 0.1), "joint_efficiency": (0.0, 1.0),
               "impact_test_temperature_k": (0.0, 473.15), "other_stress_pa": (0.0, 2e9)}


@dataclass(frozen=True)
class MaterialLimit:
    """A material's cold limit at one coincident pressure.

    Attributes
    ----------
    limit_k : float or None
        The limit [K]; None when the material has neither a curve nor a typed limit (not screened).
    basis : str
        Which way it was found, in words.
    stress_ratio : float or None
        Coincident stress ratio used [-].
    working : MdmtWorking or None
        The curve working (None without a curve).
    """

    limit_k: float | None
    basis: str
    stress_ratio: float | None = None
    working: MdmtWorking | None = None

    def to_dict(self) -> dict[str, Any]:
        return {"limit_k": self.limit_k, "basis": self.basis, "stress_ratio": self.stress_ratio,
                "working": None if self.working is None else self.working.to_dict()}


@dataclass(frozen=True)
class MaterialColdSpec:
    """What a material carries for its cold limit: a typed limit, or an exemption curve and what it needs, or both.

    With both, the warmer governs (the typed limit may be a company rule).  Stress inputs (allowable
    stress, outside diameter) give the coincident stress ratio from the pressure; without them the ratio is
    taken as 1 (no reduction), which is the conservative side.
    """

    name: str = ""
    typed_limit_k: float | None = None
    curve: str = ""
    code: str = Code.VIII_1.value
    thickness_m: float | None = None
    impact_test_temperature_k: float | None = None
    pwht_credit: bool = False
    allowable_stress_pa: float | None = None
    outside_diameter_m: float | None = None
    corrosion_allowance_m: float = 0.0
    joint_efficiency: float = 1.0
    other_stress_pa: float = 0.0

    def __post_init__(self) -> None:
        for key, (lo, hi) in SPEC_RANGES.items():
            v = getattr(self, key)
            if v is None:
                continue
            if key in ("joint_efficiency", "corrosion_allowance_m", "other_stress_pa"):
                ok = math.isfinite(float(v)) and (lo < float(v) <= hi if key == "joint_efficiency"
                                                  else lo <= float(v) <= hi)
            else:
                ok = math.isfinite(float(v)) and lo < float(v) <= hi
            if not ok:
                raise InputError(key, f"must lie between {lo:g} and {hi:g} (SI), got {v!r}")
        if self.curve:
            object.__setattr__(self, "curve", parse_curve(self.curve).value)
            if self.thickness_m is None:
                raise InputError("thickness_m", "a material with an exemption curve needs its governing thickness")
        object.__setattr__(self, "code", parse_code(self.code).value)
        if (self.allowable_stress_pa is None) != (self.outside_diameter_m is None):
            raise InputError("allowable_stress_pa", "give both the allowable stress and the outside diameter for "
                                                    "the stress ratio, or neither (ratio 1)")
        if self.pwht_credit and self.code != Code.VIII_1.value:
            raise InputError("pwht_credit", "PWHT credit is only for VIII-1 (UCS-68(c))")

    @property
    def has_curve(self) -> bool:
        return bool(self.curve) or self.impact_test_temperature_k is not None

    @property
    def has_limit(self) -> bool:
        return self.has_curve or self.typed_limit_k is not None

    @classmethod
    def from_options(cls, opts: Mapping[str, Any], name: str, typed_limit_k: float | None) -> MaterialColdSpec | None:
        """A checked spec from the SI options of an edge (:func:`jtcheck.units.material_options`); None without
        any.  The curve's own checks (the thickness range) run here, so bad input fails before any computation."""
        if not opts:
            return None
        spec = cls(name=name, typed_limit_k=typed_limit_k, **opts)
        spec.limit_at(101325.0, 101325.0)
        return spec

    @classmethod
    def from_dict(cls, data: Mapping[str, Any]) -> MaterialColdSpec:
        keys = cls.__dataclass_fields__.keys()
        return cls(**{k: v for k, v in data.items() if k in keys and v is not None})

    def to_dict(self) -> dict[str, Any]:
        return {k: getattr(self, k) for k in self.__dataclass_fields__}

    def ratio_at(self, p_pa: float, p_atm_pa: float) -> tuple[float, str]:
        """The coincident stress ratio at ``p_pa`` [Pa abs] and how it was found."""
        if self.allowable_stress_pa is None or self.outside_diameter_m is None or self.thickness_m is None:
            return 1.0, "no stress inputs: ratio 1 taken (no reduction)"
        r = stress_ratio(p_pa, p_atm_pa=p_atm_pa, allowable_stress_pa=self.allowable_stress_pa,
                         outside_diameter_m=self.outside_diameter_m, thickness_m=self.thickness_m,
                         corrosion_allowance_m=self.corrosion_allowance_m, joint_efficiency=self.joint_efficiency,
                         other_stress_pa=self.other_stress_pa)
        other = (f" plus {self.other_stress_pa / 1e6:.1f} MPa from other loads" if self.other_stress_pa else
                 "; pressure stress only: where dead loads or displacement strain add stress (B31.3 Fig. 323.2.2B "
                 "General Note (a)(3)), enter that stress as the other stress, leave out the stress inputs (ratio 1) "
                 "or type the limit")
        return r, (f"hoop stress P (D_o - 0.8 t) / (2 E t) at {(p_pa - p_atm_pa) / 1e5:.3f} bar gauge over S = "
                   f"{self.allowable_stress_pa / 1e6:.1f} MPa (D_o {self.outside_diameter_m * 1000:.1f} mm, t "
                   f"{self.thickness_m * 1000:.2f} mm less {self.corrosion_allowance_m * 1000:.2f} mm, E "
                   f"{self.joint_efficiency:g}){other}")

    def limit_at(self, p_pa: float, p_atm_pa: float, table: CurveTable | None = None) -> MaterialLimit:
        """The cold limit [K] at the coincident pressure ``p_pa`` [Pa abs]."""
        if not self.has_curve:
            if self.typed_limit_k is None:
                return MaterialLimit(None, "no limit: the material has neither an exemption curve nor a typed limit")
            return MaterialLimit(self.typed_limit_k, "typed limit")
        ratio, how = self.ratio_at(p_pa, p_atm_pa)
        working = material_mdmt(self.curve or None, self.thickness_m, ratio, code=self.code,
                                impact_test_temperature_k=self.impact_test_temperature_k,
                                pwht_credit=self.pwht_credit, table=table)
        working = MdmtWorking(**{**{k: getattr(working, k) for k in working.__dataclass_fields__},
                                 "steps": (f"Coincident pressure {p_pa / 1e5:.3f} bar abs; stress ratio {ratio:.3f} "
                                           f"({how}).", *working.steps)})
        if self.typed_limit_k is not None and self.typed_limit_k > working.mdmt_k:
            return MaterialLimit(self.typed_limit_k, f"typed limit (warmer than the {working.basis} "
                                                     f"{_c(working.mdmt_k)})", ratio, working)
        basis = working.basis
        if self.typed_limit_k is not None:
            basis = f"{working.basis} (not colder than the typed limit {_c(self.typed_limit_k)})"
        return MaterialLimit(working.mdmt_k, basis, ratio, working)


def allowable_temperatures(spec: MaterialColdSpec, p_pa: Iterable[float], p_atm_pa: float,
                           table: CurveTable | None = None) -> np.ndarray:
    """The allowable (coldest) metal temperature [K] at each pressure [Pa abs]; NaN where there is no limit."""
    return np.array([np.nan if (lim := spec.limit_at(p, p_atm_pa, table).limit_k) is None else lim
                     for p in p_pa], dtype=float)


@dataclass(frozen=True)
class PathScreening:
    """A (pressure, temperature) path against the allowable temperature at each pressure.

    Attributes
    ----------
    outcome : Outcome
    p_pa, t_k, allowable_k : tuple of float
        The path's pressures [Pa abs] and temperatures [K] and the allowable temperature at each [K].
    worst_index : int or None
        The point with the least margin (None when nothing could be screened).
    margin_k : float
        Required margin [K].
    message : str
    """

    outcome: Outcome
    p_pa: tuple[float, ...]
    t_k: tuple[float, ...]
    allowable_k: tuple[float, ...]
    worst_index: int | None
    margin_k: float
    message: str

    @property
    def least_margin_k(self) -> float | None:
        """The path's temperature less the allowable at the worst point [K]."""
        i = self.worst_index
        return None if i is None else self.t_k[i] - self.allowable_k[i]

    def to_dict(self) -> dict[str, Any]:
        return {"outcome": self.outcome.value, "p_pa": list(self.p_pa), "t_k": list(self.t_k),
                "allowable_k": list(self.allowable_k), "worst_index": self.worst_index, "margin_k": self.margin_k,
                "least_margin_k": self.least_margin_k, "message": self.message}


def screen_pressure_path(p_pa: Sequence[float], t_k: Sequence[float], spec: MaterialColdSpec, *,
                         p_atm_pa: float, margin_k: float = 0.0, converged: Sequence[bool] | None = None,
                         table: CurveTable | None = None) -> PathScreening:
    """Screen a (pressure, temperature) path against the material's allowable temperature at each pressure.

    A letdown gives one point per condition (outlet pressure, outlet temperature); a vessel
    depressurisation gives its time series (pressure and wall or fluid temperature at each moment).  The
    allowable temperature at each pressure comes from :meth:`MaterialColdSpec.limit_at` (the stress ratio
    falls with the pressure, so the code allows a colder metal at low pressure).

    Outcome (fail closed): not screened when any point did not converge, is not finite, or the material has
    no limit; fail when any point is colder than its allowable; margin eroded when any point is within
    ``margin_k``; pass otherwise.

    Parameters
    ----------
    p_pa, t_k : sequence of float
        Pressure [Pa abs] and temperature [K] along the path (same length, at least one point).
    spec : MaterialColdSpec
    p_atm_pa : float
        Atmospheric pressure [Pa] (stress from the gauge pressure).
    margin_k : float, optional
        Required margin above the allowable temperature [K].
    converged : sequence of bool, optional
        Per point: False marks a point whose calculation did not converge.
    table : CurveTable, optional

    Returns
    -------
    PathScreening
    """
    ps, ts = [float(p) for p in p_pa], [float(t) for t in t_k]
    if len(ps) != len(ts) or not ps:
        raise InputError("t_k", "the path needs one temperature for each pressure (at least one point)")
    if converged is not None and len(converged) != len(ps):
        raise InputError("converged", "give one converged flag for each point of the path")
    if not math.isfinite(margin_k) or margin_k < 0:
        raise InputError("margin_k", f"the margin must be finite and >= 0 K, got {margin_k!r}")
    allowable = tuple(float(a) for a in allowable_temperatures(spec, ps, p_atm_pa, table))

    def result(outcome: Outcome, worst: int | None, message: str) -> PathScreening:
        return PathScreening(outcome, tuple(ps), tuple(ts), allowable, worst, margin_k, message)

    bad = [i for i, (p, t) in enumerate(zip(ps, ts, strict=True)) if not (math.isfinite(p) and math.isfinite(t))
           or (converged is not None and not converged[i])]
    if bad:
        return result(Outcome.NOT_SCREENED, None, f"Not screened: {len(bad)} point(s) of the path did not converge "
                                                  f"or are not finite (first at index {bad[0]}).")
    if any(math.isnan(a) for a in allowable):
        return result(Outcome.NOT_SCREENED, None, "Not screened: the material has neither an exemption curve nor a "
                                                  "typed limit.")
    gaps = [t - a for t, a in zip(ts, allowable, strict=True)]
    worst = int(np.argmin(gaps))
    at = (f"at {marks.P(ps[worst])}: {marks.T(ts[worst])} against the allowable {marks.T(allowable[worst])}")
    if gaps[worst] < 0:
        return result(Outcome.FAIL, worst, f"The path crosses into the region the material does not allow, "
                                           f"{marks.DT(-gaps[worst])} below {at}.")
    if gaps[worst] < margin_k:
        return result(Outcome.MARGIN_ERODED, worst, f"Within the {marks.DT(margin_k, 2)} margin "
                                                    f"({marks.DT(gaps[worst])} above) {at}.")
    return result(Outcome.PASS, worst, f"{marks.DT(gaps[worst])} above the allowable at the closest point, {at}.")


def allowable_curve(spec: MaterialColdSpec, p_max_pa: float, p_atm_pa: float, table: CurveTable | None = None,
                    n: int = 41) -> dict[str, list[float]]:
    """The allowable temperature against pressure from atmospheric to ``p_max_pa``, for a P-T diagram.

    Returns ``{"p_pa": [...], "t_k": [...]}`` (pressures [Pa abs], allowable temperatures [K]).
    """
    hi = max(float(p_max_pa), p_atm_pa * 1.01)
    ps = np.linspace(p_atm_pa, hi, n)
    ts = allowable_temperatures(spec, ps, p_atm_pa, table)
    return {"p_pa": [float(p) for p in ps], "t_k": [float(t) for t in ts]}
