"""JSON schemas of the API bodies (OpenAPI 3.1 / JSON Schema 2020-12), registered with the API's registry."""
from __future__ import annotations

from typing import Any

from jtcheck.records.models import CaseKind
from jtcheck.web.openapi import ApiRegistry
from jtcheck.web.quantities import CASE_QUANTITIES


def _ref(name: str) -> dict[str, str]:
    return {"$ref": f"#/components/schemas/{name}"}


def _nullable(schema: dict[str, Any]) -> dict[str, Any]:
    return {"oneOf": [schema, {"type": "null"}]}


NUM_OR_NULL = {"type": ["number", "null"]}
STR_OR_NULL = {"type": ["string", "null"]}
EOS_ENUM = {"type": "string", "enum": ["PR", "SRK", "RK", "VDW"]}
KIJ_ENUM = {"type": "string", "enum": ["table", "zero"],
            "description": "table: jtcheck's table of published kij (missing pairs 0, and listed); zero: every kij 0"}


def register(api: ApiRegistry) -> None:
    s = api.schema
    s("Error", {"type": "object", "required": ["error"], "properties": {"error": {
        "type": "object", "required": ["field", "message"],
        "properties": {"field": {**STR_OR_NULL, "description": "The input field at fault, when there is one."},
                       "message": {"type": "string"}}}}})
    s("Quantity", {"description": "A value with its unit: text such as \"100 bara\", \"10 barg\", \"40 degC\", or "
                                  "an object {\"value\": 100, \"unit\": \"bara\"}. Gauge units use p_atm.",
                   "oneOf": [{"type": "string", "examples": ["100 bara"]},
                             {"type": "object", "required": ["value", "unit"], "additionalProperties": False,
                              "properties": {"value": {"type": "number"}, "unit": {"type": "string"}}}]})
    s("DisplayValue", {"type": "object", "required": ["value", "unit"],
                       "properties": {"value": NUM_OR_NULL, "unit": {"type": "string"}}})
    s("FluidSpec", {"type": "object", "required": ["composition"], "additionalProperties": False, "properties": {
        "composition": {"description": "Mole fractions or mole percent: {\"methane\": 0.9, \"ethane\": 0.1}, "
                                       "[[\"methane\", 0.9], ...] or \"methane=0.9, ethane=0.1\".",
                        "oneOf": [{"type": "object", "additionalProperties": {"type": "number"}},
                                  {"type": "array", "items": {"type": "array", "prefixItems": [
                                      {"type": "string"}, {"type": "number"}], "minItems": 2, "maxItems": 2}},
                                  {"type": "string"}]},
        "eos": {**EOS_ENUM, "default": "PR"}, "kij": {**KIJ_ENUM, "default": "table"}}})
    s("LetdownRequest", {
        "type": "object", "required": ["p_in", "t_in", "p_out"], "additionalProperties": False,
        "description": "Give either fluid or fluid_id.",
        "properties": {
            "fluid": _ref("FluidSpec"), "fluid_id": {"type": "integer", "description": "A stored fluid."},
            "p_in": _ref("Quantity"), "t_in": _ref("Quantity"), "p_out": _ref("Quantity"),
            "p_atm": {**_ref("Quantity"), "description": "Atmospheric pressure for gauge units "
                                                         "(default 1.01325 bar, stated in the answer)."},
            "units": {"type": "object", "additionalProperties": False,
                      "description": "Units of the display values (default: those of p_in and t_in).",
                      "properties": {"pressure": {"type": "string"}, "temperature": {"type": "string"}}}}})
    s("LetdownResponse", {"type": "object", "properties": {
        "converged": {"type": "boolean"}, "message": {"type": "string"}, "phase": {"type": "string"},
        "inlet_phase": {"type": "string"}, "vapor_fraction": NUM_OR_NULL, "inlet_vapor_fraction": NUM_OR_NULL,
        "warnings": {"type": "array", "items": {"type": "string"}},
        "si": {"type": "object", "properties": {k: NUM_OR_NULL for k in (
            "p_in_pa", "t_in_k", "p_out_pa", "t_out_k", "dt_k", "h_j_per_mol", "p_atm_pa")}},
        "display": {"type": "object", "additionalProperties": _ref("DisplayValue")},
        "fluid": {"type": "object"}, "basis": {"type": "object"},
        "notes": {"type": "array", "items": {"type": "string"}}, "caution": {"type": "string"}}})

    quantity_props = {q.name: {**_nullable(_ref("Quantity")), "description": f"{q.label} [{q.kind}]"}
                      for q in CASE_QUANTITIES}
    case_props: dict[str, Any] = {
        "tag": {"type": "string", "maxLength": 64}, "service": {"type": "string"},
        "kind": {"type": "string", "enum": [k.value for k in CaseKind]},
        "unit_id": {"type": "integer"}, "fluid_id": {"type": "integer"}, "material_id": {"type": ["integer", "null"]},
        **quantity_props,
        "p_atm": {**_nullable(_ref("Quantity")), "description": "Atmospheric pressure for gauge units"},
        "basis": {"type": "string"}, "references": {"type": "string"}}
    s("CaseInput", {"type": "object", "additionalProperties": False, "properties": case_props,
                    "required": ["unit_id", "tag", "kind", "fluid_id", "inlet_pressure", "inlet_temperature",
                                 "outlet_pressure"]})
    s("CasePatch", {"type": "object", "additionalProperties": False, "properties": {
        **case_props, "version": {"type": "integer", "description": "The version you edited; 409 if stale."}}})
    s("Case", {"type": "object", "properties": {
        "id": {"type": "integer"}, "tag": {"type": "string"}, "service": {"type": "string"},
        "kind": {"type": "string"}, "kind_label": {"type": "string"}, "status": {"type": "string"},
        "version": {"type": "integer"}, "site": {"type": "object"}, "unit": {"type": "object"},
        "fluid": {"type": "object"}, "material": {"type": ["object", "null"]}, "mdmt_source": {"type": "string"},
        "si": {"type": "object", "additionalProperties": NUM_OR_NULL},
        "display": {"type": "object", "additionalProperties": _nullable(_ref("DisplayValue"))},
        "display_units": {"type": "object", "additionalProperties": {"type": "string"}},
        "basis": {"type": "string"}, "references": {"type": "string"},
        "latest_result": {"type": ["object", "null"]}}})
    s("CaseList", {"type": "object", "properties": {"count": {"type": "integer"},
                                                    "cases": {"type": "array", "items": _ref("Case")}}})
    s("Result", {"type": "object", "properties": {
        "id": {"type": "integer"}, "case_id": {"type": "integer"}, "case_version": {"type": "integer"},
        "computed_at": {"type": "string"}, "converged": {"type": "boolean"}, "message": {"type": "string"},
        "warnings": {"type": "array", "items": {"type": "string"}}, "outcome": STR_OR_NULL,
        "t_out_min_k": NUM_OR_NULL, "limits": {"type": "object"}, "p_atm_pa": {"type": "number"},
        "conditions": {"type": "array", "items": {"type": "object"}}, "basis": {"type": "object"},
        "current": {"type": "boolean"}, "caution": {"type": "string"}}})
    s("ResultList", {"type": "object", "properties": {"results": {"type": "array", "items": _ref("Result")}}})
    s("FluidInput", {"type": "object", "required": ["name", "composition"], "additionalProperties": False,
                     "properties": {"name": {"type": "string"},
                                    "composition": {"$ref": "#/components/schemas/FluidSpec/properties/composition"},
                                    "eos": EOS_ENUM, "kij": KIJ_ENUM, "notes": {"type": "string"}}})
    s("FluidPatch", {"type": "object", "additionalProperties": False, "properties": {
        "name": {"type": "string"}, "composition": {"$ref": "#/components/schemas/FluidSpec/properties/composition"},
        "eos": EOS_ENUM, "kij": KIJ_ENUM, "notes": {"type": "string"}}})
    s("Fluid", {"type": "object", "properties": {
        "id": {"type": "integer"}, "name": {"type": "string"}, "eos": {"type": "string"}, "kij": {"type": "string"},
        "notes": {"type": "string"}, "composition": {"type": "array", "items": {
            "type": "object", "properties": {"component": {"type": "string"}, "mole_fraction": {"type": "number"}}}}}})
    s("FluidList", {"type": "object", "properties": {"fluids": {"type": "array", "items": _ref("Fluid")}}})
    s("Material", {"type": "object", "properties": {
        "id": {"type": "integer"}, "name": {"type": "string"}, "specification": {"type": "string"},
        "min_metal_temperature_k": {"type": "number"}, "notes": {"type": "string"}, "source": {"type": "string"},
        "seeded": {"type": "boolean"}, "editable": {"type": "boolean"}}})
    s("MaterialList", {"type": "object", "properties": {"materials": {"type": "array", "items": _ref("Material")}}})
    s("SiteList", {"type": "object", "properties": {"sites": {"type": "array", "items": {"type": "object"}}}})
    s("AuditList", {"type": "object", "properties": {"entries": {"type": "array", "items": {"type": "object"}}}})
    s("OpenAPI", {"type": "object", "description": "This document."})
