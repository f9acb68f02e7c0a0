"""``jtcheck components``: the component library."""
from __future__ import annotations

import click


@click.command("components")
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
