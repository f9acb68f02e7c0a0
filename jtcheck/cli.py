"""Command-line interface: ``jtcheck letdown``, ``jtcheck components``, ``jtcheck demo``.

Input is parsed and converted to SI here (through :mod:`jtcheck.units`); the engineering core sees SI only.
Exit codes: 0 success, 2 bad input, 3 calculation did not converge.
"""
from __future__ import annotations

import json
import sys
from contextlib import contextmanager

import click

from jtcheck import __version__
from jtcheck.errors import InputError, JtcheckError
from jtcheck.notices import CAUTION, DEMO_NOTICE
from jtcheck.units import (
    P_ATM_DEFAULT_PA,
    parse_pressure,
    parse_temperature,
    pressure_from_pa,
    temperature_from_k,
)

EXIT_INPUT = 2
EXIT_NOT_CONVERGED = 3


def _fail_input(err: InputError) -> None:
    click.echo(f"error: {err}", err=True)
    sys.exit(EXIT_INPUT)


@click.group()
@click.version_option(__version__, prog_name="jtcheck")
def main() -> None:
    """jtcheck: temperature and phase downstream of pressure letdowns, for low-temperature screening."""


def _run_letdown(fluid_text: str, p_in: str, t_in: str, p_out: str, eos: str, kij: str, p_atm: str | None,
                 as_json: bool, title: str | None = None) -> int:
    from jtcheck import Fluid, letdown

    try:
        p_atm_pa = P_ATM_DEFAULT_PA
        if p_atm is not None:
            p_atm_pa = parse_pressure(p_atm, "p_atm").pa
            if p_atm_pa > 2e5 or p_atm_pa < 3e4:
                raise InputError("p_atm", "atmospheric pressure must lie between 0.3 and 2 bar absolute")
        pin = parse_pressure(p_in, "p_in", p_atm_pa)
        pout = parse_pressure(p_out, "p_out", p_atm_pa)
        tin_k = parse_temperature(t_in, "t_in")
        if kij not in ("table", "zero"):
            raise InputError("kij", f"{kij!r} is not a kij choice; allowed: table, zero")
        fluid = Fluid(fluid_text, eos=eos, kij=None if kij == "table" else 0)
        result = letdown(fluid, pin.pa, tin_k, pout.pa)
    except InputError as err:
        _fail_input(err)
        return EXIT_INPUT
    t_unit = t_in.strip().split()[-1] if " " in t_in.strip() else "K"
    t_unit = {"c": "degC", "f": "degF"}.get(t_unit.lower(), t_unit)
    gauge_used = pin.gauge or pout.gauge
    display = {
        "p_in": {"value": pressure_from_pa(pin.pa, pin.unit, p_atm_pa), "unit": pin.unit},
        "p_out": {"value": pressure_from_pa(pout.pa, pout.unit, p_atm_pa), "unit": pout.unit},
        "t_in": {"value": temperature_from_k(tin_k, t_unit), "unit": t_unit},
        "t_out": {"value": temperature_from_k(result.t_out, t_unit) if result.converged else None, "unit": t_unit},
        "dt": {"value": result.dt * (1.8 if t_unit.lower() == "degf" else 1.0) if result.converged else None,
               "unit": "degF" if t_unit.lower() == "degf" else "K"},
    }
    atm_note = (f"gauge pressures converted with atmospheric pressure {p_atm_pa / 1e5:.6g} bar"
                + (" (default)" if p_atm is None else " (given)"))
    if as_json:
        payload = {
            "inputs": {"fluid": fluid_text, "p_in": p_in, "t_in": t_in, "p_out": p_out, "eos": fluid.eos.value,
                       "kij": kij, "p_atm_pa": p_atm_pa},
            "composition": {i: float(z) for i, z in zip(fluid.ids, fluid.zs, strict=True)},
            "result": result.to_dict(),
            "display": display,
            "notes": [atm_note] if gauge_used else [],
            "caution": CAUTION,
        }
        click.echo(json.dumps(payload, indent=2))
    else:
        if title:
            click.echo(title)
        comp = ", ".join(f"{n} {z:.4g}" for n, z in zip(fluid.names, fluid.zs, strict=True))
        click.echo(f"fluid      {comp}")
        click.echo(f"model      {fluid.eos.long_name}; kij: {fluid.kij_basis}")
        click.echo("")
        click.echo(f"{'':18s}{'inlet':>16s}{'outlet':>16s}")

        def pfmt(pa, unit):
            return f"{pressure_from_pa(pa, unit, p_atm_pa):.4g} {unit}"

        click.echo(f"{'pressure':18s}{pfmt(pin.pa, pin.unit):>16s}{pfmt(pout.pa, pout.unit):>16s}")
        if result.converged:
            t_out_txt = f"{display['t_out']['value']:.2f} {t_unit}"
            vf_out = f"{result.vapor_fraction:.4f}"
        else:
            t_out_txt = "not converged"
            vf_out = "-"
        click.echo(f"{'temperature':18s}{display['t_in']['value']:>12.2f} {t_unit:<3s}{t_out_txt:>16s}")
        click.echo(f"{'phase':18s}{result.inlet_phase:>16s}{result.phase:>16s}")
        click.echo(f"{'vapour fraction':18s}{result.inlet_vapor_fraction:>16.4f}{vf_out:>16s}")
        if result.converged:
            dt = display["dt"]
            click.echo(f"\ntemperature change across the letdown: {dt['value']:+.2f} {dt['unit']}")
        else:
            click.echo(f"\nNOT CONVERGED: {result.message}")
        if gauge_used:
            click.echo(atm_note)
        for w in result.warnings:
            click.echo(f"warning: {w}")
        click.echo(f"\n{CAUTION}")
    return 0 if result.converged else EXIT_NOT_CONVERGED


@main.command("letdown")
@click.option("--fluid", "fluid_text", required=True,
              help='Composition as name=amount pairs, e.g. "methane=0.85,ethane=0.07,CO2=0.08" (fractions or %).')
@click.option("--p-in", required=True, help='Inlet pressure with unit, e.g. "100 bara", "1450 psig".')
@click.option("--t-in", required=True, help='Inlet temperature with unit, e.g. "40 degC", "313.15 K".')
@click.option("--p-out", required=True, help='Outlet pressure with unit, e.g. "10 barg".')
@click.option("--eos", default="PR", show_default=True, help="Equation of state: PR, SRK, RK or VDW.")
@click.option("--kij", default="table", show_default=True,
              help="Binary interaction parameters: 'table' (published values, 0 where none) or 'zero'.")
@click.option("--p-atm", default=None, help='Atmospheric pressure for gauge units (default "1.01325 bar").')
@click.option("--json", "as_json", is_flag=True, help="Print the result as JSON (SI values plus display units).")
def letdown_cmd(fluid_text, p_in, t_in, p_out, eos, kij, p_atm, as_json):
    """Temperature and phase downstream of an isenthalpic letdown (valve, choke, regulator)."""
    sys.exit(_run_letdown(fluid_text, p_in, t_in, p_out, eos, kij, p_atm, as_json))


@main.command("components")
@click.argument("search", required=False)
def components_cmd(search):
    """List the component library (optionally only names containing SEARCH)."""
    from jtcheck.thermo.components import COMPONENT_DATA_VERSION, all_components

    click.echo(f"{'id':24s}{'formula':10s}{'CAS':12s}{'Tc [K]':>9s}{'Pc [bar]':>10s}{'omega':>8s}")
    for c in all_components():
        if search and search.lower() not in (c.id + " " + c.name + " " + c.formula).lower():
            continue
        click.echo(f"{c.id:24s}{c.formula:10s}{c.cas:12s}{c.tc_k:9.2f}{c.pc_pa / 1e5:10.3f}{c.omega:8.4f}")
    click.echo(f"\ndata: {COMPONENT_DATA_VERSION}")


@main.command("demo")
def demo_cmd():
    """Run the letdowns of the invented Kestrel Ridge gas terminal (the demo site of the case register)."""
    from jtcheck.records.demo import CASES, FLUIDS, P_ATM, SITE_NAME

    click.echo(DEMO_NOTICE)
    compositions = {f["name"]: f["composition"] for f in FLUIDS}
    code = 0
    for unit, fluid_name, _material, fields in CASES:
        fluid_text = ",".join(f"{k}={v}" for k, v in compositions[fluid_name].items())
        title = f"\n{SITE_NAME} / {unit} / {fields['tag']}: {fields['service']}\n"
        p_in = f"{(fields['inlet_pressure_pa'] - P_ATM) / 1e5:.6g} barg"
        p_out = f"{(fields['outlet_pressure_pa'] - P_ATM) / 1e5:.6g} barg"
        t_in = f"{fields['inlet_temperature_k'] - 273.15:.6g} degC"
        code = max(code, _run_letdown(fluid_text, p_in, t_in, p_out, "PR", "table", None, False, title))
    sys.exit(code)


# ---------------------------------------------------------------------------------------------
# set-up and automation of the case register (no web import: the records layer directly)
# ---------------------------------------------------------------------------------------------

@contextmanager
def _register_session():
    """A session on the case register named by DATABASE_URL (else ./instance), schema brought up to date;
    closed (and its connections released) on exit."""
    import os

    from jtcheck.records.db import database_url, make_engine, make_session_factory, upgrade_database

    url = database_url(os.environ.get("JTCHECK_INSTANCE", "instance"))
    upgrade_database(url)
    engine = make_engine(url)
    session = make_session_factory(engine)()
    try:
        yield session
    finally:
        session.close()
        engine.dispose()


def _acting_admin(session):
    from sqlalchemy import select

    from jtcheck.records.models import Role, User

    return session.scalar(select(User).where(User.role == Role.ADMIN, User.active.is_(True)).order_by(User.id))


@main.group("user")
def user_group():
    """Accounts of the case register (for set-up and automation; run by whoever runs the server)."""


@user_group.command("add")
@click.argument("email")
@click.option("--role", required=True, type=click.Choice(["engineer", "checker", "approver", "admin"]),
              help="engineer prepares cases; checker and approver review; admin manages users and materials.")
@click.option("--name", default=None, help="Display name (default: the part of EMAIL before @).")
def user_add(email, role, name):
    """Add an account; the password is read from standard input (one line)."""
    from jtcheck.records import service
    from jtcheck.records.errors import PermissionDenied
    from jtcheck.records.passwords import check_password_length, hash_password

    password = sys.stdin.readline().rstrip("\r\n")
    try:
        check_password_length(password)
        with _register_session() as session:
            actor = _acting_admin(session)
            if actor is None and role != "admin":
                raise InputError("role", "the first account must be an admin (add one with --role admin)")
            user = service.create_user(session, actor, email=email, name=name or email.split("@")[0], role=role,
                                       password_hash=hash_password(password))
            click.echo(f"added {user.email} ({user.role})")
    except InputError as err:
        _fail_input(err)
    except PermissionDenied as err:
        click.echo(f"error: {err}", err=True)
        sys.exit(EXIT_INPUT)


@user_group.command("token")
@click.argument("email")
def user_token(email):
    """Print a new API token for EMAIL (replacing any earlier one); only its hash is stored."""
    from jtcheck.records import service
    from jtcheck.records.tokens import create_token

    with _register_session() as session:
        user = service.get_user_by_email(session, email)
        if user is None or not user.active:
            click.echo(f"error: email: no active account {email!r}", err=True)
            sys.exit(EXIT_INPUT)
        click.echo(create_token(session, user))


def run() -> None:  # pragma: no cover - console entry
    try:
        main()
    except JtcheckError as err:
        click.echo(f"error: {err}", err=True)
        sys.exit(EXIT_INPUT)


if __name__ == "__main__":  # pragma: no cover
    run()
