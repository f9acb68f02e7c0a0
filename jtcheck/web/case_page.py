"""The case page: the case's inputs, a stored result (the latest unless one is asked for) with its screening and
drawings, and the "Review and records" section of its calculation records.

Both the cases views (:mod:`jtcheck.web.cases.views`) and the review steps (:mod:`jtcheck.web.records.views`,
which show the page again with a refused step in its section) render it; it is the one module both use, so
that neither imports the other.
"""
from __future__ import annotations

from typing import Any

from flask import current_app, render_template

from jtcheck import depressuring_lists
from jtcheck.notices import CAUTION, DEMO_NOTICE
from jtcheck.records import service
from jtcheck.records.case_inputs import field_value
from jtcheck.records.demo_labels import in_demo_site, site_label
from jtcheck.records.demo_labels import is_demo_case as _is_demo_case
from jtcheck.records.models import Case, CaseResult
from jtcheck.reports.depressuring import depressuring_view, draw_depressuring_chart
from jtcheck.web import removal
from jtcheck.web.cases.diagram import DiagramCache
from jtcheck.web.cases.results import basis_of, outcome_of, screening_view, units_of
from jtcheck.web.forms import FormState
from jtcheck.web.quantities import CASE_QUANTITIES, display_unit, p_atm_unit_for, to_display
from jtcheck.web.records.review import review_context
from jtcheck.web.security import current_user


def _diagrams() -> DiagramCache:
    return current_app.extensions["jtcheck_diagrams"]


def _result_context(case: Case, result: CaseResult | None) -> dict[str, Any]:
    if result is None:
        return {"result": None}
    screening = screening_view(result)
    units = units_of(result)
    depressuring = depressuring_view(result.screening, units)
    chart = None if depressuring is None else draw_depressuring_chart(
        result.screening, units, limit_k=screening.limits.governing_k, target_k=screening.limits.target_k)
    return {"result": result, "depressuring": depressuring, "depressuring_chart": chart,
            "conditions": screening.conditions, "limits": screening.limits,
            "units": units, "basis": basis_of(result), "current": service.result_is_current(case, result),
            # a run in time draws its curves, not a letdown path on the P-T diagram
            "screening": screening, "diagram": None if depressuring is not None else _diagrams().get(result),
            "sweep_chart": _diagrams().get(result, "sweep") if screening.sweep else None}


def is_demo_case(case: Case) -> bool:
    """A case of the invented demo data (loaded by :func:`jtcheck.records.demo.load_demo`), not a user's own case
    filed in a demo unit: only those are labelled invented."""
    return _is_demo_case(case)


def _case_context(case: Case, review_form: FormState | None = None, review_step: str | None = None
                  ) -> dict[str, Any]:
    shown = dict(case.display_units or {})
    inputs = []
    for q in CASE_QUANTITIES:
        value = field_value(case, q.key)
        if value is None:
            continue
        unit = display_unit(q, shown)
        inputs.append((q, to_display(q, value, unit, case.p_atm_pa), unit, value))
    # a depressuring case's vessel, orifices, heat input and run, as the form writes them
    words = {"vessel": "Vessel", "orifices": "Orifices", "heat_input": "Heat input", "run": "Run and target"}
    kind_inputs = [(words[name], depressuring_lists.text_of(name, value, shown.get("inlet_pressure") or "barg",
                                                            shown.get("inlet_temperature") or "degC", case.p_atm_pa))
                   for name, value in (case.parameters or {}).items() if name in words and value]
    user = current_user()
    review = review_context(case, user, review_form, review_step)
    return {"case": case, "inputs": inputs, "kind_inputs": kind_inputs, "p_atm_unit": p_atm_unit_for(shown),
            "review": review,
            "can_edit": service.can_edit_cases(user) and not review["frozen"],
            "can_delete": removal.may_delete_case(user, case),
            "demo": is_demo_case(case), "demo_notice": DEMO_NOTICE, "caution": CAUTION,
            "in_demo_site": in_demo_site(case), "site_label": site_label(case),
            "result_outcome": outcome_of}


def render_case_page(case: Case, result: CaseResult | None = None, *, status: int = 200,
                     review_form: FormState | None = None, review_step: str | None = None):
    """The case page with ``result`` (default: the latest), and a refused review step shown in its section."""
    shown = result if result is not None else case.latest_result
    return render_template("cases/view.html", **_case_context(case, review_form, review_step),
                           **_result_context(case, shown), results=list(reversed(case.results))), status
