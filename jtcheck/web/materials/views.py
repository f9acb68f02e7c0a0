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
                        "source", "editable", "exemption_curve", "curve_code", "thickness", "impact_test_temperature",
                        "impact_test_temperature_unit", "pwht_credit", "allowable_stress", "outside_diameter",
                        "corrosion_allowance", "joint_efficiency", "other_stress")
#: Plain-number form fields of the cold-limit data: form name -> (register key, factor to SI, example).
NUMBER_FIELDS = {"thickness": ("thickness_m", 1e-3, "25.4 (mm)"),
                 "allowable_stress": ("allowable_stress_pa", 1e6, "138 (MPa)"),
                 "outside_diameter": ("outside_diameter_m", 1e-3, "323.9 (mm)"),
                 "corrosion_allowance": ("corrosion_allowance_m", 1e-3, "3 (mm)"),
                 "joint_efficiency": ("joint_efficiency", 1.0, "1 or 0.85"),
                 "other_stress": ("other_stress_pa", 1e6, "20 (MPa)")}
CURVE_CHOICES = (("A", "A (warmest)"), ("B", "B"), ("C", "C"), ("D", "D (coldest)"))
CODE_CHOICES = (("VIII-1", "ASME BPVC VIII-1 (UCS-66, UCS-66.1, UCS-68(c))"),
                ("B31.3", "ASME B31.3 (para. 323.2.2, Table A-1, Fig. 323.2.2A/B)"))


def _temperature(form: FormState, name: str, required: bool, example: str) -> float | None:
    value, unit = form.get(name).strip(), form.get(f"{name}_unit").strip()
    if not value:
        if required:
            raise InputError(name, f"required, e.g. {example}")
        return None
    if unit not in TEMPERATURE_CHOICES:
        raise InputError(name, f"choose a unit from the list ({', '.join(TEMPERATURE_CHOICES)})")
    return parse_temperature(f"{value} {unit}", name)


def _number(form: FormState, name: str) -> float | None:
    key, factor, example = NUMBER_FIELDS[name]
    text = form.get(name).strip()
    if not text:
        return None
    try:
        value = float(text)
    except ValueError:
        raise InputError(name, f"must be a number, e.g. {example}") from None
    return value * factor


def _values(form: FormState) -> dict:
    """The material fields in SI; InputError naming the form field."""
    values = {"name": form.get("name"), "specification": form.get("specification"),
              "min_metal_temperature_k": _temperature(form, "min_metal_temperature", False, "-29 degC"),
              "notes": form.get("notes"), "source": form.get("source"), "editable": form.get("editable") == "1",
              "exemption_curve": form.get("exemption_curve").strip(), "curve_code": form.get("curve_code").strip(),
              "impact_test_temperature_k": _temperature(form, "impact_test_temperature", False, "-46 degC"),
              "pwht_credit": form.get("pwht_credit") == "1"}
    for name, (key, _, _) in NUMBER_FIELDS.items():
        values[key] = _number(form, name)
    return values


#: Register key -> form field, where they differ.
_FORM_NAMES = {"min_metal_temperature_k": "min_metal_temperature",
               "impact_test_temperature_k": "impact_test_temperature",
               **{key: name for name, (key, _, _) in NUMBER_FIELDS.items()}}


def _field(exc: InputError) -> str:
    return _FORM_NAMES.get(exc.field, exc.field)


def _render(form: FormState, material: Material | None, status: int = 200):
    return render_template("materials/form.html", form=form, material=material, units=TEMPERATURE_CHOICES,
                           curves=CURVE_CHOICES, codes=CODE_CHOICES), status


def _form_of(material: Material) -> FormState:
    def num(value: float | None, factor: float) -> str:
        return "" if value is None else input_number(value / factor)

    def temp(value: float | None) -> str:
        return "" if value is None else input_number(temperature_from_k(value, "degC"))

    return FormState.of({
        "name": material.name, "specification": material.specification,
        "min_metal_temperature": temp(material.min_metal_temperature_k), "min_metal_temperature_unit": "degC",
        "notes": material.notes, "source": material.source, "editable": "1" if material.editable else "",
        "exemption_curve": material.exemption_curve or "", "curve_code": material.curve_code or "VIII-1",
        "impact_test_temperature": temp(material.impact_test_temperature_k), "impact_test_temperature_unit": "degC",
        "pwht_credit": "1" if material.pwht_credit else "",
        **{name: num(getattr(material, key), factor) for name, (key, factor, _) in NUMBER_FIELDS.items()}})


@bp.route("/materials")
def index():
    user = require_viewer("view materials")
    return render_template("materials/list.html", materials=service.list_materials(db_session(), user),
                           can_admin=service.can_administer(user))


@bp.route("/materials/new", methods=["GET", "POST"])
def new():
    user = require_admin("create materials")
    if request.method == "GET":
        return _render(FormState.of({"min_metal_temperature_unit": "degC", "impact_test_temperature_unit": "degC",
                                     "curve_code": "VIII-1", "editable": "1"}), None)
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
        form = _form_of(material)
        form.values["version"] = str(material.version)
        return _render(form, material)
    form = FormState.from_request((*MATERIAL_FORM_FIELDS, "version"))
    try:
        version = parse_version(form.get("version"), required=True)
        values = _values(form)
        for key in [k for k, v in values.items() if isinstance(v, float) and isinstance(getattr(material, k), float)
                    and abs(v - getattr(material, k)) <= 1e-9 * max(1.0, abs(v))]:
            del values[key]   # shown rounded in display units and sent back: unchanged
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


@bp.route("/materials/curves", methods=["GET"])
def curves():
    user = require_viewer("view the MDMT curve table")
    label, rows = service.curve_rows(db_session(), user)
    return render_template("materials/curves.html", label=label, rows=rows, can_admin=service.can_administer(user))


@bp.route("/materials/curves/<int:position>", methods=["POST"])
def curve_point(position: int):
    user = require_admin("edit the MDMT curve table")
    form = FormState.from_request(("value", "provenance"))
    try:
        try:
            value = float(form.get("value").strip())
        except ValueError:
            raise InputError("value", "must be a number in the row's unit") from None
        service.update_curve_point(db_session(), user, position, value=value,
                                   provenance=form.get("provenance").strip() or None)
    except InputError as exc:
        db_session().rollback()
        label, rows = service.curve_rows(db_session(), user)
        return render_template("materials/curves.html", label=label, rows=rows, can_admin=True,
                               error=f"Row {position} not changed: {exc}"), 422
    flash(f"Curve table row {position} saved.")
    return redirect(url_for("materials.curves"))
