"""Demo data for the case register: the fictional Kestrel Ridge gas terminal.

The site, its units, fluids, tags, services and every number below are invented for demonstration;
none describes a real facility, and none is a design value.  Pressures are stored in Pa absolute
and temperatures in K; the comments give them as a user would type them (the display units stored
with each case), with the standard atmosphere for gauge pressures.
"""
from __future__ import annotations

from typing import Any

from sqlalchemy import select
from sqlalchemy.orm import Session

from jtcheck.records import audit, computation
from jtcheck.records.cases import add_case
from jtcheck.records.demo_labels import DEMO_NOTE, SITE_NAME
from jtcheck.records.fluids import add_fluid
from jtcheck.records.guard import EDIT_ROLES, require
from jtcheck.records.materials import add_seed_materials
from jtcheck.records.models import P_ATM_STANDARD_PA, CaseKind, Material, Role, Site, User
from jtcheck.records.sites import add_site, add_unit
from jtcheck.records.transactions import transaction

#: The demo site's default margin [K] and its reason (invented site practice, of the common size).
SITE_MARGIN_K = 5.0
SITE_MARGIN_BASIS = ("Site practice (invented): 5 K above the cold limit, covering the instrument error of the "
                     "inlet temperature and pressure and the scatter of a cubic equation of state against "
                     "measured Joule-Thomson cooling for lean gas; the model spread is shown beside it.")
SITE_DESCRIPTION = ("Fictional gas receiving terminal used for jtcheck's demonstration data. "
                    "Every name and number is invented.")
#: The owner of demo records when no user is given: cannot sign in (inactive, unusable password hash).
DEMO_USER_EMAIL = "demo@kestrel-ridge.invalid"

BAR = 1.0e5               # [Pa]
P_ATM = P_ATM_STANDARD_PA  # [Pa], gauge pressures below are BAR * x + P_ATM
T0 = 273.15               # 0 degC [K]

UNITS = (
    ("Inlet separation", "Slug catcher and inlet separators (invented)."),
    ("Town main PRS", "Pressure-reduction station feeding the town distribution main (invented)."),
    ("Fuel gas", "Fuel gas heating and letdown for the terminal's heaters and turbines (invented)."),
    ("LPG storage", "Pressurised LPG storage spheres (invented)."),
    ("CO2 export", "Captured CO2 compression and export (invented)."),
)

#: Invented compositions [mole fraction], with the equation of state of each ("eos", PR when not given).
FLUIDS: tuple[dict[str, Any], ...] = (
    {"name": "Kestrel pipeline gas", "composition": {
        "methane": 0.884, "ethane": 0.052, "propane": 0.019, "isobutane": 0.004, "n-butane": 0.005,
        "isopentane": 0.002, "n-pentane": 0.001, "n-hexane": 0.001, "nitrogen": 0.012, "carbon dioxide": 0.020}},
    {"name": "Kestrel separator gas", "composition": {
        "methane": 0.800, "ethane": 0.080, "propane": 0.050, "isobutane": 0.010, "n-butane": 0.015,
        "n-pentane": 0.005, "n-hexane": 0.003, "nitrogen": 0.012, "carbon dioxide": 0.025}},
    # screened on GERG-2008 (Kunz and Wagner 2012), the reference-grade model, with PR and SRK beside it
    {"name": "Kestrel fuel gas", "eos": "GERG2008", "composition": {
        "methane": 0.930, "ethane": 0.040, "propane": 0.005, "nitrogen": 0.015, "carbon dioxide": 0.010}},
    {"name": "Kestrel LPG (propane/butane)", "composition": {
        "ethane": 0.020, "propane": 0.600, "isobutane": 0.130, "n-butane": 0.250}},
    {"name": "Kestrel CO2 export", "composition": {
        "carbon dioxide": 0.955, "nitrogen": 0.030, "methane": 0.015}},
)

_CS = "Carbon steel, not impact tested (typical -29 degC)"
_LTCS = "Low-temperature carbon steel (typical -46 degC)"
#: The units a user of the demo typed, and the SI field each belongs to.
_DISPLAY = {"inlet_pressure": "barg", "inlet_pressure_max": "barg", "outlet_pressure": "barg",
            "inlet_temperature": "degC", "inlet_temperature_min": "degC", "margin": "K", "mass_flow": "kg/s",
            "outlet_pressure_min": "barg", "set_pressure": "barg", "overpressure": "%",
            "superimposed_back_pressure": "barg", "built_up_back_pressure": "bar", "header_limit": "degC"}
_SI_KEYS = {"inlet_pressure": "inlet_pressure_pa", "inlet_pressure_max": "inlet_pressure_max_pa",
            "outlet_pressure": "outlet_pressure_pa", "inlet_temperature": "inlet_temperature_k",
            "inlet_temperature_min": "inlet_temperature_min_k", "margin": "margin_k", "mass_flow": "mass_flow_kg_per_s",
            "outlet_pressure_min": "outlet_pressure_min_pa", "set_pressure": "set_pressure_pa",
            "overpressure": "overpressure_fraction", "superimposed_back_pressure": "superimposed_back_pressure_pa",
            "built_up_back_pressure": "built_up_back_pressure_pa", "header_limit": "header_limit_k"}

#: Invented cases: (unit, fluid, material, fields).
CASES: tuple[tuple[str, str, str, dict[str, Any]], ...] = (
    ("Town main PRS", "Kestrel pipeline gas", _CS, {
        "tag": "PCV-1101", "kind": CaseKind.CONTROL_VALVE,
        "service": "Town main pressure-reduction station, first cut",
        "inlet_pressure_pa": 72 * BAR + P_ATM,        # 72 barg
        "inlet_temperature_k": T0 + 9.0,              # 9 degC
        "inlet_temperature_min_k": T0 + 2.0,          # 2 degC, winter ground temperature
        "inlet_pressure_max_pa": 85 * BAR + P_ATM,    # 85 barg, pipeline maximum
        "outlet_pressure_pa": 19 * BAR + P_ATM,       # 19 barg
        "outlet_pressure_min_pa": 16 * BAR + P_ATM,   # 16 barg, regulator droop at low demand
        "mass_flow_kg_per_s": 12.0, "margin_k": 5.0}),
    ("Inlet separation", "Kestrel separator gas", _LTCS, {
        "tag": "PSV-2101", "kind": CaseKind.RELIEF_VALVE,
        "service": "Inlet separator V-2100 relief to flare, blocked gas outlet",
        "inlet_pressure_pa": 104.5 * BAR + P_ATM,     # 104.5 barg: set pressure 95 barg + 10 % overpressure
        "inlet_temperature_k": T0 + 30.0,             # 30 degC
        "inlet_temperature_min_k": T0 + 5.0,          # 5 degC
        "outlet_pressure_pa": 3 * BAR + P_ATM,        # 3 barg total back pressure in the flare header
        "set_pressure_pa": 95 * BAR + P_ATM,          # 95 barg
        "overpressure_fraction": 0.10,                # 10 %
        "superimposed_back_pressure_pa": 0.5 * BAR + P_ATM,   # 0.5 barg
        "built_up_back_pressure_pa": 2.5 * BAR,       # 2.5 bar
        "header_limit_k": T0 - 46.0,                  # -46 degC, low-temperature carbon steel header
        "water_saturated": True,                      # separator gas leaves the separator water-saturated
        "mass_flow_kg_per_s": 25.0, "margin_k": 5.0}),
    ("LPG storage", "Kestrel LPG (propane/butane)", _CS, {
        "tag": "PSV-4101", "kind": CaseKind.RELIEF_VALVE,
        "service": "LPG storage sphere TK-4100 relief to flare (liquid-full case)",
        "inlet_pressure_pa": 17.6 * BAR + P_ATM,      # 17.6 barg: set pressure 16 barg + 10 % overpressure
        "inlet_temperature_k": T0 + 20.0,             # 20 degC
        "inlet_temperature_min_k": T0 - 5.0,          # -5 degC, winter
        "outlet_pressure_pa": 1.5 * BAR + P_ATM,      # 1.5 barg flare header
        "set_pressure_pa": 16 * BAR + P_ATM,          # 16 barg
        "overpressure_fraction": 0.10,                # 10 %
        "superimposed_back_pressure_pa": 0.5 * BAR + P_ATM,   # 0.5 barg
        "built_up_back_pressure_pa": 1.0 * BAR,       # 1 bar
        "header_limit_k": T0 - 46.0,                  # -46 degC
        "mass_flow_kg_per_s": 8.0, "margin_k": 5.0}),
    ("CO2 export", "Kestrel CO2 export", _LTCS, {
        "tag": "PCV-5101", "kind": CaseKind.CONTROL_VALVE,
        "service": "CO2 export line letdown to the metering skid",
        "inlet_pressure_pa": 110 * BAR + P_ATM,       # 110 barg, dense phase
        "inlet_temperature_k": T0 + 25.0,             # 25 degC
        "inlet_temperature_min_k": T0 + 10.0,         # 10 degC, aftercooler at maximum duty
        "outlet_pressure_pa": 40 * BAR + P_ATM,       # 40 barg
        "mass_flow_kg_per_s": 30.0, "margin_k": 10.0,
        # a generated credible case switched off, with the site's (invented) reason, as the record shows it
        "credible_off": {"start_up": "the metering skid is pressurised to 35 barg through the heated warm-up "
                                     "bypass before PCV-5101 is opened (site start-up procedure, invented)"}}),
    ("CO2 export", "Kestrel CO2 export", _LTCS, {
        "tag": "BDV-5102", "kind": CaseKind.BLOWDOWN_VALVE,
        "service": "CO2 export pig launcher blowdown to atmospheric vent (dry ice case)",
        "inlet_pressure_pa": 110 * BAR + P_ATM,       # 110 barg, dense phase
        "inlet_temperature_k": T0 + 10.0,             # 10 degC
        "outlet_pressure_pa": 0.2 * BAR + P_ATM,      # 0.2 barg at the vent
        "margin_k": 5.0}),
    ("Inlet separation", "Kestrel separator gas", _LTCS, {
        "tag": "BDV-2102", "kind": CaseKind.VESSEL_DEPRESSURING,
        "service": "Inlet separator V-2100 emergency depressuring to flare (fire case not taken: no heat input)",
        "inlet_pressure_pa": 70 * BAR + P_ATM,        # 70 barg settled-out pressure at the start
        "inlet_temperature_k": T0 + 25.0,             # 25 degC
        "outlet_pressure_pa": 2 * BAR + P_ATM,        # 2 barg flare header back pressure
        "margin_k": 5.0,
        "vessel": {"orientation": "vertical", "inner_diameter_m": 1.8, "length_m": 5.0,   # 1.8 m x 5 m T/T
                   "wall_thickness_m": 0.035, "wall_material": "carbon steel"},           # 35 mm wall
        "orifices": [{"name": "BDV-2102 restriction orifice", "diameter_m": 0.035,      # 35 mm bore
                      "discharge_coefficient": 0.85}],
        "heat_input": {"kind": "none"},
        "run": {"end_time_s": 900.0, "design_pressure_pa": 100 * BAR + P_ATM}}),        # 15 min; design 100 barg
    ("Fuel gas", "Kestrel fuel gas", _CS, {
        "tag": "PCV-3101", "kind": CaseKind.CONTROL_VALVE,
        "service": "Fuel gas letdown downstream of heater E-3100",
        "inlet_pressure_pa": 70 * BAR + P_ATM,        # 70 barg
        "inlet_temperature_k": T0 + 45.0,             # 45 degC after the heater
        "inlet_temperature_min_k": T0 + 8.0,          # 8 degC, heater out of service (credible)
        "inlet_pressure_max_pa": 75 * BAR + P_ATM,    # 75 barg
        "outlet_pressure_pa": 6 * BAR + P_ATM,        # 6 barg
        "mass_flow_kg_per_s": 1.2, "margin_k": 5.0}),
)


def _demo_user(session: Session) -> User:
    user = session.scalar(select(User).where(User.email == DEMO_USER_EMAIL))
    if user is None:
        user = User(email=DEMO_USER_EMAIL, name="Demo data (invented)", role=Role.ENGINEER, password_hash="!",
                    active=False)
        session.add(user)
        session.flush()
        audit.add_entry(session, None, "user", user.id, "create", new=f"{user.email} (demo data owner)")
    return user


def load_demo(session: Session, user: User | None = None) -> Site:
    """Load the invented Kestrel Ridge gas terminal: site, units, fluids, seven cases, computed and screened.

    All of it is one transaction; if the site already exists, nothing is changed and it is returned.
    The typical materials are seeded first if missing.  Every number is invented (see module docstring).

    Parameters
    ----------
    user : User, optional
        The engineer or admin recorded as creator; by default an inactive demo user
        (``demo@kestrel-ridge.invalid``) that cannot sign in.
    """
    if user is not None:
        require(user, EDIT_ROLES, "load demo data")
    with transaction(session):
        site = session.scalar(select(Site).where(Site.name == SITE_NAME))
        if site is not None:
            return site
        owner = user if user is not None else _demo_user(session)
        add_seed_materials(session)
        site = add_site(session, owner, SITE_NAME, SITE_DESCRIPTION)
        site.default_margin_k, site.default_margin_basis = SITE_MARGIN_K, SITE_MARGIN_BASIS
        units = {name: add_unit(session, owner, site.id, name, text) for name, text in UNITS}
        fluids = {f["name"]: add_fluid(session, owner, f["name"], f["composition"], f.get("eos", "PR"), "table",
                                    DEMO_NOTE)
                  for f in FLUIDS}
        for unit_name, fluid_name, material_name, fields in CASES:
            material = session.scalar(select(Material).where(Material.name == material_name))
            assert material is not None, material_name
            data = {**fields, "unit_id": units[unit_name].id, "fluid_id": fluids[fluid_name].id,
                    "material_id": material.id, "basis": DEMO_NOTE,
                    "references": "Invented demo case; no references.",
                    "display_units": {k: u for k, u in _DISPLAY.items() if _SI_KEYS[k] in fields},
                    "p_atm_pa": P_ATM}
            case = add_case(session, owner, data)
            computation.add_result(session, owner, case.id)
    return site
