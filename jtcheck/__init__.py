"""jtcheck: low-temperature screening of pressure letdowns.

>>> from jtcheck import Fluid, letdown
>>> gas = Fluid({"methane": 0.9, "ethane": 0.1})
>>> r = letdown(gas, p_in=100e5, t_in=313.15, p_out=10e5)
"""
from jtcheck.blowdown import DepressureResult, depressure
from jtcheck.letdown import LetdownBatch, LetdownResult, letdown
from jtcheck.screening.mdmt import material_mdmt
from jtcheck.thermo.fluid import Fluid
from jtcheck.thermo.hydrate import HydrateEquilibrium, hydrate_temperature

__version__ = "0.1.0"

__all__ = ["DepressureResult", "Fluid", "HydrateEquilibrium", "LetdownBatch", "LetdownResult", "__version__",
           "depressure", "hydrate_temperature", "letdown", "material_mdmt"]
