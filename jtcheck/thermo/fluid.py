"""A fluid: a checked composition under one equation of state (a cubic with its kij set, or GERG-2008).

:class:`Fluid` holds parameters only (no solving in ``__init__``); the flashes and properties are
functions of :mod:`jtcheck.thermo.flash` and :mod:`jtcheck.thermo.properties` that it passes them to.
Every choice that changes an answer (EOS, kij set and which pairs defaulted to zero, volume
translation) is recorded in :meth:`Fluid.basis` so results and records can show it.

Under GERG-2008 (Kunz and Wagner, J. Chem. Eng. Data 57 (2012) 3032-3091) the fluid holds a
``GergMixture`` instead of a ``CubicMixture``; the flashes and properties are the same functions (they
are written over the model interface of :mod:`jtcheck.thermo.models`).  kij and the Peneloux volume
translation belong to the cubic models and are refused for GERG-2008; a component outside GERG-2008's
21 is refused with its name (the cubic models keep it).  :meth:`Fluid.check_state` applies GERG-2008's
range of validity.
"""
from __future__ import annotations

from collections.abc import Iterable, Mapping
from typing import Any

import numpy as np

from jtcheck.errors import InputError
from jtcheck.thermo import flash as _flash
from jtcheck.thermo.components import COMPONENT_DATA_VERSION, KIJ_DATA_VERSION, find_component, kij_matrix
from jtcheck.thermo.composition import Composition, normalise_composition
from jtcheck.thermo.eos import EOS, R
from jtcheck.thermo.models.cubic.mixture import make_mixture

#: Components for which a cubic EOS with the classic alpha function is poor (negative acentric factor,
#: quantum gases): the Joule-Thomson inversion is mispredicted near room temperature.
QUANTUM_GASES = frozenset({"hydrogen", "helium", "neon"})

#: Mole fraction of hydrogen, helium and neon together from which a cubic's outlet temperature is a caution:
#: pure hydrogen's PR outlet errs by -2.3 to -6.2 K on 50-200 bar drops near room temperature (issue 15,
#: measured against a reference multiparameter EOS), and a blend inherits part of it (our choice of 10 %).
QUANTUM_RICH = 0.10


def gerg_ranges():
    """GERG-2008's normal and extended ranges of validity as ((t_min, t_max [K], p_max [Pa]), (...)).

    Kunz and Wagner (2012), section 7: normal range 90-450 K up to 35 MPa, extended range 60-700 K up to
    70 MPa."""
    from jtcheck.thermo.models import gerg2008

    return _bounds(gerg2008.NORMAL_RANGE), _bounds(gerg2008.EXTENDED_RANGE)


def _bounds(r) -> tuple[float, float, float]:
    """(t_min_k, t_max_k, p_max_pa) from a range given as a tuple or an object with those attributes."""
    if isinstance(r, tuple | list):
        return float(r[0]), float(r[1]), float(r[-1])
    if isinstance(r, Mapping):
        return float(r["t_min_k"]), float(r["t_max_k"]), float(r["p_max_pa"])
    return float(r.t_min_k), float(r.t_max_k), float(r.p_max_pa)


def gerg_component_ids() -> frozenset[str]:
    """Component ids (jtcheck's names) that GERG-2008 holds: its 21 components."""
    from jtcheck.thermo.models import gerg2008

    return frozenset(gerg2008.GERG_COMPONENTS)


def peneloux_shift(eos: EOS, tc_k, pc_pa, zra):
    """Peneloux volume shift c_i [m^3/mol] from the Rackett compressibility Z_RA.

    SRK: c = 0.40768 (R Tc/Pc)(0.29441 - Z_RA) (Peneloux, Rauzy and Freze, Fluid Phase Equilib. 8
    (1982) 7-23, eq. 8); PR: c = 0.50033 (R Tc/Pc)(0.25969 - Z_RA), the PR analogue given by
    Whitson and Brule, *Phase Behavior*, SPE Monograph 20 (2000) (from memory).  RK and VDW: 0.
    """
    tc = np.asarray(tc_k, float)
    pc = np.asarray(pc_pa, float)
    zra = np.asarray(zra, float)
    if eos is EOS.SRK:
        return 0.40768 * R * tc / pc * (0.29441 - zra)
    if eos is EOS.PR:
        return 0.50033 * R * tc / pc * (0.25969 - zra)
    return np.zeros_like(tc)


def _kij_from_user(kij: Any, ids: tuple[str, ...], eos: EOS):
    """(matrix, basis text, defaulted pairs, sourced pairs) for the user's kij choice."""
    n = len(ids)
    if kij is None:
        ks = kij_matrix(ids, eos.value)
        basis = (f"jtcheck {eos.value} table ({len(ks.sources)} sourced pairs, "
                 f"{len(ks.defaulted)} pairs with no published value set to 0)")
        return np.array(ks.matrix, float), basis, tuple(ks.defaulted), tuple(ks.sources)
    if isinstance(kij, (int, float)) and not isinstance(kij, bool):
        if kij != 0:
            raise InputError("kij", "a single number may only be 0 (every kij zero); give a mapping "
                                    "{(component, component): value} or an (n, n) matrix otherwise")
        return np.zeros((n, n)), "all kij = 0 (chosen by the user)", (), ()
    if isinstance(kij, Mapping):
        ks = kij_matrix(ids, eos.value)
        mat = np.array(ks.matrix, float)
        defaulted = set(ks.defaulted)
        for key, value in kij.items():
            try:
                a, b = key
            except (TypeError, ValueError):
                raise InputError("kij", f"key {key!r} must be a pair of component names") from None
            ia = ids.index(find_component(a, "kij").id) if find_component(a, "kij").id in ids else None
            ib = ids.index(find_component(b, "kij").id) if find_component(b, "kij").id in ids else None
            if ia is None or ib is None or ia == ib:
                raise InputError("kij", f"pair ({a!r}, {b!r}) is not two different components of this fluid")
            v = float(value)
            if not np.isfinite(v) or abs(v) >= 1.0:
                raise InputError("kij", f"pair ({a!r}, {b!r}): {value!r} is not a number between -1 and 1")
            mat[ia, ib] = mat[ib, ia] = v
            defaulted.discard(tuple(sorted((ids[ia], ids[ib]))))
        basis = f"jtcheck {eos.value} table with {len(kij)} user values"
        return mat, basis, tuple(sorted(defaulted)), tuple(ks.sources)
    mat = np.asarray(kij, dtype=float)
    if mat.shape != (n, n):
        raise InputError("kij", f"matrix must be {n} x {n} for this fluid, got shape {mat.shape}")
    if not np.all(np.isfinite(mat)) or np.any(np.abs(mat) >= 1.0) or not np.allclose(mat, mat.T):
        raise InputError("kij", "matrix must be symmetric with finite entries between -1 and 1")
    if np.any(np.diag(mat) != 0.0):
        raise InputError("kij", "matrix diagonal must be zero")
    return mat.copy(), "user kij matrix", (), ()


class Fluid:
    """A mixture with an equation of state.

    Parameters
    ----------
    composition : mapping, pairs or text
        Component names (common name, synonym, formula or CAS number) with mole fractions or
        mole percent; see :func:`jtcheck.thermo.composition.normalise_composition`.
    eos : {"PR", "SRK", "RK", "VDW"}
        Cubic equation of state.  PR uses the 1978 alpha for components with omega > 0.491.
    kij : None, 0, mapping or array, optional
        ``None`` takes the published values in jtcheck's table (pairs without one are 0, and are
        listed in :attr:`kij_defaulted`); ``0`` sets every kij to zero; a mapping
        ``{("methane", "CO2"): 0.1}`` overrides table entries; an (n, n) array replaces the table.
    volume_translation : bool
        Apply the Peneloux volume shift consistently: to densities and to enthalpies
        (H - P sum z_i c_i), at inlet and outlet alike.  Off by default.

    Examples
    --------
    >>> gas = Fluid({"methane": 0.9, "ethane": 0.1}, eos="PR")
    """

    def __init__(self, composition: Mapping[str, float] | Iterable[tuple[str, float]] | str, eos: str | EOS = "PR",
                 kij: Any = None, volume_translation: bool = False):
        self.composition: Composition = normalise_composition(composition)
        self.eos: EOS = EOS.parse(eos)
        comps = self.composition.components
        ids = self.composition.ids
        self._kij_choice = kij
        self.volume_translation = bool(volume_translation)
        notes = list(self.composition.warnings)
        if self.eos.is_cubic:
            self.kij, self.kij_basis, self.kij_defaulted, self.kij_sources = _kij_from_user(kij, ids, self.eos)
            self.vol_shifts = peneloux_shift(self.eos, [c.tc_k for c in comps], [c.pc_pa for c in comps],
                                             [c.zra for c in comps])
            self.mixture = make_mixture(
                self.eos, ids, [c.tc_k for c in comps], [c.pc_pa for c in comps], [c.omega for c in comps],
                [c.molar_mass_g_per_mol / 1000.0 for c in comps], self.kij, self.vol_shifts,
                ([c.cp_a for c in comps], [c.cp_b for c in comps], [c.cp_c for c in comps],
                 [c.cp_d for c in comps], [c.cp_e for c in comps]))
            quantum = [(c.name, z) for c, z in zip(comps, self.zs, strict=True) if c.id in QUANTUM_GASES and z >= 0.01]
            share = sum(z for _, z in quantum)
            if share >= QUANTUM_RICH:
                notes.append(
                    f"{', '.join(n for n, _ in quantum)} {100 * share:.0f} mol%: the cubic {self.eos.value} errs here "
                    "by kelvins and in the direction of the Joule-Thomson effect (PR predicts cooling where "
                    "hydrogen really warms on throttling near room temperature, about 2-6 K colder than a "
                    "reference equation of state on 50-200 bar drops); screen this fluid with GERG2008 "
                    "(GERG-2008, Kunz and Wagner 2012)" + ("" if self._gerg_holds(ids) else
                                                           " where its components allow"))
            elif quantum:
                notes.append(f"{', '.join(n for n, _ in quantum)} present: a cubic EOS with the classic alpha "
                             "function is poor for these gases and can predict cooling where they really warm on "
                             "throttling; treat the outlet temperature with caution")
        else:
            if kij is not None:
                raise InputError("kij", "binary interaction parameters (kij) apply to the cubic models PR, SRK, RK "
                                        "and VDW only; GERG-2008 has its own binary reducing and departure "
                                        "functions (leave kij unset)")
            if self.volume_translation:
                raise InputError("volume_translation", "the Peneloux volume translation applies to the cubic "
                                                       "models only; GERG-2008 gives densities directly")
            held = gerg_component_ids()
            missing = [c.name for c in comps if c.id not in held]
            if missing:
                raise InputError("composition", f"{', '.join(missing)}: not among the 21 components of GERG-2008 "
                                 f"({', '.join(sorted(held))}); choose a cubic model (PR or SRK) for this fluid")
            from jtcheck.thermo.models.gerg2008 import make_gerg_mixture

            n = len(ids)
            self.kij = np.zeros((n, n))
            self.kij_basis = "not used: GERG-2008 binary reducing and departure functions (Kunz and Wagner 2012)"
            self.kij_defaulted, self.kij_sources = (), ()
            self.vol_shifts = np.zeros(n)
            self.mixture = make_gerg_mixture(ids)
        self.warnings: tuple[str, ...] = tuple(notes)

    @staticmethod
    def _gerg_holds(ids) -> bool:
        try:
            held = gerg_component_ids()
        except ImportError:
            return False
        return all(i in held for i in ids)

    def check_state(self, t_k, p_pa, what: str = "inlet", field: str = "t_in") -> list[str]:
        """GERG-2008's range of validity at the states (``t_k`` [K], ``p_pa`` [Pa], arrays broadcast).

        Kunz and Wagner (2012), section 7: inside the normal range (90-450 K, up to 35 MPa) nothing is said;
        outside it, inside the extended range (60-700 K, up to 70 MPa), a warning (returned, one text for
        all the states); outside the extended range an :class:`InputError` naming ``field`` and the
        condition.  The cubic models have no such range here: an empty list.
        """
        if self.eos.is_cubic:
            return []
        (n_lo, n_hi, n_p), (e_lo, e_hi, e_p) = gerg_ranges()
        t = np.atleast_1d(np.asarray(t_k, float))
        p = np.atleast_1d(np.asarray(p_pa, float))
        t_ok = t[np.isfinite(t)]
        p_ok = p[np.isfinite(p)]
        if t_ok.size and (t_ok.min() < e_lo or t_ok.max() > e_hi):
            bad = t_ok.min() if t_ok.min() < e_lo else t_ok.max()
            raise InputError(field, f"{what} temperature {bad:.2f} K is outside the extended range of GERG-2008 "
                             f"({e_lo:g}-{e_hi:g} K, Kunz and Wagner 2012); use a cubic model (PR or SRK) "
                             "and treat the result with caution")
        if p_ok.size and p_ok.max() > e_p:
            field_p = field.replace("t_", "p_", 1) if field.startswith("t_") else field
            raise InputError(field_p, f"{what} pressure {p_ok.max() / 1e6:.2f} MPa is above the extended range "
                             f"of GERG-2008 (up to {e_p / 1e6:g} MPa, Kunz and Wagner 2012)")
        outside = []
        if t_ok.size and (t_ok.min() < n_lo or t_ok.max() > n_hi):
            bad = t_ok.min() if t_ok.min() < n_lo else t_ok.max()
            outside.append(f"temperature {bad:.1f} K outside {n_lo:g}-{n_hi:g} K")
        if p_ok.size and p_ok.max() > n_p:
            outside.append(f"pressure {p_ok.max() / 1e6:.1f} MPa above {n_p / 1e6:g} MPa")
        if not outside:
            return []
        return [f"{what} {' and '.join(outside)}: outside the normal range of GERG-2008 (Kunz and Wagner 2012), "
                f"inside its extended range ({e_lo:g}-{e_hi:g} K, up to {e_p / 1e6:g} MPa), where its uncertainty "
                "is larger; treat the result with caution"]

    # -- data --------------------------------------------------------------------------------
    @property
    def components(self):
        return self.composition.components

    @property
    def ids(self) -> tuple[str, ...]:
        return self.composition.ids

    @property
    def names(self) -> tuple[str, ...]:
        return tuple(c.name for c in self.components)

    @property
    def zs(self) -> np.ndarray:
        return self.composition.zs

    @property
    def molar_mass(self) -> float:
        """Mean molar mass [kg/mol]."""
        return float(self.zs @ self.mixture.mws)

    def enthalpy_shift(self, p_pa: float) -> float:
        """Enthalpy shift of the volume translation, -P sum z_i c_i [J/mol] (0 when off)."""
        if not self.volume_translation:
            return 0.0
        return -float(p_pa) * float(self.zs @ self.vol_shifts)

    def basis(self) -> dict:
        """Model choices that change answers, for results and records."""
        out = {
            "eos": self.eos.value,
            "eos_name": self.eos.long_name,
            "eos_version": self.eos.version,
            "eos_reference": self.eos.citation,
            "kij_basis": self.kij_basis,
            "kij_defaulted_pairs": [list(p) for p in self.kij_defaulted],
            "volume_translation": "Peneloux, applied to enthalpy and density" if self.volume_translation
            else "none",
            "component_data": COMPONENT_DATA_VERSION,
            "kij_data": KIJ_DATA_VERSION,
        }
        if not self.eos.is_cubic:
            (n_lo, n_hi, n_p), (e_lo, e_hi, e_p) = gerg_ranges()
            out["eos_range"] = (f"normal range {n_lo:g}-{n_hi:g} K up to {n_p / 1e6:g} MPa; extended range "
                                f"{e_lo:g}-{e_hi:g} K up to {e_p / 1e6:g} MPa (Kunz and Wagner 2012)")
            out["kij_data"] = "not used (GERG-2008)"
        return out

    def with_eos(self, eos: str | EOS) -> Fluid:
        """The same fluid (composition, kij choice, volume translation) under another equation of state.

        A kij table choice takes the other EOS's table; a user mapping or matrix is kept as given.  To or
        from GERG-2008 the cubic-only choices (kij, volume translation) are dropped: the table and no
        translation.
        """
        eos = EOS.parse(eos)
        cubic_both = eos.is_cubic and self.eos.is_cubic
        return Fluid(list(zip(self.ids, self.zs, strict=True)), eos=eos, kij=self._kij_choice if cubic_both else None,
                     volume_translation=self.volume_translation and cubic_both)

    def with_composition(self, composition: Mapping[str, float] | Iterable[tuple[str, float]] | str) -> Fluid:
        """Another composition on this fluid's model basis (EOS, kij choice, volume translation).

        A kij matrix given for this fluid's components cannot fit another composition: the table is taken.
        """
        kij = self._kij_choice if self._kij_choice is None or np.ndim(self._kij_choice) == 0 or \
            isinstance(self._kij_choice, Mapping) else None
        return Fluid(composition, eos=self.eos, kij=kij if self.eos.is_cubic else None,
                     volume_translation=self.volume_translation)

    def __repr__(self) -> str:
        comp = ", ".join(f"{i}={z:.4g}" for i, z in zip(self.ids, self.zs, strict=True))
        return f"Fluid({comp}; eos={self.eos.value})"

    def phase_envelope(self):
        """The P-T phase envelope of this fluid (computed once, then kept).

        See :func:`jtcheck.thermo.envelope.phase_envelope`.
        """
        env = getattr(self, "_envelope", None)
        if env is None:
            from jtcheck.thermo.envelope import phase_envelope

            env = phase_envelope(self.mixture, self.zs)
            self._envelope = env
        return env

    def single_phase_above_k(self) -> float:
        """Temperature [K] above which this fluid is single-phase at any pressure: its cricondentherm
        plus 2 K, when the envelope closed and no component can form a second liquid (water, glycols,
        alcohols, ammonia); +inf otherwise.  Lets batch screening skip stability tests safely."""
        from jtcheck.thermo.models.cubic.mixture import POLAR_IDS

        if len(self.ids) < 2 or any(i in POLAR_IDS for i in self.ids):
            return float("inf")
        try:
            env = self.phase_envelope()
        except Exception:  # noqa: BLE001 - any failure just means no shortcut
            return float("inf")
        if not env.converged or not np.isfinite(env.cricondentherm[0]):
            return float("inf")
        return float(env.cricondentherm[0]) + 2.0

    # -- calculations (delegated) ---------------------------------------------------------------
    def flash_pt(self, t_k: float, p_pa: float) -> _flash.FlashResult:
        """Equilibrium at temperature [K] and pressure [Pa] (see :func:`jtcheck.thermo.flash.flash_pt`)."""
        res = _flash.flash_pt(self.mixture, t_k, p_pa, self.zs)
        shift = self.enthalpy_shift(p_pa)
        if shift:
            from dataclasses import replace

            res = replace(res, h=res.h + shift)
        return res

    def flash_ph(self, p_pa: float, h_j_per_mol: float, t_guess_k: float | None = None) -> _flash.FlashResult:
        """Equilibrium at pressure [Pa] and molar enthalpy [J/mol] (translated when the fluid says so)."""
        shift = self.enthalpy_shift(p_pa)
        res = _flash.flash_ph(self.mixture, p_pa, h_j_per_mol - shift, self.zs, t_guess_k)
        if shift:
            from dataclasses import replace

            res = replace(res, h=res.h + shift)
        return res

    def flash_ps(self, p_pa: float, s_j_per_mol_k: float, t_guess_k: float | None = None) -> _flash.FlashResult:
        """Equilibrium at pressure [Pa] and molar entropy [J/(mol K)]."""
        return _flash.flash_ps(self.mixture, p_pa, s_j_per_mol_k, self.zs, t_guess_k)

    def volume_shift(self) -> float:
        """Peneloux volume shift of the feed, sum z_i c_i [m^3/mol] (0 when the translation is off)."""
        return float(self.zs @ self.vol_shifts) if self.volume_translation else 0.0

    def flash_uv(self, u_j_per_mol: float, v_m3_per_mol: float, t_guess_k: float | None = None,
                 p_guess_pa: float | None = None) -> _flash.FlashResult:
        """Equilibrium at molar internal energy [J/mol] and molar volume [m^3/mol] (a closed vessel).

        With volume translation ``v`` is the translated volume; u = h - P v is unchanged by the
        translation.  See :func:`jtcheck.thermo.flash.flash_uv`."""
        c = self.volume_shift()
        res = _flash.flash_uv(self.mixture, u_j_per_mol, v_m3_per_mol + c, self.zs, t_guess_k, p_guess_pa,
                              self.single_phase_above_k() if len(self.ids) > 1 else float("inf"))
        return self._translated(res)

    def flash_tv(self, t_k: float, v_m3_per_mol: float, p_guess_pa: float | None = None) -> _flash.FlashResult:
        """Equilibrium at temperature [K] and molar volume [m^3/mol] (translated when the fluid says so)."""
        c = self.volume_shift()
        res = _flash.flash_tv(self.mixture, t_k, v_m3_per_mol + c, self.zs, p_guess_pa,
                              self.single_phase_above_k() if len(self.ids) > 1 else float("inf"))
        return self._translated(res)

    def _translated(self, res: _flash.FlashResult) -> _flash.FlashResult:
        shift = self.enthalpy_shift(res.P) if res.converged else 0.0
        if shift:
            from dataclasses import replace

            res = replace(res, h=res.h + shift)
        return res
