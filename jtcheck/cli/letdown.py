"""``jtcheck letdown``: one isenthalpic letdown, screened against a cold limit, printed as a table or as JSON."""
from __future__ import annotations

import json
import sys

import click

from jtcheck.cli.exits import EXIT_FAIL, EXIT_INPUT, EXIT_MARGIN_ERODED, EXIT_NOT_SCREENED, fail_input
from jtcheck.errors import InputError
from jtcheck.notices import CAUTION
from jtcheck.units import (
    P_ATM_DEFAULT_PA,
    parse_pressure,
    parse_temperature,
    parse_temperature_difference,
    pressure_from_pa,
    temperature_from_k,
)


def _limit_options(limit: str | None, mdmt: str | None, margin: str):
    from jtcheck.screening.cold_metal import ColdLimits

    return ColdLimits(mdmt_k=None if mdmt is None else parse_temperature(mdmt, "mdmt"),
                      user_limit_k=None if limit is None else parse_temperature(limit, "limit"),
                      margin_k=parse_temperature_difference(margin, "margin"),
                      mdmt_source="entered" if mdmt is not None else "")


def _exit_code(screening, limits_given: bool) -> int:
    from jtcheck.screening.findings import Outcome

    if not limits_given:   # no limit: only the calculation is judged
        return 0 if all(c.converged for c in screening.conditions) else EXIT_NOT_SCREENED
    return {Outcome.PASS: 0, Outcome.MARGIN_ERODED: EXIT_MARGIN_ERODED, Outcome.FAIL: EXIT_FAIL,
            Outcome.NOT_SCREENED: EXIT_NOT_SCREENED}[screening.outcome]


def run_letdown(fluid_text: str, p_in: str, t_in: str, p_out: str, eos: str, kij: str, p_atm: str | None,
                 as_json: bool, title: str | None = None, *, limit: str | None = None, mdmt: str | None = None,
                 margin: str = "0 K", p_in_max: str | None = None, t_in_min: str | None = None,
                 p_out_min: str | None = None, water_saturated: bool = False, inhibitor: str = "methanol",
                 mass_flow: str | None = None, compare_models: bool = True) -> int:
    from jtcheck import Fluid
    from jtcheck.letdown.throttle import check_letdown_inputs
    from jtcheck.screening.screen import OperatingRanges, ScreeningOptions, credible_conditions, screen_letdown

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
        limits = _limit_options(limit, mdmt, margin)
        p_in_max_pa = None if p_in_max is None else parse_pressure(p_in_max, "p_in_max", p_atm_pa).pa
        t_in_min_k = None if t_in_min is None else parse_temperature(t_in_min, "t_in_min")
        p_out_min_pa = None if p_out_min is None else parse_pressure(p_out_min, "p_out_min", p_atm_pa).pa
        if p_in_max_pa is not None and p_in_max_pa < pin.pa:
            raise InputError("p_in_max", "the maximum inlet pressure must not be below the inlet pressure")
        if t_in_min_k is not None and t_in_min_k > tin_k:
            raise InputError("t_in_min", "the minimum inlet temperature must not be above the inlet temperature")
        if p_out_min_pa is not None and p_out_min_pa > pout.pa:
            raise InputError("p_out_min", "the minimum outlet pressure must not be above the outlet pressure")
        flow = None
        if mass_flow is not None:
            try:
                flow = float(mass_flow.split()[0])
            except (ValueError, IndexError):
                raise InputError("mass_flow", f"mass flow must be a number in kg/s, got {mass_flow!r}") from None
            if not 0 < flow < 1e5:
                raise InputError("mass_flow", "mass flow must lie between 0 and 100000 kg/s")
        fluid = Fluid(fluid_text, eos=eos, kij=None if kij == "table" else 0)
        check_letdown_inputs(pin.pa, tin_k, pout.pa)
        ranges = OperatingRanges((pin.pa, p_in_max_pa or pin.pa), (t_in_min_k or tin_k, tin_k),
                                 (p_out_min_pa or pout.pa, pout.pa))
        options = ScreeningOptions(limits=limits, compare_models=compare_models,
                                   water_saturated=True if water_saturated else None, inhibitor=inhibitor,
                                   mass_flow_kg_per_s=flow, ranges=ranges if ranges.varies else None)
        screening = screen_letdown(fluid, credible_conditions(pin.pa, tin_k, pout.pa, p_in_max_pa, t_in_min_k),
                                   options)
    except InputError as err:
        fail_input(err)
        return EXIT_INPUT
    result = screening.conditions[0].results[fluid.eos.value]
    assert result is not None   # inputs were checked above
    limits_given = limits.governing_k is not None
    t_unit = t_in.strip().split()[-1] if " " in t_in.strip() else "K"
    t_unit = {"c": "degC", "f": "degF"}.get(t_unit.lower(), t_unit)
    d_unit = "degF" if t_unit.lower() == "degf" else "K"
    gauge_used = pin.gauge or pout.gauge

    def tfmt(k):
        return "-" if k is None else f"{temperature_from_k(k, t_unit):.2f} {t_unit}"

    def dfmt(dk):
        return f"{dk * (1.8 if d_unit == 'degF' else 1.0):.2f} {d_unit}"

    def pfmt(pa, unit=pout.unit):
        return f"{pressure_from_pa(pa, unit, p_atm_pa):.4g} {unit}"

    display = {
        "p_in": {"value": pressure_from_pa(pin.pa, pin.unit, p_atm_pa), "unit": pin.unit},
        "p_out": {"value": pressure_from_pa(pout.pa, pout.unit, p_atm_pa), "unit": pout.unit},
        "t_in": {"value": temperature_from_k(tin_k, t_unit), "unit": t_unit},
        "t_out": {"value": temperature_from_k(result.t_out, t_unit) if result.converged else None, "unit": t_unit},
        "dt": {"value": result.dt * (1.8 if d_unit == "degF" else 1.0) if result.converged else None,
               "unit": d_unit},
    }
    atm_note = (f"gauge pressures converted with atmospheric pressure {p_atm_pa / 1e5:.6g} bar"
                + (" (default)" if p_atm is None else " (given)"))
    code = _exit_code(screening, limits_given)
    if as_json:
        payload = {
            "inputs": {"fluid": fluid_text, "p_in": p_in, "t_in": t_in, "p_out": p_out, "eos": fluid.eos.value,
                       "kij": kij, "p_atm_pa": p_atm_pa, "limit": limit, "mdmt": mdmt, "margin": margin,
                       "p_in_max": p_in_max, "t_in_min": t_in_min, "p_out_min": p_out_min,
                       "water_saturated": water_saturated, "inhibitor": inhibitor, "mass_flow": mass_flow},
            "composition": {i: float(z) for i, z in zip(fluid.ids, fluid.zs, strict=True)},
            "result": result.to_dict(),
            "display": display,
            "screening": screening.to_dict(),
            "exit_code": code,
            "notes": [atm_note] if gauge_used else [],
            "caution": CAUTION,
        }
        click.echo(json.dumps(payload, indent=2))
        return code
    if title:
        click.echo(title)
    comp = ", ".join(f"{n} {z:.4g}" for n, z in zip(fluid.names, fluid.zs, strict=True))
    click.echo(f"fluid      {comp}")
    click.echo(f"model      {fluid.eos.long_name}; kij: {fluid.kij_basis}")
    if len(screening.models) > 1:
        click.echo(f"compared   {', '.join(screening.models)} side by side; the colder outlet is screened")
    click.echo("")
    click.echo(f"{'':18s}{'inlet':>16s}{'outlet':>16s}")
    click.echo(f"{'pressure':18s}{pfmt(pin.pa, pin.unit):>16s}{pfmt(pout.pa):>16s}")
    t_out_txt = tfmt(result.t_out) if result.converged else "not converged"
    vf_out = f"{result.vapor_fraction:.4f}" if result.converged else "-"
    click.echo(f"{'temperature':18s}{tfmt(tin_k):>16s}{t_out_txt:>16s}")
    click.echo(f"{'phase':18s}{result.inlet_phase:>16s}{result.phase:>16s}")
    click.echo(f"{'vapour fraction':18s}{result.inlet_vapor_fraction:>16.4f}{vf_out:>16s}")
    if result.converged:
        click.echo(f"\ntemperature change across the letdown: {display['dt']['value']:+.2f} {d_unit}")
    else:
        click.echo(f"\nNOT CONVERGED: {result.message}")
    if len(screening.conditions) > 1 or len(screening.models) > 1:
        click.echo(f"\n{'condition':34s}{'inlet':>14s}{'outlet':>12s}" + "".join(f"{m:>14s}" for m in screening.models)
                   + f"{'screened':>14s}")
        for cs in screening.conditions:
            c = cs.condition
            by_model = "".join(f"{tfmt(r.t_out if r is not None and r.converged else None):>14s}"
                               for r in cs.results.values())
            click.echo(f"{c.name:34s}{pfmt(c.p_in_pa, pin.unit):>14s}{pfmt(c.p_out_pa):>12s}{by_model}"
                       f"{tfmt(cs.t_screen_k):>14s}")
    if limits_given:
        click.echo(f"\ncold limit {tfmt(limits.governing_k)} ({limits.basis}); margin {dfmt(limits.margin_k)}")
        click.echo(f"OUTCOME: {screening.outcome.value.upper()} - {screening.outcome.sentence}")
    else:
        click.echo("\nno cold limit given (--limit or --mdmt): the outcome is not screened; findings follow")
    click.echo("\nfindings")
    for f in screening.findings:
        click.echo(f"  [{f.severity.value}] {f.topic.value}: {f.message}")
    answers = screening.answers
    if answers.get("preheat"):
        click.echo("\nwhat keeps it safe (outlet at the limit plus margin, "
                   f"{tfmt(answers['preheat']['target_k'])})")
        gov = answers["preheat"].get("governing")
        if gov and gov.get("needed"):
            duty = gov.get("duty_w")
            duty_txt = f"; heater duty {duty / 1e3:.1f} kW at {flow:g} kg/s" if duty is not None else \
                "; give --mass-flow for the heater duty"
            click.echo(f"  preheat: heat the inlet to {tfmt(gov['t_in_required_k'])} (a rise of "
                       f"{dfmt(gov['temperature_rise_k'])}, {gov['condition']}, {gov['model']}){duty_txt}")
        elif not answers["preheat"].get("all_converged"):
            click.echo("  preheat: not found (a calculation did not converge)")
        olim = answers["outlet_pressure_limit"].get("governing")
        if olim:
            click.echo(f"  outlet pressure: keep it at or above {pfmt(olim['p_out_min_pa'])} "
                       f"({olim['condition']}, {olim['model']})")
        elif answers["outlet_pressure_limit"].get("all_converged"):
            click.echo("  outlet pressure: no limit found above the floor (the inlet itself may be too cold)")
    if gauge_used:
        click.echo(atm_note)
    click.echo(f"\n{CAUTION}")
    return code



@click.command("letdown")
@click.option("--fluid", "fluid_text", required=True,
              help='Composition as name=amount pairs, e.g. "methane=0.85,ethane=0.07,CO2=0.08" (fractions or %).')
@click.option("--p-in", required=True, help='Inlet pressure with unit, e.g. "100 bara", "1450 psig".')
@click.option("--t-in", required=True, help='Inlet temperature with unit, e.g. "40 degC", "313.15 K".')
@click.option("--p-out", required=True, help='Outlet pressure with unit, e.g. "10 barg".')
@click.option("--eos", default="PR", show_default=True, help="Equation of state: PR, SRK, RK or VDW.")
@click.option("--kij", default="table", show_default=True,
              help="Binary interaction parameters: 'table' (published values, 0 where none) or 'zero'.")
@click.option("--p-atm", default=None, help='Atmospheric pressure for gauge units (default "1.01325 bar").')
@click.option("--limit", default=None, help='Cold limit of the downstream steel, e.g. "-29 degC".')
@click.option("--mdmt", default=None, help='MDMT of the downstream material, e.g. "-46 degC" (the warmer of '
                                          '--limit and --mdmt governs).')
@click.option("--margin", default="0 K", show_default=True, help='Required margin above the limit, e.g. "5 K".')
@click.option("--p-in-max", default=None, help="Maximum credible inlet pressure (adds conditions and a sweep).")
@click.option("--t-in-min", default=None, help="Minimum credible inlet temperature (adds conditions and a sweep).")
@click.option("--p-out-min", default=None, help="Minimum credible outlet pressure (the sweep runs down to it).")
@click.option("--water-saturated", is_flag=True, help="Screen for hydrates as if the gas were water-saturated.")
@click.option("--inhibitor", default="methanol", show_default=True, type=click.Choice(["methanol", "MEG"]),
              help="Hydrate inhibitor for the Hammerschmidt dose.")
@click.option("--mass-flow", default=None, help="Mass flow in kg/s, for the heater duty.")
@click.option("--single-model", is_flag=True, help="Use only the chosen EOS (no PR/SRK comparison).")
@click.option("--json", "as_json", is_flag=True, help="Print the result as JSON (SI values plus display units).")
def letdown_cmd(fluid_text, p_in, t_in, p_out, eos, kij, p_atm, limit, mdmt, margin, p_in_max, t_in_min, p_out_min,
                water_saturated, inhibitor, mass_flow, single_model, as_json):
    """Temperature and phase downstream of an isenthalpic letdown, screened against a cold limit.

    Exit codes: 0 pass (or, without a limit, converged), 2 bad input, 3 not screened (a calculation did not
    converge), 4 margin eroded, 5 fail.
    """
    sys.exit(run_letdown(fluid_text, p_in, t_in, p_out, eos, kij, p_atm, as_json, limit=limit, mdmt=mdmt,
                          margin=margin, p_in_max=p_in_max, t_in_min=t_in_min, p_out_min=p_out_min,
                          water_saturated=water_saturated, inhibitor=inhibitor, mass_flow=mass_flow,
                          compare_models=not single_model))
