"""A stored :class:`~jtcheck.records.models.CaseResult` as the pages show it, in the units the case was entered in.

The display itself is built once, for the pages and the calculation record alike, by
:mod:`jtcheck.reports.screening_display` (its docstring states the rules for limits, bands and the outcome);
this module only hands it a stored result and the units of the inputs stored with it.  Nothing is computed
again.
"""
from __future__ import annotations

from typing import Any

from jtcheck.records.models import CaseResult
from jtcheck.reports.screening_display import (
    OUTCOMES,
    ConditionView,
    DisplayUnits,
    Limits,
    ScreeningDisplay,
    StoredResult,
    screening_display,
)
from jtcheck.reports.screening_display import conditions_of as _conditions_of
from jtcheck.reports.screening_display import limits_of as _limits_of
from jtcheck.reports.screening_display import outcome_of as _outcome_of

#: The word for the outcome of a case never computed (next to :data:`OUTCOMES`, best first).
NOT_COMPUTED = "not computed"

__all__ = ["NOT_COMPUTED", "OUTCOMES", "basis_of", "conditions_of", "limits_of", "outcome_of", "screening_view",
           "units_of"]


def units_of(result: CaseResult) -> DisplayUnits:
    """The units the case was entered in when ``result`` was computed (its stored ``display_units``)."""
    values = (result.inputs or {}).get("case_values") or {}
    return DisplayUnits.entered(values.get("display_units"), values.get("p_atm_pa"))


def limits_of(result: CaseResult) -> Limits:
    """The temperature limits ``result`` was screened against [K]."""
    return _limits_of(StoredResult.from_model(result))


def conditions_of(result: CaseResult) -> list[ConditionView]:
    """Each computed condition of ``result`` (SI), judged against its limits."""
    return _conditions_of(StoredResult.from_model(result))


def screening_view(result: CaseResult) -> ScreeningDisplay:
    """Outcome, findings and answers of a stored result, in the case's units, for the result page."""
    return screening_display(StoredResult.from_model(result), units_of(result))


def outcome_of(result: CaseResult | None) -> str:
    """The outcome of a stored result: the screening's; "not screened" for one stored before the screening;
    :data:`NOT_COMPUTED` without a result."""
    return NOT_COMPUTED if result is None else _outcome_of(StoredResult.from_model(result))


def basis_of(result: CaseResult) -> dict[str, Any]:
    """The model basis of a result: EOS, kij set, data and software versions."""
    stored = (result.inputs or {}).get("basis") or {}
    return {"eos": result.eos, "eos_name": stored.get("eos_name"), "eos_reference": stored.get("eos_reference"),
            "eos_version": stored.get("eos_version"), "eos_range": stored.get("eos_range"),
            "kij_basis": result.kij_basis, "kij_defaulted_pairs": stored.get("kij_defaulted_pairs") or [],
            "volume_translation": stored.get("volume_translation"),
            "component_data_version": result.component_data_version, "kij_data_version": result.kij_data_version,
            "software_version": result.software_version}
