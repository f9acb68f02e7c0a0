"""Pages of the material table: every user sees it; admins add and edit entries."""
from __future__ import annotations

from flask import Blueprint, flash, redirect, render_template, request, url_for

from jtcheck.errors import InputError
from jtcheck.records import service
from jtcheck.records.errors import ConcurrentEditError, NotFound
from jtcheck.records.models import Material
from jtcheck.records.versions import parse_version
from jtcheck.units import parse_temperature, temperature_from_k
from jtcheck.web.database import db_session
from jtcheck.web.forms import FormState
from jtcheck.web.quantities import TEMPERATURE_CHOICES, input_number
from jtcheck.web.security import require_admin, require_viewer

bp = Blueprint("materials", __name__)

MATERIAL_FORM_FIELDS = ("name", "specification", "min_metal_temperature", "min_metal_temperature_unit", "notes",
                        "source", "editable")


def _values(form: FormState) -> dict:
    """The material fields in SI; InputError naming the form field."""
    value, unit = form.get("min_metal_temperature").strip(), form.get("min_metal_temperature_unit").strip()
    if unit not in TEMPERATURE_CHOICES:
        raise InputError("min_metal_temperature", f"choose a unit from the list ({', '.join(TEMPERATURE_CHOICES)})")
    if not value:
        raise InputError("min_metal_temperature", "the minimum metal temperature is required, e.g. -29 degC")
    return {"name": form.get("name"), "specification": form.get("specification"),
            "min_metal_temperature_k": parse_temperature(f"{value} {unit}", "min_metal_temperature"),
            "notes": form.get("notes"), "source": form.get("source"), "editable": form.get("editable") == "1"}


def _field(exc: InputError) -> str:
    return "min_metal_temperature" if exc.field == "min_metal_temperature_k" else exc.field


def _render(form: FormState, material: Material | None, status: int = 200):
    return render_template("materials/form.html", form=form, material=material,
                           units=TEMPERATURE_CHOICES), status


@bp.route("/materials")
def index():
    user = require_viewer("view materials")
    return render_template("materials/list.html", materials=service.list_materials(db_session(), user),
                           can_admin=service.can_administer(user))


@bp.route("/materials/new", methods=["GET", "POST"])
def new():
    user = require_admin("create materials")
    if request.method == "GET":
        return _render(FormState.of({"min_metal_temperature_unit": "degC", "editable": "1"}), None)
    form = FormState.from_request(MATERIAL_FORM_FIELDS)
    try:
        material = service.create_material(db_session(), user, **_values(form))
    except InputError as exc:
        form.add(_field(exc), exc.message)
        return _render(form, None, 409 if "already exists" in exc.message else 422)
    flash(f"Material {material.name} added.")
    return redirect(url_for("materials.index"))


@bp.route("/materials/<int:material_id>/edit", methods=["GET", "POST"])
def edit(material_id: int):
    user = require_admin("edit materials")
    material = db_session().get(Material, material_id)
    if material is None:
        raise NotFound("material", material_id)
    if request.method == "GET":
        return _render(FormState.of({
            "name": material.name, "specification": material.specification,
            "min_metal_temperature": input_number(temperature_from_k(material.min_metal_temperature_k, "degC")),
            "min_metal_temperature_unit": "degC", "notes": material.notes, "source": material.source,
            "editable": "1" if material.editable else "", "version": str(material.version)}), material)
    form = FormState.from_request((*MATERIAL_FORM_FIELDS, "version"))
    try:
        version = parse_version(form.get("version"), required=True)
        values = _values(form)
        if abs(values["min_metal_temperature_k"] - material.min_metal_temperature_k) < 1e-9:
            del values["min_metal_temperature_k"]   # shown in degC and sent back: unchanged
        material = service.update_material(db_session(), user, material_id, values, expected_version=version)
    except ConcurrentEditError as exc:
        form.general.append(str(exc))
        return _render(form, material, 409)
    except InputError as exc:
        if exc.field == "version":
            form.general.append(f"version: {exc.message}")
            return _render(form, material, 422)
        form.add(_field(exc), exc.message)
        return _render(form, material, 409 if "already exists" in exc.message else 422)
    flash(f"Material {material.name} saved.")
    return redirect(url_for("materials.index"))
