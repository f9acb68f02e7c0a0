"""The relief-valve case kind: a letdown whose set-pressure data add the relieving case.

With a set pressure, the relieving pressure is the set pressure plus the allowable overpressure (a
fraction of the set gauge pressure) plus the atmospheric pressure; the nozzle, the throat and the
downstream state after expansion to the back pressure are screened against the outlet piping's and the
flare header's limits (:func:`jtcheck.letdown.relief.relief_valve_case`).  Without a set pressure the
case is screened as a letdown.
"""
from __future__ import annotations

from collections.abc import Mapping
from typing import Any

from jtcheck.cases.fields import (
    BUILT_UP_RANGE_PA,
    LIMIT_TEMPERATURE_RANGE_K,
    OVERPRESSURE_RANGE,
    PRESSURE_RANGE_PA,
    Field,
)
from jtcheck.cases.letdown import LETDOWN_FIELDS, LetdownKind, letdown_options
from jtcheck.errors import InputError
from jtcheck.screening.screen import ReliefInputs, ScreeningOptions

#: The relief-valve inputs beyond the letdown's.
RELIEF_FIELDS: tuple[Field, ...] = (
    Field("set_pressure", "set_pressure_pa", "pressure", "relief valve set pressure", "Set pressure",
          PRESSURE_RANGE_PA, record_label="Relief valve set pressure"),
    Field("overpressure", "overpressure_fraction", "percent",
          "allowable overpressure (fraction of the set gauge pressure)", "Allowable overpressure",
          OVERPRESSURE_RANGE, message_unit="-"),
    Field("superimposed_back_pressure", "superimposed_back_pressure_pa", "pressure", "superimposed back pressure",
          "Superimposed back pressure", PRESSURE_RANGE_PA),
    Field("built_up_back_pressure", "built_up_back_pressure_pa", "pressure_difference", "built-up back pressure",
          "Built-up back pressure", BUILT_UP_RANGE_PA, message_unit="Pa (difference)"),
    Field("header_limit", "header_limit_k", "temperature", "flare header cold limit", "Flare header cold limit",
          LIMIT_TEMPERATURE_RANGE_K, record_label="Flare header temperature limit"),
)
_COMPANIONS = ("overpressure_fraction", "superimposed_back_pressure_pa", "built_up_back_pressure_pa",
               "header_limit_k")


def check_relief_group(values: Mapping[str, Any]) -> None:
    """The set pressure's companions (overpressure, back pressures, header limit) need the set pressure."""
    if values.get("set_pressure_pa") is None:
        given = [k for k in _COMPANIONS if values.get(k) is not None]
        if given:
            raise InputError(given[0], "relief-valve data need the set pressure (set_pressure_pa) as well")


def check_relief(values: Mapping[str, Any]) -> None:
    """Relief-valve fields: all-or-nothing for the set pressure and its companions; pressures consistent."""
    check_relief_group(values)
    p_set = values.get("set_pressure_pa")
    if p_set is None:
        return
    if values.get("overpressure_fraction") is None:
        raise InputError("overpressure_fraction", "the allowable overpressure is required with a set pressure "
                                                  "(fraction of the set gauge pressure, e.g. 0.10 for 10 %)")
    p_atm = values["p_atm_pa"]
    if p_set <= p_atm:
        raise InputError("set_pressure_pa", f"set pressure {p_set:g} Pa abs is not above the atmospheric pressure "
                                            f"{p_atm:g} Pa; allowed: above atmospheric")
    p_relieving = p_set + values["overpressure_fraction"] * (p_set - p_atm)
    p_super = values.get("superimposed_back_pressure_pa")
    p_super = p_atm if p_super is None else p_super
    built_up = values.get("built_up_back_pressure_pa")
    p_back = p_super + (built_up or 0.0)
    if p_back >= p_relieving:
        raise InputError("built_up_back_pressure_pa" if built_up else "superimposed_back_pressure_pa",
                         f"total back pressure {p_back:g} Pa abs is not below the relieving pressure "
                         f"{p_relieving:g} Pa abs; allowed: below the relieving pressure")


def relief_inputs(values: Mapping[str, Any]) -> ReliefInputs | None:
    """The relieving-case data of ``values`` (None without a set pressure)."""
    if values.get("set_pressure_pa") is None or values.get("overpressure_fraction") is None:
        return None
    p_atm = values["p_atm_pa"]
    return ReliefInputs(
        set_pressure_pa=values["set_pressure_pa"], overpressure_fraction=values["overpressure_fraction"],
        t_relieving_k=values["inlet_temperature_k"],
        superimposed_back_pressure_pa=values.get("superimposed_back_pressure_pa") or p_atm,
        built_up_back_pressure_pa=values.get("built_up_back_pressure_pa") or 0.0, p_atm_pa=p_atm,
        header_limit_k=values.get("header_limit_k"))


class ReliefValveKind(LetdownKind):
    """A relief valve: the letdown screening plus the relieving case into the outlet piping and flare header."""

    name = "relief_valve"
    label = "relief valve"
    cases_phrase = "relief-valve cases"
    devices = ("relief_valve",)
    fields = (*LETDOWN_FIELDS, *RELIEF_FIELDS)
    screening_sections = (*LetdownKind.screening_sections, "cases/kinds/relief_inputs.html")
    page_sections = ("cases/kinds/relief_result.html",)
    record_sections = ("kinds/relief_record.html",)
    #: Batch lists carry no set-pressure data yet, so a relief row is a letdown there and may be vectorised.
    vectorised = True

    def check(self, values: Mapping[str, Any]) -> None:
        super().check(values)
        check_relief(values)

    def check_group(self, values: Mapping[str, Any]) -> None:
        check_relief_group(values)

    def options(self, values: Mapping[str, Any], **switches: bool) -> ScreeningOptions:
        return letdown_options(values, relief=relief_inputs(values), **switches)


RELIEF_VALVE = ReliefValveKind()
