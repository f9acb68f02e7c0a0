"""Materials and their minimum metal temperatures [K], and the typical entries shipped with jtcheck."""
from __future__ import annotations

from collections.abc import Mapping
from typing import Any

from sqlalchemy import select
from sqlalchemy.orm import Session
from sqlalchemy.orm.exc import StaleDataError

from jtcheck.cases.fields import LIMIT_TEMPERATURE_RANGE_K, check_number
from jtcheck.errors import InputError
from jtcheck.records import audit
from jtcheck.records.errors import ConcurrentEditError, NotFound, PermissionDenied
from jtcheck.records.fields import (
    MAX_LONG_TEXT,
    MAX_NAME,
    parse_text,
    refuse_unknown_keys,
)
from jtcheck.records.guard import ADMIN_ROLES, ALL_ROLES, require
from jtcheck.records.models import Material, User
from jtcheck.records.transactions import transaction
from jtcheck.records.versions import check_version
from jtcheck.screening.mdmt import MaterialColdSpec, material_mdmt, parse_code, parse_curve

#: The cold-limit fields a material carries (jtcheck.screening.mdmt), SI, with their words and ranges.
COLD_FIELDS: dict[str, tuple[str, str, tuple[float, float, bool]]] = {
    "thickness_m": ("governing thickness", "m", (0.0, 1.0, False)),
    "impact_test_temperature_k": ("impact test temperature", "K", LIMIT_TEMPERATURE_RANGE_K),
    "allowable_stress_pa": ("allowable stress at the design temperature", "Pa", (0.0, 2e9, False)),
    "outside_diameter_m": ("outside diameter", "m", (0.0, 20.0, False)),
    "corrosion_allowance_m": ("corrosion and mill-tolerance allowance", "m", (0.0, 0.1, True)),
    "joint_efficiency": ("joint efficiency", "-", (0.0, 1.0, False)),
    "other_stress_pa": ("stress from other loads (dead loads, displacement strain)", "Pa", (0.0, 2e9, True)),
}
_MATERIAL_FIELDS = ("name", "specification", "min_metal_temperature_k", "notes", "source", "editable",
                    "exemption_curve", "curve_code", "pwht_credit", *COLD_FIELDS)
#: Defaults of the cold-limit fields a new material leaves out.
COLD_DEFAULTS: dict[str, Any] = {"exemption_curve": "", "curve_code": "VIII-1", "thickness_m": None,
                                 "impact_test_temperature_k": None, "pwht_credit": False, "allowable_stress_pa": None,
                                 "outside_diameter_m": None, "corrosion_allowance_m": 0.0, "joint_efficiency": 1.0,
                                 "other_stress_pa": 0.0}


def _material_values(data: Mapping[str, Any]) -> dict[str, Any]:
    out: dict[str, Any] = {}
    for key, value in data.items():
        if key == "name":
            out[key] = parse_text("name", value, "material name", MAX_NAME, required=True, single_line=True)
        elif key == "min_metal_temperature_k":
            out[key] = check_number(key, value, "minimum metal temperature", "K", LIMIT_TEMPERATURE_RANGE_K, False)
        elif key in ("editable", "pwht_credit"):
            if not isinstance(value, bool):
                raise InputError(key, "must be true or false")
            out[key] = value
        elif key == "exemption_curve":
            out[key] = "" if value in (None, "") else parse_curve(value, key).value
        elif key == "curve_code":
            out[key] = parse_code(value or "VIII-1", key).value
        elif key in COLD_FIELDS:
            label, unit, rng = COLD_FIELDS[key]
            out[key] = check_number(key, value, label, unit, rng, False)
            if key in ("corrosion_allowance_m", "joint_efficiency", "other_stress_pa") and out[key] is None:
                out[key] = COLD_DEFAULTS[key]
        else:
            out[key] = parse_text(key, value, key, MAX_LONG_TEXT)
    return out


def check_cold_spec(material: Material) -> MaterialColdSpec:
    """The material's cold-limit data checked as a whole (an InputError naming the field at fault)."""
    spec = material.cold_spec()
    if spec.has_curve:
        material_mdmt(spec.curve or None, spec.thickness_m, code=spec.code,
                      impact_test_temperature_k=spec.impact_test_temperature_k, pwht_credit=spec.pwht_credit)
    if spec.outside_diameter_m is not None and spec.thickness_m is not None:
        if spec.outside_diameter_m <= 2 * spec.thickness_m:
            raise InputError("outside_diameter_m", "the outside diameter must exceed twice the governing thickness")
        if spec.corrosion_allowance_m >= spec.thickness_m:
            raise InputError("corrosion_allowance_m", "the allowance must be less than the governing thickness")
    return spec


def create_material(session: Session, user: User, *, name: str, min_metal_temperature_k: float | None = None,
                    specification: str = "", notes: str = "", source: str = "", editable: bool = True,
                    **cold: Any) -> Material:
    """Add a material (admins only): a typed minimum metal temperature [K], or what the codes use for it
    (``cold``: the keys of :data:`COLD_DEFAULTS`, SI), or both (the warmer governs)."""
    require(user, ADMIN_ROLES, "create materials")
    with transaction(session):
        refuse_unknown_keys(cold, tuple(COLD_DEFAULTS), "material")
        values = _material_values({"name": name, "min_metal_temperature_k": min_metal_temperature_k,
                                   "specification": specification, "notes": notes, "source": source,
                                   "editable": editable, **{**COLD_DEFAULTS, **cold}})
        if session.scalar(select(Material.id).where(Material.name == values["name"])) is not None:
            raise InputError("name", f"a material named {values['name']!r} already exists; choose another name")
        material = Material(seeded=False, **values)
        check_cold_spec(material)
        session.add(material)
        session.flush()
        audit.add_entry(session, user, "material", material.id, "create", new=material.name)
    return material


def update_material(session: Session, user: User, material_id: int, changes: Mapping[str, Any],
                    expected_version: int | None = None) -> Material:
    """Change a material (admins only; entries marked not editable are refused).

    Cases that copied the old limit keep it until they are edited; their stored results keep the
    limit they used.  With ``expected_version`` a material saved by someone else meanwhile is not
    overwritten (:class:`~jtcheck.records.errors.ConcurrentEditError`).
    """
    require(user, ADMIN_ROLES, "edit materials")
    try:
        return _update_material(session, user, material_id, changes, expected_version)
    except StaleDataError:
        raise ConcurrentEditError("material", material_id, expected_version) from None


def _update_material(session: Session, user: User, material_id: int, changes: Mapping[str, Any],
                     expected_version: int | None) -> Material:
    with transaction(session):
        refuse_unknown_keys(changes, _MATERIAL_FIELDS, "material")
        material = session.get(Material, material_id, populate_existing=True)
        if material is None:
            raise NotFound("material", material_id)
        check_version(session, "material", material, expected_version)
        if not material.editable:
            raise PermissionDenied("edit materials", f"{material.name!r} is locked (not editable)")
        values = _material_values(changes)
        if "name" in values:
            other = session.scalar(select(Material.id).where(Material.name == values["name"],
                                                             Material.id != material.id))
            if other is not None:
                raise InputError("name", f"a material named {values['name']!r} already exists")
        changed = []
        for key, value in values.items():
            old = getattr(material, key)
            if old != value:
                setattr(material, key, value)
                changed.append((key, old, value))
        check_cold_spec(material)
        for key, old, value in changed:
            audit.add_entry(session, user, "material", material.id, "update", key, old, value)
    return material


def list_materials(session: Session, user: User) -> list[Material]:
    """Every material, coldest limit first."""
    require(user, ALL_ROLES, "view materials")
    return list(session.scalars(select(Material).order_by(Material.min_metal_temperature_k, Material.name)))


#: Shipped materials: typical, illustrative minimum metal temperatures.  Code limits depend on the
#: code, its edition, the thickness, the stress ratio and the impact testing actually done.
TYPICAL_CAUTION = "Typical value; verify against the applicable code edition."
TYPICAL_SOURCE = "Common practice (illustrative typical value, not taken from a code)."
_T0 = 273.15   # 0 degC [K]
SEED_MATERIALS: tuple[dict[str, Any], ...] = (
    {"name": "Carbon steel, not impact tested (typical -29 degC)", "min_metal_temperature_k": round(_T0 - 29.0, 2),
     "specification": "Carbon steel plate, pipe and fittings without impact testing. The code exemption "
                      "curves (ASME B31.3 para. 323.2.2, ASME BPVC VIII-1 UCS-66) give limits that depend on "
                      "the material group and thickness; -29 degC is a common default."},
    {"name": "Carbon steel, impact tested to -46 degC (typical)", "min_metal_temperature_k": round(_T0 - 46.0, 2),
     "specification": "Carbon steel impact tested at -46 degC to the requirements of the applicable code."},
    {"name": "Low-temperature carbon steel (typical -46 degC)", "min_metal_temperature_k": round(_T0 - 46.0, 2),
     "specification": "Low-temperature carbon steel grades (for example ASTM A333 Gr. 6 pipe, A350 LF2 "
                      "forgings) supplied impact tested."},
    {"name": "3.5 % nickel steel (typical -101 degC)", "min_metal_temperature_k": round(_T0 - 101.0, 2),
     "specification": "3.5 % nickel steel (for example ASTM A333 Gr. 3 pipe, A350 LF3 forgings)."},
    {"name": "Austenitic stainless steel 304/316 (typical -196 degC)", "min_metal_temperature_k": round(_T0 - 196.0, 2),
     "specification": "Austenitic stainless steel types 304/304L and 316/316L."},
)


def seed_materials(session: Session) -> list[Material]:
    """Add the shipped typical materials that are missing (by name); return the ones added.

    A system action (no user); each entry is marked seeded, editable by admins, with the caution
    "typical value; verify against the applicable code edition".
    """
    with transaction(session):
        added = add_seed_materials(session)
    return added


def add_seed_materials(session: Session) -> list[Material]:
    """Add the missing shipped materials within the caller's transaction (a system action)."""
    added = []
    for entry in SEED_MATERIALS:
        if session.scalar(select(Material.id).where(Material.name == entry["name"])) is not None:
            continue
        material = Material(name=entry["name"], specification=entry["specification"],
                            min_metal_temperature_k=entry["min_metal_temperature_k"], notes=TYPICAL_CAUTION,
                            source=TYPICAL_SOURCE, seeded=True, editable=True)
        session.add(material)
        session.flush()
        audit.add_entry(session, None, "material", material.id, "seed", new=material.name)
        added.append(material)
    return added
