"""Cold metal: the coldest credible outlet temperature against the downstream steel's limits.

The cold limit that governs is the warmer of the two limits a case can carry: the minimum design
metal temperature (MDMT) of the downstream material and a cold limit the user enters (for example a
company rule, or a lower limit justified by ASME B31.3 para. 323.2.2 or ASME BPVC VIII Div. 1
UCS-66.1 stress-ratio relief: the user then enters that limit as the MDMT).  The outcome:

* fail            coldest outlet < governing limit
* margin eroded   governing limit <= coldest outlet < governing limit + total margin
* pass            coldest outlet >= governing limit + total margin
* not screened    any credible condition did not converge, or no limit was given

The total margin is the sum of its terms (:attr:`ColdLimits.margin_terms`): the margin entered for the
case (or the site's default, which a case without its own takes) and, when PR and SRK both converged,
the model spread |PR - SRK| of the outlet at the condition that governs.  The screened outlet is already
the colder model; the spread is added on top as the model uncertainty the margin must also cover
(issue 12: "the model spread ... added").

Fail closed: a missing number never screens as pass.
"""
from __future__ import annotations

import math
from collections.abc import Sequence
from dataclasses import dataclass
from typing import Any

from jtcheck.errors import InputError
from jtcheck.marks import DT, T
from jtcheck.screening.findings import Finding, Outcome, Severity, Topic
from jtcheck.screening.mdmt import CurveTable, MaterialColdSpec, allowable_curve

#: Allowed margin [K].
MARGIN_RANGE_K = (0.0, 100.0)
#: Allowed limits [K] (about -273 to +200 degC).
LIMIT_RANGE_K = (0.0, 473.15)


def _check_limit(name: str, value: float | None) -> float | None:
    if value is None:
        return None
    v = float(value)
    lo, hi = LIMIT_RANGE_K
    if not math.isfinite(v) or not lo < v <= hi:
        raise InputError(name, f"a temperature limit must lie above {lo:g} K and at most {hi:g} K, got {value!r}")
    return v


@dataclass(frozen=True)
class ColdLimits:
    """The temperature limits a case is screened against [K].

    Attributes
    ----------
    mdmt_k : float or None
        Minimum design metal temperature of the downstream material [K].
    user_limit_k : float or None
        A cold limit entered by the user [K].
    margin_k : float
        Required margin above the governing limit as entered (or the site's default) [K].
    mdmt_source : str
        Where the MDMT came from ("entered", "material: ...").
    model_spread_k : float
        |PR - SRK| outlet difference at the condition that governs [K]; 0 with a single model.  Set by
        the screening (:func:`jtcheck.screening.screen.screen_letdown`), not entered.
    spread_condition : str
        The condition at which the spread was taken ("" when there is no spread term).
    margin_source : str
        Where the margin came from when it is not the case's own ("site default of <site>: <reason>"); "" for
        a margin entered with the case.
    mdmt_working : dict or None
        When the MDMT was found from the material's exemption curve at the coincident pressure: the
        coincident pressure [Pa], the stress ratio, the working of :func:`jtcheck.screening.mdmt.material_mdmt`
        and the allowable temperature against pressure for the P-T diagram (:func:`material_limit_working`).
    """

    mdmt_k: float | None = None
    user_limit_k: float | None = None
    margin_k: float = 0.0
    mdmt_source: str = ""
    model_spread_k: float = 0.0
    spread_condition: str = ""
    margin_source: str = ""
    mdmt_working: dict[str, Any] | None = None

    def __post_init__(self) -> None:
        object.__setattr__(self, "mdmt_k", _check_limit("mdmt", self.mdmt_k))
        object.__setattr__(self, "user_limit_k", _check_limit("limit", self.user_limit_k))
        m = float(self.margin_k)
        lo, hi = MARGIN_RANGE_K
        if not math.isfinite(m) or not lo <= m <= hi:
            raise InputError("margin", f"the margin must lie between {lo:g} and {hi:g} K, got {self.margin_k!r}")
        object.__setattr__(self, "margin_k", m)
        d = float(self.model_spread_k)
        if not math.isfinite(d) or d < 0.0:
            raise InputError("model_spread", f"the model spread must be a finite difference >= 0 K, got "
                                             f"{self.model_spread_k!r}")
        object.__setattr__(self, "model_spread_k", d)

    @property
    def total_margin_k(self) -> float:
        """The margin the bands and the answers use: entered margin + model spread [K]."""
        return self.margin_k + self.model_spread_k

    @property
    def margin_terms(self) -> list[dict]:
        """Each term of the total margin: ``{"term", "k", "basis"}``; the entered margin always, the
        model spread when the screening compared two models (even when it is 0 K)."""
        if self.margin_source:
            terms = [{"term": "site default margin", "k": self.margin_k, "basis": self.margin_source}]
        else:
            terms = [{"term": "entered margin", "k": self.margin_k, "basis": "the case's required margin"}]
        if self.spread_condition:
            terms.append({"term": f"model spread (PR vs SRK at {self.spread_condition})", "k": self.model_spread_k,
                          "basis": "|PR - SRK| outlet temperature at the condition that governs; the colder "
                                   "model is screened and the difference is added as model uncertainty"})
        return terms

    @property
    def governing_k(self) -> float | None:
        """The warmer of the MDMT and the user's limit [K]; None when neither is given."""
        given = [v for v in (self.mdmt_k, self.user_limit_k) if v is not None]
        return max(given) if given else None

    @property
    def target_k(self) -> float | None:
        """Governing limit plus the total margin: the outlet temperature an answer (preheat, pressure limit)
        aims at [K]."""
        g = self.governing_k
        return None if g is None else g + self.total_margin_k

    @property
    def basis(self) -> str:
        """Which limit governs, in words."""
        if self.mdmt_k is None and self.user_limit_k is None:
            return "no limit given: neither an MDMT nor a cold limit"
        if self.user_limit_k is None:
            return "MDMT" + (f" ({self.mdmt_source})" if self.mdmt_source else "")
        if self.mdmt_k is None:
            return "cold limit entered by the user"
        if self.user_limit_k >= self.mdmt_k:
            return "cold limit entered by the user (warmer than the MDMT)"
        return "MDMT" + (f" ({self.mdmt_source})" if self.mdmt_source else "") + " (warmer than the user's limit)"

    def to_dict(self) -> dict:
        return {"mdmt_k": self.mdmt_k, "mdmt_source": self.mdmt_source, "user_limit_k": self.user_limit_k,
                "margin_k": self.margin_k, "margin_source": self.margin_source, "model_spread_k": self.model_spread_k,
                "spread_condition": self.spread_condition, "total_margin_k": self.total_margin_k,
                "margin_terms": self.margin_terms, "governing_k": self.governing_k, "target_k": self.target_k,
                "basis": self.basis, "mdmt_working": self.mdmt_working}


def margin_terms_text(limits: ColdLimits) -> str:
    """The total margin and its terms in one phrase: "6.59 K (entered margin 5 K + model spread ... 1.59 K)"."""
    terms = " + ".join(f"{t['term']} {DT(t['k'], 2)}" for t in limits.margin_terms)
    return f"{DT(limits.total_margin_k, 2)} ({terms})"


def classify(t_out_min_k: float | None, limits: ColdLimits, all_converged: bool = True) -> Outcome:
    """The outcome for the coldest credible outlet temperature [K] (see the module text)."""
    limit = limits.governing_k
    if not all_converged or t_out_min_k is None or limit is None or not math.isfinite(t_out_min_k):
        return Outcome.NOT_SCREENED
    if t_out_min_k < limit:
        return Outcome.FAIL
    if t_out_min_k < limit + limits.total_margin_k:
        return Outcome.MARGIN_ERODED
    return Outcome.PASS


def _c(t_k: float) -> str:
    return f"{T(t_k)}"


def screen_cold_metal(t_outs_k: Sequence[tuple[str, float | None]], limits: ColdLimits) -> tuple[Outcome, Finding]:
    """Outcome and finding for the outlet temperatures of a case's credible conditions.

    Parameters
    ----------
    t_outs_k : sequence of (condition name, outlet temperature [K] or None)
        None marks a condition that did not converge.
    limits : ColdLimits

    Returns
    -------
    (Outcome, Finding)
    """
    failed = [name for name, t in t_outs_k if t is None or not math.isfinite(t)]
    done = [(name, float(t)) for name, t in t_outs_k if t is not None and math.isfinite(t)]
    coldest_name, coldest = min(done, key=lambda nt: nt[1]) if done else ("", None)
    outcome = classify(coldest, limits, all_converged=not failed and bool(done))
    limit = limits.governing_k
    numbers = {"t_out_min_k": coldest, "governing_limit_k": limit, "margin_k": limits.margin_k,
               "model_spread_k": limits.model_spread_k, "total_margin_k": limits.total_margin_k,
               "mdmt_k": limits.mdmt_k, "user_limit_k": limits.user_limit_k,
               "margin_to_limit_k": None if coldest is None or limit is None else coldest - limit}
    basis = (f"governing limit: {limits.basis}; total margin {margin_terms_text(limits)}; outcome bands: fail "
             f"below the limit, margin eroded within {DT(limits.total_margin_k, 2)} above it, pass at or above "
             "limit + total margin")
    if outcome is Outcome.NOT_SCREENED:
        if failed:
            msg = f"Not screened: the calculation did not converge for {', '.join(failed)}."
        elif limit is None:
            msg = "Not screened: no MDMT and no cold limit are given."
        else:
            msg = "Not screened: no outlet temperature was computed."
        return outcome, Finding(Topic.COLD_METAL, Severity.HAZARD, msg, numbers, basis, coldest_name)
    assert coldest is not None and limit is not None
    text = f"coldest outlet {_c(coldest)} ({coldest_name}) against the cold limit {_c(limit)}"
    if outcome is Outcome.FAIL:
        return outcome, Finding(Topic.COLD_METAL, Severity.HAZARD,
                                f"Below the cold limit by {DT(limit - coldest, 1)}: {text}.", numbers, basis,
                                coldest_name)
    if outcome is Outcome.MARGIN_ERODED:
        return outcome, Finding(Topic.COLD_METAL, Severity.CAUTION,
                                f"Inside the {margin_terms_text(limits)} margin ({DT(coldest - limit, 1)} above "
                                f"the limit): {text}.", numbers, basis, coldest_name)
    return outcome, Finding(Topic.COLD_METAL, Severity.INFORMATION,
                            f"{DT(coldest - limit, 1)} above the cold limit: {text}.", numbers, basis, coldest_name)


def material_limit_working(spec: MaterialColdSpec, p_coincident_pa: float, p_atm_pa: float, p_max_pa: float,
                           table: CurveTable | None = None, coincident: str = "") -> tuple[float | None, str,
                                                                                              dict[str, Any]]:
    """The material's cold limit at the coincident pressure [K], where it came from, and its working.

    Parameters
    ----------
    spec : MaterialColdSpec
    p_coincident_pa : float
        The pressure the metal sees when it is cold [Pa abs] (a letdown: its outlet pressure).
    p_atm_pa : float
        Atmospheric pressure [Pa].
    p_max_pa : float
        Top of the allowable-temperature curve drawn on the P-T diagram [Pa abs].
    table : CurveTable, optional
    coincident : str
        Words for the coincident pressure ("the normal outlet pressure ...").

    Returns
    -------
    (limit [K] or None, basis text, working dict)
    """
    lim = spec.limit_at(p_coincident_pa, p_atm_pa, table)
    working = {**lim.to_dict(), "material": spec.name, "p_coincident_pa": p_coincident_pa,
               "coincident": coincident, "spec": spec.to_dict(),
               "allowable_curve": allowable_curve(spec, p_max_pa, p_atm_pa, table)}
    return lim.limit_k, lim.basis, working
