"""``jtcheck demo``: the letdowns of the invented Kestrel Ridge gas terminal."""
from __future__ import annotations

import sys

import click

from jtcheck.cli.letdown import LetdownArgs, run_letdown
from jtcheck.notices import DEMO_NOTICE


@click.command("demo")
def demo_cmd():
    """Run the letdowns of the invented Kestrel Ridge gas terminal (the demo site of the case register)."""
    from jtcheck.records.demo import CASES, FLUIDS, P_ATM, SITE_NAME

    click.echo(DEMO_NOTICE)
    compositions = {f["name"]: f["composition"] for f in FLUIDS}
    models = {f["name"]: f.get("eos", "PR") for f in FLUIDS}
    code = 0
    for unit, fluid_name, _material, fields in CASES:
        fluid_text = ",".join(f"{k}={v}" for k, v in compositions[fluid_name].items())
        title = f"\n{SITE_NAME} / {unit} / {fields['tag']}: {fields['service']}\n"
        p_in = f"{(fields['inlet_pressure_pa'] - P_ATM) / 1e5:.6g} barg"
        p_out = f"{(fields['outlet_pressure_pa'] - P_ATM) / 1e5:.6g} barg"
        t_in = f"{fields['inlet_temperature_k'] - 273.15:.6g} degC"
        code = max(code, run_letdown(LetdownArgs(fluid_text, p_in, t_in, p_out, eos=models[fluid_name],
                                                 kij="table"), title=title))
    sys.exit(code)
