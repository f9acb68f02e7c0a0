"""``jtcheck mdmt``: the MDMT of a carbon steel from its exemption curve, thickness and stress ratio."""
from __future__ import annotations

import json

import click

from jtcheck.cli.exits import fail_input
from jtcheck.errors import InputError
from jtcheck.units import parse_length, parse_temperature


@click.command("mdmt")
@click.option("--curve", default=None, help="Exemption curve A-D (VIII-1 Fig. UCS-66 notes; B31.3 Table A-1).")
@click.option("--thickness", default=None, help='Governing thickness, e.g. "25.4 mm" or "1 in".')
@click.option("--stress-ratio", default=1.0, show_default=True, type=float,
              help="Coincident stress ratio (1: no reduction).")
@click.option("--code", "curve_code", default="VIII-1", show_default=True, help="VIII-1 or B31.3.")
@click.option("--impact-test-t", default=None, help='Impact test temperature if impact tested, e.g. "-46 degC".')
@click.option("--pwht-credit", is_flag=True, help="PWHT done though not required (VIII-1 UCS-68(c)).")
@click.option("--json", "as_json", is_flag=True, help="Print the working as JSON (SI).")
def mdmt_cmd(curve, thickness, stress_ratio, curve_code, impact_test_t, pwht_credit, as_json):
    """MDMT from the code's impact-test exemption curves (verify against the code edition in force)."""
    from jtcheck.screening.mdmt import material_mdmt

    try:
        w = material_mdmt(curve, None if thickness is None else parse_length(thickness, "thickness"), stress_ratio,
                          code=curve_code,
                          impact_test_temperature_k=None if impact_test_t is None else parse_temperature(
                              impact_test_t, "impact_test_t"), pwht_credit=pwht_credit)
    except InputError as err:
        fail_input(InputError(err.field.removesuffix("_m").removesuffix("_k").replace("impact_test_temperature",
                                                                                       "impact_test_t"), err.message))
    if as_json:
        click.echo(json.dumps(w.to_dict(), indent=2))
        return
    for step in w.steps:
        click.echo(step)
    click.echo(f"MDMT {w.mdmt_k - 273.15:.1f} degC ({w.mdmt_k:.2f} K): {w.basis}.")
    click.echo(w.to_dict()["caution"])
