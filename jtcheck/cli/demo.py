"""``jtcheck demo``: the cases of the invented Kestrel Ridge gas terminal, as the case register screens them.

The typed inputs of each demo case come from the one mapping of the demo cases to a person's inputs, the letdown
list template (:func:`jtcheck.batch.template.template_rows`): the same MDMT (the case's typical material), credible
extremes, minimum outlet pressure (the operating sweep), margin, relief-valve data and switched-off cases as the
register's demo site, so that the CLI, the batch list and the register give one answer for one case.
"""
from __future__ import annotations

import sys

import click

from jtcheck.cli.letdown import LetdownArgs, run_letdown
from jtcheck.notices import DEMO_NOTICE

#: The ``jtcheck letdown`` option (a LetdownArgs field) of each letdown-list column that carries a quantity.
ARG_OF_COLUMN = {"inlet_pressure": "p_in", "inlet_temperature": "t_in", "outlet_pressure": "p_out",
                 "min_inlet_temperature": "t_in_min", "max_inlet_pressure": "p_in_max",
                 "min_outlet_pressure": "p_out_min", "mdmt": "mdmt", "cold_limit": "limit", "margin": "margin",
                 "atmospheric_pressure": "p_atm", "mass_flow": "mass_flow", "set_pressure": "set_pressure",
                 "overpressure": "overpressure", "superimposed_back_pressure": "superimposed_back_pressure",
                 "built_up_back_pressure": "built_up_back_pressure", "header_limit": "header_limit",
                 "min_relieving_temperature": "relieving_t_min", "heater_off_temperature": "heater_off_t",
                 "min_ambient_temperature": "ambient_t_min", "eos": "eos", "fluid": "fluid_text",
                 "water_content": "water_content", "water_dew_point": "water_dew_point"}
#: The repeatable options of the item columns (one item per line or between '|').
ITEMS_OF_COLUMN = {"header_sections": "header_sections", "other_sources": "other_sources",
                   "settle_out_volumes": "settle_out_volumes", "cases_off": "cases_off"}
#: Columns that are not ``jtcheck letdown`` inputs: carried to the results, or the kind of the row (a relief valve
#: is screened as one by its set pressure).
NOT_INPUTS = ("tag", "service", "kind")


def row_args(row: dict) -> LetdownArgs:
    """The ``jtcheck letdown`` inputs of one letdown-list row (a dict keyed by the template header).

    Raises
    ------
    ValueError
        If the row has a value in a column that no option takes (nothing is dropped silently).
    """
    from jtcheck.batch.layout import COLUMNS, MASS_FLOW, PERCENT

    kwargs: dict = {}
    material: list[tuple[str, str]] = []
    for col in COLUMNS:
        value = row.get(col.header(), "")
        if value in ("", None) or col.key in NOT_INPUTS:
            continue
        text = str(value)
        if col.key == "water_saturated":
            kwargs["water_saturated"] = text.lower() in ("yes", "y", "true", "1", "x")
        elif col.key in ITEMS_OF_COLUMN:
            items = [s.strip() for line in text.splitlines() for s in line.split("|") if s.strip()]
            kwargs[ITEMS_OF_COLUMN[col.key]] = tuple(items)
        elif col.key in ARG_OF_COLUMN:
            unit = {PERCENT: "%", MASS_FLOW: ""}.get(col.quantity, col.unit) if col.has_unit else ""
            kwargs[ARG_OF_COLUMN[col.key]] = f"{text} {unit}".strip()
        elif col.key in ("curve", "curve_code", "thickness", "impact_test_t", "pwht_credit", "allowable_stress",
                         "outside_diameter", "corrosion_allowance", "joint_efficiency", "other_stress"):
            material.append((col.key, text))
        else:
            raise ValueError(f"the letdown-list column {col.header()!r} has no jtcheck letdown option")
    fluid_text, p_in, t_in, p_out = (kwargs.pop(k) for k in ("fluid_text", "p_in", "t_in", "p_out"))
    return LetdownArgs(fluid_text, p_in, t_in, p_out, material=tuple(material), **kwargs)


def demo_args() -> list[tuple[str, LetdownArgs | None]]:
    """(title, inputs) of every demo case, in the register's order; inputs None for a case that is not a letdown
    (the vessel depressuring case, which the letdown list and ``jtcheck letdown`` do not take)."""
    from jtcheck.batch.template import template_rows
    from jtcheck.records.demo import CASES, SITE_NAME

    rows = iter(template_rows())
    out: list[tuple[str, LetdownArgs | None]] = []
    for unit, _fluid, _material, fields in CASES:
        title = f"\n{SITE_NAME} / {unit} / {fields['tag']}: {fields['service']}\n"
        if str(getattr(fields["kind"], "value", fields["kind"])) == "vessel_depressuring":
            out.append((title, None))
            continue
        out.append((title, row_args(next(rows))))
    if next(rows, None) is not None:
        raise RuntimeError("the letdown-list template has more rows than the demo has letdown cases")
    return out


@click.command("demo")
def demo_cmd():
    """Run the cases of the invented Kestrel Ridge gas terminal (the demo site of the case register), with their
    MDMT, credible extremes, operating sweep and relief-valve data, as the register screens them."""
    click.echo(DEMO_NOTICE)
    code = 0
    for title, args in demo_args():
        if args is None:
            click.echo(title + "a vessel depressuring case (a run in time, not a letdown): see it in the case register "
                               "(make run) or run it with jtcheck depressure")
            continue
        code = max(code, run_letdown(args, title=title))
    sys.exit(code)
