"""The inputs of a case: the fields a user enters, their defaults, and the check of a whole set of them.

Quantities are SI floats with the unit in the key (``inlet_pressure_pa``, ``inlet_temperature_k``);
the unit text the user typed travels in ``display_units``.
"""
from __future__ import annotations

from collections.abc import Mapping
from typing import Any

from sqlalchemy.orm import Session, joinedload

from jtcheck.errors import InputError
from jtcheck.records.fields import (
    BUILT_UP_RANGE_PA,
    INLET_TEMPERATURE_RANGE_K,
    LIMIT_TEMPERATURE_RANGE_K,
    MARGIN_RANGE_K,
    MASS_FLOW_RANGE_KG_PER_S,
    MAX_LONG_TEXT,
    MAX_SHORT_TEXT,
    MAX_TAG,
    MAX_UNIT_TEXT,
    OVERPRESSURE_RANGE,
    P_ATM_RANGE_PA,
    PRESSURE_RANGE_PA,
    lookup,
    parse_flag,
    parse_number,
    parse_text,
)
from jtcheck.records.models import P_ATM_STANDARD_PA, Case, CaseKind, FluidRecord, Material, PlantUnit

#: Hydrate inhibitors a case may name (the Hammerschmidt constants live in jtcheck.screening.hydrates).
HYDRATE_INHIBITORS = ("methanol", "MEG")
#: Case fields a user enters: key -> (label, unit) for the numeric ones.
_CASE_NUMBERS: dict[str, tuple[str, str, tuple[float, float, bool], bool]] = {
    # key: (label, unit, range, required)
    "inlet_pressure_pa": ("inlet pressure", "Pa", PRESSURE_RANGE_PA, True),
    "inlet_temperature_k": ("inlet temperature", "K", INLET_TEMPERATURE_RANGE_K, True),
    "outlet_pressure_pa": ("outlet pressure", "Pa", PRESSURE_RANGE_PA, True),
    "inlet_temperature_min_k": ("minimum credible inlet temperature", "K", INLET_TEMPERATURE_RANGE_K, False),
    "inlet_pressure_max_pa": ("maximum credible inlet pressure", "Pa", PRESSURE_RANGE_PA, False),
    "outlet_pressure_min_pa": ("minimum credible outlet pressure", "Pa", PRESSURE_RANGE_PA, False),
    "mass_flow_kg_per_s": ("mass flow", "kg/s", MASS_FLOW_RANGE_KG_PER_S, False),
    "mdmt_k": ("MDMT", "K", LIMIT_TEMPERATURE_RANGE_K, False),
    "cold_limit_k": ("cold limit", "K", LIMIT_TEMPERATURE_RANGE_K, False),
    "margin_k": ("margin", "K", MARGIN_RANGE_K, True),
    "p_atm_pa": ("atmospheric pressure for gauge units", "Pa", P_ATM_RANGE_PA, True),
    "set_pressure_pa": ("relief valve set pressure", "Pa", PRESSURE_RANGE_PA, False),
    "overpressure_fraction": ("allowable overpressure (fraction of the set gauge pressure)", "-",
                              OVERPRESSURE_RANGE, False),
    "superimposed_back_pressure_pa": ("superimposed back pressure", "Pa", PRESSURE_RANGE_PA, False),
    "built_up_back_pressure_pa": ("built-up back pressure", "Pa (difference)", BUILT_UP_RANGE_PA, False),
    "header_limit_k": ("flare header cold limit", "K", LIMIT_TEMPERATURE_RANGE_K, False),
}
#: Every field of a case that create_case/update_case accept.
CASE_FIELDS = ("unit_id", "tag", "service", "kind", "fluid_id", *_CASE_NUMBERS, "material_id", "basis",
               "references", "display_units", "water_saturated", "hydrate_inhibitor")
#: Keys allowed in ``display_units``: the quantity fields without their SI suffix.
DISPLAY_UNIT_FIELDS = ("inlet_pressure", "inlet_temperature", "outlet_pressure", "inlet_temperature_min",
                       "inlet_pressure_max", "outlet_pressure_min", "mass_flow", "mdmt", "cold_limit", "margin",
                       "set_pressure", "overpressure", "superimposed_back_pressure", "built_up_back_pressure",
                       "header_limit")
#: Values of the fields a case may leave out (stored with the case).
CASE_DEFAULTS: dict[str, Any] = {"service": "", "margin_k": 0.0, "p_atm_pa": P_ATM_STANDARD_PA, "basis": "",
                                 "references": "", "display_units": {}, "water_saturated": False,
                                 "hydrate_inhibitor": "methanol"}


def parse_kind(value: Any, key: str = "kind") -> CaseKind:
    """A :class:`CaseKind` from its value; an unknown one is an InputError listing the kinds."""
    try:
        return CaseKind(value)
    except ValueError:
        allowed = ", ".join(f"{k.value} ({k.label})" for k in CaseKind)
        raise InputError(key, f"unknown kind {value!r}; allowed: {allowed}") from None


def _display_units(value: Any) -> dict[str, str]:
    if value is None:
        return {}
    if not isinstance(value, Mapping):
        raise InputError("display_units", "must be a mapping of field name to unit text, "
                                          "e.g. {'inlet_pressure': 'barg'}")
    out: dict[str, str] = {}
    for k, v in value.items():
        if k not in DISPLAY_UNIT_FIELDS:
            raise InputError("display_units", f"unknown field {k!r}; allowed: {', '.join(DISPLAY_UNIT_FIELDS)}")
        if not isinstance(v, str) or not v.strip() or len(v.strip()) > MAX_UNIT_TEXT:
            raise InputError("display_units", f"{k}: the unit must be text of 1 to {MAX_UNIT_TEXT} characters, "
                                              f"got {v!r}")
        out[str(k)] = v.strip()
    return out


def _validate_relief(values: dict[str, Any]) -> None:
    """Relief-valve fields: all-or-nothing for the set pressure and its companions; pressures consistent."""
    p_set = values["set_pressure_pa"]
    given = [k for k in ("overpressure_fraction", "superimposed_back_pressure_pa", "built_up_back_pressure_pa",
                         "header_limit_k") if values[k] is not None]
    if p_set is None:
        if given:
            raise InputError(given[0], "relief-valve data need the set pressure (set_pressure_pa) as well")
        return
    if values["kind"] is not CaseKind.RELIEF_VALVE:
        raise InputError("set_pressure_pa", "a set pressure is only for relief-valve cases (kind relief_valve)")
    if values["overpressure_fraction"] is None:
        raise InputError("overpressure_fraction", "the allowable overpressure is required with a set pressure "
                                                  "(fraction of the set gauge pressure, e.g. 0.10 for 10 %)")
    p_atm = values["p_atm_pa"]
    if p_set <= p_atm:
        raise InputError("set_pressure_pa", f"set pressure {p_set:g} Pa abs is not above the atmospheric pressure "
                                            f"{p_atm:g} Pa; allowed: above atmospheric")
    p_relieving = p_set + values["overpressure_fraction"] * (p_set - p_atm)
    p_super = values["superimposed_back_pressure_pa"]
    p_super = p_atm if p_super is None else p_super
    p_back = p_super + (values["built_up_back_pressure_pa"] or 0.0)
    if p_back >= p_relieving:
        raise InputError("built_up_back_pressure_pa" if values["built_up_back_pressure_pa"] else
                         "superimposed_back_pressure_pa",
                         f"total back pressure {p_back:g} Pa abs is not below the relieving pressure "
                         f"{p_relieving:g} Pa abs; allowed: below the relieving pressure")


def validate_case(session: Session, data: Mapping[str, Any], *, current: Case | None = None,
                  given: frozenset[str] = frozenset(), loaded: dict[str, Any] | None = None) -> dict[str, Any]:
    """Check every case field of ``data`` (a complete set of values); return column -> value.

    ``current`` is the stored case when updating, ``given`` the keys the user supplied in this edit.
    ``loaded``, if given, receives the unit, fluid and material records looked up (so that the caller
    can attach them to the case instead of loading them again).
    """
    values: dict[str, Any] = {}
    unit = lookup(session, PlantUnit, "unit_id", data.get("unit_id"), "unit",
                  options=(joinedload(PlantUnit.site),))
    values["unit_id"] = unit.id
    values["tag"] = parse_text("tag", data.get("tag"), "tag", MAX_TAG, required=True, single_line=True)
    values["service"] = parse_text("service", data.get("service"), "service description", MAX_SHORT_TEXT)
    values["kind"] = parse_kind(data.get("kind"))
    fluid = lookup(session, FluidRecord, "fluid_id", data.get("fluid_id"), "fluid")
    values["fluid_id"] = fluid.id
    for key, (label, unit_text, rng, required) in _CASE_NUMBERS.items():
        values[key] = parse_number(key, data.get(key), label, unit_text, rng, required)
    values["basis"] = parse_text("basis", data.get("basis"), "basis", MAX_LONG_TEXT)
    values["references"] = parse_text("references", data.get("references"), "references", MAX_LONG_TEXT)
    values["display_units"] = _display_units(data.get("display_units"))

    p_in, p_out = values["inlet_pressure_pa"], values["outlet_pressure_pa"]
    if p_out > p_in:
        raise InputError("outlet_pressure_pa", f"outlet pressure {p_out:g} Pa is above the inlet pressure "
                                               f"{p_in:g} Pa; allowed: outlet <= inlet pressure (a letdown)")
    t_min = values["inlet_temperature_min_k"]
    if t_min is not None and t_min > values["inlet_temperature_k"]:
        raise InputError("inlet_temperature_min_k",
                         f"minimum credible inlet temperature {t_min:g} K is above the normal inlet temperature "
                         f"{values['inlet_temperature_k']:g} K; allowed: <= the normal inlet temperature")
    p_max = values["inlet_pressure_max_pa"]
    if p_max is not None and p_max < p_in:
        raise InputError("inlet_pressure_max_pa",
                         f"maximum credible inlet pressure {p_max:g} Pa is below the normal inlet pressure "
                         f"{p_in:g} Pa; allowed: >= the normal inlet pressure")
    p_out_min = values["outlet_pressure_min_pa"]
    if p_out_min is not None and p_out_min > p_out:
        raise InputError("outlet_pressure_min_pa",
                         f"minimum credible outlet pressure {p_out_min:g} Pa is above the normal outlet pressure "
                         f"{p_out:g} Pa; allowed: <= the normal outlet pressure")
    values["water_saturated"] = parse_flag("water_saturated", data.get("water_saturated"), "water-saturated gas")
    inhibitor = data.get("hydrate_inhibitor")
    if inhibitor not in HYDRATE_INHIBITORS:
        raise InputError("hydrate_inhibitor", f"unknown hydrate inhibitor {inhibitor!r}; allowed: "
                                              f"{', '.join(HYDRATE_INHIBITORS)}")
    values["hydrate_inhibitor"] = inhibitor
    _validate_relief(values)

    # material and MDMT: an entered MDMT wins; without one the material's limit is copied
    material = None
    if data.get("material_id") is not None:
        material = lookup(session, Material, "material_id", data.get("material_id"), "material")
    values["material_id"] = material.id if material is not None else None
    if loaded is not None:
        loaded.update(unit=unit, fluid=fluid, material=material)
    if current is None:
        if values["mdmt_k"] is not None:
            values["mdmt_source"] = "entered"
        elif material is not None:
            values["mdmt_k"], values["mdmt_source"] = material.min_metal_temperature_k, f"material: {material.name}"
        else:
            values["mdmt_source"] = ""
        return values
    material_changed = "material_id" in given and values["material_id"] != current.material_id
    copied_before = current.mdmt_source.startswith("material")
    if "mdmt_k" in given and values["mdmt_k"] is not None:
        values["mdmt_source"] = "entered"
    elif "mdmt_k" in given or (material_changed and copied_before):
        if material is not None:   # None asks for the material's limit; a new material replaces a copied one
            values["mdmt_k"], values["mdmt_source"] = material.min_metal_temperature_k, f"material: {material.name}"
        else:
            values["mdmt_k"], values["mdmt_source"] = None, ""
    else:
        values["mdmt_source"] = current.mdmt_source
    return values


def none_to_default(data: Mapping[str, Any]) -> dict[str, Any]:
    """None for a field with a default (an empty form field) means the default."""
    return {k: (CASE_DEFAULTS[k] if v is None and k in CASE_DEFAULTS else v) for k, v in data.items()}


def case_values(case: Case) -> dict[str, Any]:
    """The user-entered fields of a case (the keys of :data:`CASE_FIELDS`), e.g. to fill an edit form."""
    out = {key: getattr(case, key) for key in CASE_FIELDS}
    out["kind"] = CaseKind(case.kind).value
    out["display_units"] = dict(case.display_units or {})
    return out
