"""Parameters of a mixture under GERG-2008, and the tuple the compiled kernels take.

The constants are published facts of Kunz and Wagner, J. Chem. Eng. Data 57 (2012) 3032-3091 (ISO
20765-2), read from the NIST reference implementation of GERG-2008 (usnistgov/AGA8,
``AGA8CODE/C/GERG2008.cpp``) into the CSV files of ``data/`` (each file names its table and source):

- ``pure.csv``: the 21 components, molar masses, critical (reducing) temperatures and densities,
  ideal-gas constants;
- ``pure_terms.csv``: coefficients and exponents of the pure-fluid residual equations;
- ``binary_reducing.csv``: beta_v, gamma_v, beta_T, gamma_T of all 210 binary pairs;
- ``departure_terms.csv`` and ``departure_pairs.csv``: the seven binary-specific departure functions,
  the generalized one, and the weights F_ij of the 15 pairs that have one.

:func:`make_gerg_mixture` maps jtcheck component ids onto these and packs the flat parameter tuple of
:mod:`jtcheck.thermo.models.gerg2008.kernels` (layout documented there).
"""
from __future__ import annotations

import csv
import hashlib
import io
import math
from dataclasses import dataclass, field
from functools import cache
from importlib import resources

import numpy as np

from jtcheck.errors import InputError
from jtcheck.thermo.components import find_component
from jtcheck.thermo.models.conventions import T_REF
from jtcheck.thermo.models.gerg2008 import kernels

#: The 21 components of GERG-2008, as jtcheck component ids, in the order of Kunz and Wagner (2012).
GERG_COMPONENTS: tuple[str, ...] = (
    "methane", "nitrogen", "carbon dioxide", "ethane", "propane", "isobutane", "n-butane", "isopentane",
    "n-pentane", "n-hexane", "n-heptane", "n-octane", "n-nonane", "n-decane", "hydrogen", "oxygen",
    "carbon monoxide", "water", "hydrogen sulfide", "helium", "argon")

#: Normal range of validity of GERG-2008 (Kunz and Wagner 2012, section 7.4): T [K] and maximum P [Pa].
NORMAL_RANGE = {"t_min_k": 90.0, "t_max_k": 450.0, "p_max_pa": 35e6}
#: Extended range of validity of GERG-2008 (Kunz and Wagner 2012, section 7.4): T [K] and maximum P [Pa].
EXTENDED_RANGE = {"t_min_k": 60.0, "t_max_k": 700.0, "p_max_pa": 70e6}

#: Model name and version, for records.
MODEL_NAME = "GERG-2008 (Kunz and Wagner 2012, J. Chem. Eng. Data 57:3032; ISO 20765-2)"

_FILES = ("pure.csv", "pure_terms.csv", "binary_reducing.csv", "departure_terms.csv", "departure_pairs.csv")


@cache
def _data_text(filename: str) -> str:
    return resources.files(__package__).joinpath("data").joinpath(filename).read_text(encoding="utf-8")


def _rows(filename: str) -> list[dict[str, str]]:
    lines = [ln for ln in _data_text(filename).splitlines() if ln and not ln.startswith("#")]
    return list(csv.DictReader(io.StringIO("\n".join(lines))))


def data_version() -> str:
    """Identifies the GERG-2008 data files used: ``"gerg2008 sha256:<first 12 hex digits>"``."""
    h = hashlib.sha256()
    for f in _FILES:
        h.update(_data_text(f).encode("utf-8"))
    return f"gerg2008 sha256:{h.hexdigest()[:12]}"


@dataclass(frozen=True)
class _Tables:
    pure: dict            # id -> row dict (floats)
    terms: dict           # id -> list of (n, d, t, c)
    binary: dict          # (id_i, id_j) in GERG order -> (bv, gv, bt, gt)
    departure: dict       # function -> list of (n, d, t, eta, eps, beta, gamma, is_exp)
    pairs: dict           # frozenset({id_i, id_j}) -> (function, F)


@cache
def tables() -> _Tables:
    """The GERG-2008 constants read from ``data/`` (checked for completeness)."""
    pure = {}
    for r in _rows("pure.csv"):
        pure[r["id"]] = {k: (r[k] if k in ("gerg_name", "id") else float(r[k])) for k in r}
    if tuple(pure) != GERG_COMPONENTS:
        raise RuntimeError("gerg2008/data/pure.csv: components differ from GERG_COMPONENTS")
    terms: dict[str, list] = {c: [] for c in GERG_COMPONENTS}
    for r in _rows("pure_terms.csv"):
        terms[r["component"]].append((float(r["n"]), int(r["d"]), float(r["t"]), int(r["c"])))
    counts = {c: len(v) for c, v in terms.items()}
    expected = {c: 12 for c in GERG_COMPONENTS}
    expected.update({"methane": 24, "nitrogen": 24, "ethane": 24, "carbon dioxide": 22, "hydrogen": 14,
                     "water": 16})
    if counts != expected:
        raise RuntimeError(f"gerg2008/data/pure_terms.csv: term counts {counts} differ from {expected}")
    binary = {}
    for r in _rows("binary_reducing.csv"):
        binary[(r["component_i"], r["component_j"])] = (float(r["beta_v"]), float(r["gamma_v"]),
                                                        float(r["beta_t"]), float(r["gamma_t"]))
    if len(binary) != 210:
        raise RuntimeError("gerg2008/data/binary_reducing.csv: expected 210 pairs")
    departure: dict[str, list] = {}
    for r in _rows("departure_terms.csv"):
        departure.setdefault(r["function"], []).append(
            (float(r["n"]), int(r["d"]), float(r["t"]), float(r["eta"]), float(r["epsilon"]), float(r["beta"]),
             float(r["gamma"]), 1 if r["kind"] == "exp" else 0))
    pairs = {}
    for r in _rows("departure_pairs.csv"):
        pairs[frozenset((r["component_i"], r["component_j"]))] = (r["function"], float(r["f_ij"]))
    return _Tables(pure=pure, terms=terms, binary=binary, departure=departure, pairs=pairs)


@dataclass(frozen=True, eq=False)
class GergMixture:
    """Parameters of a mixture under GERG-2008 (no state, no solving).

    Build with :func:`make_gerg_mixture`.  Vectors are per component, in the order of ``ids``.

    Attributes
    ----------
    ids : tuple of str
        Component ids (jtcheck ids, each one of :data:`GERG_COMPONENTS`).
    tcs, pcs, omegas : numpy.ndarray
        Critical temperatures [K], critical pressures [Pa] and acentric factors [-] from jtcheck's
        component data (Wilson K-value starts of the flash algorithms).
    mws : numpy.ndarray
        Molar masses of GERG-2008 [kg/mol].
    tcs_gerg : numpy.ndarray
        Critical (reducing) temperatures of GERG-2008 [K].
    rhocs_gerg : numpy.ndarray
        Critical (reducing) densities of GERG-2008 [mol/m^3].
    kernel_params : tuple
        The parameter tuple ``prm`` of :mod:`jtcheck.thermo.models.gerg2008.kernels`; the flash
        kernels receive it unopened.
    """

    ids: tuple[str, ...]
    tcs: np.ndarray
    pcs: np.ndarray
    omegas: np.ndarray
    mws: np.ndarray
    tcs_gerg: np.ndarray = field(repr=False)
    rhocs_gerg: np.ndarray = field(repr=False)
    kernel_params: tuple = field(default=None, repr=False)

    @property
    def n(self) -> int:
        return len(self.ids)

    model = MODEL_NAME


def _resolve(cid: str) -> str:
    """The GERG-2008 component id of a jtcheck component id or synonym, or InputError."""
    key = str(cid).strip().lower()
    if key not in GERG_COMPONENTS:
        try:
            key = find_component(key).id
        except (InputError, KeyError, ValueError):
            key = None
    if key not in GERG_COMPONENTS:
        raise InputError("composition", f"component {cid!r} is not one of the 21 components of GERG-2008 "
                                        f"({', '.join(GERG_COMPONENTS)}); use a cubic equation of state "
                                        f"(PR or SRK) for it")
    return key


def _hyperbolic_reference(ns, ths):
    """The hyperbolic parts of h/R* [K] and s/R* [-] of one component at T_REF (see kernels.ideal_gas)."""
    hh = 0.0
    sh = 0.0
    for k in range(4):
        th = ths[k]
        if th == 0.0:
            continue
        u = th / T_REF
        if k in (0, 2):
            ct = 1.0 / math.tanh(u)
            hh += ns[k] * th * ct
            sh += ns[k] * (u * ct - math.log(math.sinh(u)))
        else:
            tn = math.tanh(u)
            hh -= ns[k] * th * tn
            sh += ns[k] * (math.log(math.cosh(u)) - u * tn)
    return hh, sh


def make_gerg_mixture(ids) -> GergMixture:
    """Assemble a :class:`GergMixture` for components ``ids`` (jtcheck ids, in the caller's order).

    Parameters
    ----------
    ids : sequence of str
        Component ids, each one of :data:`GERG_COMPONENTS` (synonyms that jtcheck's component data
        resolves to one of them are accepted); no repeats.

    Raises
    ------
    InputError
        A component that GERG-2008 does not hold (the message names it and lists the 21), or none.
    """
    ids = tuple(_resolve(c) for c in ids)
    if not ids:
        raise InputError("composition", "no components given; GERG-2008 needs at least one of "
                                        f"{', '.join(GERG_COMPONENTS)}")
    if len(set(ids)) != len(ids):
        raise InputError("composition", f"a component is given twice: {list(ids)}")
    tb = tables()
    n = len(ids)
    order = [GERG_COMPONENTS.index(c) for c in ids]
    tcs_r = np.array([tb.pure[c]["tc_k"] for c in ids])
    rhoc = np.array([tb.pure[c]["rhoc_mol_per_l"] * 1000.0 for c in ids])
    vcs_r = 1.0 / rhoc
    bv2 = np.ones((n, n))
    bt2 = np.ones((n, n))
    cv = np.zeros((n, n))
    ct = np.zeros((n, n))
    for a in range(n):
        for b in range(a + 1, n):
            ca, cb = ids[a], ids[b]
            if order[a] < order[b]:
                bv, gv, bt, gt = tb.binary[(ca, cb)]
            else:
                bv, gv, bt, gt = tb.binary[(cb, ca)]
                bv, bt = 1.0 / bv, 1.0 / bt
            bv2[a, b] = bv * bv
            bt2[a, b] = bt * bt
            bv2[b, a] = 1.0 / (bv * bv)
            bt2[b, a] = 1.0 / (bt * bt)
            cv[a, b] = cv[b, a] = 2.0 * bv * gv * (vcs_r[a] ** (1 / 3) + vcs_r[b] ** (1 / 3)) ** 3 / 8.0
            ct[a, b] = ct[b, a] = 2.0 * bt * gt * math.sqrt(tcs_r[a] * tcs_r[b])
    # distinct tau exponents
    tlist: list[float] = []

    def t_index(t: float) -> int:
        if t not in tlist:
            tlist.append(t)
        return tlist.index(t)

    p_own, p_n, p_d, p_ti, p_c = [], [], [], [], []
    for a, c in enumerate(ids):
        for nk, d, t, cc in tb.terms[c]:
            p_own.append(a)
            p_n.append(nk)
            p_d.append(d)
            p_ti.append(t_index(t))
            p_c.append(cc)
    q = {k: [] for k in ("fun", "n", "d", "ti", "eta", "eps", "beta", "gam", "exp")}
    pairs = []
    funs: list[str] = []
    for a in range(n):
        for b in range(a + 1, n):
            dep = tb.pairs.get(frozenset((ids[a], ids[b])))
            if dep is None:
                continue
            fun, F = dep
            if fun not in funs:
                funs.append(fun)
                for nk, d, t, eta, eps, beta, gam, is_exp in tb.departure[fun]:
                    q["fun"].append(len(funs) - 1)
                    q["n"].append(nk)
                    q["d"].append(d)
                    q["ti"].append(t_index(t))
                    q["eta"].append(eta)
                    q["eps"].append(eps)
                    q["beta"].append(beta)
                    q["gam"].append(gam)
                    q["exp"].append(is_exp)
            pairs.append((a, b, funs.index(fun), F))
    pairs_arr = np.array(pairs, dtype=float).reshape((len(pairs), 4))
    # groups of terms that share their delta dependence: pure-fluid terms and polynomial departure terms (c = 0)
    # with one (d, c) share delta^d exp(-delta^c); exponential departure terms with one (d, eta, epsilon, beta,
    # gamma) share delta^d exp(-eta (delta - epsilon)^2 - beta (delta - gamma)).  Each sum over delta is then
    # taken once per group, with the coefficients of its terms summed once per (tau, x) (kernels.level0_coefs).
    # Order: (d, c) groups sorted by c, then d, then the exponential groups sorted by their parameters, then d
    # (one exp per distinct c or parameter set).
    dc_keys = sorted({(c, d) for d, c in zip(p_d, p_c, strict=True)}
                     | {(0, d) for d, e in zip(q["d"], q["exp"], strict=True) if e == 0})
    q_par = list(zip(q["eta"], q["eps"], q["beta"], q["gam"], q["d"], strict=True))
    ex_keys = sorted({q_par[m] for m, e in enumerate(q["exp"]) if e == 1})
    g_index = {("dc",) + k: i for i, k in enumerate(dc_keys)}
    g_index.update({("ex",) + k: len(dc_keys) + i for i, k in enumerate(ex_keys)})
    p_grp = [g_index[("dc", c, d)] for d, c in zip(p_d, p_c, strict=True)]
    q_grp = [g_index[("ex",) + q_par[m]] if e == 1 else g_index[("dc", 0, q["d"][m])]
             for m, e in enumerate(q["exp"])]
    g_d = [k[1] for k in dc_keys] + [k[4] for k in ex_keys]
    g_c = [k[0] for k in dc_keys] + [-1] * len(ex_keys)
    g_par = np.array([[0.0] * 4 for _ in dc_keys] + [list(k[:4]) for k in ex_keys]).reshape((len(g_d), 4))
    ig_n3m1 = np.array([tb.pure[c]["n3"] - 1.0 for c in ids])
    ig_n = np.array([[tb.pure[c][k] for k in ("n4", "n5", "n6", "n7")] for c in ids]).reshape((n, 4))
    ig_th = np.array([[tb.pure[c][k] for k in ("th4_k", "th5_k", "th6_k", "th7_k")] for c in ids]).reshape((n, 4))
    refs = [_hyperbolic_reference(ig_n[a], ig_th[a]) for a in range(n)]
    ig_href = np.array([r[0] for r in refs])
    ig_sref = np.array([r[1] for r in refs])
    comps = [find_component(c) for c in ids]
    tcs = np.array([cp.tc_k for cp in comps], dtype=float)
    pcs = np.array([cp.pc_pa for cp in comps], dtype=float)
    omegas = np.array([cp.omega for cp in comps], dtype=float)
    polar = np.array([c == "water" for c in ids], dtype=np.bool_)
    mws = np.array([tb.pure[c]["molar_mass_g_per_mol"] / 1000.0 for c in ids])

    def i64(v):
        return np.ascontiguousarray(v, dtype=np.int64)

    def f64(v):
        return np.ascontiguousarray(v, dtype=np.float64)

    prm = (np.uint16(kernels.MARKER), f64(tcs_r), f64(vcs_r), f64(bv2), f64(cv), f64(bt2), f64(ct),
           i64(p_own), f64(p_n), i64(p_d), i64(p_ti), i64(p_c),
           i64(q["fun"]), f64(pairs_arr), f64(q["n"]), i64(q["d"]), i64(q["ti"]), f64(q["eta"]), f64(q["eps"]),
           f64(q["beta"]), f64(q["gam"]), i64(q["exp"]),
           f64(tlist), f64(ig_n3m1), f64(ig_n), f64(ig_th), f64(ig_href), f64(ig_sref),
           f64(tcs), f64(pcs), f64(omegas), polar,
           i64(p_grp), i64(q_grp), i64(g_d), i64(g_c), f64(g_par))
    return GergMixture(ids=ids, tcs=tcs, pcs=pcs, omegas=omegas, mws=mws, tcs_gerg=tcs_r, rhocs_gerg=rhoc,
                       kernel_params=prm)
