"""The inputs of a case: the fields a user enters, their defaults, and the check of a whole set of them.

Quantities are SI floats with the unit in the key (``inlet_pressure_pa``, ``inlet_temperature_k``);
the unit text the user typed travels in ``display_units``.
"""
from __future__ import annotations

import json
from collections.abc import Mapping
from typing import Any

from sqlalchemy.orm import Session, joinedload

from jtcheck.cases import KINDS, all_fields, kind_of, kinds_with
from jtcheck.cases.letdown import HYDRATE_INHIBITORS
from jtcheck.cases.registry import all_parameters, foreign_fields
from jtcheck.errors import InputError
from jtcheck.records.fields import (
    MAX_LONG_TEXT,
    MAX_SHORT_TEXT,
    MAX_TAG,
    MAX_UNIT_TEXT,
    lookup,
    parse_flag,
    parse_text,
)
from jtcheck.records.models import P_ATM_STANDARD_PA, Case, CaseKind, FluidRecord, Material, PlantUnit

#: The quantity fields of every case kind (:mod:`jtcheck.cases`), in the order they are checked.
QUANTITY_FIELDS = all_fields()
#: The structured inputs of every case kind (lists and mappings in SI), kept in ``Case.parameters``.
KIND_PARAMETERS = all_parameters()
#: Every field of a case that create_case/update_case accept.
CASE_FIELDS = ("unit_id", "tag", "service", "kind", "fluid_id", *(f.key for f in QUANTITY_FIELDS), "material_id",
               "basis", "references", "display_units", "water_saturated", "hydrate_inhibitor", *KIND_PARAMETERS)
#: The register's case columns; a kind's field without a column is kept in ``Case.parameters``.
CASE_COLUMNS = frozenset(Case.__table__.columns.keys())
#: Keys allowed in ``display_units``: the quantity fields without their SI suffix (the atmospheric pressure
#: is shown in its own unit).
DISPLAY_UNIT_FIELDS = tuple(f.name for f in QUANTITY_FIELDS if f.name != "p_atm")
#: Values of the fields a case may leave out (stored with the case).
CASE_DEFAULTS: dict[str, Any] = {"service": "", "margin_k": 0.0, "p_atm_pa": P_ATM_STANDARD_PA, "basis": "",
                                 "references": "", "display_units": {}, "water_saturated": False,
                                 "hydrate_inhibitor": "methanol"}
__all__ = ["CASE_COLUMNS", "CASE_DEFAULTS", "CASE_FIELDS", "DISPLAY_UNIT_FIELDS", "HYDRATE_INHIBITORS",
           "KIND_PARAMETERS", "QUANTITY_FIELDS", "case_values", "field_value", "none_to_default", "parse_kind",
           "site_margin", "validate_case"]


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


def _structured(name: str, value: Any) -> Any:
    """A kind's structured input as JSON-safe lists and mappings (None and empty mean not given)."""
    if value is None or value == [] or value == {}:
        return None
    if not isinstance(value, (list, dict)):
        raise InputError(name, f"must be a list or a mapping (see the case kind's inputs), got {type(value).__name__}")
    try:
        return json.loads(json.dumps(value, allow_nan=False))
    except (TypeError, ValueError) as exc:
        raise InputError(name, f"must hold only numbers, text, lists and mappings (finite numbers): {exc}") from None


def _keep_parameters(values: dict[str, Any]) -> None:
    """Move the kind inputs without a column into ``values["parameters"]`` (None values left out)."""
    params: dict[str, Any] = {}
    for key in [k for k in values if k not in CASE_COLUMNS]:
        v = values.pop(key)
        if v is not None:
            params[key] = v
    values["parameters"] = params or None


def field_value(case: Case, key: str) -> Any:
    """A case input by its register key, from its column or from ``Case.parameters``."""
    if key in CASE_COLUMNS:
        return getattr(case, key)
    return (case.parameters or {}).get(key)


def site_margin(unit: PlantUnit) -> float | None:
    """The default margin of the unit's site [K] (None when the site sets none)."""
    return unit.site.default_margin_k if unit is not None and unit.site is not None else None


def _check_for_kind(values: dict[str, Any]) -> None:
    """The kind's own checks, then no input of another kind: each named by its field."""
    kind = kind_of(values["kind"])
    kind.check(values)
    foreign = foreign_fields(kind, values)
    if foreign:
        owner = kinds_with(foreign[0].key)[0]
        owner.check_group(values)   # the owner's own complaint first (e.g. relief data without a set pressure)
        raise InputError(foreign[0].key, f"a {foreign[0].label} is only for {owner.cases_phrase} (kind "
                                         f"{', '.join(owner.devices)})")
    for name in KIND_PARAMETERS:
        if values.get(name) is not None and name not in kind.parameters:
            owners = [k for k in KINDS.values() if name in k.parameters]
            raise InputError(name, f"{name} is only for {' and '.join(k.cases_phrase for k in owners)}")


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
    for f in QUANTITY_FIELDS:
        values[f.key] = f.check(data.get(f.key))
    values["basis"] = parse_text("basis", data.get("basis"), "basis", MAX_LONG_TEXT)
    values["references"] = parse_text("references", data.get("references"), "references", MAX_LONG_TEXT)
    values["display_units"] = _display_units(data.get("display_units"))

    values["water_saturated"] = parse_flag("water_saturated", data.get("water_saturated"), "water-saturated gas")
    values["hydrate_inhibitor"] = data.get("hydrate_inhibitor")
    for name in KIND_PARAMETERS:
        values[name] = _structured(name, data.get(name))
    _check_for_kind(values)
    _keep_parameters(values)

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


def none_to_default(data: Mapping[str, Any], defaults: Mapping[str, Any] = CASE_DEFAULTS) -> dict[str, Any]:
    """None for a field with a default (an empty form field) means the default."""
    return {k: (defaults[k] if v is None and k in defaults else v) for k, v in data.items()}


def case_values(case: Case) -> dict[str, Any]:
    """The user-entered fields of a case (the keys of :data:`CASE_FIELDS`), e.g. to fill an edit form."""
    out = {key: field_value(case, key) for key in CASE_FIELDS}
    out["kind"] = CaseKind(case.kind).value
    out["display_units"] = dict(case.display_units or {})
    return out
