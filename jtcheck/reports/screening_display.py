"""The screening of a stored result as people see it: one builder for the result page and the calculation record.

>>> stored = StoredResult.from_snapshot(snapshot["result"])                    # doctest: +SKIP
>>> units = DisplayUnits.entered(snapshot["case"]["display_units"], snapshot["case"]["p_atm_pa"])  # doctest: +SKIP
>>> view = screening_display(stored, units)                                   # doctest: +SKIP
>>> view.label, view.t_out_min                                                # doctest: +SKIP
('MARGIN ERODED', {'value': -27.4, 'unit': 'degC'})

:func:`screening_display` turns a stored result (its per-condition entries and its stored screening, SI) and
the units the case was entered in into a :class:`ScreeningDisplay`: the outcome word, its sentence, the
limits, each condition (SI, with its band and margins), the findings (hazards first) and the answers
(preheat, outlet-pressure limit, operating sweep, relief valve) as ``{"value", "unit"}`` pairs in the case's
units.  The web's result page (:func:`jtcheck.web.cases.results.screening_view`) and the PDF record
(:func:`jtcheck.reports.record.record_context`) both show it; :func:`key_numbers` gives the main numbers the
API returns as ``screening.display``.  Nothing is computed again: everything is read from what was stored.

Limits.  The governing cold limit is the warmer of the MDMT and the cold limit entered on the case; the
target is governing limit + required margin (:class:`jtcheck.screening.cold_metal.ColdLimits`).  A result
with a stored screening carries them; for a result stored before the screening existed they are worked
out the same way from the inputs stored with it.

Bands.  Each condition is judged on its screened outlet temperature (``t_screen_k``: the colder of PR and
SRK, corrected for CO2 solids; the case model's outlet for old results): fail below the governing limit,
margin eroded from the limit up to the target, pass at or above the target, not screened when it did not
converge or no limit is given.  Margins are differences of stored numbers: margin to the cold limit =
screened outlet - governing limit, margin to the MDMT = screened outlet - MDMT.

Outcome.  The outcome of a result is the stored screening's.  A result stored before the screening has no
outcome: it shows as "not screened" (fail closed).

Units.  A stored number the conversions cannot show in the case's unit (a unit word this version does not
know) is shown in SI (K, Pa) with that unit beside it, never silently in the wrong unit.
"""
from __future__ import annotations

from collections.abc import Callable, Mapping
from dataclasses import dataclass, field
from typing import Any

from jtcheck.errors import InputError
from jtcheck.reports.charts import SweepChartData, SweepLine
from jtcheck.reports.numbers import finite_or_none
from jtcheck.screening.cold_metal import ColdLimits
from jtcheck.screening.findings import Outcome
from jtcheck.units import (
    P_ATM_DEFAULT_PA,
    TextUnits,
    difference_label,
    pressure_from_pa,
    temperature_difference_from_k,
    temperature_from_k,
)

#: The outcomes of a screening, best first.
OUTCOMES: tuple[str, ...] = tuple(o.value for o in Outcome)
#: Outcome words for badges and the record (upper case).
OUTCOME_LABELS = {Outcome.PASS.value: "PASS", Outcome.MARGIN_ERODED.value: "MARGIN ERODED",
                  Outcome.FAIL.value: "FAIL", Outcome.NOT_SCREENED.value: "NOT SCREENED"}

#: Standing of one condition against the limits.
STANDING_PASS = "pass: at or above the cold limit plus the required margin"
STANDING_MARGIN_ERODED = "margin eroded: above the cold limit but inside the required margin"
STANDING_FAIL = "fail: colder than the cold limit"
NOT_SCREENED = "not screened: the calculation did not converge"
NO_LIMIT = "not screened: no cold limit or MDMT given"
#: The sentence of a result stored before the screening existed (the web page adds how to screen it).
LEGACY_NOTE = ("This result was stored before the hazard screening existed: it has no outcome, findings or "
               "answers and counts as not screened.")

_SEVERITY_ORDER = {"hazard": 0, "caution": 1, "information": 2}
_DIMENSIONS = {"p_in_pa": "Inlet pressure", "t_in_k": "Inlet temperature", "p_out_pa": "Outlet pressure"}
#: Pascal per unit of a pressure difference (gauge and absolute spellings mean the same for a difference).
_DIFFERENCE_PA = {"bar": 1.0e5, "bara": 1.0e5, "barg": 1.0e5, "kpa": 1.0e3, "kpaa": 1.0e3, "kpag": 1.0e3,
                  "mpa": 1.0e6, "mpaa": 1.0e6, "mpag": 1.0e6, "psi": 6894.757293168361, "psia": 6894.757293168361,
                  "psig": 6894.757293168361, "pa": 1.0, "mbar": 100.0}


_num = finite_or_none


def _q(value: float | None, unit: str) -> dict[str, Any]:
    return {"value": value, "unit": unit}


def _shown(convert: Callable[[float, str], float], si_value: Any, unit: str, si_unit: str) -> dict[str, Any]:
    """``{"value", "unit"}`` of a stored SI value converted to ``unit``; in ``si_unit`` if ``unit`` is unknown."""
    v = _num(si_value)
    try:
        return _q(None if v is None else convert(v, unit), unit)
    except InputError:
        return _q(v, si_unit)


# -- units -----------------------------------------------------------------------------------------------------
@dataclass(frozen=True)
class DisplayUnits:
    """The units a case was entered in, and the conversions of stored SI values to them.

    Lower-case methods give a number (None stays None): ``t`` [K -> temperature unit], ``dt`` [K -> difference
    unit], ``p_in``/``p_out``/``p`` [Pa abs -> pressure unit].
    Upper-case methods give ``{"value", "unit"}`` (value None where there is none): ``T``, ``DT``, ``P``,
    ``DP`` and ``dim`` (a sweep axis value).
    """

    temperature: str = "degC"
    inlet_pressure: str = "barg"
    outlet_pressure: str = "barg"
    p_atm_pa: float = P_ATM_DEFAULT_PA
    shown: Mapping[str, str] = field(default_factory=dict, compare=False)

    @classmethod
    def entered(cls, shown: Mapping[str, Any] | None, p_atm_pa: float | None = None) -> DisplayUnits:
        """The units of a case's ``display_units`` (field name -> unit typed), and the atmospheric pressure
        [Pa] its gauge pressures were converted with (default: the standard atmosphere)."""
        clean = {str(k): str(v) for k, v in (shown or {}).items() if v}
        inlet = clean.get("inlet_pressure") or "barg"
        return cls(temperature=clean.get("inlet_temperature") or "degC", inlet_pressure=inlet,
                   outlet_pressure=clean.get("outlet_pressure") or inlet,
                   p_atm_pa=float(p_atm_pa or P_ATM_DEFAULT_PA), shown=clean)

    @property
    def words(self) -> TextUnits:
        """The units of the quantities marked in sentences (:mod:`jtcheck.marks`): the case's, field by field."""
        return TextUnits(temperature=self.temperature, pressure=self.outlet_pressure, p_atm_pa=self.p_atm_pa,
                         fields=tuple(sorted(self.shown.items())))

    @property
    def difference(self) -> str:
        """The unit of temperature differences: degF for a case in degF, else K."""
        return "degF" if self.temperature.lower() in ("degf", "f") else "K"

    @property
    def difference_label(self) -> str:
        """How a temperature difference is labelled: K, or "delta degF" (a difference, not a reading)."""
        return difference_label(self.difference)

    def pressure_unit(self, name: str) -> str:
        """The unit the pressure field ``name`` was entered in (else the outlet's or the inlet's)."""
        return self.shown.get(name) or (self.outlet_pressure if name.startswith("outlet") else self.inlet_pressure)

    @property
    def dp_unit(self) -> str:
        """The unit pressure differences are shown in: the built-up back pressure's (default bar)."""
        return self.shown.get("built_up_back_pressure") or "bar"

    # numbers
    def t(self, k: float | None) -> float | None:
        return None if k is None else temperature_from_k(k, self.temperature)

    def dt(self, dk: float | None) -> float | None:
        return None if dk is None else temperature_difference_from_k(dk, self.difference)

    def p_in(self, pa: float | None) -> float | None:
        return None if pa is None else pressure_from_pa(pa, self.inlet_pressure, self.p_atm_pa)

    def p_out(self, pa: float | None) -> float | None:
        return None if pa is None else pressure_from_pa(pa, self.outlet_pressure, self.p_atm_pa)

    def p(self, pa: float | None, name: str) -> float | None:
        """Absolute pressure [Pa] in the unit of the pressure field ``name``."""
        return None if pa is None else pressure_from_pa(pa, self.pressure_unit(name), self.p_atm_pa)

    # {"value", "unit"}
    def T(self, k: Any, unit: str | None = None) -> dict[str, Any]:
        """A temperature [K] in ``unit`` (default: the case's temperature unit)."""
        return _shown(temperature_from_k, k, unit or self.temperature, "K")

    def DT(self, dk: Any, unit: str | None = None) -> dict[str, Any]:
        """A temperature difference [K] in ``unit`` (default: :attr:`difference`)."""
        return _shown(temperature_difference_from_k, dk, unit or self.difference, "K")

    def P(self, pa: Any, name: str = "inlet_pressure", unit: str | None = None) -> dict[str, Any]:
        """An absolute pressure [Pa] in ``unit`` (default: the unit of the pressure field ``name``)."""
        return _shown(lambda v, u: pressure_from_pa(v, u, self.p_atm_pa), pa, unit or self.pressure_unit(name), "Pa")

    def DP(self, dpa: Any, unit: str | None = None) -> dict[str, Any]:
        """A pressure difference [Pa] in ``unit`` (default: :attr:`dp_unit`)."""
        unit = unit or self.dp_unit
        v = _num(dpa)
        factor = _DIFFERENCE_PA.get(unit.lower())
        if factor is None:
            return _q(v, "Pa")
        return _q(None if v is None else v / factor, unit)

    def dim(self, dim: str, value: Any) -> dict[str, Any]:
        """A value of the sweep axis ``dim`` (``p_in_pa``, ``t_in_k`` or ``p_out_pa``)."""
        if dim == "t_in_k":
            return self.T(value)
        return self.P(value, "inlet_pressure" if dim == "p_in_pa" else "outlet_pressure")


# -- the stored result -------------------------------------------------------------------------------------------
@dataclass(frozen=True)
class StoredResult:
    """What the display is built from: a stored result's per-condition entries and screening (SI), its stored
    outcome, the EOS of the case model and the case values it was computed from."""

    conditions: tuple[Mapping[str, Any], ...]
    screening: Mapping[str, Any] | None
    outcome: str | None = None
    eos: str | None = None
    case_values: Mapping[str, Any] = field(default_factory=dict)

    @classmethod
    def from_model(cls, result: Any) -> StoredResult:
        """From a :class:`jtcheck.records.models.CaseResult`."""
        return cls._of(result.results, result.screening, result.outcome, result.eos, result.inputs)

    @classmethod
    def from_snapshot(cls, result: Mapping[str, Any]) -> StoredResult:
        """From the ``result`` of a record snapshot (:func:`jtcheck.records.snapshot.case_snapshot`)."""
        return cls._of(result.get("conditions"), result.get("screening"), result.get("outcome"), result.get("eos"),
                       result.get("inputs"))

    @classmethod
    def _of(cls, conditions: Any, screening: Any, outcome: Any, eos: Any, inputs: Any) -> StoredResult:
        values = (inputs or {}).get("case_values") if isinstance(inputs, Mapping) else None
        return cls(conditions=tuple(c for c in conditions or () if isinstance(c, Mapping)),
                   screening=screening if isinstance(screening, Mapping) else None,
                   outcome=None if outcome is None else str(outcome), eos=str(eos) if eos else None,
                   case_values=values if isinstance(values, Mapping) else {})


# -- limits, bands, conditions -----------------------------------------------------------------------------------
@dataclass(frozen=True)
class Limits:
    """The temperature limits a result was screened against [K].

    ``governing_k`` is the warmer of the MDMT and the entered cold limit; ``target_k`` = governing + the
    total margin; ``margin_k`` is the entered margin and ``margin_terms`` each term of the total
    (``{"term", "k", "basis"}``: the entered margin, the model spread when two models were compared).
    """

    mdmt_k: float | None
    mdmt_source: str
    user_limit_k: float | None
    margin_k: float
    governing_k: float | None
    target_k: float | None
    basis: str
    from_screening: bool = True
    total_margin_k: float | None = None
    margin_terms: tuple[Mapping[str, Any], ...] = ()
    #: the MDMT found from the material's exemption curve at the coincident pressure: its working
    #: (:func:`jtcheck.screening.cold_metal.material_limit_working`); None otherwise
    mdmt_working: Mapping[str, Any] | None = None

    @property
    def allowable_curve(self) -> tuple[tuple[float, ...], tuple[float, ...]] | None:
        """The allowable temperature against pressure ([Pa abs], [K]) drawn on the P-T diagram, if any."""
        curve = (self.mdmt_working or {}).get("allowable_curve")
        if not isinstance(curve, Mapping) or not curve.get("p_pa"):
            return None
        return tuple(float(p) for p in curve["p_pa"]), tuple(float(t) for t in curve["t_k"])

    def __post_init__(self) -> None:
        if self.total_margin_k is None:
            object.__setattr__(self, "total_margin_k", self.margin_k)
        if not self.margin_terms:   # a result stored before the terms: the entered margin was the whole margin
            object.__setattr__(self, "margin_terms", ({"term": "entered margin", "k": self.margin_k,
                                                       "basis": "the case's required margin"},))

    @property
    def cold_limit_k(self) -> float | None:
        """The governing cold limit [K] (the name the pages and the API used before the screening)."""
        return self.governing_k

    @property
    def cold_limit_basis(self) -> str:
        return self.basis


def limits_of(stored: StoredResult) -> Limits:
    """The limits of the stored screening, or (older results) the same rule applied to the stored inputs."""
    limits = (stored.screening or {}).get("limits")
    if isinstance(limits, Mapping):
        return Limits(mdmt_k=_num(limits.get("mdmt_k")), mdmt_source=str(limits.get("mdmt_source") or ""),
                      user_limit_k=_num(limits.get("user_limit_k")), margin_k=_num(limits.get("margin_k")) or 0.0,
                      governing_k=_num(limits.get("governing_k")), target_k=_num(limits.get("target_k")),
                      basis=str(limits.get("basis") or ""), total_margin_k=_num(limits.get("total_margin_k")),
                      margin_terms=tuple(t for t in limits.get("margin_terms") or () if isinstance(t, Mapping)),
                      mdmt_working=limits.get("mdmt_working") if isinstance(limits.get("mdmt_working"), Mapping)
                      else None)
    values = stored.case_values
    mdmt, user = _num(values.get("mdmt_k")), _num(values.get("cold_limit_k"))
    margin = _num(values.get("margin_k")) or 0.0
    source = str(values.get("mdmt_source") or "")
    try:
        cl = ColdLimits(mdmt_k=mdmt, user_limit_k=user, margin_k=margin, mdmt_source=source)
        governing, target, basis = cl.governing_k, cl.target_k, cl.basis
    except InputError:   # numbers outside today's ranges: the same rule, by hand
        given = [v for v in (mdmt, user) if v is not None]
        governing = max(given) if given else None
        target = None if governing is None else governing + margin
        basis = "warmer of the MDMT and the cold limit" if given else "no limit given"
    return Limits(mdmt_k=mdmt, mdmt_source=source, user_limit_k=user, margin_k=margin, governing_k=governing,
                  target_k=target, basis=basis, from_screening=False)


def band_of(t_k: float | None, limits: Limits, converged: bool = True) -> str:
    """The outcome band of one screened outlet temperature [K] (fail closed)."""
    if not converged or t_k is None or limits.governing_k is None:
        return Outcome.NOT_SCREENED.value
    if t_k < limits.governing_k:
        return Outcome.FAIL.value
    if t_k < (limits.target_k if limits.target_k is not None else limits.governing_k):
        return Outcome.MARGIN_ERODED.value
    return Outcome.PASS.value


def _standing(band: str, converged: bool) -> str:
    if not converged:
        return NOT_SCREENED
    return {Outcome.PASS.value: STANDING_PASS, Outcome.MARGIN_ERODED.value: STANDING_MARGIN_ERODED,
            Outcome.FAIL.value: STANDING_FAIL}.get(band, NO_LIMIT)


@dataclass(frozen=True)
class ConditionView:
    """One computed condition of a result, SI values [Pa, K], judged against the limits."""

    name: str
    converged: bool
    message: str
    p_in_pa: float | None
    t_in_k: float | None
    p_out_pa: float | None
    t_out_k: float | None
    dt_k: float | None
    inlet_phase: str
    phase: str
    inlet_vapor_fraction: float | None
    vapor_fraction: float | None
    warnings: tuple[str, ...] = field(default=())
    margin_to_cold_limit_k: float | None = None
    margin_to_mdmt_k: float | None = None
    standing: str = NO_LIMIT
    band: str = Outcome.NOT_SCREENED.value
    t_screen_k: float | None = None
    governing_model: str = ""
    t_out_by_model: Mapping[str, float | None] = field(default_factory=dict)
    solids: Mapping[str, Any] | None = None
    margin_to_target_k: float | None = None

    @property
    def drop_k(self) -> float | None:
        """Temperature drop across the letdown, inlet - outlet [K] (positive when the fluid cools)."""
        return None if self.dt_k is None else -self.dt_k

    @property
    def model_spread_k(self) -> float | None:
        """Warmest minus coldest outlet over the models [K] (None with fewer than two converged)."""
        temps = [t for t in self.t_out_by_model.values() if t is not None]
        return max(temps) - min(temps) if len(temps) >= 2 else None


def conditions_of(stored: StoredResult, limits: Limits | None = None) -> list[ConditionView]:
    """Each stored condition, judged against ``limits`` (default: :func:`limits_of` the result)."""
    limits = limits_of(stored) if limits is None else limits
    out = []
    for entry in stored.conditions:
        t_out = _num(entry.get("t_out")) if entry.get("converged") else None
        converged = t_out is not None
        if "t_screen_k" in entry:      # screened: the colder model, CO2 solids included
            t_screen = _num(entry.get("t_screen_k")) if converged else None
            converged = converged and t_screen is not None
        else:                          # stored before the screening: the case model's outlet
            t_screen = t_out
        by_model = {str(m): _num(t) for m, t in (entry.get("t_out_by_model") or {}).items()}
        if not by_model and stored.eos:
            by_model = {stored.eos: t_out}
        to_cold = None if t_screen is None or limits.governing_k is None else t_screen - limits.governing_k
        to_target = None if t_screen is None or limits.target_k is None else t_screen - limits.target_k
        to_mdmt = None if t_screen is None or limits.mdmt_k is None else t_screen - limits.mdmt_k
        band = band_of(t_screen, limits, converged)
        solids = entry.get("solids")
        out.append(ConditionView(
            name=str(entry.get("condition") or ""), converged=converged, message=str(entry.get("message") or ""),
            p_in_pa=_num(entry.get("p_in")), t_in_k=_num(entry.get("t_in")), p_out_pa=_num(entry.get("p_out")),
            t_out_k=t_out, dt_k=_num(entry.get("dt")) if t_out is not None else None,
            inlet_phase=str(entry.get("inlet_phase") or "unknown"), phase=str(entry.get("phase") or "unknown"),
            inlet_vapor_fraction=_num(entry.get("inlet_vapor_fraction")),
            vapor_fraction=_num(entry.get("vapor_fraction")) if t_out is not None else None,
            warnings=tuple(str(w) for w in entry.get("warnings") or ()), margin_to_cold_limit_k=to_cold,
            margin_to_mdmt_k=to_mdmt, standing=_standing(band, converged), band=band, t_screen_k=t_screen,
            governing_model=str(entry.get("governing_model") or ""), t_out_by_model=by_model,
            solids=solids if isinstance(solids, Mapping) else None, margin_to_target_k=to_target))
    return out


def outcome_of(stored: StoredResult) -> str:
    """The outcome of a stored result: the screening's; "not screened" for one stored before the screening."""
    if stored.screening is None:
        return Outcome.NOT_SCREENED.value
    for outcome in (stored.outcome, stored.screening.get("outcome")):
        if outcome in OUTCOMES:
            return str(outcome)
    return Outcome.NOT_SCREENED.value


def outcome_slug(outcome: str | None) -> str:
    """CSS-safe name of an outcome (``"margin eroded"`` -> ``"margin-eroded"``)."""
    return str(outcome or Outcome.NOT_SCREENED.value).replace(" ", "-")


# -- findings and answers ----------------------------------------------------------------------------------------
def findings_of(screening: Mapping[str, Any] | None) -> tuple[dict[str, Any], ...]:
    """The stored findings, hazards first (stable within a severity)."""
    out = []
    for f in (screening or {}).get("findings") or ():
        if not isinstance(f, Mapping):
            continue
        out.append({"severity": str(f.get("severity") or "information"), "topic": str(f.get("topic") or ""),
                    "message": str(f.get("message") or ""), "basis": str(f.get("basis") or ""),
                    "condition": str(f.get("condition") or ""), "numbers": dict(f.get("numbers") or {})})
    out.sort(key=lambda f: _SEVERITY_ORDER.get(f["severity"], 3))
    return tuple(out)


def _preheat_row(units: DisplayUnits, p: Mapping[str, Any]) -> dict[str, Any]:
    duty = _num(p.get("duty_w"))
    return {"condition": str(p.get("condition") or ""), "model": str(p.get("model") or ""),
            "converged": bool(p.get("converged")), "needed": bool(p.get("needed")),
            "t_in": units.T(p.get("t_in_k")), "t_in_required": units.T(p.get("t_in_required_k")),
            "rise": units.DT(p.get("temperature_rise_k")), "duty_kw": None if duty is None else duty / 1e3,
            "message": str(p.get("message") or "")}


def preheat_of(units: DisplayUnits, answer: Any) -> dict[str, Any] | None:
    """The required-preheat answer: its target, the governing case and one row per condition and model."""
    if not isinstance(answer, Mapping):
        return None
    rows = [_preheat_row(units, p) for p in answer.get("cases") or () if isinstance(p, Mapping)]
    gov = answer.get("governing")
    return {"target": units.T(answer.get("target_k")), "all_converged": bool(answer.get("all_converged")),
            "governing": _preheat_row(units, gov) if isinstance(gov, Mapping) else None, "rows": rows,
            "mass_flow_given": any(r["duty_kw"] is not None for r in rows)}


def _limit_row(units: DisplayUnits, o: Mapping[str, Any]) -> dict[str, Any]:
    return {"condition": str(o.get("condition") or ""), "model": str(o.get("model") or ""),
            "converged": bool(o.get("converged")), "limited": bool(o.get("limited")),
            "inlet_too_cold": bool(o.get("inlet_too_cold")),
            "p_out_min": units.P(o.get("p_out_min_pa"), "outlet_pressure"),
            "p_in": units.P(o.get("p_in_pa"), "inlet_pressure"), "t_in": units.T(o.get("t_in_k")),
            "t_out_at_floor": units.T(o.get("t_out_at_floor_k")), "message": str(o.get("message") or "")}


def outlet_limit_of(units: DisplayUnits, answer: Any) -> dict[str, Any] | None:
    """The outlet-pressure-limit answer: the governing (highest) limit, one row per condition and model, and
    the rows whose inlet is already too cold (``inlet_too_cold``; their conditions, sorted and once each, in
    ``inlet_too_cold_conditions``)."""
    if not isinstance(answer, Mapping):
        return None
    rows = [_limit_row(units, o) for o in answer.get("cases") or () if isinstance(o, Mapping)]
    gov = answer.get("governing")
    too_cold = [r for r in rows if r["inlet_too_cold"]]
    return {"target": units.T(answer.get("target_k")), "all_converged": bool(answer.get("all_converged")),
            "governing": _limit_row(units, gov) if isinstance(gov, Mapping) else None, "rows": rows,
            "inlet_too_cold": too_cold, "inlet_too_cold_conditions": sorted({r["condition"] for r in too_cold})}


def sweep_of(units: DisplayUnits, answer: Any, limits: Limits) -> dict[str, Any] | None:
    """The operating sweep: its worst point, where it lies, each model's coldest outlet, and the outlet
    temperature table of the governing model (each cell with its band)."""
    if not isinstance(answer, Mapping):
        return None
    worst = answer.get("worst") if isinstance(answer.get("worst"), Mapping) else None
    models = {str(m): d for m, d in (answer.get("models") or {}).items() if isinstance(d, Mapping)}
    gov_model = None
    if worst is not None:
        t_worst = _num(worst.get("t_out_k"))
        gov_model = next((m for m, d in models.items() if _num(d.get("worst_t_out_k")) == t_worst), None)
    per_model = [{"model": m, "converged": bool(d.get("converged", True)), "complete": bool(d.get("complete")),
                  "worst_t_out": units.T(d.get("worst_t_out_k")), "interior": bool(d.get("worst_is_interior")),
                  "interior_dimensions": [_DIMENSIONS.get(x, x).lower() for x in d.get("interior_dimensions") or ()],
                  "n_points": d.get("n_points"), "n_not_converged": d.get("n_not_converged"),
                  "n_skipped": d.get("n_skipped"), "message": str(d.get("message") or "")}
                 for m, d in models.items()]
    table = None
    source = models.get(gov_model or "") or next(iter(models.values()), None)
    raw = source.get("table") if source is not None else None
    if isinstance(raw, Mapping) and raw.get("row_values") and raw.get("column_values"):
        rdim, cdim = str(raw.get("row_dimension")), str(raw.get("column_dimension"))
        fdim = str(raw.get("fixed_dimension"))
        rows = []
        for value, temps in zip(raw.get("row_values") or (), raw.get("t_out_k") or (), strict=False):
            cells = []
            for t in temps:
                tk = _num(t)
                cells.append({"t_out": units.T(tk), "band": band_of(tk, limits, tk is not None)})
            rows.append({"axis": units.dim(rdim, value), "cells": cells})
        table = {"model": gov_model or "", "row_dimension": _DIMENSIONS.get(rdim, rdim),
                 "column_dimension": _DIMENSIONS.get(cdim, cdim),
                 "row_kind": "temperature" if rdim == "t_in_k" else "pressure",
                 "column_kind": "temperature" if cdim == "t_in_k" else "pressure",
                 "columns": [units.dim(cdim, v) for v in raw.get("column_values") or ()], "rows": rows,
                 "fixed_dimension": _DIMENSIONS.get(fdim, fdim), "fixed": units.dim(fdim, raw.get("fixed_value")),
                 "fixed_kind": "temperature" if fdim == "t_in_k" else "pressure"}
    gov = next((p for p in per_model if p["model"] == gov_model), None)
    ranges = answer.get("ranges") or {}
    return {"complete": bool(answer.get("complete")), "governing_model": gov_model or "",
            "worst": None if worst is None else {
                "t_out": units.T(worst.get("t_out_k")), "p_in": units.P(worst.get("p_in_pa"), "inlet_pressure"),
                "t_in": units.T(worst.get("t_in_k")), "p_out": units.P(worst.get("p_out_pa"), "outlet_pressure"),
                "band": band_of(_num(worst.get("t_out_k")), limits, True)},
            "interior": bool(gov and gov["interior"]), "interior_dimensions": gov["interior_dimensions"] if gov else [],
            "models": per_model, "table": table,
            "ranges": {"p_in": [units.P(v, "inlet_pressure") for v in ranges.get("p_in_pa") or ()],
                       "t_in": [units.T(v) for v in ranges.get("t_in_k") or ()],
                       "p_out": [units.P(v, "outlet_pressure") for v in ranges.get("p_out_pa") or ()]}}


def _relief_limit_row(units: DisplayUnits, r: Mapping[str, Any]) -> dict[str, Any]:
    return {"limit": str(r.get("limit") or ""), "where": str(r.get("where") or ""),
            "material": str(r.get("material") or ""), "p": units.P(r.get("p_pa"), "superimposed_back_pressure"),
            "t": units.T(r.get("t_k")), "limit_t": units.T(r.get("limit_k")), "margin": units.DT(r.get("margin_k")),
            "band": str(r.get("band") or Outcome.NOT_SCREENED.value), "t_relieving": units.T(r.get("t_relieving_k")),
            "model": str(r.get("model") or ""), "message": str(r.get("message") or "")}


def _header_section_row(units: DisplayUnits, s: Mapping[str, Any]) -> dict[str, Any]:
    return {"name": str(s.get("name") or ""), "material": str(s.get("material") or ""),
            "p_inlet": units.P(s.get("p_inlet_pa"), "superimposed_back_pressure"),
            "p_outlet": units.P(s.get("p_outlet_pa"), "superimposed_back_pressure"),
            "t_inlet": units.T(s.get("t_inlet_k")), "t_outlet": units.T(s.get("t_outlet_k")),
            "phase": str(s.get("phase") or ""), "liquid": bool(s.get("liquid_present")),
            "limit_t": units.T(s.get("limit_k")), "margin": units.DT(s.get("margin_k")),
            "band": str(s.get("band") or Outcome.NOT_SCREENED.value), "message": str(s.get("message") or "")}


def _relief_remedies(units: DisplayUnits, remedies: Any) -> dict[str, Any] | None:
    if not isinstance(remedies, Mapping):
        return None
    temp = remedies.get("min_relieving_temperature") if isinstance(remedies.get("min_relieving_temperature"),
                                                                   Mapping) else {}
    return {"found": bool(temp.get("found")), "already_met": bool(temp.get("already_met")),
            "t_relieving_min": units.T(temp.get("t_relieving_min_k")), "sentence": str(temp.get("sentence") or ""),
            "reason": str(temp.get("reason") or ""),
            "materials": [{"where": str(m.get("where") or ""), "mdmt_needed": units.T(m.get("mdmt_needed_k")),
                           "t_coldest": units.T(m.get("t_coldest_k")),
                           "current_limit": units.T(m.get("current_limit_k")),
                           "sentence": str(m.get("sentence") or "")}
                          for m in remedies.get("materials") or () if isinstance(m, Mapping)]}


def relief_of(units: DisplayUnits, answer: Any, remedies: Any = None) -> dict[str, Any] | None:
    """The relief-valve answer: each model's nozzle and downstream state, the governing (coldest) model's
    relieving, back-pressure, throat and downstream conditions, one row per limit (outlet piping, each flare
    header section: the worst over the relieving temperatures and models), the header's sections, and the
    remedies that fit a relief valve (``answers["relief_remedies"]``)."""
    if not isinstance(answer, Mapping):
        return None
    header = answer.get("header") if isinstance(answer.get("header"), Mapping) else None
    common: dict[str, Any] = {
        "limits": [_relief_limit_row(units, r) for r in answer.get("limits") or () if isinstance(r, Mapping)],
        "header_sections": [_header_section_row(units, s) for s in (header or {}).get("sections") or ()
                            if isinstance(s, Mapping)],
        "header_message": str((header or {}).get("message") or ""),
        "header_at_tip": bool(answer.get("header_at_tip")),
        "relieving_temperatures": [units.T(t) for t in answer.get("relieving_temperatures_k") or ()],
        "mass_flow_given": bool(answer.get("mass_flow_given")),
        "other_sources": [str(n) for n in answer.get("other_sources") or ()],
        "relief_outcome": str(answer.get("outcome") or ""), "remedies": _relief_remedies(units, remedies)}
    models = {str(m): d for m, d in (answer.get("models") or {}).items() if isinstance(d, Mapping)}
    per_model = []
    for m, d in models.items():
        nz = d.get("nozzle") if isinstance(d.get("nozzle"), Mapping) else {}
        per_model.append({"model": m, "converged": bool(d.get("converged")), "choked": nz.get("choked"),
                          "critical_pressure_ratio": _num(nz.get("critical_pressure_ratio")),
                          "ideal_critical_pressure_ratio": _num(nz.get("ideal_critical_pressure_ratio")),
                          "t_throat": units.T(d.get("t_throat_k")), "t_downstream": units.T(d.get("t_downstream_k")),
                          "message": str(d.get("message") or "")})
    gm = str(answer.get("governing_model") or "")
    d = models.get(gm) if gm else None
    out: dict[str, Any] = {"governing_model": gm, "models": per_model, "converged": d is not None, **common}
    if d is None:
        return out
    nz = d.get("nozzle") if isinstance(d.get("nozzle"), Mapping) else {}
    over = _num(d.get("overpressure_fraction"))
    basis = nz.get("basis")
    out.update({
        "p_set": units.P(d.get("set_pressure_pa"), "set_pressure"),
        "overpressure_percent": None if over is None else 100.0 * over,
        "p_relieving": units.P(d.get("p_relieving_pa"), "set_pressure"),
        "t_relieving": units.T(d.get("t_relieving_k")),
        "p_superimposed": units.P(d.get("superimposed_back_pressure_pa"), "superimposed_back_pressure"),
        "dp_built_up": units.DP(d.get("built_up_back_pressure_pa")),
        "p_back": units.P(d.get("p_back_pa"), "superimposed_back_pressure"),
        "choked": nz.get("choked"), "critical_pressure_ratio": _num(nz.get("critical_pressure_ratio")),
        "ideal_critical_pressure_ratio": _num(nz.get("ideal_critical_pressure_ratio")),
        "isentropic_exponent": _num(nz.get("isentropic_exponent")),
        "p_throat": units.P(nz.get("p_throat_pa"), "set_pressure"), "t_throat": units.T(d.get("t_throat_k")),
        "throat_phase": str(nz.get("throat_phase") or ""), "t_downstream": units.T(d.get("t_downstream_k")),
        "downstream_phase": str(d.get("downstream_phase") or ""),
        "outlet_limit": units.T(d.get("outlet_limit_k")), "outlet_margin": units.DT(d.get("outlet_margin_k")),
        "below_outlet_limit": bool(d.get("below_outlet_limit")),
        "header_limit": units.T(d.get("header_limit_k")), "header_margin": units.DT(d.get("header_margin_k")),
        "below_header_limit": bool(d.get("below_header_limit")),
        "method": str(basis.get("method") or "") if isinstance(basis, Mapping) else "",
        "message": str(d.get("message") or ""), "warnings": [str(w) for w in d.get("warnings") or ()]})
    return out


# -- the display -------------------------------------------------------------------------------------------------
@dataclass(frozen=True)
class ScreeningDisplay:
    """The screening of a stored result in the case's units: what the result page and the record show.

    ``limits`` and ``conditions`` are SI [K, Pa]; ``t_out_min``, ``findings`` and the answers hold
    ``{"value", "unit"}`` pairs in the case's units.  ``preheat``, ``outlet_limit``, ``sweep`` and ``relief``
    are None when the screening has no such answer.
    """

    outcome: str
    label: str
    sentence: str
    legacy: bool
    limits: Limits
    t_out_min: dict[str, Any]
    coldest_condition: str
    models: tuple[str, ...]
    conditions: tuple[ConditionView, ...]
    findings: tuple[dict[str, Any], ...]
    preheat: dict[str, Any] | None
    outlet_limit: dict[str, Any] | None
    sweep: dict[str, Any] | None
    relief: dict[str, Any] | None
    #: The preheat that keeps the outlet out of the hydrate region (same shape as ``preheat``), and which hazards
    #: the answers cover, in words.
    hydrate_preheat: dict[str, Any] | None = None
    remedies_cover: str = ""

    @property
    def slug(self) -> str:
        return outcome_slug(self.outcome)


def screening_display(stored: StoredResult, units: DisplayUnits) -> ScreeningDisplay:
    """Outcome, limits, conditions, findings and answers of a stored result, in ``units``.

    Parameters
    ----------
    stored : StoredResult
        The stored result (:meth:`StoredResult.from_model`, :meth:`StoredResult.from_snapshot`); SI values.
    units : DisplayUnits
        The units the case was entered in (:meth:`DisplayUnits.entered`).

    Returns
    -------
    ScreeningDisplay
        A result stored before the screening existed has ``legacy`` true, outcome "not screened", no
        findings and no answers; its coldest outlet is the coldest converged condition.
    """
    limits = limits_of(stored)
    conditions = tuple(conditions_of(stored, limits))
    screening = stored.screening
    outcome = outcome_of(stored)
    answers = (screening or {}).get("answers") or {}
    if screening is not None:
        t_min = _num(screening.get("t_out_min_k"))
        coldest = str(screening.get("coldest_condition") or "")
        models = tuple(str(m) for m in screening.get("models") or ())
        sentence = str(screening.get("outcome_sentence") or Outcome(outcome).sentence)
    else:
        done = [c for c in conditions if c.t_screen_k is not None]
        c_min = min(done, key=lambda c: c.t_screen_k) if done else None
        t_min, coldest = (None, "") if c_min is None else (c_min.t_screen_k, c_min.name)
        models = (stored.eos,) if stored.eos else ()
        sentence = LEGACY_NOTE
    return ScreeningDisplay(
        outcome=outcome, label=OUTCOME_LABELS[outcome], sentence=sentence, legacy=screening is None,
        limits=limits, t_out_min=units.T(t_min), coldest_condition=coldest, models=models, conditions=conditions,
        findings=findings_of(screening), preheat=preheat_of(units, answers.get("preheat")),
        outlet_limit=outlet_limit_of(units, answers.get("outlet_pressure_limit")),
        sweep=sweep_of(units, answers.get("sweep"), limits),
        relief=relief_of(units, answers.get("relief_valve"), answers.get("relief_remedies")),
        hydrate_preheat=preheat_of(units, answers.get("hydrate_preheat")),
        remedies_cover=str(answers.get("remedies_cover") or ""))


def _governing(answers: Mapping[str, Any], key: str) -> Mapping[str, Any]:
    part = answers.get(key)
    gov = part.get("governing") if isinstance(part, Mapping) else None
    return gov if isinstance(gov, Mapping) else {}


def key_numbers(screening: Mapping[str, Any], units: DisplayUnits) -> dict[str, Any]:
    """The main numbers of a stored screening (``Screening.to_dict()``, SI) in ``units``: the API's
    ``screening.display`` (keys: :data:`jtcheck.web.api.schemas.SCREENING_DISPLAY`), value None where there is
    none."""
    limits = screening.get("limits") if isinstance(screening.get("limits"), Mapping) else {}
    answers = screening.get("answers") if isinstance(screening.get("answers"), Mapping) else {}
    preheat = _governing(answers, "preheat")
    pressure = _governing(answers, "outlet_pressure_limit")
    sweep = answers.get("sweep") if isinstance(answers.get("sweep"), Mapping) else {}
    worst = sweep.get("worst") if isinstance(sweep.get("worst"), Mapping) else None
    relief = answers.get("relief_valve") if isinstance(answers.get("relief_valve"), Mapping) else {}
    relief_models = relief.get("models") if isinstance(relief.get("models"), Mapping) else {}
    relief_gov = relief_models.get(str(relief.get("governing_model") or "")) or {}
    duty = _num(preheat.get("duty_w"))
    return {
        "t_out_min": units.T(screening.get("t_out_min_k")), "governing_limit": units.T(limits.get("governing_k")),
        "target": units.T(limits.get("target_k")), "margin": units.DT(_num(limits.get("margin_k")) or 0.0),
        "mdmt": units.T(limits.get("mdmt_k")),
        "preheat_t_in_required": units.T(preheat.get("t_in_required_k")),
        "preheat_temperature_rise": units.DT(preheat.get("temperature_rise_k")),
        "preheat_duty": _q(None if duty is None else duty / 1e3, "kW"),
        "outlet_pressure_limit": units.P(pressure.get("p_out_min_pa"), "outlet_pressure"),
        "sweep_worst": None if worst is None else {
            "t_out": units.T(worst.get("t_out_k")), "p_in": units.P(worst.get("p_in_pa"), "inlet_pressure"),
            "t_in": units.T(worst.get("t_in_k")), "p_out": units.P(worst.get("p_out_pa"), "outlet_pressure")},
        "relief_t_downstream": units.T(relief_gov.get("t_downstream_k") if isinstance(relief_gov, Mapping) else None),
    }


# -- drawings ----------------------------------------------------------------------------------------------------
def sweep_chart_data(display: ScreeningDisplay, units: DisplayUnits) -> SweepChartData | None:
    """The sweep chart of a display (one line per table row; the cold limit and the target as lines), or None
    when it has no sweep table to draw."""
    table = (display.sweep or {}).get("table")
    if not table or not table["rows"] or not table["columns"]:
        return None
    lines = []
    for row in table["rows"]:
        axis = row["axis"]
        label = (f"{table['row_dimension'].lower()} {axis['value']:.4g} {axis['unit']}"
                 if axis["value"] is not None else None)
        lines.append(SweepLine(label, tuple(c["t_out"]["value"] for c in row["cells"])))
    fixed = table["fixed"]
    title = (f"{table['fixed_dimension']} {fixed['value']:.4g} {fixed['unit']} ({table['model'] or 'model'})"
             if fixed["value"] is not None else None)
    return SweepChartData(
        x=tuple(c["value"] for c in table["columns"]),
        x_label=f"{table['column_dimension']} [{table['columns'][0]['unit']}]",
        y_label=f"Outlet temperature [{units.temperature}]", lines=tuple(lines),
        governing=units.T(display.limits.governing_k)["value"], target=units.T(display.limits.target_k)["value"],
        title=title)


__all__ = ["ConditionView", "DisplayUnits", "Limits", "LEGACY_NOTE", "OUTCOMES", "OUTCOME_LABELS", "ScreeningDisplay",
           "StoredResult", "band_of", "conditions_of", "findings_of", "key_numbers", "limits_of",
           "outcome_of", "outcome_slug", "screening_display", "sweep_chart_data"]

