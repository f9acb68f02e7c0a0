"""Letdown lists screened kind by kind: which rows may take the vectorised path, and each row's scalar screening.

:func:`screen_rows` is :func:`jtcheck.screening.batch.screen_batch` with the case kinds deciding: a row
whose kind is not :attr:`~jtcheck.cases.kind.CaseKind.vectorised` goes to the scalar path, and the scalar
path screens a row with its kind's :meth:`~jtcheck.cases.kind.CaseKind.compute` (credible conditions, no
sweep and no answers, as the vectorised path).
"""
from __future__ import annotations

from collections.abc import Sequence
from typing import Any

from jtcheck.cases.registry import kind_of
from jtcheck.screening.batch import BatchCase, BatchScreening, ProgressFn, screen_batch
from jtcheck.screening.screen import Screening

#: The device of a row that names none.
DEFAULT_DEVICE = "control_valve"


def row_values(case: BatchCase) -> dict[str, Any]:
    """The register-style values (SI) of one list row."""
    lim = case.limits
    return {"inlet_pressure_pa": case.p_in_pa, "inlet_temperature_k": case.t_in_k, "outlet_pressure_pa": case.p_out_pa,
            "inlet_temperature_min_k": case.t_in_min_k, "inlet_pressure_max_pa": case.p_in_max_pa,
            "mdmt_k": lim.mdmt_k, "cold_limit_k": lim.user_limit_k, "margin_k": lim.margin_k,
            "mdmt_source": lim.mdmt_source, "water_saturated": case.water_saturated}


def _kind(case: BatchCase) -> Any:
    """The kind of a row; its device as the list spells it ("control valve" or "control_valve")."""
    return kind_of("_".join(case.kind.split()) or DEFAULT_DEVICE)


def row_screening(case: BatchCase, compare_models: bool) -> Screening:
    """The scalar screening of one row by its kind."""
    return _kind(case).compute(case.fluid, row_values(case), compare_models=compare_models, answers=False,
                               sweep=False)


def screen_rows(cases: Sequence[BatchCase], *, compare_models: bool = True,
                progress: ProgressFn | None = None) -> BatchScreening:
    """Screen a list's rows, each by its case kind (see the module text)."""
    return screen_batch(cases, compare_models=compare_models, progress=progress,
                        vectorised=lambda c: _kind(c).vectorised, scalar=row_screening)
