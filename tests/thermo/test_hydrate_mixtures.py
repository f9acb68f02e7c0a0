"""Hydrate equilibrium of binary gases by van der Waals-Platteeuw (Munck et al. 1988 parameters) against published
measurements: methane + propane, + ethane, + CO2, + nitrogen, + H2S (issue 13).

Data and where they were read
-----------------------------
``tests/thermo/data/hydrate_binary_mixtures.csv`` holds 332 three-phase points (hydrate + liquid water or ice + gas)
copied, values unchanged, from the NIST Clathrate Hydrate Physical Property Database (NIST Standard Reference Database
156, gashydrates.nist.gov) as saved in the public repository Romul-Bondarev/clathrate-hydrate, files
``nist_database/nist/<system>/Thermo<dataset>.csv`` (systems ``ch4+c3h8+h2o``, ``ch4+c2h6+h2o``, ``ch4+co2+h2o``,
``ch4+n2+h2o``, ``ch4+h2s+h2o``), read
with the project's search tool.  Each file names the paper of its dataset (below, as the file gives it); the
composition is the mole fraction of the named component in the gas, as the file gives it.

Datasets used: every three-phase hydrate + water (or ice) + gas set of those five systems, less
* the points at either end of a composition sweep that are a pure gas (the pure gases are checked in test_hydrate.py);
* sets with a hydrocarbon liquid (four-phase, or hydrate + water + hydrocarbon liquid), or without water (hydrate +
  gas), whose equilibrium the model does not compute: NIST datasets 366-368, 854-864, 875-876 (single points of pure
  methane), 133, 338, 971, 972;
* NIST dataset 970 (Seo, Lee and Yoon, J. Chem. Eng. Data 46 (2001) 381-384): the same measurements as dataset 337.

Criterion (issue 13): within the model's claimed range at least 90 % of the points within 1 K and none beyond 2 K.
Points outside the claimed pressure range (0.4-300 bar) must come back "not screened"; so must methane + H2S with more
than 3.2 mol% H2S, where the model missed the 2 K bar (the claimed range was narrowed there: see
:data:`jtcheck.thermo.hydrate.equilibrium.H2S_MIXTURE_MAX`).  A point measured with liquid water below the ice point
(metastable, supercooled water) is not a state the model claims (it takes ice, the stable phase, there) and is
reported apart.
"""
from __future__ import annotations

import csv
from pathlib import Path

import numpy as np
import pytest

import jtcheck
from jtcheck import Fluid
from jtcheck.thermo.hydrate import CHECKED_DEVIATION_K, equilibrium
from jtcheck.thermo.hydrate.equilibrium import H2S_MIXTURE_MAX, P_RANGE_PA

DATA = Path(__file__).parent / "data" / "hydrate_binary_mixtures.csv"
ICE_POINT_K = 273.15

#: NIST dataset -> the paper, as the NIST files name it.
PAPERS = {
    "1013": "Deaton and Frost, Gas hydrates and their relation to the operation of natural-gas pipe lines, "
            "US Department of the Interior (Bureau of Mines), 1946",
    "1014": "Deaton and Frost, 1946 (as dataset 1013)",
    "575": "Nixdorf and Oellrich, Fluid Phase Equilib. 139 (1997) 325-333",
    "574": "Nixdorf and Oellrich, Fluid Phase Equilib. 139 (1997) 325-333",
    "657": "Song and Kobayashi, Fluid Phase Equilib. 47 (1989) 295",
    "211": "McLeod and Campbell, J. Pet. Technol. (Trans. AIME 222) (1961) 590-594",
    "210": "McLeod and Campbell, J. Pet. Technol. (Trans. AIME 222) (1961) 590-594",
    "369": "Verma, Hand and Katz, GVC/AIChE Joint Meeting, Munich (1975), 10 pp (the NIST file gives the year 1974)",
    "873": "Thakore and Holder, Ind. Eng. Chem. Res. 26 (1987) 462-469 (hydrate sII, 275.15 K)",
    "874": "Thakore and Holder, Ind. Eng. Chem. Res. 26 (1987) 462-469 (hydrate sII, 278.15 K)",
    "132": "Holder and Grigoriou, J. Chem. Thermodyn. 12 (1980) 1093-1104",
    "481": "Subramanian, Kini, Dec and Sloan, Chem. Eng. Sci. 55 (2000) 1981-1999 (hydrate sI)",
    "482": "Subramanian, Kini, Dec and Sloan, Chem. Eng. Sci. 55 (2000) 1981-1999 (hydrate sII)",
    "10": "Ohgaki, Takano, Sangawa, Matsubara and Nakano, J. Chem. Eng. Jpn. 29 (1996) 478-483",
    "337": "Seo and Lee, J. Phys. Chem. B 105 (2001) 10084-10090",
    "425": "Unruh and Katz, J. Pet. Technol. (Trans. AIME) (1949) 83-86",
    "547": "Servio, Lagers, Peters and Englezos, Fluid Phase Equilib. 158-160 (1999) 795-800",
    "548": "Servio, Lagers, Peters and Englezos, Fluid Phase Equilib. 158-160 (1999) 795-800",
    "58": "Hachikubo, Miyamoto, Hyakutake, Abe and Shoji, 4th Int. Conf. on Gas Hydrates, Yokohama (2002) 357-360 "
          "(hydrate sI + ice)",
    "59": "Hachikubo et al. (2002), as dataset 58",
    "707": "Adisasmito, Frank and Sloan, J. Chem. Eng. Data 36 (1991) 68-71 (hydrate sI)",
    "314": "Mei, Liao, Yang and Guo, Ind. Eng. Chem. Res. 35 (1996) 4342-4347 (the set with pure water)",
    "573": "Nixdorf and Oellrich, Fluid Phase Equilib. 139 (1997) 325-333",
    "227": "Noaker and Katz, Petrol. Trans. AIME 201, 237-239, 1951 (as the NIST file gives it)",
}
SYSTEMS = ("methane+propane", "methane+ethane", "methane+carbon dioxide", "methane+nitrogen",
           "methane+hydrogen sulfide")


def _points() -> list[dict]:
    with DATA.open() as fh:
        rows = list(csv.DictReader(line for line in fh if not line.startswith("#")))
    out = []
    for row in rows:
        other = row["system"].split("+")[1]
        x = float(row["fraction"])
        x_other = x if row["given"] == other else 1.0 - x
        out.append({"system": row["system"], "dataset": row["dataset"], "water": row["water"],
                    "t_k": float(row["t_k"]), "p_pa": float(row["p_kpa"]) * 1e3,
                    "composition": {"methane": 1.0 - x_other, other: x_other}})
    return out


POINTS = _points()


def _claimed(pt: dict) -> bool:
    in_pressure = P_RANGE_PA[0] <= pt["p_pa"] <= P_RANGE_PA[1]
    metastable_water = pt["water"] == "liquid" and pt["t_k"] < ICE_POINT_K
    sour = pt["composition"].get("hydrogen sulfide", 0.0) > H2S_MIXTURE_MAX
    return in_pressure and not metastable_water and not sour


def _model(pt: dict) -> jtcheck.HydrateEquilibrium:
    return jtcheck.hydrate_temperature(Fluid(pt["composition"]), pt["p_pa"])


def _deviations(system: str) -> list[tuple[str, float, float, float]]:
    """(dataset, T [K], p [bar], model - measured [K]) of the points of ``system`` in the claimed range."""
    out = []
    for pt in POINTS:
        if pt["system"] == system and _claimed(pt):
            res = _model(pt)
            assert res.screened, (pt, res.reason)
            out.append((pt["dataset"], pt["t_k"], pt["p_pa"] / 1e5, float(res.t_k) - pt["t_k"]))
    return out


def test_every_dataset_names_its_paper():
    assert {pt["dataset"] for pt in POINTS} == set(PAPERS)
    assert {pt["system"] for pt in POINTS} == set(SYSTEMS)
    assert len(POINTS) == 332


@pytest.mark.parametrize(("system", "n_points"), [("methane+propane", 91), ("methane+ethane", 61),
                                                 ("methane+carbon dioxide", 129), ("methane+nitrogen", 14),
                                                 ("methane+hydrogen sulfide", 7)])
def test_none_beyond_2_k_in_the_claimed_range(system, n_points):
    devs = _deviations(system)
    assert len(devs) == n_points
    worst = max(devs, key=lambda d: abs(d[3]))
    assert abs(worst[3]) <= 2.0, worst
    # the deviation screening adds to the hydrate temperature covers every point
    assert abs(worst[3]) <= CHECKED_DEVIATION_K


@pytest.mark.parametrize("system", ["methane+propane", "methane+ethane", "methane+nitrogen",
                                    "methane+hydrogen sulfide"])
def test_90_percent_within_1_k(system):
    devs = _deviations(system)
    within = sum(abs(d[3]) <= 1.0 for d in devs) / len(devs)
    assert within >= 0.90, (f"{100 * within:.1f} % within 1 K",
                            [d for d in devs if abs(d[3]) > 1.0])


def test_methane_co2_within_1_k_share_as_reported():
    """Methane + CO2 misses the issue's 90 % within 1 K: 108 of 129 points (83.7 %), all within 2 K.  The misses are
    Unruh and Katz (1949), 14 of 17 points 1.0-1.6 K above the data (the model forms hydrate at a warmer temperature:
    the cautious side); Hachikubo et al. (2002) with ice, 4 of 6 points 1.1-1.8 K above; Servio et al. (1999) dataset
    547, 3 of 4 points 1.2-1.35 K below (the unsafe side, inside the 2 K screening adds).  Adisasmito et al. (1991),
    Ohgaki et al. (1996), Seo and Lee (2001) and Servio et al. dataset 548 all lie within 1 K.  This test pins the
    figures the README reports, so a change of the model that moves them is seen; the issue's bar stays open."""
    devs = _deviations("methane+carbon dioxide")
    within = sum(abs(d[3]) <= 1.0 for d in devs)
    assert (within, len(devs)) == (108, 129)
    unsafe = [d for d in devs if d[3] < -1.0]
    assert sorted(d[0] for d in unsafe) == ["547", "547", "547"]
    assert all(d[3] >= -1.5 for d in unsafe)


def test_the_claimed_range_of_the_data_excludes_only_high_pressure_sour_and_supercooled_water():
    left_out = [pt for pt in POINTS if not _claimed(pt)]
    high = [pt for pt in left_out if pt["p_pa"] > P_RANGE_PA[1]]
    sour = [pt for pt in left_out if pt["composition"].get("hydrogen sulfide", 0.0) > H2S_MIXTURE_MAX]
    rest = [pt for pt in left_out if pt not in high and pt not in sour]
    assert {pt["dataset"] for pt in high} == {"210", "211"} and len(high) == 16
    assert {pt["dataset"] for pt in sour} == {"227"} and len(sour) == 13
    assert [(pt["dataset"], pt["t_k"]) for pt in rest] == [("337", 272.66)]


def _sour_points() -> list[dict]:
    return [pt for pt in POINTS if pt["composition"].get("hydrogen sulfide", 0.0) > H2S_MIXTURE_MAX]


def test_methane_h2s_above_the_checked_h2s_is_not_screened():
    for pt in _sour_points():
        res = _model(pt)
        assert not res.screened and np.isnan(res.t_k) and "hydrogen sulfide" in res.reason, pt


def test_the_h2s_limit_is_needed(monkeypatch):
    """Without the limit the model would put methane + 7-22 mol% H2S (Noaker and Katz) up to 3 K warmer than the data:
    7 of 13 points beyond 2 K, all on the cautious side.  If a change of the model brings them within the bar, this
    test fails and the limit can go."""
    monkeypatch.setattr(equilibrium, "H2S_MIXTURE_MAX", 1.0)
    devs = [float(_model(pt).t_k) - pt["t_k"] for pt in _sour_points()]
    assert sum(d > 2.0 for d in devs) == 7 and max(devs) < 3.1 and min(devs) > 0.5


@pytest.mark.parametrize("dataset", ["210", "211"])
def test_above_300_bar_the_published_points_are_not_screened(dataset):
    # McLeod and Campbell (1961) measured up to 690 bar: beyond the checked 300 bar the model gives no number
    pts = [pt for pt in POINTS if pt["dataset"] == dataset and pt["p_pa"] > P_RANGE_PA[1]]
    for pt in pts:
        res = _model(pt)
        assert not res.screened and np.isnan(res.t_k) and "outside the model's checked range" in res.reason


def test_supercooled_water_point_lies_above_the_ice_branch_the_model_takes():
    """Seo and Lee (2001) measured hydrate with liquid water at 272.66 K, 15 bar, 40.7 % CO2: water supercooled below
    its freezing point.  The model takes ice there (the stable phase) and puts the hydrate 2.5 K colder; with ice the
    equilibrium is colder than with supercooled water, so where water stays liquid below 0 degC hydrate can form up to
    that much warmer than the model says (reported to the lead as a limit of the model)."""
    (pt,) = [pt for pt in POINTS if not _claimed(pt) and pt["p_pa"] <= P_RANGE_PA[1] and pt not in _sour_points()]
    res = _model(pt)
    assert res.screened and res.water_phase == "ice"
    assert -3.0 < float(res.t_k) - pt["t_k"] < -2.0


# Structures measured in these sets (Thakore and Holder 1987: sII for methane + propane; Adisasmito et al. 1991:
# sI for methane + CO2), which the model must give; Sloan and Koh (2008) ch. 2 for the same facts of the trade.
@pytest.mark.parametrize(("dataset", "structure"), [("873", "sII"), ("874", "sII"), ("707", "sI")])
def test_measured_structure(dataset, structure):
    for pt in POINTS:
        if pt["dataset"] == dataset:
            assert _model(pt).structure == structure, pt


# A natural gas of Deaton and Frost (1946), NIST dataset 1004 (nist_database/nist/ch4+c2h6+c3h8+co2+n2+h2o/
# Thermo1004.csv of the same repository), given as mole ratios to methane: ethane 0.0093, propane 0.019, nitrogen
# 0.0021, CO2 0.0062 (96.5 % methane).  (T [K], p [kPa]).
DEATON_FROST_GAS_RATIOS = {"ethane": 0.0093, "propane": 0.019, "nitrogen": 0.0021, "carbon dioxide": 0.0062}
_DF_TOTAL = 1.0 + sum(DEATON_FROST_GAS_RATIOS.values())
DEATON_FROST_GAS = {"methane": 1.0 / _DF_TOTAL, **{c: r / _DF_TOTAL for c, r in DEATON_FROST_GAS_RATIOS.items()}}
DEATON_FROST_GAS_DATA = [(273.7, 1262), (274.8, 1427), (274.8, 1420), (277.6, 2027), (280.4, 2854), (283.2, 4047),
                         (287.7, 7426), (289.8, 10328), (289.8, 10439)]


def _deaton_frost_gas_deviations() -> np.ndarray:
    res = jtcheck.hydrate_temperature(Fluid(DEATON_FROST_GAS), np.array([p for _, p in DEATON_FROST_GAS_DATA]) * 1e3)
    assert np.all(res.screened) and set(res.structure) == {"sII"}
    return res.t_k - np.array([t for t, _ in DEATON_FROST_GAS_DATA])


def test_deaton_frost_natural_gas_within_2_k_all_on_the_cautious_side():
    """The model puts this gas's hydrate 1.7 to 2.0 K warmer than the data (none within 1 K; the cautious side, inside
    the 2 K screening adds).  Read as given: with ethane and propane swapped the points would lie within 0.13 K, which
    suggests the stored ratios may be exchanged, but nothing read here says so (reported, not used)."""
    dev = _deaton_frost_gas_deviations()
    assert np.all(dev > 1.5) and np.all(dev <= 2.0), np.round(dev, 2)


def test_issue_13_check_pooled_over_all_published_points():
    """The issue's check as written, over every published point read: the pure gases and natural gases of
    test_hydrate.py, the binaries here and the Deaton-Frost natural gas (425 points): none beyond 2 K, but 379 within
    1 K, 89.2 %, short of the issue's 90 % (methane + CO2 and the Deaton-Frost gas miss it; both on the cautious side
    but for 3 points of Servio et al.).  The figures are pinned so a change of the model that moves them is seen; the
    90 % bar stays open."""
    from test_hydrate import _deviations as pure_and_natural_gas_deviations

    devs = np.concatenate([[d[3] for d in pure_and_natural_gas_deviations()],
                           [d[3] for system in SYSTEMS for d in _deviations(system)],
                           _deaton_frost_gas_deviations()])
    assert devs.size == 425
    assert int(np.sum(np.abs(devs) <= 1.0)) == 379
    assert np.max(np.abs(devs)) <= 2.0
