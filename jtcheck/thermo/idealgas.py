r"""Ideal-gas heat capacity, enthalpy and entropy of pure components.

The isobaric ideal-gas heat capacity is written in the form of Aly and Lee (1981), which is also
DIPPR equation 107:

.. math::

    C_p^{ig}(T) = A + B\left(\frac{C/T}{\sinh(C/T)}\right)^2
                    + D\left(\frac{E/T}{\cosh(E/T)}\right)^2

with :math:`A, B, D` in [J/(mol K)] and :math:`C, E` in [K].  The form integrates in closed form,
so the ideal-gas enthalpy and entropy relative to the reference temperature :data:`T_REF` are
exact integrals of the same correlation:

.. math::

    H^{ig}(T) - H^{ig}(T_{ref}) = \Big[A T + B C \coth(C/T) - D E \tanh(E/T)\Big]_{T_{ref}}^{T}

    S^{ig}(T) - S^{ig}(T_{ref}) = \Big[A \ln T + B\big(\tfrac{C}{T}\coth\tfrac{C}{T}
        - \ln\sinh\tfrac{C}{T}\big) - D\big(\tfrac{E}{T}\tanh\tfrac{E}{T}
        - \ln\cosh\tfrac{E}{T}\big)\Big]_{T_{ref}}^{T}

The entropy is the temperature part only (at fixed pressure); the pressure and mixing terms
belong to the caller.

All functions are vectorised over components: the coefficients are numpy arrays of shape ``(n,)``.
The temperature may be a scalar (result shape ``(n,)``) or an array of shape ``(N,)`` (result shape
``(N, n)``).  Hyperbolic functions are evaluated through :math:`q = e^{-2x}`, so that no overflow
occurs for large :math:`C/T` or :math:`E/T` (very low temperatures or stiff vibrational modes).

References
----------
.. [1] Aly, F. A. and Lee, L. L. (1981). Self-consistent equations for calculating the ideal gas heat
   capacity, enthalpy, and entropy. Fluid Phase Equilibria 6(3-4):169-179.
   doi:10.1016/0378-3812(81)85002-9
"""
from __future__ import annotations

import math
from collections.abc import Iterable
from dataclasses import dataclass
from typing import Any

import numpy as np

from jtcheck.errors import InputError

__all__ = [
    "T_REF",
    "IdealGasCoefficients",
    "cp_ig",
    "h_ig",
    "ideal_gas_coefficients",
    "s_ig",
]

T_REF = 298.15
"""Reference temperature of the ideal-gas enthalpy and entropy, [K]."""

_LN2 = math.log(2.0)


def _check_temperature(T: Any) -> tuple[np.ndarray | float, bool]:
    """Return ``T`` as a float or an ``(N, 1)`` array, and whether it was a scalar.

    Raises
    ------
    InputError
        If a temperature is not a finite positive number or the array is not one-dimensional.
    """
    if isinstance(T, float | int) and not isinstance(T, bool):
        t = float(T)
        if not (0.0 < t < math.inf):
            raise InputError("T", f"temperature must be a finite positive number of kelvin, got {t!r}")
        return t, True
    arr = np.asarray(T, dtype=float)
    if arr.ndim == 0:
        return _check_temperature(float(arr))
    if arr.ndim != 1:
        raise InputError("T", f"temperature must be a scalar or a one-dimensional array, got shape "
                              f"{arr.shape}")
    if not np.all((arr > 0.0) & np.isfinite(arr)):
        raise InputError("T", "every temperature must be a finite positive number of kelvin")
    return arr[:, None], False


def _cp_terms(T, A, B, C, D, E):
    """Aly-Lee heat capacity, [J/(mol K)], for ``T`` a float or an ``(N, 1)`` array."""
    x = C / T
    y = E / T
    qx = np.exp(-2.0 * x)
    qy = np.exp(-2.0 * y)
    omqx = -np.expm1(-2.0 * x)                       # 1 - exp(-2x), accurate for small x
    # (x / sinh x)^2 = 4 x^2 q / (1 - q)^2 ;  (y / cosh y)^2 = 4 y^2 q / (1 + q)^2
    return A + B * (4.0 * x * x * qx / (omqx * omqx)) + D * (4.0 * y * y * qy / ((1.0 + qy) * (1.0 + qy)))


def _h_antiderivative(T, A, B, C, D, E):
    """``A T + B C coth(C/T) - D E tanh(E/T)``, [J/mol]."""
    x = C / T
    y = E / T
    qx = np.exp(-2.0 * x)
    qy = np.exp(-2.0 * y)
    coth_x = (1.0 + qx) / -np.expm1(-2.0 * x)
    tanh_y = -np.expm1(-2.0 * y) / (1.0 + qy)
    return A * T + B * C * coth_x - D * E * tanh_y


def _s_antiderivative(T, A, B, C, D, E):
    """``A ln T + B (x coth x - ln sinh x) - D (y tanh y - ln cosh y)``, [J/(mol K)].

    With ``q = exp(-2x)``: ``x coth x - ln sinh x = ln 2 + 2 x q / (1 - q) - ln(1 - q)`` and
    ``y tanh y - ln cosh y = ln 2 - 2 y q / (1 + q) - ln(1 + q)``, free of overflow and of the
    cancellation of two large terms.
    """
    x = C / T
    y = E / T
    qx = np.exp(-2.0 * x)
    qy = np.exp(-2.0 * y)
    omqx = -np.expm1(-2.0 * x)
    g_x = _LN2 + 2.0 * x * qx / omqx - np.log(omqx)
    g_y = _LN2 - 2.0 * y * qy / (1.0 + qy) - np.log1p(qy)
    return A * np.log(T) + B * g_x - D * g_y


def cp_ig(T, A, B, C, D, E) -> np.ndarray:
    """Ideal-gas isobaric heat capacity of each component, Aly and Lee (1981) form.

    Parameters
    ----------
    T : float or numpy.ndarray
        Temperature, scalar or shape ``(N,)``, [K].
    A, B : numpy.ndarray
        Aly-Lee coefficients A and B of each component, shape ``(n,)``, [J/(mol K)].
    C : numpy.ndarray
        Aly-Lee coefficient C of each component, shape ``(n,)``, [K].
    D : numpy.ndarray
        Aly-Lee coefficient D of each component, shape ``(n,)``, [J/(mol K)].
    E : numpy.ndarray
        Aly-Lee coefficient E of each component, shape ``(n,)``, [K].

    Returns
    -------
    numpy.ndarray
        Ideal-gas heat capacity, shape ``(n,)`` for scalar ``T`` or ``(N, n)``, [J/(mol K)].

    Raises
    ------
    InputError
        If a temperature is not finite and positive.

    References
    ----------
    Aly and Lee (1981), Fluid Phase Equilib. 6:169-179, doi:10.1016/0378-3812(81)85002-9.
    """
    t, _ = _check_temperature(T)
    return _cp_terms(t, A, B, C, D, E)


def h_ig(T, A, B, C, D, E) -> np.ndarray:
    r"""Ideal-gas enthalpy of each component relative to :data:`T_REF`, closed-form integral of :func:`cp_ig`.

    Parameters
    ----------
    T : float or numpy.ndarray
        Temperature, scalar or shape ``(N,)``, [K].
    A, B : numpy.ndarray
        Aly-Lee coefficients A and B of each component, shape ``(n,)``, [J/(mol K)].
    C : numpy.ndarray
        Aly-Lee coefficient C of each component, shape ``(n,)``, [K].
    D : numpy.ndarray
        Aly-Lee coefficient D of each component, shape ``(n,)``, [J/(mol K)].
    E : numpy.ndarray
        Aly-Lee coefficient E of each component, shape ``(n,)``, [K].

    Returns
    -------
    numpy.ndarray
        :math:`\int_{T_{ref}}^{T} C_p^{ig}\,dT`, shape ``(n,)`` or ``(N, n)``, [J/mol].

    References
    ----------
    Aly and Lee (1981), Fluid Phase Equilib. 6:169-179, doi:10.1016/0378-3812(81)85002-9.
    """
    t, _ = _check_temperature(T)
    return _h_antiderivative(t, A, B, C, D, E) - _h_antiderivative(T_REF, A, B, C, D, E)


def s_ig(T, A, B, C, D, E) -> np.ndarray:
    r"""Ideal-gas entropy of each component relative to :data:`T_REF` at constant pressure.

    Closed-form integral of :math:`C_p^{ig}/T` in the Aly and Lee (1981) form; the pressure term
    :math:`-R \ln(p/p_{ref})` and the mixing term are not included.

    Parameters
    ----------
    T : float or numpy.ndarray
        Temperature, scalar or shape ``(N,)``, [K].
    A, B : numpy.ndarray
        Aly-Lee coefficients A and B of each component, shape ``(n,)``, [J/(mol K)].
    C : numpy.ndarray
        Aly-Lee coefficient C of each component, shape ``(n,)``, [K].
    D : numpy.ndarray
        Aly-Lee coefficient D of each component, shape ``(n,)``, [J/(mol K)].
    E : numpy.ndarray
        Aly-Lee coefficient E of each component, shape ``(n,)``, [K].

    Returns
    -------
    numpy.ndarray
        :math:`\int_{T_{ref}}^{T} C_p^{ig}/T\,dT`, shape ``(n,)`` or ``(N, n)``, [J/(mol K)].

    References
    ----------
    Aly and Lee (1981), Fluid Phase Equilib. 6:169-179, doi:10.1016/0378-3812(81)85002-9.
    """
    t, _ = _check_temperature(T)
    return _s_antiderivative(t, A, B, C, D, E) - _s_antiderivative(T_REF, A, B, C, D, E)


@dataclass(frozen=True, slots=True, eq=False)
class IdealGasCoefficients:
    """Aly-Lee coefficients of a set of components, with the reference values precomputed.

    Build it with :func:`ideal_gas_coefficients`; the methods give the same numbers as
    :func:`cp_ig`, :func:`h_ig` and :func:`s_ig` without recomputing the reference terms, which
    suits the inner loop of a flash.

    Attributes
    ----------
    ids : tuple of str
        Component ids, in the order of the arrays.
    A, B : numpy.ndarray
        Coefficients A and B, shape ``(n,)``, [J/(mol K)].
    C : numpy.ndarray
        Coefficient C, shape ``(n,)``, [K].
    D : numpy.ndarray
        Coefficient D, shape ``(n,)``, [J/(mol K)].
    E : numpy.ndarray
        Coefficient E, shape ``(n,)``, [K].
    t_min_k, t_max_k : numpy.ndarray
        Temperature range over which each correlation was fitted, shape ``(n,)``, [K].  Outside it
        the correlation extrapolates (smoothly; the data file records the check).
    h_ref : numpy.ndarray
        Enthalpy antiderivative at :data:`T_REF`, shape ``(n,)``, [J/mol].
    s_ref : numpy.ndarray
        Entropy antiderivative at :data:`T_REF`, shape ``(n,)``, [J/(mol K)].
    """

    ids: tuple[str, ...]
    A: np.ndarray
    B: np.ndarray
    C: np.ndarray
    D: np.ndarray
    E: np.ndarray
    t_min_k: np.ndarray
    t_max_k: np.ndarray
    h_ref: np.ndarray
    s_ref: np.ndarray

    def cp(self, T) -> np.ndarray:
        """Ideal-gas heat capacity, [J/(mol K)]; see :func:`cp_ig`.

        Parameters
        ----------
        T : float or numpy.ndarray
            Temperature, scalar or shape ``(N,)``, [K].
        """
        t, _ = _check_temperature(T)
        return _cp_terms(t, self.A, self.B, self.C, self.D, self.E)

    def h(self, T) -> np.ndarray:
        """Ideal-gas enthalpy relative to :data:`T_REF`, [J/mol]; see :func:`h_ig`.

        Parameters
        ----------
        T : float or numpy.ndarray
            Temperature, scalar or shape ``(N,)``, [K].
        """
        t, _ = _check_temperature(T)
        return _h_antiderivative(t, self.A, self.B, self.C, self.D, self.E) - self.h_ref

    def s(self, T) -> np.ndarray:
        """Ideal-gas entropy relative to :data:`T_REF`, [J/(mol K)]; see :func:`s_ig`.

        Parameters
        ----------
        T : float or numpy.ndarray
            Temperature, scalar or shape ``(N,)``, [K].
        """
        t, _ = _check_temperature(T)
        return _s_antiderivative(t, self.A, self.B, self.C, self.D, self.E) - self.s_ref


def ideal_gas_coefficients(components: Iterable[Any]) -> IdealGasCoefficients:
    """Collect the Aly-Lee coefficients of components into arrays and precompute reference values.

    Parameters
    ----------
    components : iterable of jtcheck.thermo.components.Component
        Components in mixture order (anything with ``id``, ``cp_a`` ... ``cp_e``, ``cp_tmin_k`` and
        ``cp_tmax_k`` attributes).

    Returns
    -------
    IdealGasCoefficients
        Read-only coefficient arrays of shape ``(n,)``.

    Raises
    ------
    InputError
        If no component is given.
    """
    comps = tuple(components)
    if not comps:
        raise InputError("components", "at least one component is needed")

    def column(name: str) -> np.ndarray:
        arr = np.array([float(getattr(c, name)) for c in comps], dtype=float)
        arr.flags.writeable = False
        return arr

    A, B, C, D, E = (column(k) for k in ("cp_a", "cp_b", "cp_c", "cp_d", "cp_e"))
    h_ref = _h_antiderivative(T_REF, A, B, C, D, E)
    s_ref = _s_antiderivative(T_REF, A, B, C, D, E)
    h_ref.flags.writeable = False
    s_ref.flags.writeable = False
    return IdealGasCoefficients(
        ids=tuple(str(c.id) for c in comps), A=A, B=B, C=C, D=D, E=E,
        t_min_k=column("cp_tmin_k"), t_max_k=column("cp_tmax_k"), h_ref=h_ref, s_ref=s_ref,
    )
