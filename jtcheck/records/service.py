"""Operations on the case register: who may do what, input checks, audit, computation.

Every function takes a :class:`~sqlalchemy.orm.Session` and the acting :class:`User`.  Functions that
write are one unit of work: they commit on success, and on any error roll the session back and
re-raise, so nothing is ever half-written (call them with a session that holds no other pending
changes).  Reading functions do not commit.

Quantities are SI floats, with the unit in the key (``inlet_pressure_pa``, ``inlet_temperature_k``);
converting what the user typed is the job of :mod:`jtcheck.units` at the web/CLI edge, which also
passes the unit text along in ``display_units``.  Bad input raises
:class:`jtcheck.errors.InputError` whose ``field`` is the key at fault and whose message gives the
allowed range.

Permissions are listed in :mod:`jtcheck.records.guard`.  A case's inputs are frozen while its current
calculation record is in review.
"""
from __future__ import annotations

from collections.abc import Mapping, Sequence
from typing import Any

from sqlalchemy import func, or_, select
from sqlalchemy.orm import Session, joinedload, object_session, selectinload
from sqlalchemy.orm.exc import StaleDataError

from jtcheck import __version__ as jtcheck_version
from jtcheck.errors import InputError
from jtcheck.records import audit
from jtcheck.records.audit import audit_trail
from jtcheck.records.errors import ConcurrentEditError, NotFound, PermissionDenied, UnderReview
from jtcheck.records.fields import (
    BUILT_UP_RANGE_PA,
    INLET_TEMPERATURE_RANGE_K,
    LIMIT_TEMPERATURE_RANGE_K,
    MARGIN_RANGE_K,
    MASS_FLOW_RANGE_KG_PER_S,
    MAX_LONG_TEXT,
    MAX_NAME,
    MAX_SHORT_TEXT,
    MAX_TAG,
    MAX_UNIT_TEXT,
    OVERPRESSURE_RANGE,
    P_ATM_RANGE_PA,
    PRESSURE_RANGE_PA,
    lookup,
    parse_flag,
    parse_id,
    parse_number,
    parse_text,
    refuse_unknown_keys,
)
from jtcheck.records.guard import (
    ADMIN_ROLES,
    ALL_ROLES,
    EDIT_ROLES,
    can_administer,
    can_compute,
    can_edit_cases,
    require,
)
from jtcheck.records.json_values import json_safe
from jtcheck.records.models import (
    ISSUED_STATUSES,
    P_ATM_STANDARD_PA,
    Case,
    CaseKind,
    CaseResult,
    CaseRevision,
    FluidRecord,
    KijMode,
    Material,
    PlantUnit,
    RevisionStatus,
    Role,
    Site,
    User,
)
from jtcheck.records.transactions import lock_case_row, transaction
from jtcheck.screening.cold_metal import ColdLimits
from jtcheck.screening.screen import (
    CONDITION_MAX_P,
    CONDITION_MIN_T,
    CONDITION_MIN_T_MAX_P,
    CONDITION_NORMAL,
    Condition,
    ConditionScreen,
    OperatingRanges,
    ReliefInputs,
    Screening,
    ScreeningOptions,
    credible_conditions,
    screen_letdown,
)
from jtcheck.thermo.fluid import Fluid

#: The public names of this module (some of them live in guard, audit and fields now).
__all__ = [
    # guard
    "ALL_ROLES", "EDIT_ROLES", "ADMIN_ROLES", "can_edit_cases", "can_compute", "can_administer",
    # audit
    "audit_trail",
    # fields
    "PRESSURE_RANGE_PA", "INLET_TEMPERATURE_RANGE_K", "LIMIT_TEMPERATURE_RANGE_K", "MARGIN_RANGE_K",
    "MASS_FLOW_RANGE_KG_PER_S", "P_ATM_RANGE_PA", "OVERPRESSURE_RANGE", "BUILT_UP_RANGE_PA",
    "MAX_TAG", "MAX_NAME", "MAX_SHORT_TEXT", "MAX_LONG_TEXT", "MAX_UNIT_TEXT",
    # case_inputs
    "HYDRATE_INHIBITORS", "CASE_FIELDS", "DISPLAY_UNIT_FIELDS", "case_values",
    # users
    "create_user", "update_user", "get_user_by_email", "list_users",
    # sites
    "create_site", "create_unit", "list_sites",
    # fluids
    "create_fluid", "update_fluid", "list_fluids",
    # materials
    "create_material", "update_material", "list_materials", "TYPICAL_CAUTION", "TYPICAL_SOURCE",
    "SEED_MATERIALS", "seed_materials",
    # cases
    "NOT_COMPUTED", "create_case", "update_case", "case_has_issued_records", "get_case", "list_cases",
    # computation
    "CONDITIONS", "case_conditions", "screening_options", "result_inputs", "compute_case",
    # results
    "latest_results", "result_is_current", "get_result",
]

#: Names of the conditions a case is computed at, in order (the sweep may add SWEEP_CONDITION).
CONDITIONS = (CONDITION_NORMAL, CONDITION_MIN_T, CONDITION_MAX_P, CONDITION_MIN_T_MAX_P)

#: ``list_cases(outcome=NOT_COMPUTED)`` lists cases that have no stored result.
NOT_COMPUTED = "not computed"

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
_CASE_DEFAULTS: dict[str, Any] = {"service": "", "margin_k": 0.0, "p_atm_pa": P_ATM_STANDARD_PA, "basis": "",
                                  "references": "", "display_units": {}, "water_saturated": False,
                                  "hydrate_inhibitor": "methanol"}


# -- field checks ---------------------------------------------------------------------------------
def _kind(value: Any, key: str = "kind") -> CaseKind:
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


def _validate_case(session: Session, data: Mapping[str, Any], *, current: Case | None = None,
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
    values["kind"] = _kind(data.get("kind"))
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


# -- users ------------------------------------------------------------------------------------------
def _email(value: Any) -> str:
    email = parse_text("email", value, "e-mail address", 254, required=True, single_line=True).lower()
    local, _, domain = email.partition("@")
    if not local or "." not in domain or " " in email:
        raise InputError("email", f"{value!r} is not an e-mail address (name@example.org)")
    return email


def _role(value: Any) -> Role:
    try:
        return Role(value)
    except ValueError:
        raise InputError("role", f"unknown role {value!r}; allowed: {', '.join(r.value for r in Role)}") from None


def create_user(session: Session, actor: User | None, *, email: str, name: str, role: Role | str,
                password_hash: str, active: bool = True) -> User:
    """Add a user (admins only).  ``password_hash`` is made by the web layer; it is never checked here.

    With ``actor=None`` only the very first user may be created, and it must be an admin (bootstrap).
    """
    with transaction(session):
        if actor is None:
            if session.scalar(select(func.count()).select_from(User)):
                raise PermissionDenied("create users", "no user is signed in")
            if _role(role) is not Role.ADMIN:
                raise InputError("role", "the first user must be an admin")
        else:
            require(actor, ADMIN_ROLES, "create users")
        email_n = _email(email)
        if session.scalar(select(User.id).where(User.email == email_n)) is not None:
            raise InputError("email", f"a user with e-mail {email_n!r} already exists")
        if not isinstance(password_hash, str) or not password_hash:
            raise InputError("password_hash", "a password hash is required")
        user = User(email=email_n, name=parse_text("name", name, "name", MAX_NAME, required=True, single_line=True),
                    role=_role(role), password_hash=password_hash, active=bool(active))
        session.add(user)
        session.flush()
        audit.add_entry(session, actor, "user", user.id, "create", new=f"{user.email} ({user.role.value})")
    return user


_USER_FIELDS = ("email", "name", "role", "active", "password_hash", "api_token_hash")
_SECRET_FIELDS = frozenset({"password_hash", "api_token_hash"})


def update_user(session: Session, actor: User, user_id: int, changes: Mapping[str, Any]) -> User:
    """Change a user (admins; a user may change their own ``password_hash`` and ``api_token_hash``).

    Hashes are audited as "(changed)", never with their value.  The last active admin cannot be
    demoted or deactivated.
    """
    with transaction(session):
        refuse_unknown_keys(changes, _USER_FIELDS, "user")
        own_secrets = isinstance(actor, User) and actor.id == user_id and set(changes) <= _SECRET_FIELDS
        require(actor, ALL_ROLES if own_secrets else ADMIN_ROLES, "edit users")
        user = session.get(User, user_id)
        if user is None:
            raise NotFound("user", user_id)
        new: dict[str, Any] = {}
        for key, value in changes.items():
            if key == "email":
                new[key] = _email(value)
                other = session.scalar(select(User.id).where(User.email == new[key], User.id != user.id))
                if other is not None:
                    raise InputError("email", f"a user with e-mail {new[key]!r} already exists")
            elif key == "name":
                new[key] = parse_text("name", value, "name", MAX_NAME, required=True, single_line=True)
            elif key == "role":
                new[key] = _role(value)
            elif key == "active":
                if not isinstance(value, bool):
                    raise InputError("active", "must be true or false")
                new[key] = value
            elif key == "password_hash":
                if not isinstance(value, str) or not value:
                    raise InputError("password_hash", "a password hash is required")
                new[key] = value
            else:
                if value is not None and (not isinstance(value, str) or not value):
                    raise InputError("api_token_hash", "must be a hash text or None")
                new[key] = value
        demoted = new.get("role", user.role) is not Role.ADMIN or not new.get("active", user.active)
        if Role(user.role) is Role.ADMIN and user.active and demoted:
            admins = session.scalar(select(func.count()).select_from(User).where(
                User.role == Role.ADMIN, User.active.is_(True), User.id != user.id))
            if not admins:
                raise InputError("role" if "role" in new else "active", "at least one active admin must remain")
        for key, value in new.items():
            old = getattr(user, key)
            if old != value:
                setattr(user, key, value)
                if key in _SECRET_FIELDS:
                    audit.add_entry(session, actor, "user", user.id, "update", key, "(hidden)", "(changed)")
                else:
                    audit.add_entry(session, actor, "user", user.id, "update", key, old, value)
    return user


def get_user_by_email(session: Session, email: str) -> User | None:
    """The user with this e-mail address (case-insensitive), for signing in; None if there is none."""
    return session.scalar(select(User).where(User.email == str(email).strip().lower()))


def list_users(session: Session, actor: User) -> list[User]:
    """Every user, by name (admins only)."""
    require(actor, ADMIN_ROLES, "list users")
    return list(session.scalars(select(User).order_by(User.name, User.id)))


# -- sites and units --------------------------------------------------------------------------------
def create_site(session: Session, user: User, name: str, description: str = "") -> Site:
    """Add a site; its name must be new."""
    require(user, EDIT_ROLES, "create sites")
    with transaction(session):
        site = _create_site(session, user, name, description)
    return site


def _create_site(session: Session, user: User | None, name: Any, description: Any = "") -> Site:
    name_s = parse_text("name", name, "site name", MAX_NAME, required=True, single_line=True)
    if session.scalar(select(Site.id).where(Site.name == name_s)) is not None:
        raise InputError("name", f"a site named {name_s!r} already exists; choose another name")
    site = Site(name=name_s, description=parse_text("description", description, "description", MAX_SHORT_TEXT))
    session.add(site)
    session.flush()
    audit.add_entry(session, user, "site", site.id, "create", new=site.name)
    return site


def create_unit(session: Session, user: User, site_id: int, name: str, description: str = "") -> PlantUnit:
    """Add a unit to a site; its name must be new within the site."""
    require(user, EDIT_ROLES, "create units")
    with transaction(session):
        unit = _create_unit(session, user, site_id, name, description)
    return unit


def _create_unit(session: Session, user: User | None, site_id: Any, name: Any, description: Any = "") -> PlantUnit:
    site = lookup(session, Site, "site_id", site_id, "site")
    name_s = parse_text("name", name, "unit name", MAX_NAME, required=True, single_line=True)
    exists = session.scalar(select(PlantUnit.id).where(PlantUnit.site_id == site.id, PlantUnit.name == name_s))
    if exists is not None:
        raise InputError("name", f"site {site.name!r} already has a unit named {name_s!r}; choose another name")
    unit = PlantUnit(site=site, name=name_s,
                     description=parse_text("description", description, "description", MAX_SHORT_TEXT))
    session.add(unit)
    session.flush()
    audit.add_entry(session, user, "unit", unit.id, "create", new=f"{site.name} / {unit.name}")
    return unit


def list_sites(session: Session, user: User) -> list[Site]:
    """Every site with its units, by name."""
    require(user, ALL_ROLES, "view sites")
    return list(session.scalars(select(Site).options(selectinload(Site.units)).order_by(Site.name)))


# -- fluids -----------------------------------------------------------------------------------------
def _kij_mode(value: Any) -> KijMode:
    try:
        return KijMode(value)
    except ValueError:
        raise InputError("kij_mode", f"unknown kij mode {value!r}; allowed: table (jtcheck's table of "
                                     "published values), zero (every kij = 0)") from None


def _checked_fluid(composition: Any, eos: Any, kij_mode: KijMode) -> Fluid:
    """Build the core's Fluid: it checks the composition and the EOS (InputError naming the field)."""
    if composition is None:
        raise InputError("composition", "a composition is required (component names with mole fractions)")
    return Fluid(composition, eos=eos, kij=kij_mode.fluid_kij())


def create_fluid(session: Session, user: User, name: str, composition: Any, eos: str = "PR",
                 kij_mode: KijMode | str = KijMode.TABLE, notes: str = "") -> FluidRecord:
    """Add a named fluid.

    Parameters
    ----------
    composition : mapping, (name, amount) pairs or text
        Anything :class:`jtcheck.Fluid` accepts; it is checked by building the Fluid and stored as
        ``[[component_id, mole_fraction], ...]`` normalised to sum 1.
    eos : {"PR", "SRK", "RK", "VDW"}
    kij_mode : {"table", "zero"}
    """
    require(user, EDIT_ROLES, "create fluids")
    with transaction(session):
        record = _create_fluid(session, user, name, composition, eos, kij_mode, notes)
    return record


def _create_fluid(session: Session, user: User | None, name: Any, composition: Any, eos: Any = "PR",
                  kij_mode: Any = KijMode.TABLE, notes: Any = "") -> FluidRecord:
    name_s = parse_text("name", name, "fluid name", MAX_NAME, required=True, single_line=True)
    if session.scalar(select(FluidRecord.id).where(FluidRecord.name == name_s)) is not None:
        raise InputError("name", f"a fluid named {name_s!r} already exists; choose another name")
    mode = _kij_mode(kij_mode)
    fluid = _checked_fluid(composition, eos, mode)
    record = FluidRecord(name=name_s, composition=_composition_json(fluid), eos=fluid.eos.value, kij_mode=mode,
                         notes=parse_text("notes", notes, "notes", MAX_LONG_TEXT), created_by=user, updated_by=user)
    session.add(record)
    session.flush()
    audit.add_entry(session, user, "fluid", record.id, "create", new=record.name)
    return record


def _composition_json(fluid: Fluid) -> list[list[Any]]:
    return [[cid, float(z)] for cid, z in zip(fluid.ids, fluid.zs, strict=True)]


_FLUID_FIELDS = ("name", "composition", "eos", "kij_mode", "notes")


def update_fluid(session: Session, user: User, fluid_id: int, changes: Mapping[str, Any]) -> FluidRecord:
    """Change a fluid; one audit entry per changed field.  Results already stored keep the fluid they used."""
    require(user, EDIT_ROLES, "edit fluids")
    with transaction(session):
        refuse_unknown_keys(changes, _FLUID_FIELDS, "fluid")
        record = session.get(FluidRecord, fluid_id)
        if record is None:
            raise NotFound("fluid", fluid_id)
        new: dict[str, Any] = {}
        if "name" in changes:
            new["name"] = parse_text("name", changes["name"], "fluid name", MAX_NAME, required=True, single_line=True)
            other = session.scalar(select(FluidRecord.id).where(FluidRecord.name == new["name"],
                                                                FluidRecord.id != record.id))
            if other is not None:
                raise InputError("name", f"a fluid named {new['name']!r} already exists; choose another name")
        mode = _kij_mode(changes.get("kij_mode", record.kij_mode))
        composition = changes.get("composition", record.composition_pairs())
        fluid = _checked_fluid(composition, changes.get("eos", record.eos), mode)
        new.update(composition=_composition_json(fluid), eos=fluid.eos.value, kij_mode=mode)
        if "notes" in changes:
            new["notes"] = parse_text("notes", changes["notes"], "notes", MAX_LONG_TEXT)
        changed = False
        for key, value in new.items():
            old = getattr(record, key)
            if old != value:
                setattr(record, key, value)
                audit.add_entry(session, user, "fluid", record.id, "update", key, old, value)
                changed = True
        if changed:
            record.updated_by = user
    return record


def list_fluids(session: Session, user: User) -> list[FluidRecord]:
    """Every fluid, by name."""
    require(user, ALL_ROLES, "view fluids")
    return list(session.scalars(select(FluidRecord).order_by(FluidRecord.name)))


# -- materials --------------------------------------------------------------------------------------
_MATERIAL_FIELDS = ("name", "specification", "min_metal_temperature_k", "notes", "source", "editable")


def _material_values(data: Mapping[str, Any]) -> dict[str, Any]:
    out: dict[str, Any] = {}
    for key, value in data.items():
        if key == "name":
            out[key] = parse_text("name", value, "material name", MAX_NAME, required=True, single_line=True)
        elif key == "min_metal_temperature_k":
            out[key] = parse_number(key, value, "minimum metal temperature", "K", LIMIT_TEMPERATURE_RANGE_K, True)
        elif key == "editable":
            if not isinstance(value, bool):
                raise InputError("editable", "must be true or false")
            out[key] = value
        else:
            out[key] = parse_text(key, value, key, MAX_LONG_TEXT)
    return out


def create_material(session: Session, user: User, *, name: str, min_metal_temperature_k: float,
                    specification: str = "", notes: str = "", source: str = "", editable: bool = True) -> Material:
    """Add a material and its minimum metal temperature [K] (admins only)."""
    require(user, ADMIN_ROLES, "create materials")
    with transaction(session):
        values = _material_values({"name": name, "min_metal_temperature_k": min_metal_temperature_k,
                                   "specification": specification, "notes": notes, "source": source,
                                   "editable": editable})
        if session.scalar(select(Material.id).where(Material.name == values["name"])) is not None:
            raise InputError("name", f"a material named {values['name']!r} already exists; choose another name")
        material = Material(seeded=False, **values)
        session.add(material)
        session.flush()
        audit.add_entry(session, user, "material", material.id, "create", new=material.name)
    return material


def update_material(session: Session, user: User, material_id: int, changes: Mapping[str, Any]) -> Material:
    """Change a material (admins only; entries marked not editable are refused).

    Cases that copied the old limit keep it until they are edited; their stored results keep the
    limit they used.
    """
    require(user, ADMIN_ROLES, "edit materials")
    with transaction(session):
        refuse_unknown_keys(changes, _MATERIAL_FIELDS, "material")
        material = session.get(Material, material_id)
        if material is None:
            raise NotFound("material", material_id)
        if not material.editable:
            raise PermissionDenied("edit materials", f"{material.name!r} is locked (not editable)")
        values = _material_values(changes)
        if "name" in values:
            other = session.scalar(select(Material.id).where(Material.name == values["name"],
                                                             Material.id != material.id))
            if other is not None:
                raise InputError("name", f"a material named {values['name']!r} already exists")
        for key, value in values.items():
            old = getattr(material, key)
            if old != value:
                setattr(material, key, value)
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
        added = _seed_materials(session)
    return added


def _seed_materials(session: Session) -> list[Material]:
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


# -- cases ------------------------------------------------------------------------------------------
def _none_to_default(data: Mapping[str, Any]) -> dict[str, Any]:
    """None for a field with a default (an empty form field) means the default."""
    return {k: (_CASE_DEFAULTS[k] if v is None and k in _CASE_DEFAULTS else v) for k, v in data.items()}


def create_case(session: Session, user: User, data: Mapping[str, Any]) -> Case:
    """Add a case (status "draft", version 1) with its first calculation record, revision A (a draft).

    Parameters
    ----------
    data : mapping
        Keys of :data:`CASE_FIELDS`: ``unit_id``, ``tag`` (1-64 characters), ``service``, ``kind``
        (a :class:`CaseKind` value), ``fluid_id``, ``inlet_pressure_pa`` [Pa abs],
        ``inlet_temperature_k`` [K], ``outlet_pressure_pa`` [Pa abs], optional credible extremes
        ``inlet_temperature_min_k`` [K] and ``inlet_pressure_max_pa`` [Pa abs], optional
        ``mass_flow_kg_per_s``, ``material_id``, ``mdmt_k`` [K] (copied from the material when not
        given), ``cold_limit_k`` [K], ``margin_k`` [K] (default 0, stored), ``basis``, ``references``,
        ``display_units`` and ``p_atm_pa`` [Pa] (default the standard atmosphere, stored).  None for a
        field with a default means the default.

    Raises
    ------
    jtcheck.errors.InputError
        Naming the first bad field and its allowed range; nothing is stored.
    PermissionDenied
        Unless the user is an active engineer or admin.
    """
    require(user, EDIT_ROLES, "create cases")
    with transaction(session):
        case = _create_case(session, user, data)
    return case


def _create_case(session: Session, user: User | None, data: Mapping[str, Any]) -> Case:
    refuse_unknown_keys(data, CASE_FIELDS, "case")
    loaded: dict[str, Any] = {}
    values = _validate_case(session, {**_CASE_DEFAULTS, **_none_to_default(data)}, loaded=loaded)
    # the records just looked up (same ids as in values): the answer needs them, so no lazy load afterwards
    case = Case(**values, **loaded, status=RevisionStatus.DRAFT.value, created_by=user, updated_by=user)
    session.add(case)
    session.flush()
    audit.add_entry(session, user, "case", case.id, "create", new=case.tag)
    # revision A, a draft (workflow builds on this module, hence the late import)
    from jtcheck.records.workflow import open_revision

    open_revision(session, user, case)
    return case


def case_values(case: Case) -> dict[str, Any]:
    """The user-entered fields of a case (the keys of :data:`CASE_FIELDS`), e.g. to fill an edit form."""
    out = {key: getattr(case, key) for key in CASE_FIELDS}
    out["kind"] = CaseKind(case.kind).value
    out["display_units"] = dict(case.display_units or {})
    return out


def update_case(session: Session, user: User, case_id: int, changes: Mapping[str, Any],
                expected_version: int | None = None) -> Case:
    """Change a case's inputs; one audit entry per changed field with the old and new value.

    Parameters
    ----------
    changes : mapping
        Some keys of :data:`CASE_FIELDS`; the whole case is checked again after merging them.
        Setting ``mdmt_k`` to None with a material copies the material's limit.
    expected_version : int, optional
        The case version the user's edit started from (shown in the form).  If the stored case has
        another version, :class:`ConcurrentEditError` is raised and nothing is changed.

    Returns
    -------
    Case
        The case, with ``version`` incremented if anything changed.  If its current calculation record
        was issued (approved, superseded or voided), a changed case gets its next revision, a draft
        (:mod:`jtcheck.records.workflow`), in the same transaction.

    Raises
    ------
    UnderReview
        If the current revision is for check, checked or for approval: reject it first.
    """
    require(user, EDIT_ROLES, "edit case inputs")
    from jtcheck.records.workflow import _current, open_revision  # workflow builds on this module

    try:
        with transaction(session):
            refuse_unknown_keys(changes, CASE_FIELDS, "case")
            lock_case_row(session, case_id)   # orders this edit with the review steps of the case
            case = session.get(Case, case_id, populate_existing=True)
            if case is None:
                raise NotFound("case", case_id)
            if expected_version is not None and case.version != expected_version:
                raise ConcurrentEditError("case", case_id, expected_version, case.version)
            revision = _current(session, case.id)
            if revision is not None and RevisionStatus(revision.status).under_review:
                raise UnderReview("edit case inputs", revision.label, RevisionStatus(revision.status).value)
            merged = {**case_values(case), **_none_to_default(changes)}
            values = _validate_case(session, merged, current=case, given=frozenset(changes))
            changed = False
            for key, value in values.items():
                old = getattr(case, key)
                if isinstance(old, CaseKind):
                    old = CaseKind(old)
                if old != value:
                    setattr(case, key, value)
                    audit.add_entry(session, user, "case", case.id, "update", key, old, value)
                    changed = True
            if changed:
                case.updated_by = user
                if revision is None or RevisionStatus(revision.status).issued:   # the next revision, a draft
                    case.status = RevisionStatus.DRAFT.value
                    session.flush()
                    open_revision(session, user, case, "after an edit of the case inputs"
                                  + (f" (revision {revision.label} is {revision.status})" if revision else ""))
                session.flush()
                session.expire(case, ["unit", "fluid", "material"])   # reload relationships whose ids changed
    except StaleDataError:
        raise ConcurrentEditError("case", case_id, expected_version) from None
    return case


def case_has_issued_records(case: Case) -> bool:
    """True if ``case`` has a calculation record that was ever approved (approved, superseded or voided).

    Such a case cannot be deleted: the database refuses to delete issued records (and so the case).
    A case whose current revision is in review holds a frozen result that cannot be deleted either
    (reject the revision first).
    """
    session = object_session(case)
    if session is None or case.id is None:
        return False
    return session.scalar(select(func.count()).select_from(CaseRevision).where(
        CaseRevision.case_id == case.id, CaseRevision.status.in_(list(ISSUED_STATUSES)))) > 0


def _case_loads() -> tuple[Any, ...]:
    """Loader options for a case with the records shown with it (unit and site, fluid, material): one query."""
    return (joinedload(Case.unit).joinedload(PlantUnit.site), joinedload(Case.fluid), joinedload(Case.material))


def get_case(session: Session, user: User, case_id: int) -> Case:
    """One case (any active user), with its unit, site, fluid and material; raise NotFound if there is none."""
    require(user, ALL_ROLES, "view cases")
    case = session.get(Case, case_id, options=_case_loads())
    if case is None:
        raise NotFound("case", case_id)
    return case


def list_cases(session: Session, user: User, *, site_id: int | None = None, unit_id: int | None = None,
               kind: CaseKind | str | None = None, status: str | None = None, outcome: str | None = None,
               text: str | None = None, limit: int = 500, offset: int = 0) -> list[Case]:
    """Cases matching every filter given, by site, unit and tag.

    Parameters
    ----------
    outcome : str, optional
        The ``outcome`` of the case's latest result, or :data:`NOT_COMPUTED` for cases never computed.
    text : str, optional
        Case-insensitive search in tag and service description (taken literally: ``%`` and ``_``
        are not wildcards).
    limit, offset : int
        Paging; at most 1000 rows per call.
    """
    require(user, ALL_ROLES, "view cases")
    stmt = (select(Case).join(Case.unit).join(PlantUnit.site)
            .options(selectinload(Case.unit).selectinload(PlantUnit.site), selectinload(Case.fluid),
                     selectinload(Case.material)))
    if site_id is not None:
        stmt = stmt.where(PlantUnit.site_id == parse_id("site_id", site_id, "site"))
    if unit_id is not None:
        stmt = stmt.where(Case.unit_id == parse_id("unit_id", unit_id, "unit"))
    if kind is not None:
        stmt = stmt.where(Case.kind == _kind(kind))
    if status is not None:
        stmt = stmt.where(Case.status == parse_text("status", status, "status", 32, single_line=True))
    if outcome is not None:
        latest = (select(CaseResult.case_id, func.max(CaseResult.id).label("result_id"))
                  .group_by(CaseResult.case_id).subquery())
        if outcome == NOT_COMPUTED:
            stmt = stmt.outerjoin(latest, latest.c.case_id == Case.id).where(latest.c.result_id.is_(None))
        else:
            stmt = (stmt.join(latest, latest.c.case_id == Case.id)
                    .join(CaseResult, CaseResult.id == latest.c.result_id)
                    .where(CaseResult.outcome == parse_text("outcome", outcome, "outcome", 32, single_line=True)))
    if text is not None and text.strip():
        needle = parse_text("text", text, "search text", 200, single_line=True)
        escaped = needle.replace("\\", "\\\\").replace("%", "\\%").replace("_", "\\_")
        pattern = f"%{escaped}%"
        stmt = stmt.where(or_(Case.tag.ilike(pattern, escape="\\"), Case.service.ilike(pattern, escape="\\")))
    if isinstance(limit, bool) or not isinstance(limit, int) or not 1 <= limit <= 1000:
        raise InputError("limit", f"must be an integer from 1 to 1000, got {limit!r}")
    if isinstance(offset, bool) or not isinstance(offset, int) or offset < 0:
        raise InputError("offset", f"must be an integer >= 0, got {offset!r}")
    stmt = stmt.order_by(Site.name, PlantUnit.name, Case.tag, Case.id).limit(limit).offset(offset)
    return list(session.scalars(stmt))


def latest_results(session: Session, case_ids: Sequence[int]) -> dict[int, CaseResult]:
    """The latest stored result of each case that has one (one query), case id -> result."""
    if not case_ids:
        return {}
    latest = (select(func.max(CaseResult.id)).where(CaseResult.case_id.in_(list(case_ids)))
              .group_by(CaseResult.case_id))
    rows = session.scalars(select(CaseResult).where(CaseResult.id.in_(latest)))
    return {r.case_id: r for r in rows}


# -- computation ------------------------------------------------------------------------------------
def case_conditions(case: Case) -> list[tuple[str, float, float]]:
    """The credible conditions to compute: ``(name, inlet pressure [Pa], inlet temperature [K])``.

    Always "normal"; "min inlet temperature" and "max inlet pressure" when those extremes are given,
    and "min temperature + max pressure" when both are (:func:`jtcheck.screening.screen.credible_conditions`).
    """
    return [(c.name, c.p_in_pa, c.t_in_k) for c in credible_conditions(
        case.inlet_pressure_pa, case.inlet_temperature_k, case.outlet_pressure_pa, case.inlet_pressure_max_pa,
        case.inlet_temperature_min_k)]


def _condition_entry(cs: ConditionScreen, eos: str) -> dict[str, Any]:
    """The stored entry of one screened condition: the case model's letdown plus what the screening made of it."""
    c = cs.condition
    result = cs.results.get(eos)
    extra = {"t_screen_k": cs.t_screen_k, "governing_model": cs.governing_model, "screen_message": cs.message,
             "solids": cs.solids,
             "t_out_by_model": {m: (r.t_out if r is not None and r.converged else None) for m, r in cs.results.items()}}
    if result is None:   # refused: stored as not converged, with the reason
        return json_safe({"condition": c.name, "p_in": c.p_in_pa, "t_in": c.t_in_k, "p_out": c.p_out_pa, "t_out": None,
                       "dt": None, "vapor_fraction": None, "phase": "unknown", "converged": False,
                       "message": cs.message, "warnings": [], **extra})
    entry = {"condition": c.name, **json_safe(result.to_dict()), **json_safe(extra)}
    if not result.converged:   # never a number for a state that was not found
        entry.update(t_out=None, dt=None, vapor_fraction=None, converged=False)
    elif not cs.converged:      # the case model converged, another did not: not screened
        entry.update(converged=False, message=cs.message)
    return entry


def screening_options(case: Case) -> ScreeningOptions:
    """The screening a case asks for: its limits, hydrate data, operating ranges and relief-valve data."""
    limits = ColdLimits(mdmt_k=case.mdmt_k, user_limit_k=case.cold_limit_k, margin_k=case.margin_k or 0.0,
                        mdmt_source=case.mdmt_source or "")
    ranges = OperatingRanges(
        p_in_pa=(case.inlet_pressure_pa, case.inlet_pressure_max_pa or case.inlet_pressure_pa),
        t_in_k=(case.inlet_temperature_min_k or case.inlet_temperature_k, case.inlet_temperature_k),
        p_out_pa=(case.outlet_pressure_min_pa or case.outlet_pressure_pa, case.outlet_pressure_pa))
    relief = None
    if case.set_pressure_pa is not None and case.overpressure_fraction is not None:
        relief = ReliefInputs(
            set_pressure_pa=case.set_pressure_pa, overpressure_fraction=case.overpressure_fraction,
            t_relieving_k=case.inlet_temperature_k,
            superimposed_back_pressure_pa=case.superimposed_back_pressure_pa or case.p_atm_pa,
            built_up_back_pressure_pa=case.built_up_back_pressure_pa or 0.0, p_atm_pa=case.p_atm_pa,
            header_limit_k=case.header_limit_k)
    return ScreeningOptions(limits=limits, water_saturated=True if case.water_saturated else None,
                            inhibitor=case.hydrate_inhibitor or "methanol", mass_flow_kg_per_s=case.mass_flow_kg_per_s,
                            ranges=ranges if ranges.varies else None, relief=relief)


def _merged_warnings(entries: list[dict[str, Any]]) -> list[str]:
    seen: dict[str, list[str]] = {}
    for entry in entries:
        for text in entry.get("warnings") or []:
            seen.setdefault(text, [])
            if entry["condition"] not in seen[text]:
                seen[text].append(entry["condition"])
    n = len(entries)
    return [text if len(conds) == n else f"{text} ({', '.join(conds)})" for text, conds in seen.items()]


def _fluid_record_inputs(record: FluidRecord) -> dict[str, Any]:
    """The stored fluid's part of ``CaseResult.inputs["fluid"]`` (everything but what the built Fluid adds)."""
    return {"id": record.id, "name": record.name, "composition": record.composition, "eos": record.eos,
            "kij_mode": KijMode(record.kij_mode).value, "kij": KijMode(record.kij_mode).fluid_kij()}


def result_inputs(case: Case, fluid: Fluid | None = None) -> dict[str, Any]:
    """Everything needed to reproduce a computation of ``case``, in SI units (stored as ``CaseResult.inputs``)."""
    record = case.fluid
    fluid = fluid if fluid is not None else record.to_fluid()
    material = case.material
    return json_safe({
        "method": ("isenthalpic letdown: PT flash of the inlet, PH flash at the outlet pressure (jtcheck.letdown), "
                   "with the case EOS and the other of PR and SRK; screening by jtcheck.screening"),
        "software_version": jtcheck_version,
        "case": {"id": case.id, "version": case.version, "tag": case.tag, "kind": CaseKind(case.kind).value,
                 "unit": case.unit.name, "site": case.unit.site.name},
        "fluid": {**_fluid_record_inputs(record),
                  "component_ids": list(fluid.ids), "zs": [float(z) for z in fluid.zs]},
        "basis": fluid.basis(),
        "conditions": [{"condition": n, "p_in_pa": p, "t_in_k": t, "p_out_pa": case.outlet_pressure_pa}
                       for n, p, t in case_conditions(case)],
        "case_values": {**{k: v for k, v in case_values(case).items() if k not in ("basis", "references")},
                        "mdmt_source": case.mdmt_source},
        "material": None if material is None else {
            "id": material.id, "name": material.name, "min_metal_temperature_k": material.min_metal_temperature_k,
            "notes": material.notes, "source": material.source},
    })


def result_is_current(case: Case, result: CaseResult) -> bool:
    """True if ``result`` was computed from the case and fluid as they are stored now."""
    if result.case_id != case.id or result.case_version != case.version:
        return False
    stored = result.inputs.get("fluid", {})
    record = case.fluid
    return (stored.get("composition") == json_safe(record.composition) and stored.get("eos") == record.eos
            and stored.get("kij_mode") == KijMode(record.kij_mode).value)


def compute_case(session: Session, user: User, case_id: int) -> CaseResult:
    """Compute a case at each credible condition and store the result (any active user).

    Each condition of :func:`case_conditions` is an isenthalpic letdown from its inlet state to the
    case's outlet pressure.  A condition that did not converge is stored with ``converged: False``,
    its reason and ``t_out: None``; ``CaseResult.converged`` is True only if all did, and
    ``t_out_min_k`` is the coldest converged outlet temperature [K] (None if none converged).
    The inputs, model basis (EOS, kij set, data versions) and software version are stored with it.
    Computing does not change the case (nor its version).

    Raises
    ------
    NotFound
        If there is no such case.
    ConcurrentEditError
        If the case or its fluid was changed while it was being computed; nothing is stored.
    """
    require(user, ALL_ROLES, "compute cases")
    try:   # the letdowns run before the write transaction, so no lock is held while they do
        case = session.get(Case, case_id, populate_existing=True, options=_case_loads())
        if case is None:
            raise NotFound("case", case_id)
        prepared = _prepare_computation(case)
    except BaseException:
        session.rollback()
        raise
    with transaction(session):
        result = _store_computation(session, user, case_id, prepared)
    return result


def _compute_case(session: Session, user: User, case_id: int) -> CaseResult:
    """Compute and store within the caller's transaction."""
    case = session.get(Case, case_id, options=_case_loads())
    if case is None:
        raise NotFound("case", case_id)
    return _store_computation(session, user, case_id, _prepare_computation(case))


def _prepare_computation(case: Case) -> dict[str, Any]:
    fluid = case.fluid.to_fluid()   # built once: the letdowns, the stored inputs and the basis share it
    conditions = [Condition(name, p_in, t_in, case.outlet_pressure_pa) for name, p_in, t_in in case_conditions(case)]
    screening = screen_letdown(fluid, conditions, screening_options(case))
    entries = [_condition_entry(cs, fluid.eos.value) for cs in screening.conditions]
    inputs = result_inputs(case, fluid)
    return {"version": case.version, "inputs": inputs, "basis": fluid.basis(), "entries": entries,
            "screening": screening}


def _store_computation(session: Session, user: User, case_id: int, prepared: dict[str, Any]) -> CaseResult:
    case = session.get(Case, case_id, populate_existing=True, options=(joinedload(Case.fluid),))
    if case is None:
        raise NotFound("case", case_id)
    inputs = prepared["inputs"]
    # the fluid as stored now must be the one computed with; the rest of inputs["fluid"] (component ids and
    # normalised mole fractions) is a function of these stored fields, so no Fluid is built to compare them
    stored_fluid = json_safe(_fluid_record_inputs(case.fluid))
    if case.version != prepared["version"] or any(inputs["fluid"].get(k) != v for k, v in stored_fluid.items()):
        raise ConcurrentEditError("case", case_id, prepared["version"], case.version)
    entries = prepared["entries"]
    converged = all(e["converged"] for e in entries)
    failed = [f"{e['condition']}: {e['message']}" for e in entries if not e["converged"]]
    message = (f"all {len(entries)} conditions converged" if converged
               else "not converged: " + "; ".join(failed))
    basis = prepared["basis"]
    screening: Screening = prepared["screening"]
    result = CaseResult(
        case=case, case_version=case.version, computed_by=user, inputs=inputs,
        eos=basis["eos"], kij_basis=basis["kij_basis"], component_data_version=basis["component_data"],
        kij_data_version=basis["kij_data"], software_version=jtcheck_version, converged=converged,
        message=message, warnings=_merged_warnings(entries), results=entries,
        t_out_min_k=screening.t_out_min_k, outcome=screening.outcome.value, screening=screening.to_dict())
    session.add(result)
    session.flush()
    audit.add_entry(session, user, "case", case.id, "compute",
           new=f"result {result.id}: {message}; outcome {result.outcome}; coldest screened outlet "
               + (f"{result.t_out_min_k:.2f} K" if result.t_out_min_k is not None else "none"))
    return result


def get_result(session: Session, user: User, result_id: int) -> CaseResult:
    """One stored result (any active user); raise NotFound if there is none."""
    require(user, ALL_ROLES, "view results")
    result = session.get(CaseResult, result_id)
    if result is None:
        raise NotFound("result", result_id)
    return result
