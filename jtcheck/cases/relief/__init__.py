"""The relief-valve case kind: a letdown whose set-pressure data add the relieving case.

With a set pressure, the relieving pressure is the set pressure plus the allowable overpressure (a
fraction of the set gauge pressure) plus the atmospheric pressure; the nozzle, the throat and the
downstream state after expansion to the back pressure are screened against the outlet piping's and the
flare header's limits (:func:`jtcheck.letdown.relief.relief_valve_case`).  Without a set pressure the
case is screened as a letdown.
"""
from __future__ import annotations

import math
from collections.abc import Mapping
from typing import Any

from jtcheck import marks
from jtcheck.cases.fields import (
    BUILT_UP_RANGE_PA,
    INLET_TEMPERATURE_RANGE_K,
    LIMIT_TEMPERATURE_RANGE_K,
    MASS_FLOW_RANGE_KG_PER_S,
    OVERPRESSURE_RANGE,
    PRESSURE_RANGE_PA,
    Field,
    named_entries,
)
from jtcheck.cases.letdown import LETDOWN_FIELDS, LetdownKind, letdown_options
from jtcheck.errors import InputError
from jtcheck.letdown.flare_header import PRESSURE_TOLERANCE_PA
from jtcheck.screening.screen import HeaderSpec, OtherSource, ReliefInputs, Screening, ScreeningOptions
from jtcheck.thermo.fluid import Fluid

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
    Field("relieving_temperature_min", "relieving_temperature_min_k", "temperature",
          "minimum credible relieving temperature", "Minimum credible relieving temperature",
          INLET_TEMPERATURE_RANGE_K, record_label="Minimum credible relieving temperature"),
)
_COMPANIONS = ("overpressure_fraction", "superimposed_back_pressure_pa", "built_up_back_pressure_pa",
               "header_limit_k", "relieving_temperature_min_k")
#: Keys of one header section and of one other relieving source in ``values``.
HEADER_SECTION_KEYS = ("name", "p_pa", "limit_k", "material")
OTHER_SOURCE_KEYS = ("name", "fluid", "composition", "mass_flow_kg_per_s", "p_pa", "t_k")


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
        raise InputError("set_pressure_pa", f"set pressure {marks.P(p_set, 'set_pressure', 6)} is not above the "
                                            f"atmospheric pressure {marks.P(p_atm, 'set_pressure', 6)}; allowed: above "
                                            "atmospheric")
    p_relieving = p_set + values["overpressure_fraction"] * (p_set - p_atm)
    p_super = values.get("superimposed_back_pressure_pa")
    p_super = p_atm if p_super is None else p_super
    built_up = values.get("built_up_back_pressure_pa")
    p_back = p_super + (built_up or 0.0)
    if p_back >= p_relieving:
        raise InputError("built_up_back_pressure_pa" if built_up else "superimposed_back_pressure_pa",
                         f"total back pressure {marks.P(p_back, 'outlet_pressure', 6)} is not below the relieving "
                         f"pressure {marks.P(p_relieving, 'set_pressure', 6)}; allowed: below the relieving pressure")
    t_min = values.get("relieving_temperature_min_k")
    if t_min is not None and t_min > values["inlet_temperature_k"]:
        raise InputError("relieving_temperature_min_k",
                         f"minimum credible relieving temperature {marks.T(t_min, 'relieving_temperature_min', 6)} "
                         f"is above the normal relieving (inlet) temperature "
                         f"{marks.T(values['inlet_temperature_k'], 'inlet_temperature', 6)}; allowed: <= the inlet "
                         "temperature")
    _check_sections(values.get("header_sections"), p_relieving, p_back)
    _check_sources(values.get("other_sources"), p_back)


def _number(key: str, value: Any, what: str, unit: str, lo: float, hi: float) -> float:
    if isinstance(value, bool) or not isinstance(value, (int, float)) or not math.isfinite(value):
        raise InputError(key, f"{what} must be a finite number [{unit}], got {value!r}")
    if not lo < value <= hi:
        raise InputError(key, f"{what} {value:g} {unit} is out of range; allowed: {lo:g} < value <= {hi:g} {unit}")
    return float(value)


def _check_sections(items: Any, p_relieving: float, p_back: float) -> None:
    """Header sections in flow order: each lowest pressure above 0, below the relieving pressure, not above
    the back pressure at the valve nor the section before it; limits 0-1000 K."""
    previous = p_back
    for k, sec in enumerate(named_entries("header_sections", items, HEADER_SECTION_KEYS, "header sections")):
        key = f"header_sections[{k}]"
        p = _number(f"{key}.p_pa", sec.get("p_pa"), "lowest pressure of the section (absolute)", "Pa", 0.0,
                    p_relieving)
        if p >= p_relieving:
            raise InputError(f"{key}.p_pa", f"{p:g} Pa abs is not below the relieving pressure {p_relieving:g} Pa abs")
        if p > previous + PRESSURE_TOLERANCE_PA:
            before = "the total back pressure at the valve" if k == 0 else f"section {k - 1}'s lowest pressure"
            raise InputError(f"{key}.p_pa", f"{p:g} Pa abs is above {before} ({previous:g} Pa abs); allowed: "
                                            "pressures falling in flow order, from the valve outlet to the tip")
        previous = p
        if sec.get("limit_k") is not None:
            lo, hi, _ = LIMIT_TEMPERATURE_RANGE_K
            _number(f"{key}.limit_k", sec["limit_k"], "temperature limit", "K", lo, hi)
        if not isinstance(sec.get("material", ""), str):
            raise InputError(f"{key}.material", f"the material must be a text, got {sec.get('material')!r}")


def _check_sources(items: Any, p_back: float) -> None:
    """Other relieving sources: a Fluid, a mass flow, their relieving pressure (not below the back pressure at
    this valve) and temperature."""
    for k, src in enumerate(named_entries("other_sources", items, OTHER_SOURCE_KEYS, "relief sources")):
        key = f"other_sources[{k}]"
        if "composition" in src and "fluid" not in src:     # as entered with the case: checked by building it
            try:
                Fluid(src["composition"])
            except InputError as exc:
                raise InputError(f"{key}.composition", exc.message) from None
        elif not isinstance(src.get("fluid"), Fluid):
            raise InputError(f"{key}.fluid", f"got {type(src.get('fluid')).__name__}; allowed: a jtcheck Fluid "
                                              "(composition and EOS of the other valve's fluid) or a composition")
        lo, hi, _ = MASS_FLOW_RANGE_KG_PER_S
        _number(f"{key}.mass_flow_kg_per_s", src.get("mass_flow_kg_per_s"), "mass flow", "kg/s", lo, hi)
        p = _number(f"{key}.p_pa", src.get("p_pa"), "relieving pressure (absolute)", "Pa", 0.0, 1e9)
        if p < p_back - PRESSURE_TOLERANCE_PA:
            raise InputError(f"{key}.p_pa", f"{p:g} Pa abs is below the back pressure at this valve {p_back:g} Pa "
                                            "abs; allowed: its relieving pressure, upstream of the header")
        lo, hi, _ = INLET_TEMPERATURE_RANGE_K
        _number(f"{key}.t_k", src.get("t_k"), "relieving temperature", "K", lo, hi)


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
        header_limit_k=values.get("header_limit_k"), t_relieving_min_k=relieving_temperature_min(values),
        mass_flow_kg_per_s=values.get("mass_flow_kg_per_s"),
        header_sections=tuple(HeaderSpec(d["name"].strip(), float(d["p_pa"]), d.get("limit_k"), d.get("material") or "")
                              for d in values.get("header_sections") or ()),
        other_sources=tuple(OtherSource(d["name"].strip(), d["fluid"], float(d["mass_flow_kg_per_s"]), float(d["p_pa"]),
                                        float(d["t_k"])) for d in values.get("other_sources") or ()))


def relieving_temperature_min(values: Mapping[str, Any]) -> float | None:
    """The minimum credible relieving temperature [K]: as given, else the minimum credible inlet temperature."""
    t = values.get("relieving_temperature_min_k")
    return values.get("inlet_temperature_min_k") if t is None else t


class ReliefValveKind(LetdownKind):
    """A relief valve: the letdown screening plus the relieving case into the outlet piping and flare header."""

    name = "relief_valve"
    parameters = (*LetdownKind.parameters, "header_sections", "other_sources")
    label = "relief valve"
    cases_phrase = "relief-valve cases"
    remedies_sentence = ("Where the discharge is too cold it gives the lowest relieving temperature and the material "
                         "limits that would keep every part above its limit plus margin (no heater on a relief line).")
    devices = ("relief_valve",)
    fields = (*LETDOWN_FIELDS, *RELIEF_FIELDS)
    screening_sections = (*LetdownKind.screening_sections, "cases/kinds/relief_inputs.html")
    page_sections = (*LetdownKind.page_sections, "cases/kinds/relief_result.html")
    record_sections = (*LetdownKind.record_sections, "kinds/relief_record.html")
    #: Batch lists carry no set-pressure data yet, so a relief row is a letdown there and may be vectorised.
    vectorised = True

    def check(self, values: Mapping[str, Any]) -> None:
        super().check(values)
        check_relief(values)

    def compute(self, fluid: Fluid, values: Mapping[str, Any], **switches: bool) -> Screening:
        """The letdown screening with the relieving case; other sources entered as compositions are put on the
        case fluid's model basis (EOS, kij choice, volume translation) first."""
        sources = [d if "fluid" in d else {**d, "fluid": fluid.with_composition(d["composition"])}
                   for d in values.get("other_sources") or ()]
        return super().compute(fluid, {**values, "other_sources": sources} if sources else values, **switches)

    def check_group(self, values: Mapping[str, Any]) -> None:
        check_relief_group(values)

    def options(self, values: Mapping[str, Any], **switches: bool) -> ScreeningOptions:
        """The letdown's options with the relieving case and the remedies of a relief valve (no heater)."""
        return letdown_options(values, relief=relief_inputs(values), remedies="relief", **switches)


RELIEF_VALVE = ReliefValveKind()
