"""``jtcheck depressure``: a vessel depressured through its blowdown valve, in time, with progress.

Options are text with units (converted to SI by :mod:`jtcheck.units`); the run is :func:`jtcheck.depressure`.
Prints the summary (time to the target, peak flow, the coldest fluid, wall and valve outlet with the moment
and pressure of each, the balances, the screening) and a thinned table of the time series; ``--series FILE``
writes every step as CSV (SI units), ``--json`` prints the whole result.  Exit codes as ``jtcheck letdown``:
0 pass (without a limit: completed), 2 bad input, 3 not screened (a step failed, or no limit), 4 margin
eroded, 5 fail.
"""
from __future__ import annotations

import csv
import json
import math
import sys

import click

from jtcheck.cli.exits import EXIT_FAIL, EXIT_MARGIN_ERODED, EXIT_NOT_SCREENED, fail_input
from jtcheck.errors import InputError
from jtcheck.notices import CAUTION
from jtcheck.units import (
    P_ATM_DEFAULT_PA,
    parse_duration,
    parse_positive_length,
    parse_pressure,
    parse_temperature,
    parse_temperature_difference,
)

#: Rows of the printed table (the CSV has every step).
TABLE_ROWS = 16


def _c(k: float) -> str:
    return "-" if k is None or not math.isfinite(k) else f"{k - 273.15:.1f} degC"


def _bar(pa: float) -> str:
    return "-" if pa is None or not math.isfinite(pa) else f"{pa / 1e5:.4g} bara"


def write_series(path: str, r) -> None:
    """Every step of a result as CSV, SI units."""
    with open(path, "w", newline="", encoding="utf-8") as fh:
        w = csv.writer(fh)
        w.writerow(["time_s", "pressure_pa", "t_gas_k", "t_liquid_k", "t_wall_gas_k", "t_wall_liquid_k",
                    "mass_flow_kg_per_s", "inventory_kg", "vapour_fraction", "liquid_level_m"])
        for i in range(r.time.size):
            w.writerow([f"{v:.9g}" if math.isfinite(v) else "" for v in
                        (r.time[i], r.pressure[i], r.t_gas[i], r.t_liquid[i], r.t_wall_gas[i], r.t_wall_liquid[i],
                         r.mass_flow[i], r.inventory[i], r.vapour_fraction[i], r.liquid_level[i])])


def exit_code(r, limits_given: bool) -> int:
    from jtcheck.screening.findings import Outcome

    if not r.converged:
        return EXIT_NOT_SCREENED
    if not limits_given:
        return 0
    return {Outcome.PASS: 0, Outcome.MARGIN_ERODED: EXIT_MARGIN_ERODED, Outcome.FAIL: EXIT_FAIL,
            Outcome.NOT_SCREENED: EXIT_NOT_SCREENED}[r.outcome]


def print_result(r) -> None:
    echo = click.echo
    echo(f"depressurisation: {r.message}")
    echo(f"  model: {r.inputs.get('model')}; steps {r.steps} (rejected {r.rejected_steps}), flashes {r.flashes}")
    if r.target_pressure_pa is not None:
        reached = "not reached" if r.time_to_target_s is None else f"{r.time_to_target_s:.0f} s"
        met = {True: "met", False: "NOT met", None: "not judged"}[r.target_met]
        echo(f"  target {_bar(r.target_pressure_pa)} within {r.target_time_s or 0:.0f} s: reached at {reached} ({met})")
    pk = r.peak_mass_flow
    echo(f"  peak mass flow {pk.value:.4g} kg/s at {pk.time_s:.0f} s (flare load)")
    for label, ex in (("coldest fluid", r.min_fluid_t), ("coldest gas-wetted wall", r.min_wall_gas_t),
                      ("coldest liquid-wetted wall", r.min_wall_liquid_t),
                      ("coldest valve outlet", r.min_valve_outlet_t)):
        if math.isfinite(ex.value):
            echo(f"  {label}: {_c(ex.value)} at {ex.time_s:.0f} s, vessel at {_bar(ex.pressure_pa)}")
    echo(f"  balances: mass {r.mass_closure:.2e}, energy {r.energy_closure:.2e} (relative)")
    echo(f"  screening: {r.outcome.value}")
    for f in r.findings:
        echo(f"    {f.message}")
    for w in r.warnings:
        echo(f"  note: {w}")
    echo("")
    echo(f"{'time s':>8s} {'P bara':>9s} {'T gas':>10s} {'T liquid':>10s} {'wall gas':>10s} {'wall liq':>10s} "
         f"{'flow kg/s':>10s} {'left kg':>10s}")
    n = r.time.size
    step = max(1, n // TABLE_ROWS)
    for i in list(range(0, n, step)) + ([n - 1] if (n - 1) % step else []):
        echo(f"{r.time[i]:8.1f} {r.pressure[i] / 1e5:9.4g} {_c(r.t_gas[i]):>10s} {_c(r.t_liquid[i]):>10s} "
             f"{_c(r.t_wall_gas[i]):>10s} {_c(r.t_wall_liquid[i]):>10s} {r.mass_flow[i]:10.4g} {r.inventory[i]:10.5g}")
    echo("")
    echo(CAUTION)


@click.command("depressure")
@click.option("--fluid", "fluid_text", required=True, help='Composition, e.g. "methane=0.9, ethane=0.1".')
@click.option("--eos", default="PR", show_default=True, help="Equation of state (PR, SRK, RK, VDW, GERG2008).")
@click.option("--p0", required=True, help='Initial pressure, e.g. "100 bara".')
@click.option("--t0", required=True, help='Initial temperature, e.g. "30 degC".')
@click.option("--orientation", type=click.Choice(["vertical", "horizontal"]), default="vertical", show_default=True)
@click.option("--diameter", required=True, help='Inside diameter, e.g. "2 m".')
@click.option("--length", required=True, help='Inside length between the ends, e.g. "6 m".')
@click.option("--wall-thickness", required=True, help='Wall thickness, e.g. "30 mm".')
@click.option("--material", default="carbon steel", show_default=True, help="carbon steel or stainless steel.")
@click.option("--wall-nodes", default=4, show_default=True, type=int, help="Cells across the wall.")
@click.option("--liquid-level", default=None, help='Initial liquid height, e.g. "0.8 m" (two-phase start).')
@click.option("--orifice", required=True, help='Blowdown valve / orifice bore, e.g. "40 mm".')
@click.option("--cd", default="0.85", show_default=True, help="Discharge coefficient [-].")
@click.option("--back-pressure", required=True, help='Back pressure, e.g. "1.5 bara".')
@click.option("--heat", type=click.Choice(["none", "ambient", "fire"]), default="ambient", show_default=True)
@click.option("--ambient", default="15 degC", show_default=True, help="Air temperature outside.")
@click.option("--environment-factor", default="1", show_default=True, help="API 521 F (fire only).")
@click.option("--model", type=click.Choice(["equilibrium", "two-zone"]), default="equilibrium", show_default=True,
              help="equilibrium: one fluid in phase equilibrium; two-zone: gas and liquid zones at their own "
                   "temperatures (a vessel with liquid).")
@click.option("--end-time", default="15 min", show_default=True, help='Stop after, e.g. "15 min".')
@click.option("--end-pressure", default=None, help='Stop at, e.g. "2 bara".')
@click.option("--target-pressure", default=None, help='Depressuring target, e.g. "7.9 bara".')
@click.option("--design-pressure", default=None,
              help='Design pressure, e.g. "90 barg": sets the API 521 common target (690 kPa g or 50 %).')
@click.option("--target-time", default="15 min", show_default=True, help="Time to reach the target.")
@click.option("--mdmt", default=None, help='Minimum design metal temperature, e.g. "-29 degC".')
@click.option("--limit", default=None, help="A cold limit entered by the user.")
@click.option("--margin", default="0 K", show_default=True, help="Required margin above the limit.")
@click.option("--p-atm", default=None, help="Atmospheric pressure for gauge units (default 1.01325 bar).")
@click.option("--series", "series_path", default=None, help="Write every step to this CSV file (SI units).")
@click.option("--json", "as_json", is_flag=True, help="Print the whole result as JSON.")
@click.option("--quiet", is_flag=True, help="No progress bar.")
@click.option("--max-seconds", default=60.0, show_default=True, type=float,
              help="Computing-time budget [s]; past it the run stops, not converged and not screened.")
def depressure_cmd(fluid_text, eos, p0, t0, orientation, diameter, length, wall_thickness, material, wall_nodes,
                   liquid_level, orifice, cd, back_pressure, heat, ambient, environment_factor, model, end_time,
                   end_pressure, target_pressure, design_pressure, target_time, mdmt, limit, margin, p_atm,
                   series_path, as_json, quiet, max_seconds) -> None:
    """Depressure a vessel through its blowdown valve and follow pressure, fluid and wall temperatures in time."""
    from jtcheck import Fluid, depressure
    from jtcheck.blowdown import HeatInput, Orifice, Vessel, api521_target_pressure_pa
    from jtcheck.screening.cold_metal import ColdLimits

    try:
        patm = P_ATM_DEFAULT_PA if p_atm is None else parse_pressure(p_atm, "p_atm", 0.0).pa
        fluid = Fluid(fluid_text, eos=eos)
        try:
            cd_value = float(cd)
        except ValueError:
            raise InputError("cd", f"the discharge coefficient must be a number, got {cd!r}") from None
        try:
            f_env = float(environment_factor)
        except ValueError:
            raise InputError("environment_factor", f"must be a number, got {environment_factor!r}") from None
        length_of = parse_positive_length
        vessel = Vessel(orientation, length_of(diameter, "diameter"), length_of(length, "length"),
                        length_of(wall_thickness, "wall_thickness"))
        orf = Orifice(length_of(orifice, "orifice"), cd_value, parse_pressure(back_pressure, "back_pressure",
                                                                              patm).pa)
        target = None
        if target_pressure is not None:
            target = parse_pressure(target_pressure, "target_pressure", patm).pa
        elif design_pressure is not None:
            target = api521_target_pressure_pa(parse_pressure(design_pressure, "design_pressure", patm).pa - patm,
                                               patm)
        limits = ColdLimits(mdmt_k=None if mdmt is None else parse_temperature(mdmt, "mdmt"),
                            user_limit_k=None if limit is None else parse_temperature(limit, "limit"),
                            margin_k=parse_temperature_difference(margin, "margin"))
        t_end = parse_duration(end_time, "end_time")
        kwargs = dict(p0_pa=parse_pressure(p0, "p0", patm).pa, t0_k=parse_temperature(t0, "t0"), vessel=vessel,
                      orifices=orf, liquid_level_m=None if liquid_level is None else parse_positive_length(liquid_level,
                                                                                                  "liquid_level"),
                      wall_material=material, wall_nodes=wall_nodes,
                      heat_input=HeatInput(heat, parse_temperature(ambient, "ambient"), f_env), model=model,
                      end_time_s=t_end,
                      end_pressure_pa=None if end_pressure is None else parse_pressure(end_pressure, "end_pressure",
                                                                                       patm).pa,
                      target_pressure_pa=target, target_time_s=parse_duration(target_time, "target_time"),
                      cold_limits=limits, max_seconds=max_seconds)
    except InputError as err:
        fail_input(err)
    show = not quiet and not as_json
    with click.progressbar(length=int(math.ceil(t_end)), label="depressuring", file=sys.stderr,
                           hidden=not show) as bar:
        done = [0]

        def progress(t_s: float, p_pa: float) -> None:
            k = min(int(t_s), int(math.ceil(t_end)))
            if k > done[0]:
                bar.update(k - done[0])
                done[0] = k
        try:
            r = depressure(fluid, progress=progress, **kwargs)
        except InputError as err:
            fail_input(err)
    if series_path:
        write_series(series_path, r)
    if as_json:
        click.echo(json.dumps(r.to_dict(), indent=1))
    else:
        print_result(r)
    sys.exit(exit_code(r, limits.governing_k is not None))
