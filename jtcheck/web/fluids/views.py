"""Pages of the fluid library: list, view, create and edit named compositions with their EOS and kij set."""
from __future__ import annotations

import math
import re

from flask import Blueprint, flash, redirect, render_template, request, url_for
from sqlalchemy import select

from jtcheck.errors import InputError, JtcheckError
from jtcheck.records import service
from jtcheck.records.errors import ConcurrentEditError, NotFound
from jtcheck.records.models import Case, FluidRecord, KijMode
from jtcheck.records.versions import parse_version
from jtcheck.thermo.composition import normalise_composition
from jtcheck.web import removal
from jtcheck.web.database import db_session
from jtcheck.web.forms import FormState
from jtcheck.web.security import current_user, require_editor, require_viewer

bp = Blueprint("fluids", __name__)

#: Rows of the composition table on the fluid form.
TABLE_ROWS = 12
EOS_CHOICES = (("PR", "Peng-Robinson (PR)"), ("SRK", "Soave-Redlich-Kwong (SRK)"), ("RK", "Redlich-Kwong (RK)"),
               ("VDW", "van der Waals (VDW)"),
               ("GERG2008", "GERG-2008 (Kunz and Wagner 2012; 21 components; kij: table only)"))
KIJ_CHOICES = (("table", "published values from jtcheck's kij table (pairs without one: 0, listed)"),
               ("zero", "all kij = 0"))
FLUID_FORM_FIELDS = ("name", "composition", "eos", "kij_mode", "notes",
                     *(f"component_{i}" for i in range(1, TABLE_ROWS + 1)),
                     *(f"amount_{i}" for i in range(1, TABLE_ROWS + 1)))


def parse_composition_lines(text: str, field: str = "composition") -> list[tuple[str, float]]:
    """``(name, amount)`` pairs from lines such as ``methane = 0.9`` (also ``name: amount``, ``name amount``,
    or several ``name=amount`` on a line separated by commas); raise InputError naming the line."""
    pairs: list[tuple[str, float]] = []
    for lineno, raw in enumerate(text.splitlines(), start=1):
        line = raw.strip()
        if not line or line.startswith("#"):
            continue
        items = re.split(r"[,;]", line) if line.count("=") + line.count(":") > 1 else [line]
        for item in items:
            item = item.strip()
            if not item:
                continue
            sep = "=" if "=" in item else (":" if ":" in item else None)
            if sep is not None:
                name, _, amount = item.partition(sep)
            else:
                parts = item.rsplit(None, 1)
                if len(parts) != 2:
                    raise InputError(field, f"line {lineno}: {item!r} is not name=amount (e.g. 'methane=0.9')")
                name, amount = parts
            name, amount = name.strip(), amount.strip()
            if not name:
                raise InputError(field, f"line {lineno}: a component name is missing before {amount!r}")
            try:
                value = float(amount)
            except ValueError:
                raise InputError(field, f"line {lineno}: the amount {amount!r} of {name!r} is not a number") from None
            if not math.isfinite(value):
                raise InputError(field, f"line {lineno}: the amount of {name!r} is not a finite number")
            pairs.append((name, value))
    return pairs


def composition_from_form(form: FormState) -> list[tuple[str, float]]:
    """The composition typed as lines or in the table (not both)."""
    lines = form.get("composition").strip()
    rows: list[tuple[str, float]] = []
    for i in range(1, TABLE_ROWS + 1):
        name, amount = form.get(f"component_{i}").strip(), form.get(f"amount_{i}").strip()
        if not name and not amount:
            continue
        if not name or not amount:
            raise InputError("composition", f"table row {i}: give both the component and its amount")
        try:
            value = float(amount)
        except ValueError:
            raise InputError("composition", f"table row {i}: the amount {amount!r} of {name!r} is not a number") \
                from None
        if not math.isfinite(value):
            raise InputError("composition", f"table row {i}: the amount of {name!r} is not a finite number")
        rows.append((name, value))
    if lines and rows:
        raise InputError("composition", "give the composition either as lines or in the table, not both")
    if not lines and not rows:
        raise InputError("composition", "a composition is required: component names with mole fractions or "
                                        "mole percent, e.g. 'methane=0.9' and 'ethane=0.1' on two lines")
    return rows or parse_composition_lines(lines)


def _same_composition(record: FluidRecord, composition: list[tuple[str, float]]) -> bool:
    try:
        typed = normalise_composition(composition)
    except InputError:
        return False
    stored = record.composition_pairs()
    return typed.ids == tuple(c for c, _ in stored) and all(
        math.isclose(float(z), zs, rel_tol=1e-9, abs_tol=1e-12) for z, (_, zs) in zip(typed.zs, stored, strict=True))


def _flash_normalised(composition: list[tuple[str, float]]) -> None:
    """Say so when the composition was normalised (README: sums within 0.5 % of 1 or 100 are normalised with a
    warning); the entry as typed is kept in the fluid's history."""
    try:
        notes = normalise_composition(composition).warnings
    except InputError:
        return
    for note in notes:
        if "normalised" in note:
            flash(f"Warning: the composition's {note}. The entry as typed is kept in the fluid's history.")


def _fluid(fluid_id: int) -> FluidRecord:
    require_viewer("view fluids")
    record = db_session().get(FluidRecord, fluid_id)   # the records service has no get_fluid
    if record is None:
        raise NotFound("fluid", fluid_id)
    return record


def _render(form: FormState, fluid: FluidRecord | None, status: int = 200):
    return render_template("fluids/form.html", form=form, fluid=fluid, eos_choices=EOS_CHOICES,
                           kij_choices=KIJ_CHOICES, rows=range(1, TABLE_ROWS + 1)), status


def _field(exc: InputError) -> str:
    return exc.field if exc.field in FLUID_FORM_FIELDS else "composition"


@bp.route("/fluids")
def index():
    user = require_viewer("view fluids")
    return render_template("fluids/list.html", fluids=service.list_fluids(db_session(), user),
                           can_edit=service.can_edit_cases(user))


@bp.route("/fluids/new", methods=["GET", "POST"])
def new():
    user = require_editor("create fluids")
    if request.method == "GET":
        return _render(FormState.of({"eos": "PR", "kij_mode": "table"}), None)
    form = FormState.from_request(FLUID_FORM_FIELDS)
    try:
        composition = composition_from_form(form)
        record = service.create_fluid(db_session(), user, form.get("name"), composition, form.get("eos"),
                                      form.get("kij_mode"), form.get("notes"))
    except InputError as exc:
        form.add(_field(exc), exc.message)
        return _render(form, None, 409 if "already exists" in exc.message else 422)
    flash(f"Fluid {record.name} saved.")
    _flash_normalised(composition)
    return redirect(url_for("fluids.view", fluid_id=record.id))


@bp.route("/fluids/<int:fluid_id>")
def view(fluid_id: int):
    record = _fluid(fluid_id)
    user = current_user()
    session = db_session()
    envelope, fluid, problem = None, None, None
    try:
        fluid = record.to_fluid()
        envelope = fluid.phase_envelope()
    except JtcheckError as exc:
        problem = str(exc)
    cases = list(session.scalars(select(Case).where(Case.fluid_id == record.id).order_by(Case.tag)))
    entries = service.audit_trail(session, user, "fluid", record.id)
    return render_template("fluids/view.html", fluid=record, model=fluid, envelope=envelope, problem=problem,
                           cases=cases, entries=entries, can_edit=service.can_edit_cases(user))


@bp.route("/fluids/<int:fluid_id>/edit", methods=["GET", "POST"])
def edit(fluid_id: int):
    user = require_editor("edit fluids")
    record = _fluid(fluid_id)
    if request.method == "GET":
        lines = "\n".join(f"{c}={z:.12g}" for c, z in record.composition_pairs())
        return _render(FormState.of({"name": record.name, "composition": lines, "eos": record.eos,
                                     "kij_mode": KijMode(record.kij_mode).value, "notes": record.notes,
                                     "version": str(record.version)}), record)
    form = FormState.from_request((*FLUID_FORM_FIELDS, "version"))
    try:
        version = parse_version(form.get("version"), required=True)
        composition = composition_from_form(form)
        changes = {"name": form.get("name"), "composition": composition, "eos": form.get("eos"),
                   "kij_mode": form.get("kij_mode"), "notes": form.get("notes")}
        if _same_composition(record, composition):
            del changes["composition"]   # shown and sent back unchanged: keep the stored fractions exactly
        record = service.update_fluid(db_session(), user, fluid_id, changes, expected_version=version)
    except ConcurrentEditError as exc:
        form.general.append(str(exc))
        return _render(form, _fluid(fluid_id), 409)
    except InputError as exc:
        if exc.field == "version":
            form.general.append(f"version: {exc.message}")
            return _render(form, _fluid(fluid_id), 422)
        form.add(_field(exc), exc.message)
        return _render(form, _fluid(fluid_id), 409 if "already exists" in exc.message else 422)
    flash(f"Fluid {record.name} saved.")
    if "composition" in changes:
        _flash_normalised(composition)
    return redirect(url_for("fluids.view", fluid_id=record.id))


@bp.route("/fluids/<int:fluid_id>/delete", methods=["POST"])
def delete(fluid_id: int):
    user = require_editor("delete fluids")
    name = _fluid(fluid_id).name
    removal.delete_fluid(db_session(), user, fluid_id)
    flash(f"Fluid {name} deleted.")
    return redirect(url_for("fluids.index"))
