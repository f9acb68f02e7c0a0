"""The fluid library (list, create, read, change, delete) and the reference data (materials, sites and units)
through the API."""
from __future__ import annotations

from collections.abc import Mapping
from typing import Any

from flask import Response, jsonify, url_for

from jtcheck.errors import InputError
from jtcheck.records import service
from jtcheck.records.errors import NotFound
from jtcheck.records.models import FluidRecord
from jtcheck.web import removal
from jtcheck.web.api.blueprint import PAGE_PARAMS, api, body, created, page_args, page_json, patch_version, unknown_keys
from jtcheck.web.api.serialize import (
    fluid_json,
    material_json,
    site_json,
)
from jtcheck.web.database import db_session
from jtcheck.web.security import require_admin, require_editor, require_viewer

# -- fluids --------------------------------------------------------------------------------------
_FLUID_KEYS = ("name", "composition", "eos", "kij", "notes")


def _fluid_values(data: Mapping[str, Any]) -> dict[str, Any]:
    unknown_keys(data, _FLUID_KEYS)
    out = {k: v for k, v in data.items() if k in ("name", "composition", "eos", "notes")}
    if "composition" in out and isinstance(out["composition"], list):
        if not all(isinstance(p, list | tuple) and len(p) == 2 for p in out["composition"]):
            raise InputError("composition", "a list must hold [name, amount] pairs")
        out["composition"] = [tuple(p) for p in out["composition"]]
    if "kij" in data:
        out["kij_mode"] = data["kij"]
    return out


def _fluid_or_404(fluid_id: int) -> FluidRecord:
    # the records service has no get_fluid; the role was checked by the caller
    record = db_session().get(FluidRecord, fluid_id)
    if record is None:
        raise NotFound("fluid", fluid_id)
    return record


def _page(key: str, items: list[Any]) -> Response:
    limit, offset = page_args()
    return jsonify(page_json(key, items[offset:offset + limit], limit, offset, len(items)))


@api.route("/fluids", "GET", summary="List fluids", tag="fluids", response="FluidList", query=PAGE_PARAMS,
           errors=(403, 422))
def list_fluids():
    """Stored fluids, by name, a page at a time."""
    user = require_viewer("view fluids")
    return _page("fluids", [fluid_json(f) for f in service.list_fluids(db_session(), user)])


@api.route("/fluids", "POST", summary="Create a fluid", tag="fluids", request="FluidInput", response="Fluid",
           status=201, errors=(403, 409))
def create_fluid():
    """A named composition with its equation of state and kij set."""
    user = require_editor("create fluids")
    values = _fluid_values(body())
    if "name" not in values or "composition" not in values:
        raise InputError("name" if "name" not in values else "composition", "required")
    record = service.create_fluid(db_session(), user, values["name"], values["composition"],
                                  values.get("eos", "PR"), values.get("kij_mode", "table"), values.get("notes", ""))
    return created(fluid_json(record), url_for("api.get_fluid", fluid_id=record.id))


@api.route("/fluids/<int:fluid_id>", "GET", summary="One fluid", tag="fluids", response="Fluid", errors=(403, 404))
def get_fluid(fluid_id: int):
    """A stored fluid."""
    require_viewer("view fluids")
    return jsonify(fluid_json(_fluid_or_404(fluid_id)))


@api.route("/fluids/<int:fluid_id>", "PATCH", summary="Change a fluid", tag="fluids", request="FluidPatch",
           response="Fluid", errors=(403, 404, 409))
def update_fluid(fluid_id: int):
    """Results already stored keep the fluid they were computed with.  "version" (the version you edited) is
    required; a save made by someone else in between is refused (409, naming what changed and who changed it)."""
    user = require_editor("edit fluids")
    data = body()
    _fluid_or_404(fluid_id)
    version = patch_version(data)
    record = service.update_fluid(db_session(), user, fluid_id, _fluid_values(data), expected_version=version)
    return jsonify(fluid_json(record))


@api.route("/fluids/<int:fluid_id>", "DELETE", summary="Delete a fluid no case uses", tag="fluids", status=204,
           errors=(403, 404, 409))
def delete_fluid(fluid_id: int):
    """Refused with 409 while a case uses the fluid."""
    user = require_editor("delete fluids")
    removal.delete_fluid(db_session(), user, fluid_id)
    return Response(status=204)


# -- reference data ------------------------------------------------------------------------------
@api.route("/materials", "GET", summary="List materials and their minimum metal temperatures", tag="reference",
           response="MaterialList", query=PAGE_PARAMS, errors=(403, 422))
def list_materials():
    """Coldest limit first, a page at a time.  Shipped entries are typical values to verify against the applicable
    code."""
    user = require_viewer("view materials")
    return _page("materials", [material_json(m) for m in service.list_materials(db_session(), user)])


@api.route("/materials", "POST", summary="Add a material (admins): a typed limit, an exemption curve, or both",
           tag="reference", request="MaterialBody", response="Material", status=201, errors=(403, 409, 422))
def create_material():
    """SI values: "min_metal_temperature_k", "exemption_curve" (A-D), "curve_code" (VIII-1, B31.3), "thickness_m",
    "impact_test_temperature_k", "pwht_credit", "allowable_stress_pa", "outside_diameter_m",
    "corrosion_allowance_m", "joint_efficiency", "other_stress_pa"; with both a typed limit and a curve the warmer
    governs."""
    user = require_admin("create materials")
    data = dict(body())
    name = data.pop("name", None)
    material = service.create_material(db_session(), user, name=name, **data)
    return jsonify(material_json(material)), 201


@api.route("/materials/<int:material_id>", "PATCH", summary="Change a material (admins)", tag="reference",
           request="MaterialBody", response="Material", errors=(403, 404, 409, 422))
def update_material(material_id: int):
    """The fields given are changed (SI, as for POST); the whole cold-limit data is checked."""
    user = require_admin("edit materials")
    return jsonify(material_json(service.update_material(db_session(), user, material_id, body())))


@api.route("/materials/curves", "GET", summary="The MDMT exemption curve table in use", tag="reference",
           response="CurveTable", errors=(403,))
def curve_table():
    """Rows with their source, edition and provenance ("from memory" where recalled): verify against the code
    edition in force."""
    user = require_viewer("view the MDMT curve table")
    label, rows = service.curve_rows(db_session(), user)
    return jsonify({"label": label, "caution": "verify against the code edition in force", "rows": rows})


@api.route("/sites", "GET", summary="List sites and their units", tag="reference", response="SiteList",
           query=PAGE_PARAMS, errors=(403, 422))
def list_sites():
    """Sites with their units (a case belongs to a unit), a page at a time."""
    user = require_viewer("view sites")
    return _page("sites", [site_json(s) for s in service.list_sites(db_session(), user)])
