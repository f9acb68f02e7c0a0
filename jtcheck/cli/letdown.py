"""``jtcheck letdown``: one isenthalpic letdown, screened against a cold limit, printed as a table or as JSON.

The options are text with units; :func:`parse_inputs` converts them to SI (through :mod:`jtcheck.units`), the
engineering core screens in SI, and the printers convert back to the units the user typed.
"""
from __future__ import annotations

import json
import math
import sys
from dataclasses import dataclass
from typing import TYPE_CHECKING

import click

from jtcheck.cli.exits import EXIT_FAIL, EXIT_MARGIN_ERODED, EXIT_NOT_SCREENED, fail_input
from jtcheck.errors import InputError
from jtcheck.notices import CAUTION
from jtcheck.units import (
    MATERIAL_OPTION_OF,
    P_ATM_DEFAULT_PA,
    Pressure,
    TextUnits,
    difference_label,
    format_difference,
    format_pressure,
    format_temperature,
    material_options,
    parse_pressure,
    parse_temperature,
    parse_temperature_difference,
    parse_water_content,
    pressure_from_pa,
    temperature_from_k,
    temperature_unit_of,
)

if TYPE_CHECKING:
    from jtcheck.letdown.throttle import LetdownResult
    from jtcheck.screening.cold_metal import ColdLimits
    from jtcheck.screening.screen import Screening
    from jtcheck.thermo.fluid import Fluid

#: Allowed atmospheric pressure for gauge units [Pa].
P_ATM_RANGE_PA = (3e4, 2e5)
#: Allowed mass flow [kg/s] (open interval).
MASS_FLOW_RANGE_KG_PER_S = (0.0, 1e5)


@dataclass(frozen=True)
class LetdownArgs:
    """The options of ``jtcheck letdown`` as typed: text with units (see the command's option help)."""

    fluid_text: str
    p_in: str
    t_in: str
    p_out: str
    eos: str = "PR"
    kij: str = "table"
    p_atm: str | None = None
    limit: str | None = None
    mdmt: str | None = None
    margin: str = "0 K"
    p_in_max: str | None = None
    t_in_min: str | None = None
    p_out_min: str | None = None
    water_saturated: bool = False
    inhibitor: str = "methanol"
    mass_flow: str | None = None
    water_content: str | None = None
    water_dew_point: str | None = None
    compare_models: bool = True
    # a relief valve (with a set pressure the relief-valve case kind screens it)
    set_pressure: str | None = None
    overpressure: str | None = None
    superimposed_back_pressure: str | None = None
    built_up_back_pressure: str | None = None
    header_limit: str | None = None
    relieving_t_min: str | None = None
    header_sections: tuple[str, ...] = ()
    other_sources: tuple[str, ...] = ()
    # generated credible cases
    heater_off_t: str | None = None
    ambient_t_min: str | None = None
    settle_out_volumes: tuple[str, ...] = ()
    cases_off: tuple[str, ...] = ()
    # the downstream material by its exemption curve (jtcheck.units.MATERIAL_OPTIONS -> text as typed)
    material: tuple[tuple[str, str], ...] = ()


#: The option of this command that carries each register key (errors name the option the user typed).
OPTION_OF = {"set_pressure_pa": "set_pressure", "overpressure_fraction": "overpressure",
             "superimposed_back_pressure_pa": "superimposed_back_pressure",
             "built_up_back_pressure_pa": "built_up_back_pressure", "header_limit_k": "header_limit",
             "relieving_temperature_min_k": "relieving_t_min", "heater_upstream_temperature_k": "heater_off_t",
             "ambient_temperature_min_k": "ambient_t_min", "settle_out_volumes": "settle_out_volume",
             "credible_off": "case_off", "header_sections": "header_section", "other_sources": "other_source",
             **MATERIAL_OPTION_OF}


#: Register keys of the relief-valve options (they need --set-pressure).
RELIEF_KEYS = ("set_pressure_pa", "overpressure_fraction", "superimposed_back_pressure_pa", "built_up_back_pressure_pa",
               "header_limit_k", "relieving_temperature_min_k", "header_sections", "other_sources")


def _percent(text: str, field: str) -> float:
    """A fraction from text in percent (``"10 %"`` -> 0.10); the unit is required, as on the form."""
    number, _, unit = text.strip().partition("%")
    try:
        value = float(number)
    except ValueError:
        raise InputError(field, f"give a percentage with its unit, e.g. '10 %', got {text!r}") from None
    if unit.strip() or "%" not in text:
        raise InputError(field, f"give a percentage with its unit, e.g. '10 %', got {text!r}")
    return value / 100.0


def kind_extras(args: LetdownArgs, p_atm_pa: float) -> dict:
    """The relief-valve and generated-case inputs of the options (register keys, SI); only those given."""
    from jtcheck import itemlists

    out: dict = {}
    for key, text in (("set_pressure_pa", args.set_pressure), ("superimposed_back_pressure_pa",
                                                                args.superimposed_back_pressure)):
        if text is not None:
            out[key] = parse_pressure(text, OPTION_OF[key], p_atm_pa).pa
    if args.built_up_back_pressure is not None:    # a difference: no atmospheric offset
        out["built_up_back_pressure_pa"] = parse_pressure(args.built_up_back_pressure, "built_up_back_pressure",
                                                          0.0).pa
    if args.overpressure is not None:
        out["overpressure_fraction"] = _percent(args.overpressure, "overpressure")
    for key, text in (("header_limit_k", args.header_limit), ("relieving_temperature_min_k", args.relieving_t_min),
                      ("heater_upstream_temperature_k", args.heater_off_t),
                      ("ambient_temperature_min_k", args.ambient_t_min)):
        if text is not None:
            out[key] = parse_temperature(text, OPTION_OF[key])
    if args.header_sections:
        out["header_sections"] = itemlists.header_sections(list(args.header_sections), "header_section", p_atm_pa)
    if args.other_sources:
        out["other_sources"] = itemlists.other_sources(list(args.other_sources), "other_source", p_atm_pa)
    if args.settle_out_volumes:
        out["settle_out_volumes"] = itemlists.settle_out_volumes(list(args.settle_out_volumes), "settle_out_volume",
                                                                 p_atm_pa)
    if args.cases_off:
        out["credible_off"] = itemlists.credible_off(list(args.cases_off), "case_off")
    return out


@dataclass(frozen=True)
class LetdownInputs:
    """The options converted to SI and checked against each other.

    Attributes
    ----------
    p_atm_pa : float
        Atmospheric pressure for gauge units [Pa].
    p_in, p_out : Pressure
        Inlet and outlet pressure, as entered and in SI.
    t_in_k : float
        Inlet temperature [K].
    limits : ColdLimits
        Cold limit, MDMT and margin.
    p_in_max_pa, t_in_min_k, p_out_min_pa : float or None
        Credible extremes of the inlet pressure [Pa], inlet temperature [K] and outlet pressure [Pa].
    mass_flow_kg_per_s : float or None
        Mass flow, for the heater duty [kg/s].
    """

    p_atm_pa: float
    p_in: Pressure
    p_out: Pressure
    t_in_k: float
    limits: ColdLimits
    p_in_max_pa: float | None
    t_in_min_k: float | None
    p_out_min_pa: float | None
    mass_flow_kg_per_s: float | None


# ---------------------------------------------------------------------------------------------
# parse the inputs
# ---------------------------------------------------------------------------------------------

def limit_options(limit: str | None, mdmt: str | None, margin: str) -> ColdLimits:
    """The cold limits of --limit, --mdmt and --margin (the warmer of limit and MDMT governs)."""
    from jtcheck.screening.cold_metal import ColdLimits

    return ColdLimits(mdmt_k=None if mdmt is None else parse_temperature(mdmt, "mdmt"),
                      user_limit_k=None if limit is None else parse_temperature(limit, "limit"),
                      margin_k=parse_temperature_difference(margin, "margin"),
                      mdmt_source="entered" if mdmt is not None else "")


def _parse_p_atm(p_atm: str | None) -> float:
    if p_atm is None:
        return P_ATM_DEFAULT_PA
    p_atm_pa = parse_pressure(p_atm, "p_atm").pa
    lo, hi = P_ATM_RANGE_PA
    if p_atm_pa > hi or p_atm_pa < lo:
        raise InputError("p_atm", "atmospheric pressure must lie between 0.3 and 2 bar absolute")
    return p_atm_pa


def _check_kij(kij: str) -> None:
    if kij not in ("table", "zero"):
        raise InputError("kij", f"{kij!r} is not a kij choice; allowed: table, zero")


def _parse_mass_flow(mass_flow: str | None) -> float | None:
    if mass_flow is None:
        return None
    try:
        flow = float(mass_flow.split()[0])
    except (ValueError, IndexError):
        raise InputError("mass_flow", f"mass flow must be a number in kg/s, got {mass_flow!r}") from None
    lo, hi = MASS_FLOW_RANGE_KG_PER_S
    if not lo < flow < hi:
        raise InputError("mass_flow", "mass flow must lie between 0 and 100000 kg/s")
    return flow


def case_values(args: LetdownArgs, inputs: LetdownInputs) -> dict:
    """The letdown as the case register holds one (register keys, SI): the input of its case kind."""
    from jtcheck.cases.letdown import letdown_values

    base = letdown_values(p_in_pa=inputs.p_in.pa, t_in_k=inputs.t_in_k, p_out_pa=inputs.p_out.pa,
                          limits=inputs.limits, p_atm_pa=inputs.p_atm_pa, p_in_max_pa=inputs.p_in_max_pa,
                          t_in_min_k=inputs.t_in_min_k, p_out_min_pa=inputs.p_out_min_pa,
                          mass_flow_kg_per_s=inputs.mass_flow_kg_per_s, water_saturated=args.water_saturated,
                          inhibitor=args.inhibitor)
    out = {**base, **water_values(args), **kind_extras(args, inputs.p_atm_pa)}
    spec = material_spec(args, inputs.limits.mdmt_k)
    if spec is not None:
        out["material_spec"] = spec
    return out


def material_spec(args: LetdownArgs, mdmt_k: float | None):
    """The downstream material of the --curve ... options (None without them); --mdmt is its typed limit."""
    from jtcheck.screening.mdmt import MaterialColdSpec

    try:
        return MaterialColdSpec.from_options(material_options(dict(args.material)), "material given by the options",
                                             mdmt_k)
    except InputError as err:
        raise InputError(OPTION_OF.get(err.field, err.field), err.message) from None


def water_values(args: LetdownArgs) -> dict:
    """The water the gas carries (register keys, SI): --water-content [kg/Sm3] or --water-dew-point [K]."""
    out = {}
    if args.water_content:
        out["water_content_kg_per_sm3"] = parse_water_content(args.water_content, "water_content")[0]
    if args.water_dew_point:
        out["water_dew_point_k"] = parse_temperature(args.water_dew_point, "water_dew_point")
    return out


def case_kind(args: LetdownArgs):
    """The case kind that screens the options: a relief valve with --set-pressure, else a letdown."""
    from jtcheck.cases.letdown import LETDOWN
    from jtcheck.cases.relief import RELIEF_VALVE

    return RELIEF_VALVE if args.set_pressure is not None else LETDOWN


def parse_inputs(args: LetdownArgs) -> LetdownInputs:
    """Convert the options to SI and check them; raises InputError naming the option at fault (the first one,
    in the order of the checks below)."""
    p_atm_pa = _parse_p_atm(args.p_atm)
    p_in = parse_pressure(args.p_in, "p_in", p_atm_pa)
    p_out = parse_pressure(args.p_out, "p_out", p_atm_pa)
    t_in_k = parse_temperature(args.t_in, "t_in")
    _check_kij(args.kij)
    limits = limit_options(args.limit, args.mdmt, args.margin)
    p_in_max_pa = None if args.p_in_max is None else parse_pressure(args.p_in_max, "p_in_max", p_atm_pa).pa
    t_in_min_k = None if args.t_in_min is None else parse_temperature(args.t_in_min, "t_in_min")
    p_out_min_pa = None if args.p_out_min is None else parse_pressure(args.p_out_min, "p_out_min", p_atm_pa).pa
    inputs = LetdownInputs(p_atm_pa=p_atm_pa, p_in=p_in, p_out=p_out, t_in_k=t_in_k, limits=limits,
                           p_in_max_pa=p_in_max_pa, t_in_min_k=t_in_min_k, p_out_min_pa=p_out_min_pa,
                           mass_flow_kg_per_s=_parse_mass_flow(args.mass_flow))
    from jtcheck.cases.letdown import check_short

    values = case_values(args, inputs)
    check_short(values)    # the letdown kind's checks, naming this command's options
    try:
        case_kind(args).check(values)
        if args.set_pressure is None and any(k in values for k in RELIEF_KEYS):
            raise InputError("set_pressure", "relief-valve options need --set-pressure as well")
    except InputError as err:
        name = err.field.split("[")[0]
        raise InputError(OPTION_OF.get(name, name) + err.field[len(name):], err.message) from None
    return inputs


# ---------------------------------------------------------------------------------------------
# build the fluid, the conditions and the options; screen
# ---------------------------------------------------------------------------------------------

def build_fluid(args: LetdownArgs) -> Fluid:
    """The fluid of --fluid with the chosen EOS and kij basis."""
    from jtcheck import Fluid

    return Fluid(args.fluid_text, eos=args.eos, kij=None if args.kij == "table" else 0)


def screen(args: LetdownArgs, inputs: LetdownInputs, fluid: Fluid) -> Screening:
    """The letdown screened by its case kind, as the register screens one: each credible condition (operating
    point and credible extremes, the generated cases asked for), the sweep over the ranges, the relieving case
    of a relief valve and the answers."""
    from jtcheck.letdown.throttle import check_letdown_inputs

    check_letdown_inputs(inputs.p_in.pa, inputs.t_in_k, inputs.p_out.pa)
    return case_kind(args).compute(fluid, case_values(args, inputs), compare_models=args.compare_models)


def exit_code(screening: Screening, limits_given: bool) -> int:
    """0 pass, 3 not screened, 4 margin eroded, 5 fail; without a limit only the calculation is judged."""
    from jtcheck.screening.findings import Outcome

    if not limits_given:
        return 0 if all(c.converged for c in screening.conditions) else EXIT_NOT_SCREENED
    return {Outcome.PASS: 0, Outcome.MARGIN_ERODED: EXIT_MARGIN_ERODED, Outcome.FAIL: EXIT_FAIL,
            Outcome.NOT_SCREENED: EXIT_NOT_SCREENED}[screening.outcome]


# ---------------------------------------------------------------------------------------------
# print: in the units the user typed
# ---------------------------------------------------------------------------------------------

@dataclass(frozen=True)
class DisplayUnits:
    """The units the user typed: each number printed goes back into them (through :mod:`jtcheck.units`, the one
    formatter); ``words`` renders the quantities marked in sentences (findings, remedies, reasoning)."""

    t_unit: str
    d_unit: str
    p_unit: str
    p_atm_pa: float
    words: TextUnits = TextUnits()

    def temperature(self, k: float | None) -> str:
        """A temperature [K] as text, ``-`` for None."""
        return "-" if k is None else format_temperature(k, self.t_unit, 2)

    def difference(self, dk: float) -> float:
        """A temperature difference [K] in the display unit (K or degF)."""
        return dk * (1.8 if self.d_unit == "degF" else 1.0)

    def difference_text(self, dk: float) -> str:
        return format_difference(dk, self.t_unit, 2)

    def pressure(self, pa: float, unit: str | None = None) -> str:
        """A pressure [Pa] as text, in ``unit`` (default: the unit of --p-out), 4 significant digits."""
        return format_pressure(pa, unit or self.p_unit, self.p_atm_pa)

    def text(self, text: str) -> str:
        """A sentence with its marked quantities in the user's units."""
        return self.words.text(text)


#: The options of ``jtcheck letdown`` that carry a quantity, as sentences name their fields.
_TYPED = ("p_in", "t_in", "p_out", "p_in_max", "t_in_min", "p_out_min", "limit", "mdmt", "heater_off_t",
          "ambient_t_min", "set_pressure", "superimposed_back_pressure", "built_up_back_pressure",
          "relieving_t_min", "header_limit")


def text_units(args: LetdownArgs, p_atm_pa: float | None = None) -> TextUnits:
    """The units of the options as typed (errors are quoted in them even before the inputs are read)."""
    if p_atm_pa is None:
        try:
            p_atm_pa = parse_pressure(args.p_atm, "p_atm").pa if args.p_atm else P_ATM_DEFAULT_PA
        except InputError:
            p_atm_pa = P_ATM_DEFAULT_PA
    return TextUnits.typed({k: getattr(args, k) for k in _TYPED if getattr(args, k, None)}, p_atm_pa)


def display_units(args: LetdownArgs, inputs: LetdownInputs) -> DisplayUnits:
    t_unit = temperature_unit_of(args.t_in)     # "40degC", "40 C" and "40°C" are all shown in degC
    return DisplayUnits(t_unit=t_unit, d_unit="degF" if t_unit.lower() in ("degf", "degr") else "K",
                        p_unit=inputs.p_out.unit, p_atm_pa=inputs.p_atm_pa,
                        words=text_units(args, inputs.p_atm_pa))


def _atm_note(args: LetdownArgs, inputs: LetdownInputs) -> str:
    return (f"gauge pressures converted with atmospheric pressure {inputs.p_atm_pa / 1e5:.6g} bar"
            + (" (default)" if args.p_atm is None else " (given)"))


def json_payload(args: LetdownArgs, inputs: LetdownInputs, fluid: Fluid, screening: Screening,
                 result: LetdownResult, units: DisplayUnits, code: int) -> dict:
    """The --json output: inputs as typed, SI result and screening, display values, exit code, caution."""
    p_atm_pa = inputs.p_atm_pa
    display = {
        "p_in": {"value": pressure_from_pa(inputs.p_in.pa, inputs.p_in.unit, p_atm_pa), "unit": inputs.p_in.unit},
        "p_out": {"value": pressure_from_pa(inputs.p_out.pa, inputs.p_out.unit, p_atm_pa),
                  "unit": inputs.p_out.unit},
        "t_in": {"value": temperature_from_k(inputs.t_in_k, units.t_unit), "unit": units.t_unit},
        "t_out": {"value": temperature_from_k(result.t_out, units.t_unit) if result.converged else None,
                  "unit": units.t_unit},
        "dt": {"value": units.difference(result.dt) if result.converged else None, "unit": units.d_unit},
    }
    return {
        "inputs": {"fluid": args.fluid_text, "p_in": args.p_in, "t_in": args.t_in, "p_out": args.p_out,
                   "eos": fluid.eos.value, "kij": args.kij, "p_atm_pa": p_atm_pa, "limit": args.limit,
                   "mdmt": args.mdmt, "margin": args.margin, "p_in_max": args.p_in_max, "t_in_min": args.t_in_min,
                   "p_out_min": args.p_out_min, "water_saturated": args.water_saturated,
                   "inhibitor": args.inhibitor, "mass_flow": args.mass_flow},
        "composition": {i: float(z) for i, z in zip(fluid.ids, fluid.zs, strict=True)},
        "result": result.to_dict(),
        "display": display,
        "screening": units.words.walk(screening.to_dict()),
        "exit_code": code,
        "notes": [_atm_note(args, inputs)] if inputs.p_in.gauge or inputs.p_out.gauge else [],
        "caution": CAUTION,
    }


def print_table(fluid: Fluid, screening: Screening, result: LetdownResult, inputs: LetdownInputs,
                units: DisplayUnits) -> None:
    """Fluid and model, then inlet and outlet side by side, then the temperature change."""
    from jtcheck.screening.screen import governs_alone

    comp = ", ".join(f"{n} {z:.4g}" for n, z in zip(fluid.names, fluid.zs, strict=True))
    click.echo(f"fluid      {comp}")
    click.echo(f"model      {fluid.eos.long_name}; kij: {fluid.kij_basis}")
    if "eos_range" in result.basis:
        click.echo(f"range      {result.basis['eos_range']}")
    if len(screening.models) > 1 and governs_alone(fluid):
        click.echo(f"compared   {', '.join(screening.models)} side by side; {fluid.eos.value} (reference-grade) is "
                   "screened, the others show the spread")
    elif len(screening.models) > 1:
        click.echo(f"compared   {', '.join(screening.models)} side by side; the colder outlet is screened")
    click.echo("")
    click.echo(f"{'':18s}{'inlet':>16s}{'outlet':>16s}")
    p_in_txt, p_out_txt = units.pressure(inputs.p_in.pa, inputs.p_in.unit), units.pressure(inputs.p_out.pa)
    click.echo(f"{'pressure':18s}{p_in_txt:>16s}{p_out_txt:>16s}")
    t_out_txt = units.temperature(result.t_out) if result.converged else "not converged"
    vf_out = f"{result.vapor_fraction:.4f}" if result.converged else "-"
    click.echo(f"{'temperature':18s}{units.temperature(inputs.t_in_k):>16s}{t_out_txt:>16s}")
    click.echo(f"{'phase':18s}{result.inlet_phase:>16s}{result.phase:>16s}")
    click.echo(f"{'vapour fraction':18s}{result.inlet_vapor_fraction:>16.4f}{vf_out:>16s}")
    if result.converged:
        click.echo(f"\ntemperature change across the letdown: {units.difference(result.dt):+.2f} "
                   f"{difference_label(units.t_unit)}")
    else:
        click.echo(f"\nNOT CONVERGED: {units.text(result.message)}")


def print_conditions(screening: Screening, inputs: LetdownInputs, units: DisplayUnits) -> None:
    """Each credible condition with each model's outlet and the one screened (when there is more than one)."""
    if not (len(screening.conditions) > 1 or len(screening.models) > 1):
        return
    width = max(34, *(len(cs.condition.name) + 2 for cs in screening.conditions))   # long names keep the columns
    click.echo(f"\n{'condition':{width}s}{'inlet':>14s}{'outlet':>12s}" + "".join(f"{m:>14s}" for m in screening.models)
               + f"{'screened':>14s}")
    for cs in screening.conditions:
        c = cs.condition
        by_model = "".join(f"{units.temperature(r.t_out if r is not None and r.converged else None):>14s}"
                           for r in cs.results.values())
        p_in_txt, p_out_txt = units.pressure(c.p_in_pa, inputs.p_in.unit), units.pressure(c.p_out_pa)
        click.echo(f"{c.name:{width}s}{p_in_txt:>14s}{p_out_txt:>12s}{by_model}"
                   f"{units.temperature(cs.t_screen_k):>14s}")


def print_screening(screening: Screening, limits: ColdLimits, units: DisplayUnits) -> None:
    """The limit and the outcome (or why there is none), the MDMT working when the MDMT came from the
    material's exemption curve, then every finding."""
    limits = screening.limits if screening.limits.governing_k is not None else limits
    if limits.governing_k is not None:
        shown = screening.limits   # the screened limits carry the margin's terms (entered + model spread)
        working = shown.mdmt_working
        if working:
            click.echo(f"\nMDMT from the material's exemption curve at the coincident pressure, "
                       f"{working['coincident']}:")
            for step in (working.get("working") or {}).get("steps", []):
                click.echo(f"  {units.text(step)}")
            click.echo(f"  {units.text((working.get('working') or {}).get('caution', ''))}")
        terms = " + ".join(f"{t['term']} {units.difference_text(t['k'])}" for t in shown.margin_terms)
        click.echo(f"\ncold limit {units.temperature(limits.governing_k)} ({limits.basis}); "
                   f"margin {units.difference_text(shown.total_margin_k)} = {terms}")
        click.echo(f"OUTCOME: {screening.outcome.value.upper()} - {screening.outcome.sentence}")
    else:
        click.echo("\nno cold limit given (--limit or --mdmt): the outcome is not screened; findings follow")
    click.echo("\nfindings")
    for f in screening.findings:
        click.echo(f"  [{f.severity.value}] {f.topic.value}: {units.text(f.message)}")
    print_hydrates(screening, units)


def print_hydrates(screening: Screening, units: DisplayUnits) -> None:
    """The hydrate numbers of the governing outlet (the hydrate finding's, as the result page and record show them)."""
    found = [f for f in screening.findings if f.topic.value == "hydrates" and "t_hydrate_k" in (f.numbers or {})]
    if not found:
        return
    n = found[0].numbers

    def t(k):
        return units.temperature(k) if k is not None and math.isfinite(k) else "-"

    def kgh(v):
        return f"{3600 * v:.4g} kg/h" if v is not None and math.isfinite(v) else "-"

    def pct(v):
        return f"{v:.1f} mass %" if v is not None and math.isfinite(v) else "-"

    click.echo(f"\nhydrates at the governing outlet ({n['method']})")
    click.echo(f"  outlet {units.pressure(n['p_pa'])}, {t(n['t_out_k'])}; hydrate temperature {t(n['t_hydrate_k'])}"
               + (f", structure {n['structure']} with {n['water_phase']}" if n.get("structure") else ""))
    sub = n.get("subcooling_k")
    if sub is not None and math.isfinite(sub):
        click.echo(f"  subcooling {units.difference_text(sub)}" + (" (inside the hydrate region)" if sub > 0 else ""))
    click.echo(f"  water: {units.text(str(n.get('water_basis')))}")
    dose = n.get("inhibitor_weight_percent")
    dose_text = pct(dose) if dose is not None and math.isfinite(dose) else "no dose"
    bound = " (an upper bound, not a checked dose)" if n.get("dose_upper_bound") else ""
    click.echo(f"  {n['inhibitor']} in the free water: {dose_text}{bound}; model "
               f"{pct(n.get('model_weight_percent'))}, Hammerschmidt {pct(n.get('hammerschmidt_weight_percent'))}")
    click.echo(f"  injection {kgh(n.get('injection_kg_per_s'))}: free water "
               f"{kgh(n.get('injection_to_water_kg_per_s'))}, lost to the gas "
               f"{kgh(n.get('injection_lost_to_gas_kg_per_s'))}, to a hydrocarbon liquid "
               f"{kgh(n.get('injection_lost_to_liquid_kg_per_s'))}")


def print_kind_answers(answers: dict, units: DisplayUnits) -> None:
    """The relief valve's limits and remedies, and the generated credible cases, where the screening has them."""
    rv = answers.get("relief_valve") or {}
    if rv.get("limits"):
        click.echo("\nrelief valve: every limit of the discharge (worst relieving temperature and model)")
        for row in rv["limits"]:
            t = units.temperature(row["t_k"]) if row.get("t_k") is not None else "not converged"
            lim = units.temperature(row["limit_k"]) if row.get("limit_k") is not None else "no limit"
            click.echo(f"  {row.get('limit') or row.get('where')}: {t} against {lim}: {row.get('band')}")
    remedies = answers.get("relief_remedies")
    if remedies:
        click.echo("\nwhat keeps the discharge above its limits (no heater on a relief line)")
        temp = remedies.get("min_relieving_temperature") or {}
        sentence = temp.get("sentence") or "relieving temperature: " + str(temp.get("reason") or "not found")
        click.echo(f"  {units.text(sentence)}")
        for m in remedies.get("materials") or ():
            click.echo(f"  {units.text(m['sentence'])}")
    generated = answers.get("generated_cases") or []
    if generated:
        click.echo("\ncredible cases generated from the operating data")
        for g in generated:
            click.echo(f"  {g['name']}: {g['status']}; {units.text(g.get('reasoning') or g.get('reason') or '')}")


def _preheat_line(what: str, part: dict, units: DisplayUnits, mass_flow_kg_per_s: float | None) -> None:
    gov = part.get("governing")
    if gov and gov.get("needed"):
        duty = gov.get("duty_w")
        duty_txt = f"; heater duty {duty / 1e3:.1f} kW at {mass_flow_kg_per_s:g} kg/s" if duty is not None else \
            "; give --mass-flow for the heater duty"
        click.echo(f"  {what}: heat the inlet to {units.temperature(gov['t_in_required_k'])} (a rise of "
                   f"{units.difference_text(gov['temperature_rise_k'])}, {gov['condition']}, {gov['model']}) for an "
                   f"outlet of {units.temperature(part['target_k'])}{duty_txt}")
    elif gov:
        click.echo(f"  {what}: no preheat needed (every outlet reaches {units.temperature(part['target_k'])})")
    elif not part.get("all_converged"):
        click.echo(f"  {what}: not found (a calculation did not converge)")


def print_remedies(answers: dict, units: DisplayUnits, mass_flow_kg_per_s: float | None) -> None:
    """What keeps it safe, hazard by hazard: the preheat for the cold limit and the lowest outlet pressure, the
    preheat for hydrates, and which hazards these cover (:func:`jtcheck.screening.screen.remedies_cover`)."""
    print_kind_answers(answers, units)
    if not (answers.get("preheat") or answers.get("hydrate_preheat")):
        return
    click.echo("\nwhat keeps it safe")
    if answers.get("preheat"):
        _preheat_line("preheat for the cold limit plus margin", answers["preheat"], units, mass_flow_kg_per_s)
        olim = answers["outlet_pressure_limit"].get("governing")
        if olim:
            click.echo(f"  outlet pressure: keep it at or above {units.pressure(olim['p_out_min_pa'])} "
                       f"({olim['condition']}, {olim['model']}; cold limit plus margin only)")
        elif answers["outlet_pressure_limit"].get("all_converged"):
            click.echo("  outlet pressure: no limit found above the floor (the inlet itself may be too cold)")
    if answers.get("hydrate_preheat"):
        _preheat_line("preheat for hydrates (hydrate temperature plus margin)", answers["hydrate_preheat"], units,
                      mass_flow_kg_per_s)
        click.echo("  or inhibit: see the hydrate finding for the inhibitor dose")
    if answers.get("remedies_cover"):
        click.echo(f"  {units.text(answers['remedies_cover'])}")


# ---------------------------------------------------------------------------------------------
# the command
# ---------------------------------------------------------------------------------------------

def run_letdown(args: LetdownArgs, *, as_json: bool = False, title: str | None = None) -> int:
    """Parse, screen and print one letdown; returns the exit code (bad input exits with EXIT_INPUT)."""
    try:
        inputs = parse_inputs(args)
        fluid = build_fluid(args)
        screening = screen(args, inputs, fluid)
    except InputError as err:
        fail_input(err, text_units(args))
    result = screening.conditions[0].results[fluid.eos.value]
    assert result is not None   # inputs were checked above
    units = display_units(args, inputs)
    code = exit_code(screening, screening.limits.governing_k is not None)
    if as_json:
        click.echo(json.dumps(json_payload(args, inputs, fluid, screening, result, units, code), indent=2))
        return code
    if title:
        click.echo(title)
    print_table(fluid, screening, result, inputs, units)
    print_conditions(screening, inputs, units)
    print_screening(screening, inputs.limits, units)
    print_remedies(screening.answers, units, inputs.mass_flow_kg_per_s)
    if inputs.p_in.gauge or inputs.p_out.gauge:
        click.echo(_atm_note(args, inputs))
    click.echo(f"\n{CAUTION}")
    return code


@click.command("letdown")
@click.option("--fluid", "fluid_text", required=True,
              help='Composition as name=amount pairs, e.g. "methane=0.85,ethane=0.07,CO2=0.08" (fractions or %).')
@click.option("--p-in", required=True, help='Inlet pressure with unit, e.g. "100 bara", "1450 psig".')
@click.option("--t-in", required=True, help='Inlet temperature with unit, e.g. "40 degC", "313.15 K".')
@click.option("--p-out", required=True, help='Outlet pressure with unit, e.g. "10 barg".')
@click.option("--eos", default="PR", show_default=True,
              help="Equation of state: PR, SRK, RK, VDW or GERG2008 (GERG-2008, Kunz and Wagner 2012; its 21 "
                   "components, 60-700 K up to 70 MPa).")
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
@click.option("--water-saturated", is_flag=True, help="Screen for hydrates with the gas saturated with water at the "
                                                     "inlet (unless --water-content or --water-dew-point is given).")
@click.option("--water-content", default=None, help='Water the gas carries, e.g. "110 mg/Sm3" or "7 lb/MMscf".')
@click.option("--water-dew-point", default=None, help='Water dew point at the outlet pressure, e.g. "-10 degC".')
@click.option("--inhibitor", default="methanol", show_default=True,
              type=click.Choice(["methanol", "MEG", "ethanol", "DEG", "TEG"]),
              help="Hydrate inhibitor for the dose (given for methanol and MEG).")
@click.option("--mass-flow", default=None, help="Mass flow in kg/s, for the heater duty.")
@click.option("--set-pressure", default=None, help="Relief valve set pressure (screens the relieving case), e.g. "
                                                  '"75 barg".')
@click.option("--overpressure", default=None, help='Allowable overpressure in percent of the set gauge pressure, '
                                                  'e.g. "10 %".')
@click.option("--superimposed-back-pressure", default=None, help="Back pressure before the valve opens "
                                                                 "(default atmospheric).")
@click.option("--built-up-back-pressure", default=None, help='Built-up back pressure, a difference, e.g. "3 bar".')
@click.option("--header-limit", default=None, help="Cold limit of the flare header (screened at the tip unless "
                                                   "--header-section gives the sections).")
@click.option("--relieving-t-min", default=None, help="Minimum credible relieving temperature (default: --t-in-min).")
@click.option("--header-section", "header_sections", multiple=True,
              help='A flare header section, in flow order: "name; lowest pressure; cold limit or -; material" '
                   '(repeat for each).')
@click.option("--other-source", "other_sources", multiple=True,
              help='Another relief valve discharging at the same time: "name; composition; mass flow kg/s; '
                   'relieving pressure; relieving temperature" (repeat).')
@click.option("--heater-off-t", default=None, help="Inlet temperature with the upstream heater off (adds the "
                                                   "loss-of-heater case).")
@click.option("--ambient-t-min", default=None, help="Minimum ambient temperature an uninsulated inlet reaches.")
@click.option("--settle-out-volume", "settle_out_volumes", multiple=True,
              help='A volume that settles out after a shutdown: "name; volume m3; pressure; temperature" (repeat).')
@click.option("--case-off", "cases_off", multiple=True,
              help='A generated case that does not apply, with the reason: "start_up: the outlet is never '
                   'depressured" (settle_out, start_up, heater_loss, ambient).')
@click.option("--curve", default=None, help="Exemption curve of the downstream material (A-D; VIII-1 Fig. UCS-66, "
              "B31.3 Table A-1): its MDMT is found at the outlet pressure.")
@click.option("--curve-code", default=None, help="Code of the curve: VIII-1 (default) or B31.3.")
@click.option("--thickness", default=None, help='Governing thickness, e.g. "25.4 mm" or "1 in".')
@click.option("--impact-test-t", default=None, help='Impact test temperature if impact tested, e.g. "-46 degC".')
@click.option("--pwht-credit", is_flag=True, help="PWHT done though not required (VIII-1 UCS-68(c)).")
@click.option("--allowable-stress", default=None, help='Allowable stress at the design temperature, e.g. "138 MPa" '
              "(with --outside-diameter: the stress ratio at the outlet pressure; without: ratio 1).")
@click.option("--outside-diameter", default=None, help='Outside diameter, e.g. "323.9 mm".')
@click.option("--corrosion-allowance", default=None, help='Corrosion and mill-tolerance allowance, e.g. "3 mm".')
@click.option("--joint-efficiency", default=None, help="Weld joint efficiency E (default 1).")
@click.option("--other-stress", default=None, help='Stress from dead loads and displacement strain, e.g. "20 MPa" '
              "(added to the pressure stress; default 0).")
@click.option("--single-model", is_flag=True, help="Use only the chosen EOS (no PR/SRK comparison).")
@click.option("--json", "as_json", is_flag=True, help="Print the result as JSON (SI values plus display units).")
def letdown_cmd(fluid_text, p_in, t_in, p_out, eos, kij, p_atm, limit, mdmt, margin, p_in_max, t_in_min, p_out_min,
                water_saturated, water_content, water_dew_point, inhibitor, mass_flow, set_pressure, overpressure,
                superimposed_back_pressure,
                built_up_back_pressure, header_limit, relieving_t_min, header_sections, other_sources, heater_off_t,
                ambient_t_min, settle_out_volumes, cases_off, curve, curve_code, thickness, impact_test_t, pwht_credit,
                allowable_stress, outside_diameter, corrosion_allowance, joint_efficiency, other_stress, single_model,
                as_json):
    """Temperature and phase downstream of an isenthalpic letdown, screened against a cold limit.

    Exit codes: 0 pass (or, without a limit, converged), 2 bad input, 3 not screened (a calculation did not
    converge), 4 margin eroded, 5 fail.
    """
    args = LetdownArgs(fluid_text, p_in, t_in, p_out, eos=eos, kij=kij, p_atm=p_atm, limit=limit, mdmt=mdmt,
                       margin=margin, p_in_max=p_in_max, t_in_min=t_in_min, p_out_min=p_out_min,
                       water_saturated=water_saturated, inhibitor=inhibitor, mass_flow=mass_flow,
                       water_content=water_content, water_dew_point=water_dew_point,
                       compare_models=not single_model, set_pressure=set_pressure, overpressure=overpressure,
                       superimposed_back_pressure=superimposed_back_pressure,
                       built_up_back_pressure=built_up_back_pressure, header_limit=header_limit,
                       relieving_t_min=relieving_t_min, header_sections=tuple(header_sections),
                       other_sources=tuple(other_sources),
                       heater_off_t=heater_off_t, ambient_t_min=ambient_t_min,
                       settle_out_volumes=tuple(settle_out_volumes), cases_off=tuple(cases_off),
                       material=tuple((k, v) for k, v in (
                           ("curve", curve), ("curve_code", curve_code), ("thickness", thickness),
                           ("impact_test_t", impact_test_t), ("pwht_credit", "true" if pwht_credit else None),
                           ("allowable_stress", allowable_stress), ("outside_diameter", outside_diameter),
                           ("corrosion_allowance", corrosion_allowance), ("joint_efficiency", joint_efficiency),
                           ("other_stress", other_stress))
                           if v is not None))
    sys.exit(run_letdown(args, as_json=as_json))
