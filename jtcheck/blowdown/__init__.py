"""Vessel depressurisation (blowdown) in time: pressure, fluid and wall temperatures, flow to flare, and the
screening of the coldest metal and the blowdown valve outlet against the cold limits.

Entry point: :func:`depressure` (re-exported as ``from jtcheck import depressure``).  Modules:

- :mod:`~jtcheck.blowdown.geometry`: the vessel (cylinder with flat ends), wetted area from the liquid volume;
- :mod:`~jtcheck.blowdown.inputs`: orifices, heat input, the API 521 common depressuring target;
- :mod:`~jtcheck.blowdown.transport`, :mod:`~jtcheck.blowdown.heat`: gas transport properties; inside natural
  convection and boiling, outside air, API 521 fire;
- :mod:`~jtcheck.blowdown.wall`: wall materials and 1-D conduction;
- :mod:`~jtcheck.blowdown.contents`: the equilibrium vessel contents at one instant (UV flash, valve flow, heat);
- :mod:`~jtcheck.blowdown.twozone`: the two-zone (non-equilibrium) contents, gas and liquid zones at one pressure
  and their own temperatures (``model="two-zone"``);
- :mod:`~jtcheck.blowdown.integrate`: adaptive time stepping with the balances;
- :mod:`~jtcheck.blowdown.result`: the result, its extremes and the screening.

Published basis: Haque, Richardson, Saville and Chamberlain, Process Saf. Environ. Prot. 70 (1992) 3-17 (Part I,
the model) and 18-? (Part II, experiments); Speranza and Terenzi, Ind. Eng. Chem. Res. 44 (2005) 1054 (two-zone
model); Michelsen, Fluid Phase Equilib. 158-160 (1999) 617 (UV flash); API Standard 520 Part I Annex B
(isentropic nozzle); API Standard 521 (fire heat input, depressuring target: common basis, verify against the
edition in force).
"""
from jtcheck.blowdown.depressure import depressure
from jtcheck.blowdown.geometry import Vessel
from jtcheck.blowdown.inputs import HeatInput, Orifice, api521_target_pressure_pa
from jtcheck.blowdown.result import DepressureResult, cold_limits_at_pressure
from jtcheck.blowdown.wall import MATERIALS, WallMaterial

__all__ = ["MATERIALS", "DepressureResult", "HeatInput", "Orifice", "Vessel", "WallMaterial",
           "api521_target_pressure_pa", "cold_limits_at_pressure", "depressure"]
