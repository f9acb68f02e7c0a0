"""Command-line interface: ``jtcheck letdown``, ``jtcheck components``, ``jtcheck demo``, ``jtcheck screen``.

Input is parsed and converted to SI here (through :mod:`jtcheck.units`); the engineering core sees SI only.
Exit codes of ``jtcheck letdown``: 0 pass (without a limit: converged), 2 bad input, 3 not screened (a
calculation did not converge or no limit), 4 margin eroded, 5 fail.
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
    parse_temperature_difference,
    pressure_from_pa,
    temperature_from_k,
)

EXIT_INPUT = 2
EXIT_NOT_SCREENED = 3      # a calculation did not converge (never a pass)
EXIT_MARGIN_ERODED = 4
EXIT_FAIL = 5
EXIT_NOT_CONVERGED = EXIT_NOT_SCREENED


def _fail_input(err: InputError) -> None:
    click.echo(f"error: {err}", err=True)
    sys.exit(EXIT_INPUT)


@click.group()
@click.version_option(__version__, prog_name="jtcheck")
def main() -> None:
    """jtcheck: temperature and phase downstream of pressure letdowns, for low-temperature screening."""


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


def _run_letdown(fluid_text: str, p_in: str, t_in: str, p_out: str, eos: str, kij: str, p_atm: str | None,
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
        _fail_input(err)
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
    sys.exit(_run_letdown(fluid_text, p_in, t_in, p_out, eos, kij, p_atm, as_json, limit=limit, mdmt=mdmt,
                          margin=margin, p_in_max=p_in_max, t_in_min=t_in_min, p_out_min=p_out_min,
                          water_saturated=water_saturated, inhibitor=inhibitor, mass_flow=mass_flow,
                          compare_models=not single_model))


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
# batch screening of a letdown list (CSV or XLSX; layout in jtcheck.batch.layout)
# ---------------------------------------------------------------------------------------------

#: How many reader warnings ``jtcheck screen`` prints before summing up the rest.
SCREEN_MAX_WARNINGS = 20
#: Command-line option -> the layout column it fills where a row's cell is empty.
_SCREEN_DEFAULTS = {"--limit": "cold_limit", "--mdmt": "mdmt", "--margin": "margin"}


def _batch_fluid_library():
    """(fluid library of the case register or None, a line saying which).

    The register is DATABASE_URL, else the SQLite file in ./instance (JTCHECK_INSTANCE); a SQLite file that
    does not exist is not created just to read it.
    """
    import os
    from pathlib import Path

    from jtcheck.batch.reader import register_fluid_library
    from jtcheck.records.db import SQLITE_FILENAME

    if not os.environ.get("DATABASE_URL", "").strip():
        sqlite = Path(os.environ.get("JTCHECK_INSTANCE", "instance")) / SQLITE_FILENAME
        if not sqlite.is_file():
            return None, (f"fluids    no case register found (DATABASE_URL unset, no {sqlite.as_posix()}): only "
                          "inline compositions are read")
    try:
        with _register_session() as session:
            library = register_fluid_library(session)
    except Exception as exc:  # noqa: BLE001 - a register that cannot be read only loses the fluid names
        return None, f"fluids    the case register could not be read ({exc}): only inline compositions are read"
    return library, f"fluids    {len(library)} named fluids from the case register, or inline compositions"


def _screen_out_path(file: str, out: str | None):
    from pathlib import Path

    src = Path(file)
    path = Path(out) if out else src.with_name(f"{src.stem}-results{src.suffix.lower()}")
    if path.suffix.lower() not in (".csv", ".xlsx"):
        raise InputError("out", f"{str(path)!r}: write the results to a .csv or .xlsx file")
    if path.resolve() == src.resolve():
        raise InputError("out", "the results file would overwrite the input file; give another --out")
    if not path.resolve().parent.is_dir():
        raise InputError("out", f"the folder of {str(path)!r} does not exist")
    return path


def _progress_wanted(no_progress: bool) -> bool:
    """A progress bar only on a terminal, and not with --no-progress."""
    return not no_progress and sys.stderr.isatty()


def _screen_exit_code(counts: dict[str, int], bad_rows: int) -> int:
    if counts.get("fail"):
        return EXIT_FAIL
    if counts.get("margin eroded"):
        return EXIT_MARGIN_ERODED
    if counts.get("not screened") or bad_rows:
        return EXIT_NOT_SCREENED
    return 0


def _run_screen(file: str, limit: str | None, mdmt: str | None, margin: str | None, out: str | None,
                keep_going: bool, single_model: bool, no_progress: bool) -> int:
    from tqdm import tqdm

    from jtcheck.batch.reader import bad_rows_file, read_cases
    from jtcheck.batch.writer import summary_counts, write_results
    from jtcheck.screening import batch as batch_screening

    try:
        out_path = _screen_out_path(file, out)
    except InputError as err:
        _fail_input(err)
        return EXIT_INPUT
    library, library_note = _batch_fluid_library()
    defaults = {col: text for opt, col in _SCREEN_DEFAULTS.items()
                if (text := {"--limit": limit, "--mdmt": mdmt, "--margin": margin}[opt]) is not None}
    try:
        result = read_cases(file, fluid_library=library, keep_going=keep_going, defaults=defaults)
    except InputError as err:
        option = {col: opt for opt, col in _SCREEN_DEFAULTS.items()}.get(err.field)
        _fail_input(InputError(option, err.message) if option else err)
        return EXIT_INPUT
    click.echo(f"file      {file}: {result.n_rows} case rows")
    click.echo(library_note)
    for w in result.warnings[:SCREEN_MAX_WARNINGS]:
        click.echo(f"warning: {w}")
    if len(result.warnings) > SCREEN_MAX_WARNINGS:
        click.echo(f"warning: ... and {len(result.warnings) - SCREEN_MAX_WARNINGS} more warnings")
    bad_path = None
    if result.errors:
        for e in result.errors:
            click.echo(f"error: {e}", err=True)
        n_bad = len(result.bad_rows)
        click.echo(f"{len(result.errors)} problems in {n_bad} {'row' if n_bad == 1 else 'rows'} "
                   "(rows numbered as in the spreadsheet: the header is row 1)", err=True)
        if not keep_going or not result.cases:
            why = "no good rows to screen" if keep_going else "fix them, or use --keep-going to screen the good rows"
            click.echo(f"nothing was screened: {why}", err=True)
            if keep_going and result.bad_rows:
                bad_path = out_path.with_name(f"{out_path.stem}-bad-rows.csv")
                bad_path.write_bytes(bad_rows_file(result))
                click.echo(f"bad rows written to {bad_path} (with a 'problems' column); fix and screen them again",
                           err=True)
            return EXIT_INPUT
        bad_path = out_path.with_name(f"{out_path.stem}-bad-rows.csv")
        bad_path.write_bytes(bad_rows_file(result))
    cases = result.cases
    bar = tqdm(total=len(cases), disable=not _progress_wanted(no_progress), file=sys.stderr, unit="case",
               desc="screening", leave=False)

    def progress(done: int, total: int) -> None:
        bar.total = total
        bar.update(done - bar.n)

    try:
        screening = batch_screening.screen_batch(cases, compare_models=not single_model, progress=progress)
    finally:
        bar.close()
    try:
        write_results(screening, result, out_path)
    except OSError as exc:
        _fail_input(InputError("out", f"cannot write {str(out_path)!r}: {exc.strerror or exc}"))
        return EXIT_INPUT

    counts = summary_counts(screening)
    t_unit = result.units.get("inlet_temperature", "degC")
    click.echo(f"screened  {len(screening.rows)} cases in {screening.seconds:.1f} s "
               f"({screening.n_scalar} by the scalar path)"
               + ("" if single_model else "; PR and SRK side by side, the colder governs"))
    for note in screening.notes:
        click.echo(f"note: {note}")
    click.echo(f"\n{'outcome':20s}{'cases':>8s}")
    for outcome, n in counts.items():
        click.echo(f"{outcome:20s}{n:>8d}")
    if bad_path is not None:
        click.echo(f"{'bad rows (not read)':20s}{len(result.bad_rows):>8d}")
    coldest = screening.coldest(10)
    if coldest:
        width = max([len("tag")] + [len(r.tag) for r in coldest]) + 2
        click.echo(f"\ncoldest cases\n{'row':>5s}  {'tag':{width}s}{'screened outlet':>18s}  outcome")
        for r in coldest:
            t = f"{temperature_from_k(r.t_screen_k, t_unit):.2f} {t_unit}" if r.t_screen_k is not None else "-"
            click.echo(f"{r.row:>5d}  {r.tag:{width}s}{t:>18s}  {r.outcome}")
    click.echo(f"\nresults written to {out_path}")
    if bad_path is not None:
        click.echo(f"bad rows written to {bad_path} ({len(result.bad_rows)} rows, with a 'problems' column): fix "
                   "them and screen that file; they count as not screened here")
    click.echo(f"\n{CAUTION}")
    return _screen_exit_code(counts, len(result.bad_rows) if bad_path is not None else 0)


@main.command("screen")
@click.argument("file", type=click.Path(exists=True, dir_okay=False))
@click.option("--limit", default=None, help='Cold limit for rows whose "cold limit" cell is empty, e.g. "-29 degC".')
@click.option("--mdmt", default=None, help='MDMT for rows whose "MDMT" cell is empty, e.g. "-46 degC".')
@click.option("--margin", default=None, help='Margin for rows whose "margin" cell is empty, e.g. "5 K" (else 0 K).')
@click.option("--out", default=None, type=click.Path(dir_okay=False),
              help="Results file, .xlsx or .csv (default: FILE's name with -results, beside it).")
@click.option("--keep-going", is_flag=True,
              help="Screen the good rows even when some rows are bad; the bad ones go to <out>-bad-rows.csv.")
@click.option("--single-model", is_flag=True, help="Use only each row's EOS (no PR/SRK comparison).")
@click.option("--no-progress", is_flag=True, help="No progress bar (it is shown only on a terminal anyway).")
def screen_cmd(file, limit, mdmt, margin, out, keep_going, single_model, no_progress):
    """Screen a letdown list (FILE.csv or FILE.xlsx, one row per case; see `jtcheck screen-template`).

    A row's own cells win over --limit, --mdmt and --margin.  Fluid names are looked up in the case register
    (DATABASE_URL or ./instance) when there is one; inline compositions ("methane=0.9,ethane=0.1") always work.

    Exit codes: 0 every case passes, 2 bad file (every problem listed by row and column), 3 a case not screened
    (or, with --keep-going, bad rows), 4 a margin eroded, 5 a fail.
    """
    sys.exit(_run_screen(file, limit, mdmt, margin, out, keep_going, single_model, no_progress))


@main.command("screen-template")
@click.argument("file", type=click.Path(dir_okay=False))
@click.option("--force", is_flag=True, help="Overwrite FILE if it exists.")
def screen_template_cmd(file, force):
    """Write a letdown list to start from (FILE.csv or FILE.xlsx): the layout's columns and the invented
    Kestrel Ridge demo cases."""
    from pathlib import Path

    from jtcheck.batch.layout import COLUMNS
    from jtcheck.batch.template import template_rows, write_template

    path = Path(file)
    if path.suffix.lower() not in (".csv", ".xlsx"):
        _fail_input(InputError("file", f"{file!r}: give a .csv or .xlsx file name"))
    if path.exists() and not force:
        _fail_input(InputError("file", f"{file!r} exists; give another name or --force to overwrite it"))
    path.write_bytes(write_template(path.suffix.lower().lstrip(".")))
    click.echo(f"wrote {file}: {len(COLUMNS)} columns and {len(template_rows())} demo rows")
    click.echo(DEMO_NOTICE)
    click.echo(f"screen it with: jtcheck screen {file}")


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
    from jtcheck.records.errors import PermissionDenied
    from jtcheck.records.passwords import check_password_length, hash_password
    from jtcheck.records.users import create_user

    password = sys.stdin.readline().rstrip("\r\n")
    try:
        check_password_length(password)
        with _register_session() as session:
            actor = _acting_admin(session)
            if actor is None and role != "admin":
                raise InputError("role", "the first account must be an admin (add one with --role admin)")
            user = create_user(session, actor, email=email, name=name or email.split("@")[0], role=role,
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
    from jtcheck.records.tokens import create_token
    from jtcheck.records.users import get_user_by_email

    with _register_session() as session:
        user = get_user_by_email(session, email)
        if user is None or not user.active:
            click.echo(f"error: email: no active account {email!r}", err=True)
            sys.exit(EXIT_INPUT)
        click.echo(create_token(session, user))


@main.group("record")
def record_group():
    """Signed calculation records."""


EXIT_RECORD_INVALID = 6


@record_group.command("verify")
@click.argument("file", type=click.Path(exists=True, dir_okay=False))
@click.option("--trust-root", "trust_root", type=click.Path(exists=True, dir_okay=False), multiple=True,
              help="CA certificate (PEM or DER) to trust; default: this instance's CA (instance/pki).")
@click.option("--json", "as_json", is_flag=True, help="Print the report as JSON.")
def record_verify(file, trust_root, as_json):
    """Check every signature of a record (who, role, when, intact, trusted, changed afterwards) and that the file
    is the record stored in the register.  Exit 0 only when all of it holds; 6 otherwise."""
    import os
    from pathlib import Path

    from jtcheck.reports.issue import verify_against_register
    from jtcheck.reports.pki import pki_from_env

    pdf = Path(file).read_bytes()
    roots = [Path(p).read_bytes() for p in trust_root]
    if not roots:
        pki = pki_from_env(Path(os.environ.get("JTCHECK_INSTANCE", "instance")))
        if not pki.has_ca():
            click.echo("error: trust-root: this instance has no CA yet; give --trust-root CA.pem", err=True)
            sys.exit(EXIT_INPUT)
        roots = [pki.trust_root_pem()]
    with _register_session() as session:
        report = verify_against_register(session, pdf, roots)
    sigs = report.signatures
    if as_json:
        click.echo(json.dumps({
            "ok": report.ok, "file_sha256": sigs.file_sha256,
            "signatures": [{"field": c.field, "signer": c.signer_name, "email": c.signer_email, "role": c.role,
                            "signed_at": c.signed_at.isoformat() if c.signed_at else None,
                            "timestamp_at": c.timestamp_at.isoformat() if c.timestamp_at else None,
                            "intact": c.intact, "trusted": c.trusted, "covers_whole_file": c.covers_whole_file,
                            "modified_after": c.modified_after, "problems": list(c.problems)}
                           for c in sigs.signatures],
            "register": {"found": report.register.found, "record_number": report.register.record_number,
                         "revision": report.register.revision, "status": report.register.status,
                         "message": report.register.message},
            "problems": [*sigs.problems, *report.problems]}, indent=2))
    else:
        click.echo(f"file       {file}  (SHA-256 {sigs.file_sha256})")
        if not sigs.signatures:
            click.echo("signatures none")
        for k, c in enumerate(sigs.signatures, 1):
            when = c.signed_at.strftime("%Y-%m-%d %H:%M:%S UTC") if c.signed_at else "time unknown"
            flags = ", ".join([("intact" if c.intact else "NOT INTACT"), ("trusted" if c.trusted else "NOT TRUSTED"),
                               ("changed afterwards" if c.modified_after else "not changed afterwards")])
            click.echo(f"signature {k}: {c.role or c.field} - {c.signer_name} <{c.signer_email}>, {when}: {flags}")
            for p in c.problems:
                click.echo(f"    {p}")
        click.echo(f"register   {report.register.message}")
        shown = {p for c in sigs.signatures for p in c.problems} | {report.register.message}
        for p in sigs.problems:   # document-level problems (those of one signature are printed under it)
            if not any(p.endswith(q) for q in shown):
                click.echo(f"problem    {p}")
        click.echo("VALID: every signature intact and trusted, unchanged, and the stored record" if report.ok
                   else "NOT VALID")
    sys.exit(0 if report.ok else EXIT_RECORD_INVALID)


@main.command("worker")
@click.option("--burst", is_flag=True, help="Run the queued batch jobs, then stop.")
def worker_cmd(burst):
    """Run batch-screening jobs from the Redis queue (needs REDIS_URL; several workers may share one queue)."""
    import os

    from jtcheck.batch.jobs import work

    url = os.environ.get("REDIS_URL", "").strip()
    if not url:
        click.echo("error: REDIS_URL: set it to the Redis server the web app queues batch jobs on "
                   "(e.g. redis://127.0.0.1:6379/0)", err=True)
        sys.exit(EXIT_INPUT)
    work(url, burst=burst)


def run() -> None:  # pragma: no cover - console entry
    try:
        main()
    except JtcheckError as err:
        click.echo(f"error: {err}", err=True)
        sys.exit(EXIT_INPUT)


if __name__ == "__main__":  # pragma: no cover
    run()
