"""Helpers shared by the web tests (imported by name; this folder is on sys.path)."""
from __future__ import annotations

import itertools
import re

from sqlalchemy import func, select

from jtcheck.web.database import db_session

#: A lean natural gas (mole fractions).
LEAN_GAS = {"methane": 0.85, "ethane": 0.07, "propane": 0.03, "n-butane": 0.01, "nitrogen": 0.02,
            "carbon dioxide": 0.02}
PASSWORD = "correct horse battery staple"
PSI = 6894.757293168361   # [Pa], the international pound per square inch
P_ATM = 101325.0          # [Pa]

_counter = itertools.count(1)


#: Cheap argon2 parameters: the tests sign in often.
FAST_HASHING = {"PASSWORD_HASH_TIME_COST": 1, "PASSWORD_HASH_MEMORY_COST": 8, "PASSWORD_HASH_PARALLELISM": 1}


def app_config(db_url: str, instance: str, **extra) -> dict:
    return {"TESTING": True, "DATABASE_URL": db_url, "JTCHECK_INSTANCE": instance, "SECRET_KEY": "t" * 48,
            "WTF_CSRF_ENABLED": False, "SESSION_COOKIE_SECURE": False, "DB_UPGRADE_ON_START": False,
            "LOGIN_RATE_LIMIT": "100000 per minute",
            "LOGIN_ACCOUNT_RATE_LIMIT": "100000 per minute", **FAST_HASHING, **extra}


def sign_in(client, email: str, password: str = PASSWORD):
    """Post the sign-in form."""
    return client.post("/login", data={"email": email, "password": password})


def unique(prefix: str) -> str:
    """A name not used before in this test run."""
    return f"{prefix}-{next(_counter)}"


def count(app, model) -> int:
    """Rows of ``model`` in the database."""
    with app.app_context():
        return db_session().scalar(select(func.count()).select_from(model))


def case_form(world, **overrides) -> dict[str, str]:
    """A valid case form: 70 barg, 20 degC to 10 barg, with credible extremes, as a browser sends it."""
    data = {"tag": unique("PCV"), "service": "test letdown", "kind": "control_valve", "unit_id": str(world.unit_id),
            "fluid_id": str(world.fluid_id), "material_id": str(world.material_id),
            "inlet_pressure": "70", "inlet_pressure_unit": "barg",
            "inlet_temperature": "20", "inlet_temperature_unit": "degC",
            "outlet_pressure": "10", "outlet_pressure_unit": "barg",
            "inlet_temperature_min": "5", "inlet_temperature_min_unit": "degC",
            "inlet_pressure_max": "", "inlet_pressure_max_unit": "barg",
            "mass_flow": "2", "mass_flow_unit": "kg/s",
            "mdmt": "", "mdmt_unit": "degC", "cold_limit": "", "cold_limit_unit": "degC",
            "margin": "5", "margin_unit": "K", "p_atm": "1.01325", "p_atm_unit": "bar",
            "basis": "", "references": ""}
    data.update(overrides)
    return data


def case_body(world, **overrides) -> dict:
    """A valid API case body."""
    data = {"tag": unique("PCV"), "service": "api letdown", "kind": "control_valve", "unit_id": world.unit_id,
            "fluid_id": world.fluid_id, "material_id": world.material_id, "inlet_pressure": "70 barg",
            "inlet_temperature": {"value": 20, "unit": "degC"}, "outlet_pressure": "10 barg", "margin": "5 K"}
    data.update(overrides)
    return data


def field_error(html: str, field: str) -> str | None:
    """The error text shown beside form field ``field``, or None."""
    m = re.search(rf'<p class="field-error" id="err-{re.escape(field)}" data-field="{re.escape(field)}">(.*?)</p>',
                  html, re.S)
    return m.group(1) if m else None


def created_id(resp) -> int:
    """The case id from the redirect after a form created a case."""
    m = re.search(r"/cases/(\d+)$", resp.headers["Location"])
    assert m, resp.headers.get("Location")
    return int(m.group(1))
