"""Gas hydrates by statistical thermodynamics: van der Waals and Platteeuw (1959), Munck et al. (1988) parameters.

:func:`hydrate_temperature` (also ``jtcheck.hydrate_temperature``) gives the hydrate equilibrium temperature of a
water-saturated gas; :mod:`jtcheck.thermo.hydrate.parameters` holds the published numbers with their source.
"""
from jtcheck.thermo.hydrate.equilibrium import (
    CHECKED_DEVIATION_K,
    METHOD,
    METHOD_NAME,
    HydrateEquilibrium,
    hydrate_temperature,
)

__all__ = ["CHECKED_DEVIATION_K", "METHOD", "METHOD_NAME", "HydrateEquilibrium", "hydrate_temperature"]
