"""Operations on the case register, in one namespace for the web and CLI layers.

The operations live in modules with one job each; this module only re-exports their public names,
so that ``from jtcheck.records import service`` and ``service.create_case(...)`` keep working:

======================================  ==============================================================
module                                  job
======================================  ==============================================================
:mod:`~jtcheck.records.guard`           roles and permission checks (who may do what)
:mod:`~jtcheck.records.transactions`    one transaction per write; the lock that orders edits of a case
:mod:`~jtcheck.records.audit`           audit entries and the audit trail
:mod:`~jtcheck.records.fields`          input checks (text, numbers in range, ids, flags) and limits
:mod:`~jtcheck.records.json_values`     JSON-safe copies of stored values
:mod:`~jtcheck.records.case_inputs`     the fields of a case, their defaults and their checks
:mod:`~jtcheck.records.users`           users
:mod:`~jtcheck.records.sites`           sites and plant units
:mod:`~jtcheck.records.fluids`          stored fluids
:mod:`~jtcheck.records.materials`       materials and the shipped typical ones
:mod:`~jtcheck.records.cases`           create, edit, read and list cases
:mod:`~jtcheck.records.computation`     compute a case and store its result
:mod:`~jtcheck.records.results`         stored results: latest, by id, still current or not
:mod:`~jtcheck.records.workflow`        calculation records and their review
======================================  ==============================================================

Code inside :mod:`jtcheck.records` imports from those modules, never from this one (this module
imports them all, so an import of it from below would close a circle).

Every function takes a :class:`~sqlalchemy.orm.Session` and the acting :class:`User`.  Functions that
write are one unit of work: they commit on success, and on any error roll the session back and
re-raise, so nothing is ever half-written (call them with a session that holds no other pending
changes).  Reading functions do not commit.

Quantities are SI floats, with the unit in the key (``inlet_pressure_pa``, ``inlet_temperature_k``);
converting what the user typed is the job of :mod:`jtcheck.units` at the web/CLI edge, which also
passes the unit text along in ``display_units``.  Bad input raises
:class:`jtcheck.errors.InputError` whose ``field`` is the key at fault and whose message gives the
allowed range.  Permissions are listed in :mod:`jtcheck.records.guard`.
"""
from __future__ import annotations

from jtcheck.cases.fields import (
    BUILT_UP_RANGE_PA,
    INLET_TEMPERATURE_RANGE_K,
    LIMIT_TEMPERATURE_RANGE_K,
    MARGIN_RANGE_K,
    MASS_FLOW_RANGE_KG_PER_S,
    OVERPRESSURE_RANGE,
    P_ATM_RANGE_PA,
    PRESSURE_RANGE_PA,
)
from jtcheck.records.audit import audit_trail
from jtcheck.records.case_inputs import CASE_FIELDS, DISPLAY_UNIT_FIELDS, HYDRATE_INHIBITORS, case_values
from jtcheck.records.cases import (
    NOT_COMPUTED,
    case_has_issued_records,
    create_case,
    get_case,
    list_cases,
    update_case,
)
from jtcheck.records.computation import CONDITIONS, case_conditions, compute_case, result_inputs, screening_options
from jtcheck.records.fields import MAX_LONG_TEXT, MAX_NAME, MAX_SHORT_TEXT, MAX_TAG, MAX_UNIT_TEXT
from jtcheck.records.fluids import create_fluid, list_fluids, update_fluid
from jtcheck.records.guard import ADMIN_ROLES, ALL_ROLES, EDIT_ROLES, can_administer, can_compute, can_edit_cases
from jtcheck.records.materials import (
    SEED_MATERIALS,
    TYPICAL_CAUTION,
    TYPICAL_SOURCE,
    create_material,
    list_materials,
    seed_materials,
    update_material,
)
from jtcheck.records.mdmt_curves import curve_rows, curve_table, update_curve_point
from jtcheck.records.results import get_result, latest_results, result_is_current
from jtcheck.records.sites import create_site, create_unit, list_sites
from jtcheck.records.users import create_user, end_sessions, get_user_by_email, list_users, update_user

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
    "create_user", "update_user", "end_sessions", "get_user_by_email", "list_users",
    # sites
    "create_site", "create_unit", "list_sites",
    # fluids
    "create_fluid", "update_fluid", "list_fluids",
    # materials
    "create_material", "update_material", "list_materials", "TYPICAL_CAUTION", "TYPICAL_SOURCE",
    "SEED_MATERIALS", "seed_materials", "curve_rows", "curve_table", "update_curve_point",
    # cases
    "NOT_COMPUTED", "create_case", "update_case", "case_has_issued_records", "get_case", "list_cases",
    # computation
    "CONDITIONS", "case_conditions", "screening_options", "result_inputs", "compute_case",
    # results
    "latest_results", "result_is_current", "get_result",
]
