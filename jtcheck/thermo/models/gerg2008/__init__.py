"""GERG-2008 equation of state (Kunz and Wagner, J. Chem. Eng. Data 57 (2012) 3032-3091; ISO 20765-2).

- :mod:`~jtcheck.thermo.models.gerg2008.mixture`: the published constants (``data/*.csv``) and
  :func:`make_gerg_mixture`, which builds a :class:`GergMixture` with the parameter tuple of the kernels;
- :mod:`~jtcheck.thermo.models.gerg2008.kernels`: the equations compiled with numba, including the six
  functions of the model interface (:mod:`jtcheck.thermo.models.interface` dispatches to them by the type
  of the parameter tuple).
"""
from jtcheck.thermo.models.gerg2008.mixture import (
    EXTENDED_RANGE,
    GERG_COMPONENTS,
    MODEL_NAME,
    NORMAL_RANGE,
    GergMixture,
    data_version,
    make_gerg_mixture,
)

__all__ = ["EXTENDED_RANGE", "GERG_COMPONENTS", "MODEL_NAME", "NORMAL_RANGE", "GergMixture", "data_version",
           "make_gerg_mixture"]
