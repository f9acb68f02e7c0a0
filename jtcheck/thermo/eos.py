"""Equation-of-state choices (the cubic family and GERG-2008) and the constants of the generic cubic.

The generic cubic (Michelsen and Mollerup, *Thermodynamic Models: Fundamentals and Computational
Aspects*, 2nd ed., 2007, ch. 3) is

    P = R T / (v - b) - a(T) / ((v + d1 b) (v + d2 b))

with d1, d2 fixed per model: van der Waals d1 = d2 = 0; Redlich-Kwong and Soave-Redlich-Kwong d1 = 1,
d2 = 0; Peng-Robinson d1,2 = 1 +- sqrt(2).

GERG-2008 (Kunz and Wagner, J. Chem. Eng. Data 57 (2012) 3032-3091, doi:10.1021/je300655b; ISO 20765-2)
is a multiparameter Helmholtz-energy model of 21 components; it has no cubic constants, and the cubic-only
options (kij, Peneloux volume translation) do not apply to it.
"""
from __future__ import annotations

import enum
import math
from dataclasses import dataclass

from jtcheck.errors import InputError

#: Molar gas constant [J/(mol K)] (CODATA 2018, exact since the 2019 SI).
R = 8.314462618


class AlphaKind(enum.Enum):
    """Temperature dependence of the attraction parameter."""

    CONSTANT = "constant"          # van der Waals: alpha = 1
    INVERSE_SQRT = "inverse sqrt"  # Redlich-Kwong (1949): alpha = (Tc/T)**0.5
    SOAVE = "Soave"                # alpha = (1 + m (1 - sqrt(T/Tc)))**2


@dataclass(frozen=True, slots=True)
class CubicConstants:
    """Constants of one cubic model.

    Attributes
    ----------
    omega_a, omega_b : float
        a_c = omega_a R^2 Tc^2 / Pc [Pa m^6/mol^2], b = omega_b R Tc / Pc [m^3/mol].
    d1, d2 : float
        Denominator constants of the attraction term [-].
    alpha : AlphaKind
        Temperature function of a.
    citation : str
        Where the model is published.
    """

    omega_a: float
    omega_b: float
    d1: float
    d2: float
    alpha: AlphaKind
    citation: str


_SQ2 = math.sqrt(2.0)


class EOS(enum.Enum):
    """Equations of state that jtcheck implements: four cubics and GERG-2008."""

    PR = "PR"
    SRK = "SRK"
    RK = "RK"
    VDW = "VDW"
    GERG2008 = "GERG2008"

    @property
    def is_cubic(self) -> bool:
        """Whether the model is one of the generic two-parameter cubics (kij and volume translation apply)."""
        return self is not EOS.GERG2008

    @property
    def constants(self) -> CubicConstants:
        """Constants of a cubic model; InputError for GERG-2008, which has none."""
        try:
            return _CONSTANTS[self]
        except KeyError:
            raise InputError("eos", f"{self.value} is not a cubic equation of state; cubic models: "
                             + ", ".join(e.value for e in cubic_models())) from None

    @property
    def long_name(self) -> str:
        return _LONG_NAMES[self]

    @property
    def citation(self) -> str:
        """Where the model is published."""
        return GERG_CITATION if self is EOS.GERG2008 else _CONSTANTS[self].citation

    @property
    def version(self) -> str:
        """The model and its edition as records name it (for example "GERG-2008, Kunz and Wagner 2012")."""
        return _VERSIONS[self]

    @classmethod
    def parse(cls, value: str | EOS, field: str = "eos") -> EOS:
        """Return the model named by ``value`` (case-insensitive); raise InputError listing valid ones."""
        if isinstance(value, EOS):
            return value
        key = str(value).strip().upper().replace("-", "").replace(" ", "")
        aliases = {"PENGROBINSON": "PR", "SOAVEREDLICHKWONG": "SRK", "REDLICHKWONG": "RK",
                   "VANDERWAALS": "VDW", "VDW": "VDW", "GERG": "GERG2008", "GERG2008": "GERG2008"}
        key = aliases.get(key, key)
        try:
            return cls(key)
        except ValueError:
            raise InputError(field, f"unknown equation of state {value!r}; allowed: "
                             + ", ".join(e.value for e in cls)) from None


_CONSTANTS = {
    # Peng and Robinson, Ind. Eng. Chem. Fundam. 15 (1976) 59-64, eqs 9-18; for omega > 0.491 the
    # 1978 alpha of Robinson and Peng, GPA RR-28 (1978).
    EOS.PR: CubicConstants(0.45723552892138218, 0.077796073903888455, 1.0 + _SQ2, 1.0 - _SQ2,
                           AlphaKind.SOAVE,
                           "Peng and Robinson (1976) Ind. Eng. Chem. Fundam. 15:59, doi:10.1021/i160057a011; "
                           "1978 alpha for omega > 0.491 (Robinson and Peng, GPA RR-28)"),
    # Soave, Chem. Eng. Sci. 27 (1972) 1197-1203.
    EOS.SRK: CubicConstants(0.42748023354034140, 0.086640349964957721, 1.0, 0.0, AlphaKind.SOAVE,
                            "Soave (1972) Chem. Eng. Sci. 27:1197, doi:10.1016/0009-2509(72)80096-4"),
    # Redlich and Kwong, Chem. Rev. 44 (1949) 233-244.
    EOS.RK: CubicConstants(0.42748023354034140, 0.086640349964957721, 1.0, 0.0, AlphaKind.INVERSE_SQRT,
                           "Redlich and Kwong (1949) Chem. Rev. 44:233, doi:10.1021/cr60137a013"),
    # van der Waals (1873); a = 27/64 R^2 Tc^2/Pc, b = 1/8 R Tc/Pc.
    EOS.VDW: CubicConstants(27.0 / 64.0, 1.0 / 8.0, 0.0, 0.0, AlphaKind.CONSTANT,
                            "van der Waals (1873), critical-point constants"),
}

_LONG_NAMES = {
    EOS.PR: "Peng-Robinson (1976/1978 alpha)",
    EOS.SRK: "Soave-Redlich-Kwong",
    EOS.RK: "Redlich-Kwong",
    EOS.VDW: "van der Waals",
    EOS.GERG2008: "GERG-2008 (Kunz and Wagner 2012)",
}

#: Kunz and Wagner, J. Chem. Eng. Data 57 (2012) 3032-3091; the same model is ISO 20765-2.
GERG_CITATION = ("Kunz and Wagner (2012) J. Chem. Eng. Data 57:3032, doi:10.1021/je300655b "
                 "(GERG-2008; ISO 20765-2)")

_VERSIONS = {
    EOS.PR: "Peng-Robinson 1976, 1978 alpha for omega > 0.491",
    EOS.SRK: "Soave-Redlich-Kwong, Soave 1972",
    EOS.RK: "Redlich-Kwong 1949",
    EOS.VDW: "van der Waals 1873",
    EOS.GERG2008: "GERG-2008, Kunz and Wagner 2012",
}


def cubic_models() -> tuple[EOS, ...]:
    """The cubic equations of state (those with kij and volume translation)."""
    return tuple(e for e in EOS if e.is_cubic)


def soave_m(eos: EOS, omega):
    """Slope m of the Soave alpha function [-].

    SRK: m = 0.480 + 1.574 w - 0.176 w^2 (Soave 1972, eq. 13).
    PR:  m = 0.37464 + 1.54226 w - 0.26992 w^2 (Peng and Robinson 1976, eq. 18); for w > 0.491,
    m = 0.379642 + 1.48503 w - 0.164423 w^2 + 0.016666 w^3 (Robinson and Peng 1978).

    Parameters
    ----------
    eos : EOS
        The model.
    omega : numpy.ndarray
        Acentric factors [-].
    """
    import numpy as np

    w = np.asarray(omega, dtype=float)
    if eos is EOS.SRK:
        return 0.480 + 1.574 * w - 0.176 * w * w
    if eos is EOS.PR:
        m76 = 0.37464 + 1.54226 * w - 0.26992 * w * w
        m78 = 0.379642 + 1.48503 * w - 0.164423 * w * w + 0.016666 * w ** 3
        return np.where(w > 0.491, m78, m76)
    return np.zeros_like(w)
