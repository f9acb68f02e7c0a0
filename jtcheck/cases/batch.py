"""Letdown-list rows screened by their case kind: whether a row may take the vectorised path, and its scalar
screening.

:func:`kind_hooks` gives a :class:`~jtcheck.screening.batch.BatchCase` its kind's
:attr:`~jtcheck.cases.kind.CaseKind.vectorised` flag and scalar screening (the kind's
:meth:`~jtcheck.cases.kind.CaseKind.compute` at the credible conditions, without sweep and answers, as the
vectorised path); :func:`jtcheck.screening.batch.screen_batch` then honours both.  The reader of letdown
lists (:mod:`jtcheck.batch.reader`) makes every row this way.
"""
from __future__ import annotations

import dataclasses
from collections.abc import Mapping
from typing import Any

from jtcheck.cases.kind import CaseKind
from jtcheck.cases.registry import kind_of
from jtcheck.screening.batch import BatchCase
from jtcheck.screening.screen import Screening

#: The device of a row that names none.
DEFAULT_DEVICE = "control_valve"


#: Row inputs that leave a row a plain letdown (the vectorised path needs none of them).
PLAIN_EXTRAS = frozenset({"p_atm_pa", "mass_flow_kg_per_s"})


def row_values(case: BatchCase) -> dict[str, Any]:
    """The register-style values (SI) of one list row."""
    lim = case.limits
    return {"inlet_pressure_pa": case.p_in_pa, "inlet_temperature_k": case.t_in_k, "outlet_pressure_pa": case.p_out_pa,
            "inlet_temperature_min_k": case.t_in_min_k, "inlet_pressure_max_pa": case.p_in_max_pa,
            "mdmt_k": lim.mdmt_k, "cold_limit_k": lim.user_limit_k, "margin_k": lim.margin_k,
            "mdmt_source": lim.mdmt_source, "water_saturated": case.water_saturated, "p_atm_pa": case.p_atm_pa,
            **case.extras}


def device_kind(device: str) -> CaseKind:
    """The kind of a device as a list spells it ("control valve", "control_valve"; empty: a control valve)."""
    return kind_of("_".join(device.split()) or DEFAULT_DEVICE)


def row_kind(case: BatchCase) -> CaseKind:
    """The kind of a row."""
    return device_kind(case.kind)


def row_screening(case: BatchCase, compare_models: bool) -> Screening:
    """The scalar screening of one row by its kind (credible conditions; no answers).

    A row with a minimum credible outlet pressure is swept over its operating ranges as the case register
    sweeps a case (the outlet range is screened by the sweep only, not by the credible conditions); other rows
    are screened at the corners of their inlet ranges (the credible conditions), as the vectorised path does.
    """
    values = row_values(case)
    return row_kind(case).compute(case.fluid, values, compare_models=compare_models, answers=False,
                                  sweep=values.get("outlet_pressure_min_pa") is not None)


def kind_hooks(device: str, extras: Mapping[str, Any] | None = None) -> dict[str, Any]:
    """The :class:`BatchCase` fields that make a row of ``device`` screen as its kind says: the kind's
    vectorised flag and its scalar screening (``BatchCase(..., **kind_hooks(device, extras))``).

    A row with inputs beyond a plain letdown (``extras``: a relieving case, generated credible cases other than
    start-up, which both paths add) takes the scalar path, where its kind computes them: the vectorised path
    screens plain letdowns (with their start-up conditions) only; a mass flow alone keeps a row plain.
    """
    plain = not any(v not in (None, [], {}) for k, v in (extras or {}).items() if k not in PLAIN_EXTRAS)
    return {"vectorised": device_kind(device).vectorised and plain, "screen": row_screening}


def with_kind(case: BatchCase) -> BatchCase:
    """``case`` screened as its kind says (:func:`kind_hooks`)."""
    return dataclasses.replace(case, **kind_hooks(case.kind, case.extras))
