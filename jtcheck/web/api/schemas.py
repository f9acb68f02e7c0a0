"""JSON schemas of the API bodies (OpenAPI 3.1 / JSON Schema 2020-12), registered with the API's registry."""
from __future__ import annotations

from typing import Any

from jtcheck.records import service
from jtcheck.records.models import CaseKind, ReviewAction, RevisionStatus
from jtcheck.records.workflow import MAX_COMMENT
from jtcheck.screening.findings import Outcome, Severity, Topic
from jtcheck.screening.hydrates import Inhibitor
from jtcheck.web.api.openapi import ApiRegistry
from jtcheck.web.cases import inputs as case_inputs
from jtcheck.web.quantities import CASE_QUANTITIES

#: The material of a direct letdown by its exemption curve (jtcheck.units.MATERIAL_OPTIONS): text with units.
MATERIAL_REQUEST_PROPERTIES = {
    "curve": {"type": ["string", "null"], "enum": ["A", "B", "C", "D", None],
              "description": "Exemption curve of the downstream material (VIII-1 Fig. UCS-66; B31.3 Table A-1): its "
                             "MDMT is found at the outlet pressure, with the working in screening.limits.mdmt_working; "
                             "'mdmt' is then its typed limit (the warmer governs)."},
    "curve_code": {"type": ["string", "null"], "enum": ["VIII-1", "B31.3", None]},
    "thickness": {"type": ["string", "null"], "description": "Governing thickness, e.g. '25.4 mm' or '1 in'."},
    "impact_test_t": {"type": ["string", "null"], "description": "Impact test temperature, e.g. '-46 degC'."},
    "pwht_credit": {"type": ["boolean", "null"], "description": "PWHT not required but done (VIII-1 UCS-68(c))."},
    "allowable_stress": {"type": ["string", "null"], "description": "Allowable stress, e.g. '138 MPa' (with "
                                                                    "outside_diameter: the stress ratio)."},
    "outside_diameter": {"type": ["string", "null"], "description": "Outside diameter, e.g. '323.9 mm'."},
    "corrosion_allowance": {"type": ["string", "null"], "description": "e.g. '3 mm' (default 0)."},
    "joint_efficiency": {"type": ["number", "null"], "description": "Weld joint efficiency (default 1)."},
    "other_stress": {"type": ["string", "null"], "description": "Stress from dead loads and displacement strain, "
                                                                "e.g. '20 MPa', added to the pressure stress."},
}
#: A stored material's cold-limit data (SI).
MATERIAL_SI_PROPERTIES = {
    "exemption_curve": {"type": "string", "enum": ["", "A", "B", "C", "D"]},
    "curve_code": {"type": "string", "enum": ["VIII-1", "B31.3"]},
    "thickness_m": {"type": ["number", "null"]}, "impact_test_temperature_k": {"type": ["number", "null"]},
    "pwht_credit": {"type": "boolean"}, "allowable_stress_pa": {"type": ["number", "null"]},
    "outside_diameter_m": {"type": ["number", "null"]}, "corrosion_allowance_m": {"type": "number"},
    "joint_efficiency": {"type": "number"}, "other_stress_pa": {"type": "number"},
}

def _ref(name: str) -> dict[str, str]:
    return {"$ref": f"#/components/schemas/{name}"}


def _nullable(schema: dict[str, Any]) -> dict[str, Any]:
    return {"oneOf": [schema, {"type": "null"}]}


NUM_OR_NULL = {"type": ["number", "null"]}
STR_OR_NULL = {"type": ["string", "null"]}
EOS_ENUM = {"type": "string", "enum": ["PR", "SRK", "RK", "VDW", "GERG2008"],
            "description": "Equation of state; GERG2008 is GERG-2008 (Kunz and Wagner 2012), 21 components, "
                           "kij \"table\" only."}
KIJ_ENUM = {"type": "string", "enum": ["table", "zero"],
            "description": "table: jtcheck's table of published kij (missing pairs 0, and listed); zero: every kij 0"}
OUTCOME_ENUM = {"type": "string", "enum": [o.value for o in Outcome],
                "description": "pass: coldest screened outlet >= limit + margin; margin eroded: limit <= outlet < "
                               "limit + margin; fail: outlet < limit; not screened: no limit given or a calculation "
                               "did not converge (never a pass)."}
INHIBITOR_ENUM = {"type": "string", "enum": [i.value for i in Inhibitor]}
#: The key numbers of a screening in display units (``screening.display`` of a letdown answer and of a stored
#: result), with the SI value each one shows.
SCREENING_DISPLAY = {
    "t_out_min": "Coldest screened outlet over every condition and model (t_out_min_k).",
    "governing_limit": "The cold limit that governs: the warmer of the MDMT and the user's limit (limits.governing_k).",
    "target": "Governing limit plus the total margin: the outlet temperature the answers aim at (limits.target_k).",
    "margin": "Required margin above the governing limit as entered (limits.margin_k); the total adds the model "
              "spread (limits.total_margin_k, limits.margin_terms).",
    "mdmt": "MDMT (limits.mdmt_k).",
    "preheat_t_in_required": "Inlet temperature that brings the governing condition to the target "
                             "(answers.preheat.governing.t_in_required_k).",
    "preheat_temperature_rise": "Preheat over that condition's inlet temperature "
                                "(answers.preheat.governing.temperature_rise_k).",
    "preheat_duty": "Heater duty in kW at the mass flow given (answers.preheat.governing.duty_w).",
    "outlet_pressure_limit": "Lowest outlet pressure that keeps every condition at or above the target "
                             "(answers.outlet_pressure_limit.governing.p_out_min_pa).",
    "sweep_worst": "Coldest combination in the operating ranges: t_out, p_in, t_in, p_out (answers.sweep.worst); "
                   "null without a sweep.",
    "relief_t_downstream": "Relief valve: outlet piping temperature after expansion to the back pressure "
                           "(answers.relief_valve.t_downstream_k).",
}


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
    _screening_schemas(api)
    s("LetdownRequest", {
        "type": "object", "required": ["p_in", "t_in", "p_out"], "additionalProperties": False,
        "description": "Give either fluid or fluid_id.  Every screening input is optional; without 'limit' or "
                       "'mdmt' the outcome is 'not screened' and the findings are still given.",
        "properties": {
            "fluid": _ref("FluidSpec"), "fluid_id": {"type": "integer", "minimum": 1, "maximum": 2**31 - 1,
                                                "description": "A stored fluid."},
            "p_in": _ref("Quantity"), "t_in": _ref("Quantity"), "p_out": _ref("Quantity"),
            "p_atm": {**_ref("Quantity"), "description": "Atmospheric pressure for gauge units "
                                                         "(default 1.01325 bar, stated in the answer)."},
            "units": {"type": "object", "additionalProperties": False,
                      "description": "Units of the display values (default: those of p_in and t_in).",
                      "properties": {"pressure": {"type": "string"}, "temperature": {"type": "string"}}},
            "limit": {**_nullable(_ref("Quantity")),
                      "description": "Cold limit of the downstream steel (a temperature, e.g. \"-29 degC\")."},
            "mdmt": {**_nullable(_ref("Quantity")),
                     "description": "Minimum design metal temperature of the downstream material; the warmer of "
                                    "limit and mdmt governs."},
            "margin": {**_nullable(_ref("Quantity")), "default": "0 K",
                       "description": "Required margin above the governing limit (a temperature difference, "
                                      "e.g. \"5 K\"; 0 to 100 K)."},
            "p_in_max": {**_nullable(_ref("Quantity")),
                         "description": "Maximum credible inlet pressure (>= p_in): adds conditions and a sweep."},
            "t_in_min": {**_nullable(_ref("Quantity")),
                         "description": "Minimum credible inlet temperature (<= t_in): adds conditions and a sweep."},
            "p_out_min": {**_nullable(_ref("Quantity")),
                          "description": "Minimum credible outlet pressure (<= p_out): the sweep runs down to it."},
            "water_saturated": {"type": ["boolean", "null"], "default": False,
                                "description": "Screen for hydrates with the gas saturated with water at the inlet "
                                               "(water in the composition always counts)."},
            "inhibitor": {**INHIBITOR_ENUM, "default": "methanol",
                          "description": "Hydrate inhibitor for the dose (given for methanol and MEG)."},
            "water_content": {**_nullable(_ref("Quantity")), "examples": ["110 mg/Sm3", "7 lb/MMscf"],
                              "description": "Water the gas carries (mg/Sm3 or lb/MMscf); with neither this nor "
                                             "water_dew_point the gas is saturated at the inlet."},
            "water_dew_point": {**_nullable(_ref("Quantity")), "examples": ["-10 degC"],
                                "description": "Water dew point at the outlet pressure (instead of water_content)."},
            "mass_flow": {"oneOf": [{"type": "number", "exclusiveMinimum": 0, "description": "kg/s"},
                                    {"type": "string", "examples": ["12 kg/s"]},
                                    {"type": "object", "required": ["value", "unit"], "additionalProperties": False,
                                     "properties": {"value": {"type": "number"},
                                                    "unit": {"type": "string", "enum": ["kg/s"]}}},
                                    {"type": "null"}],
                          "description": "Mass flow in kg/s (the only unit), for the heater duty."},
            "compare_models": {"type": ["boolean", "null"], "default": True,
                               "description": "Let down with the other of PR and SRK as well and screen the colder "
                                              "outlet."},
            "heater_off_t": {**_nullable(_ref("Quantity")),
                             "description": "Inlet temperature with the upstream heater lost (adds the loss-of-heater "
                                            "case when below t_in)."},
            "ambient_t_min": {**_nullable(_ref("Quantity")),
                              "description": "Minimum ambient temperature of an uninsulated inlet (adds the "
                                             "minimum-ambient case when below t_in)."},
            "settle_out_volumes": _CASE_LISTS["settle_out_volumes"],
            "credible_off": _CASE_LISTS["credible_off"],
            # a relief valve (with set_pressure the relief-valve case kind screens it, as the register does)
            "set_pressure": {**_nullable(_ref("Quantity")),
                             "description": "Relief valve set pressure: the request is then a relief valve (p_in is "
                                            "the relieving pressure, p_out the back pressure at the outlet)."},
            "overpressure": {"type": ["string", "null"], "examples": ["10 %"],
                             "description": "Allowable overpressure in percent of the set gauge pressure."},
            "superimposed_back_pressure": {**_nullable(_ref("Quantity")),
                                           "description": "Back pressure before the valve opens (default "
                                                          "atmospheric)."},
            "built_up_back_pressure": {**_nullable(_ref("Quantity")),
                                       "description": "Built-up back pressure, a pressure difference (\"2.5 bar\")."},
            "header_limit": {**_nullable(_ref("Quantity")),
                             "description": "Cold limit of the flare header (screened at the tip without sections)."},
            "relieving_t_min": {**_nullable(_ref("Quantity")),
                                "description": "Minimum credible relieving temperature (default t_in_min)."},
            "header_sections": _CASE_LISTS["header_sections"],
            "other_sources": _CASE_LISTS["other_sources"],
            **MATERIAL_REQUEST_PROPERTIES}})
    s("LetdownResponse", {"type": "object", "properties": {
        "converged": {"type": "boolean", "description": "The normal condition with the chosen EOS converged."},
        "message": {"type": "string"}, "phase": {"type": "string"},
        "inlet_phase": {"type": "string"}, "vapor_fraction": NUM_OR_NULL, "inlet_vapor_fraction": NUM_OR_NULL,
        "warnings": {"type": "array", "items": {"type": "string"}},
        "outcome": OUTCOME_ENUM, "outcome_sentence": {"type": "string"},
        "si": {"type": "object", "properties": {k: NUM_OR_NULL for k in (
            "p_in_pa", "t_in_k", "p_out_pa", "t_out_k", "dt_k", "h_j_per_mol", "p_atm_pa", "p_in_max_pa",
            "t_in_min_k", "p_out_min_pa")}},
        "display": {"type": "object", "additionalProperties": _ref("DisplayValue"),
                    "description": "The si values in the request's units (temperature differences in K, or degF "
                                   "when temperatures are in degF); the screening's own numbers are in "
                                   "screening.display."},
        "fluid": {"type": "object"}, "screening": _ref("Screening"), "basis": {"type": "object"},
        "notes": {"type": "array", "items": {"type": "string"}}, "caution": {"type": "string"}}})

    case_props = {key: _case_property(key) for key in case_inputs.INPUT_FIELDS}
    s("CaseInput", {"type": "object", "additionalProperties": False, "properties": case_props,
                    "required": ["unit_id", "tag", "kind", "fluid_id", "inlet_pressure", "inlet_temperature",
                                 "outlet_pressure"]})
    version = {"type": "integer", "minimum": 1, "maximum": 2**31 - 1,
               "description": "The version you edited (from the record you read): required; 409, naming what changed "
                              "and who changed it, when someone saved in between."}
    s("CasePatch", {"type": "object", "additionalProperties": False, "required": ["version"], "properties": {
        **case_props, "version": version}})
    s("Case", {"type": "object", "properties": {
        "id": {"type": "integer"}, "tag": {"type": "string"}, "service": {"type": "string"},
        "kind": {"type": "string"}, "kind_label": {"type": "string"}, "status": {"type": "string"},
        "version": {"type": "integer"}, "site": {"type": "object"}, "unit": {"type": "object"},
        "fluid": {"type": "object"}, "material": {"type": ["object", "null"]}, "mdmt_source": {"type": "string"},
        "si": {"type": "object", "additionalProperties": NUM_OR_NULL},
        "display": {"type": "object", "additionalProperties": _nullable(_ref("DisplayValue"))},
        "display_units": {"type": "object", "additionalProperties": {"type": "string"}},
        "water_saturated": {"type": "boolean"}, "hydrate_inhibitor": {"type": "string"},
        "basis": {"type": "string"}, "references": {"type": "string"},
        "parameters": {"type": "object", "description": "The kind's inputs without a column of their own, SI: a "
                                                        "depressuring case's vessel, orifices, heat_input and run; "
                                                        "a relief valve's header sections; a letdown's settle-out "
                                                        "volumes and generated cases switched off."},
        "latest_result": {"type": ["object", "null"], "properties": {
            "id": {"type": "integer"}, "computed_at": STR_OR_NULL, "converged": {"type": "boolean"},
            "t_out_min_k": NUM_OR_NULL, "outcome": _nullable(OUTCOME_ENUM), "outcome_sentence": STR_OR_NULL,
            "current": {"type": ["boolean", "null"]}}},
        "current_revision": {**_nullable(_ref("CurrentRevision")),
                             "description": "The case's current (latest) calculation record; its status is the "
                                            "case's status."},
        "links": {"type": "object", "properties": {"self": {"type": "string"}, "revisions": {"type": "string"}}}}})
    s("CaseList", page_schema("cases", _ref("Case")))
    s("Result", {"type": "object", "properties": {
        "id": {"type": "integer"}, "case_id": {"type": "integer"}, "case_version": {"type": "integer"},
        "computed_at": {"type": "string"}, "converged": {"type": "boolean"}, "message": {"type": "string"},
        "warnings": {"type": "array", "items": {"type": "string"}},
        "outcome": {**_nullable(OUTCOME_ENUM), "description": "The screening outcome (null: stored before screening)."},
        "outcome_sentence": STR_OR_NULL,
        "screening": {**_nullable(_ref("Screening")), "description": "The screening as computed and stored (SI)."},
        "t_out_min_k": NUM_OR_NULL, "limits": {"type": "object"}, "p_atm_pa": {"type": "number"},
        "conditions": {"type": "array", "items": {"type": "object"}}, "basis": {"type": "object"},
        "current": {"type": "boolean"}, "caution": {"type": "string"}}})
    s("ResultList", page_schema("results", _ref("Result")))
    fluid_name = {"type": "string", "minLength": 1, "maxLength": 200, "pattern": r"\S"}
    s("FluidInput", {"type": "object", "required": ["name", "composition"], "additionalProperties": False,
                     "properties": {"name": fluid_name,
                                    "composition": {"$ref": "#/components/schemas/FluidSpec/properties/composition"},
                                    "eos": EOS_ENUM, "kij": KIJ_ENUM, "notes": {"type": "string"}}})
    s("FluidPatch", {"type": "object", "additionalProperties": False, "required": ["version"], "properties": {
        "version": version, "name": fluid_name,
        "composition": {"$ref": "#/components/schemas/FluidSpec/properties/composition"},
        "eos": EOS_ENUM, "kij": KIJ_ENUM, "notes": {"type": "string"}}})
    s("Fluid", {"type": "object", "properties": {
        "id": {"type": "integer"}, "version": {"type": "integer"}, "name": {"type": "string"},
        "eos": {"type": "string"}, "kij": {"type": "string"},
        "notes": {"type": "string"}, "composition": {"type": "array", "items": {
            "type": "object", "properties": {"component": {"type": "string"}, "mole_fraction": {"type": "number"}}}}}})
    s("FluidList", page_schema("fluids", _ref("Fluid")))
    s("Material", {"type": "object", "properties": {
        "id": {"type": "integer"}, "name": {"type": "string"}, "specification": {"type": "string"},
        "min_metal_temperature_k": {**NUM_OR_NULL, "description": "The typed limit [K]; null for a material whose "
                                                                  "limit comes from its exemption curve only."},
        "notes": {"type": "string"}, "source": {"type": "string"}, "version": {"type": "integer"},
        "seeded": {"type": "boolean"}, "editable": {"type": "boolean"}, "limit_way": {"type": "string"},
        **MATERIAL_SI_PROPERTIES}})
    s("MaterialBody", {"type": "object", "properties": {
        "name": {"type": "string"}, "specification": {"type": "string"}, "notes": {"type": "string"},
        "source": {"type": "string"}, "editable": {"type": "boolean"},
        "min_metal_temperature_k": NUM_OR_NULL, **MATERIAL_SI_PROPERTIES}})
    s("CurveTable", {"type": "object", "properties": {
        "label": {"type": "string"}, "caution": {"type": "string"},
        "rows": {"type": "array", "items": {"type": "object", "description": "position, code, table, curve, x, "
                                                                            "value, unit, source, edition, "
                                                                            "provenance"}}}})
    s("MaterialList", page_schema("materials", _ref("Material")))
    s("SiteList", page_schema("sites", {"type": "object"}))
    s("AuditList", page_schema("entries", {"type": "object"}))
    s("OpenAPI", {"type": "object", "description": "This document."})
    _record_schemas(api)


REVISION_STATUS_ENUM = {"type": "string", "enum": [st.value for st in RevisionStatus],
                        "description": "draft -> for check -> checked -> for approval -> approved (-> superseded by "
                                       "the next approved revision, or voided); a reject sends a revision in review "
                                       "back to draft."}
REVIEW_ACTION_ENUM = {"type": "string", "enum": [a.value for a in ReviewAction]}


def page_schema(items_key: str, item: dict[str, Any]) -> dict[str, Any]:
    """The schema of a page of a list (``jtcheck.web.api.blueprint.page_json``)."""
    return {"type": "object", "required": [items_key, "count", "limit", "offset", "next_offset"], "properties": {
        items_key: {"type": "array", "items": item}, "count": {"type": "integer", "description": "Items on this page."},
        "total": {"type": "integer", "description": "Items in the whole list (where it is counted)."},
        "limit": {"type": "integer"}, "offset": {"type": "integer"},
        "next_offset": {"type": ["integer", "null"], "description": "The offset of the next page; null on the last."}}}


def _record_schemas(api: ApiRegistry) -> None:
    """Schemas of the calculation records (case revisions), their review and their verification."""
    s = api.schema
    text = {"type": "string", "maxLength": MAX_COMMENT}
    s("ReviewComment", {"type": "object", "additionalProperties": False, "properties": {
        "comment": {**text, "description": "Kept with the review step (and, on signing steps, in the record's "
                                           "history)."}}})
    s("ReviewReason", {"type": "object", "additionalProperties": False, "required": ["reason"], "properties": {
        "reason": {**text, "minLength": 1, "description": "Why: required, kept with the review step."}}})
    s("Person", {"type": ["object", "null"], "properties": {
        "id": {"type": "integer"}, "name": {"type": "string"}, "email": {"type": "string"}}})
    links = {"type": "object", "required": ["self", "case"], "properties": {
        "self": {"type": "string"}, "case": {"type": "string"},
        "record_pdf": {"type": "string", "description": "The signed record (present once the revision has one)."}}}
    s("CurrentRevision", {"type": "object", "required": ["label", "status", "links"], "properties": {
        "label": {"type": "string"}, "letter": {"type": "string"}, "number": {"type": ["integer", "null"]},
        "status": REVISION_STATUS_ENUM, "links": links}})
    s("ReviewStep", {"type": "object", "properties": {
        "id": {"type": "integer"}, "action": REVIEW_ACTION_ENUM, "from_status": _nullable(REVISION_STATUS_ENUM),
        "to_status": REVISION_STATUS_ENUM, "user": _ref("Person"), "at": {"type": "string"},
        "comment": {"type": "string", "description": "The comment, or the reason of a reject or void."}}})
    s("Revision", {"type": "object", "required": ["case_id", "label", "letter", "status", "links"], "properties": {
        "case_id": {"type": "integer"},
        "record_number": {"type": "string", "description": "The case's record number (same for every revision)."},
        "label": {"type": "string", "description": "The number once approved (\"0\", \"1\" ...), else the "
                                                   "letter (\"A\"); either finds the revision in the URL."},
        "letter": {"type": "string"}, "number": {"type": ["integer", "null"]}, "status": REVISION_STATUS_ENUM,
        "issued": {"type": "boolean", "description": "Approved, superseded or voided: the record never changes."},
        "under_review": {"type": "boolean", "description": "For check, checked or for approval: the case's inputs "
                                                           "are frozen."},
        "current": {"type": ["boolean", "null"], "description": "The case's current (latest) revision."},
        "case_version": {"type": ["integer", "null"], "description": "The case version frozen at submission."},
        "result_id": {"type": ["integer", "null"], "description": "The stored result the record reports."},
        "prepared_by": _ref("Person"), "checked_by": _ref("Person"), "approved_by": _ref("Person"),
        "created_at": {"type": "string"}, "submitted_at": STR_OR_NULL, "checked_at": STR_OR_NULL,
        "approved_at": STR_OR_NULL, "closed_at": {**STR_OR_NULL, "description": "When superseded or voided."},
        "record_sha256": {**STR_OR_NULL, "description": "SHA-256 (hex) of the record PDF with every signature so "
                                                        "far: the bytes of record.pdf."},
        "snapshot_sha256": {**STR_OR_NULL, "description": "SHA-256 (hex) of the frozen snapshot the record shows."},
        "links": links,
        "steps": {"type": "array", "items": _ref("ReviewStep"), "description": "The review steps, oldest first "
                                                                               "(one revision only)."}}})
    s("RevisionList", {"type": "object", "properties": {
        "case_id": {"type": "integer"}, "record_number": {"type": "string"},
        "revisions": {"type": "array", "items": _ref("Revision"), "description": "Oldest first; the last is the "
                                                                                 "current one."}}})
    s("SignatureCheck", {"type": "object", "properties": {
        "field": {"type": "string"}, "role": STR_OR_NULL, "signer_name": {"type": "string"},
        "signer_email": {"type": "string"}, "signed_at": STR_OR_NULL, "timestamp_at": STR_OR_NULL,
        "timestamp_trusted": {"type": ["boolean", "null"]}, "intact": {"type": "boolean"},
        "trusted": {"type": "boolean"}, "trusted_at_timestamp": {"type": "boolean"},
        "covers_whole_file": {"type": "boolean"}, "modified_after": {"type": "boolean"},
        "problems": {"type": "array", "items": {"type": "string"}}}})
    s("RecordVerification", {"type": "object", "required": ["ok", "problems"], "properties": {
        "ok": {"type": "boolean", "description": "Every signature intact and trusted (by the instance's trust "
                                                 "root), nothing changed after signing, and the file is a record "
                                                 "stored in the register."},
        "signatures_ok": {"type": "boolean", "description": "The signatures alone are in order."},
        "file_sha256": {"type": "string"}, "revisions": {"type": "integer",
                                                         "description": "PDF revisions (the original counts)."},
        "signatures": {"type": "array", "items": _ref("SignatureCheck"), "description": "In signing order."},
        "register": {"type": "object", "properties": {
            "found": {"type": "boolean"}, "record_number": {"type": "string"}, "revision": {"type": "string"},
            "status": {"type": "string"}, "case_id": {"type": ["integer", "null"]},
            "snapshot_sha256": {"type": "string"}, "message": {"type": "string"}}},
        "problems": {"type": "array", "items": {"type": "string"}}}})


_CASE_TEXT = {
    "tag": {"type": "string", "maxLength": 64}, "service": {"type": "string"},
    "kind": {"type": "string", "enum": [k.value for k in CaseKind]},
    "unit_id": {"type": "integer"}, "fluid_id": {"type": "integer"}, "material_id": {"type": ["integer", "null"]},
    "p_atm": {**_nullable(_ref("Quantity")), "description": "Atmospheric pressure for gauge units"},
    "basis": {"type": "string"}, "references": {"type": "string"},
    "water_saturated": {"type": "boolean", "default": False,
                        "description": "Screen for hydrates as if the gas were water-saturated."},
    "hydrate_inhibitor": {"type": "string", "enum": list(service.HYDRATE_INHIBITORS), "default": "methanol",
                          "description": "Hydrate inhibitor for the dose (given for methanol and MEG)."},
}
#: The kinds' list inputs: text with one item a line (jtcheck.itemlists), or a list of such lines.
_LINES = {"oneOf": [{"type": "string"}, {"type": "array", "items": {"type": "string"}}, {"type": "null"}]}
_CASE_LISTS = {
    "header_sections": {**_LINES, "description": "Flare header sections in flow order, one a line: "
                                                 "'name; lowest pressure; cold limit or -; material'"},
    "other_sources": {**_LINES, "description": "Other relief valves discharging at the same time, one a line: "
                                               "'name; composition; mass flow kg/s; relieving pressure; "
                                               "relieving temperature'"},
    "settle_out_volumes": {**_LINES, "description": "Volumes that settle out after a shutdown, one a line: "
                                                    "'name; volume m3; pressure; temperature'"},
    "credible_off": {"oneOf": [*_LINES["oneOf"], {"type": "object", "additionalProperties": {"type": "string"}}],
                     "description": "Generated credible cases switched off, one a line: 'case: reason' (cases: "
                                    "settle_out, start_up, heater_loss, ambient)"},
}


_NUM = {"type": "number"}
#: A vessel depressuring case's inputs (jtcheck.cases.depressuring.inputs): objects in SI, or the form's text.
_DEPRESSURING_OBJECTS = {
    "vessel": {"oneOf": [{"type": "object", "additionalProperties": False, "properties": {
        "orientation": {"type": "string", "enum": ["vertical", "horizontal"]},
        "inner_diameter_m": {**_NUM, "description": "Inside diameter [m]"},
        "length_m": {**_NUM, "description": "Length tangent to tangent [m] (or give volume_m3)"},
        "volume_m3": {**_NUM, "description": "Volume [m3] (in place of the length; cylinder with flat ends)"},
        "wall_thickness_m": {**_NUM, "description": "Wall thickness [m]"},
        "liquid_level_m": {**NUM_OR_NULL, "description": "Initial liquid level [m]"},
        "wall_material": {"type": "string", "enum": ["carbon steel", "stainless steel"],
                          "description": "Thermal properties of the wall; the cold limit is the case's material"},
        "wall_t0_k": {**NUM_OR_NULL, "description": "Initial wall temperature [K] (default: the fluid's)"}}},
        {"type": "string"}, {"type": "null"}],
        "description": "Vessel depressuring cases: the vessel, as an object in SI or as text "
                       "'orientation=vertical; diameter=1.8 m; length=5 m; wall=35 mm'."},
    "orifices": {"oneOf": [{"type": "array", "items": {"type": "object", "additionalProperties": False,
                                                       "required": ["name", "diameter_m", "discharge_coefficient"],
                                                       "properties": {
        "name": {"type": "string"}, "diameter_m": {**_NUM, "description": "Bore diameter [m]"},
        "discharge_coefficient": {**_NUM, "description": "Cd [-], above 0 and at most 1"},
        "back_pressure_pa": {**NUM_OR_NULL, "description": "Back pressure [Pa abs] (default: the outlet pressure)"}}}},
        *_LINES["oneOf"]],
        "description": "Vessel depressuring cases: blowdown valves and restriction orifices, objects in SI or one a "
                       "line 'name; bore diameter; discharge coefficient; back pressure'."},
    "heat_input": {"oneOf": [{"type": "object", "additionalProperties": False, "properties": {
        "kind": {"type": "string", "enum": ["none", "ambient", "fire"]},
        "ambient_t_k": {**_NUM, "description": "Air temperature [K]"},
        "environment_factor": {**_NUM, "description": "API 521 environment factor F [-] (fire)"},
        "adequate_drainage": {"type": "boolean", "description": "API 521 drainage and fire-fighting (fire)"}}},
        {"type": "string"}, {"type": "null"}],
        "description": "Vessel depressuring cases: heat from outside (none, ambient, or an API 521 fire; common "
                       "basis, verify against the edition in force)."},
    "run": {"oneOf": [{"type": "object", "additionalProperties": False, "properties": {
        "end_time_s": {**_NUM, "description": "Stop at this time [s] (default 900)"},
        "end_pressure_pa": {**NUM_OR_NULL, "description": "Stop at this pressure [Pa abs]"},
        "design_pressure_pa": {**NUM_OR_NULL, "description": "Design pressure [Pa abs]: the target is the API 521 "
                                                             "common basis (690 kPa gauge or 50 % of the design "
                                                             "gauge pressure, whichever is lower, in 15 min)"},
        "target_pressure_pa": {**NUM_OR_NULL, "description": "A target pressure [Pa abs] instead"},
        "target_time_s": {**NUM_OR_NULL, "description": "Time to reach the target [s] (default 900)"},
        "model": {"type": ["string", "null"], "enum": ["equilibrium", "two-zone", None],
                  "description": "The vessel model: equilibrium (default) or two-zone (gas and liquid zones at their "
                                 "own temperatures)"}}},
        {"type": "string"}, {"type": "null"}],
        "description": "Vessel depressuring cases: when the run stops and the depressuring target."},
}


def _case_property(key: str) -> dict[str, Any]:
    """The schema of one case-body field (every key :data:`case_inputs.INPUT_FIELDS` accepts)."""
    if key in _CASE_TEXT:
        return _CASE_TEXT[key]
    if key in _CASE_LISTS:
        return _CASE_LISTS[key]
    if key in _DEPRESSURING_OBJECTS:
        return _DEPRESSURING_OBJECTS[key]
    q = next((q for q in CASE_QUANTITIES if q.name == key), None)
    if q is None:   # a field the case input accepts but this module does not know yet
        return {"description": key.replace("_", " ")}
    return {**_nullable(_ref("Quantity")),
            "description": f"{q.label} [{q.kind.replace('_', ' ')}; units: {', '.join(q.choices)}; stored in "
                           f"{q.si_unit}]"}


def _screening_schemas(api: ApiRegistry) -> None:
    """Schemas of ``Screening.to_dict()`` (jtcheck.screening.screen), shared by letdown answers and results."""
    s = api.schema
    s("ColdLimits", {"type": "object", "description": "Limits the outcome was judged against [K].", "properties": {
        "mdmt_k": NUM_OR_NULL, "mdmt_source": {"type": "string"}, "user_limit_k": NUM_OR_NULL,
        "margin_k": {"type": "number"}, "governing_k": NUM_OR_NULL, "target_k": NUM_OR_NULL,
        "model_spread_k": {"type": "number"}, "spread_condition": {"type": "string"},
        "total_margin_k": {"type": "number"}, "margin_terms": {"type": "array", "items": {
            "type": "object", "properties": {"term": {"type": "string"}, "k": {"type": "number"},
                                             "basis": {"type": "string"}}}},
        "basis": {"type": "string"}}})
    s("Finding", {"type": "object", "required": ["topic", "severity", "message"], "properties": {
        "topic": {"type": "string", "enum": [t.value for t in Topic]},
        "severity": {"type": "string", "enum": [v.value for v in Severity]},
        "message": {"type": "string"},
        "numbers": {"type": "object", "description": "The values behind the message, SI (unit in the key)."},
        "basis": {"type": "string"}, "condition": {"type": "string"}}})
    s("ScreenedCondition", {"type": "object", "properties": {
        "condition": {"type": "string"}, "p_in_pa": {"type": "number"}, "t_in_k": {"type": "number"},
        "p_out_pa": {"type": "number"},
        "t_screen_k": {**NUM_OR_NULL, "description": "The outlet screened: the colder model, CO2 solids corrected; "
                                                     "null when any model did not converge."},
        "converged": {"type": "boolean"}, "governing_model": {"type": "string"}, "message": {"type": "string"},
        "solids": {"type": ["object", "null"]},
        "models": {"type": "object", "description": "EOS -> outlet by that model (null: inputs refused).",
                   "additionalProperties": {"type": ["object", "null"], "properties": {
                       "t_out_k": NUM_OR_NULL, "phase": {"type": "string"}, "converged": {"type": "boolean"},
                       "vapor_fraction": NUM_OR_NULL, "message": {"type": "string"}}}}}})
    answer_part = {"type": "object", "properties": {
        "target_k": {"type": "number"}, "all_converged": {"type": "boolean"},
        "cases": {"type": "array", "items": {"type": "object"}, "description": "One entry per condition and model."},
        "governing": {"type": ["object", "null"], "description": "The entry that asks the most."}}}
    s("ScreeningAnswers", {"type": "object", "description": "What keeps it safe (only on fail or margin eroded), "
                                                            "the operating sweep and the relief-valve case.",
                           "properties": {
                               "preheat": {**answer_part, "description": "Required preheat per condition and model; "
                                                                         "governing: the largest temperature rise "
                                                                         "(t_in_required_k, temperature_rise_k, "
                                                                         "duty_w)."},
                               "outlet_pressure_limit": {**answer_part,
                                                         "description": "Lowest outlet pressure per condition and "
                                                                        "model; governing: the highest "
                                                                        "(p_out_min_pa)."},
                               "sweep": {"type": "object", "description": "Ranges swept, whether complete, and the "
                                                                          "coldest combination (worst)."},
                               "relief_valve": {"type": "object"}}})
    s("ScreeningDisplay", {"type": "object", "properties": {
        **{k: {**_nullable(_ref("DisplayValue")), "description": text} for k, text in SCREENING_DISPLAY.items()},
        "sweep_worst": {"type": ["object", "null"], "additionalProperties": _ref("DisplayValue"),
                        "description": SCREENING_DISPLAY["sweep_worst"]}}})
    s("Screening", {"type": "object", "required": ["outcome", "conditions", "findings"], "properties": {
        "outcome": OUTCOME_ENUM, "outcome_sentence": {"type": "string"}, "limits": _ref("ColdLimits"),
        "t_out_min_k": NUM_OR_NULL, "coldest_condition": {"type": "string"},
        "models": {"type": "array", "items": {"type": "string"}},
        "conditions": {"type": "array", "items": _ref("ScreenedCondition")},
        "findings": {"type": "array", "items": _ref("Finding"), "description": "Hazards first."},
        "answers": _ref("ScreeningAnswers"),
        "display": {**_ref("ScreeningDisplay"), "description": "The key numbers in display units: the request's "
                                                               "(letdown) or the case's (stored result)."}}})
