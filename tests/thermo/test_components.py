"""Specification of the component library and the binary interaction parameter table."""
from __future__ import annotations

import csv
import re
from importlib import resources

import numpy as np
import pytest

from jtcheck.errors import InputError, UnknownComponentError
from jtcheck.thermo.components import (
    COMPONENT_DATA_VERSION,
    FAMILIES,
    KIJ_DATA_VERSION,
    Component,
    KijSet,
    all_components,
    find_component,
    kij_matrix,
)
from jtcheck.thermo.idealgas import cp_ig

R = 8.314462618

REQUIRED_IDS = (
    "nitrogen", "oxygen", "argon", "helium", "hydrogen", "carbon monoxide", "carbon dioxide",
    "hydrogen sulfide", "sulfur dioxide", "water", "ammonia", "methanol", "ethanol", "monoethylene glycol",
    "methane", "ethane", "propane", "n-butane", "isobutane", "n-pentane", "isopentane", "neopentane",
    "n-hexane", "n-heptane", "n-octane", "n-nonane", "n-decane", "ethylene", "propylene", "1-butene",
    "benzene", "toluene", "cyclohexane", "r-134a", "r-32", "r-1234yf",
)


def _kij_rows() -> list[dict[str, str]]:
    text = resources.files("jtcheck.thermo").joinpath("data").joinpath("kij.csv").read_text(encoding="utf-8")
    return list(csv.DictReader(text.splitlines()))


# --- look-up -----------------------------------------------------------------------------------------

@pytest.mark.parametrize(
    ("key", "expected_id"),
    [
        ("methane", "methane"),                   # id
        ("Carbon dioxide", "carbon dioxide"),     # display name
        ("c1", "methane"),                        # synonym
        ("nC4", "n-butane"),
        ("ic4", "isobutane"),
        ("2-methylpropane", "isobutane"),
        ("MEG", "monoethylene glycol"),
        ("ethylene glycol", "monoethylene glycol"),
        ("hfc-134a", "r-134a"),
        ("MeOH", "methanol"),
        ("CO2", "carbon dioxide"),                # formula
        ("co2", "carbon dioxide"),
        ("H2S", "hydrogen sulfide"),
        ("N2", "nitrogen"),
        ("C3H8", "propane"),
        ("CH4", "methane"),
        ("74-82-8", "methane"),                   # CAS number
        ("7732-18-5", "water"),
    ],
)
def test_find_component_by_id_name_synonym_formula_or_cas(key, expected_id):
    assert find_component(key).id == expected_id


@pytest.mark.parametrize("key", ["carbon_dioxide", "Carbon-Dioxide", "CARBON DIOXIDE", "  carbon dioxide  ",
                                 "carbondioxide"])
def test_find_component_ignores_case_spaces_underscores_and_hyphens(key):
    assert find_component(key).id == "carbon dioxide"


@pytest.mark.parametrize(("key", "expected_id"), [("nbutane", "n-butane"), ("R134A", "r-134a"),
                                                   ("r134a", "r-134a"), ("N-Decane", "n-decane")])
def test_find_component_normalised_spellings(key, expected_id):
    assert find_component(key).id == expected_id


def test_unknown_component_raises_with_close_suggestions():
    with pytest.raises(UnknownComponentError) as info:
        find_component("metane", field="feed")
    err = info.value
    assert err.key == "metane"
    assert err.field == "feed"
    assert "methane" in err.suggestions
    assert 1 <= len(err.suggestions) <= 3
    assert "methane" in str(err)


def test_unknown_component_is_an_input_error_and_a_value_error():
    with pytest.raises(ValueError):
        find_component("unobtainium")
    with pytest.raises(InputError):
        find_component("unobtainium")


@pytest.mark.parametrize(
    ("formula", "choices"),
    [
        ("C4H10", {"n-butane", "isobutane"}),
        ("c5h12", {"n-pentane", "isopentane", "neopentane"}),
        ("C8H10", {"ethylbenzene", "o-xylene", "m-xylene", "p-xylene"}),
    ],
)
def test_formula_shared_by_isomers_is_refused_naming_the_choices(formula, choices):
    with pytest.raises(InputError) as info:
        find_component(formula)
    assert not isinstance(info.value, UnknownComponentError)
    for cid in choices:
        assert repr(cid) in str(info.value)


def _norm(key: str) -> str:
    return re.sub(r"[\s_-]", "", key.casefold())


def test_only_shared_formulas_are_ambiguous():
    owner: dict[str, str] = {}
    for c in all_components():
        for key in {_norm(k) for k in (c.id, c.name, c.cas, *c.synonyms)}:
            assert owner.setdefault(key, c.id) == c.id, f"{key!r} names {owner[key]!r} and {c.id!r}"
    for c in all_components():
        assert owner.get(_norm(c.formula), c.id) == c.id, f"formula of {c.id!r} is another component's name"


@pytest.mark.parametrize("bad", ["", "   ", None, 42])
def test_find_component_rejects_empty_or_non_string(bad):
    with pytest.raises(InputError):
        find_component(bad)


# --- library content ---------------------------------------------------------------------------------

def test_library_has_at_least_45_components_and_the_required_ones():
    comps = all_components()
    assert len(comps) >= 45
    ids = {c.id for c in comps}
    assert set(REQUIRED_IDS) <= ids
    assert all(isinstance(c, Component) for c in comps)


def test_ids_are_unique_lowercase_and_cas_numbers_unique():
    comps = all_components()
    assert len({c.id for c in comps}) == len(comps)
    assert len({c.cas for c in comps}) == len(comps)
    assert all(c.id == c.id.lower() for c in comps)


@pytest.mark.parametrize("comp", all_components(), ids=lambda c: c.id)
def test_cas_number_check_digit_is_valid(comp):
    digits = comp.cas.replace("-", "")
    assert re.fullmatch(r"\d{2,7}-\d{2}-\d", comp.cas)
    body, check = digits[:-1], int(digits[-1])
    assert sum(int(d) * (i + 1) for i, d in enumerate(reversed(body))) % 10 == check


@pytest.mark.parametrize("comp", all_components(), ids=lambda c: c.id)
def test_every_row_names_its_sources(comp):
    for source in (comp.crit_source, comp.zra_source, comp.triple_source, comp.cp_source):
        assert source.strip()
    assert comp.family in FAMILIES


@pytest.mark.parametrize("comp", all_components(), ids=lambda c: c.id)
def test_constants_are_physically_sane(comp):
    assert 1.0 < comp.molar_mass_g_per_mol < 300.0
    assert comp.molar_mass_kg_per_mol == pytest.approx(comp.molar_mass_g_per_mol / 1000.0)
    assert 0.0 < comp.t_triple_k < comp.tc_k < 1000.0
    assert 1e5 < comp.pc_pa < 3e7
    assert -0.5 < comp.omega < 1.5
    assert 1e-5 < comp.vc_m3_per_mol < 1e-3
    assert 0.0 < comp.zc < 0.4
    assert comp.zc == pytest.approx(comp.pc_pa * comp.vc_m3_per_mol / (R * comp.tc_k), rel=1e-3)
    assert 0.2 < comp.zra < 0.35
    assert comp.p_triple_pa is None or 0.0 < comp.p_triple_pa < comp.pc_pa


@pytest.mark.parametrize("comp", all_components(), ids=lambda c: c.id)
def test_heat_capacity_fit_is_sane_from_50_to_1500_k(comp):
    assert comp.cp_a > 0.0
    assert comp.cp_c > 0.0 and comp.cp_e > 0.0
    assert 0.0 < comp.cp_tmin_k < comp.cp_tmax_k <= 1000.0
    T = np.linspace(50.0, 1500.0, 300)
    cp = cp_ig(T, *(np.array([getattr(comp, k)]) for k in ("cp_a", "cp_b", "cp_c", "cp_d", "cp_e")))[:, 0]
    assert np.all(cp >= 2.5 * R * 0.999)                        # never below the monatomic value
    assert np.all(np.diff(cp) >= -1e-9 * cp[1:])               # no wiggles: non-decreasing in T
    max_dev = float(re.search(r"max dev ([0-9.]+) %", comp.cp_source).group(1))
    assert max_dev < 0.3


def test_data_versions_identify_the_files():
    assert re.fullmatch(r"components\.csv sha256:[0-9a-f]{12}", COMPONENT_DATA_VERSION)
    assert re.fullmatch(r"kij\.csv sha256:[0-9a-f]{12}", KIJ_DATA_VERSION)


def test_all_components_is_cached_and_immutable():
    assert all_components() is all_components()
    with pytest.raises(AttributeError):
        all_components()[0].tc_k = 1.0  # type: ignore[misc]


# --- binary interaction parameters -------------------------------------------------------------------

def test_kij_matrix_is_symmetric_with_zero_diagonal():
    kset = kij_matrix(["methane", "carbon dioxide", "nitrogen", "hydrogen sulfide", "propane"], "PR")
    assert isinstance(kset, KijSet)
    assert kset.matrix.shape == (5, 5)
    assert np.array_equal(kset.matrix, kset.matrix.T)
    assert np.all(np.diag(kset.matrix) == 0.0)
    assert not kset.matrix.flags.writeable


def test_kij_known_pair_equals_table_entry():
    # Knapp et al. (1982), DECHEMA Chemistry Data Series Vol. VI, p399 (via the ChemSep PR compilation):
    # methane/carbon dioxide kij = 0.0978
    kset = kij_matrix(["CO2", "C1"], "pr")
    assert kset.ids == ("carbon dioxide", "methane")
    assert kset.matrix[0, 1] == pytest.approx(0.0978, abs=0)
    assert kset.sources[0][:3] == ("carbon dioxide", "methane", 0.0978)
    assert "Knapp" in kset.sources[0][3] and "p399" in kset.sources[0][3]
    assert kset.defaulted == ()


def test_kij_does_not_depend_on_component_order():
    a = kij_matrix(["nitrogen", "methane", "ethane"], "PR")
    b = kij_matrix(["ethane", "methane", "nitrogen"], "PR")
    assert a.matrix[0, 1] == b.matrix[2, 1]
    assert a.matrix[0, 2] == b.matrix[2, 0]


def test_kij_missing_pair_is_zero_and_listed_as_defaulted():
    kset = kij_matrix(["helium", "r-134a", "methane"], "PR")
    assert kset.matrix[0, 1] == 0.0
    assert ("helium", "r-134a") in kset.defaulted
    assert ("helium", "methane") in kset.defaulted


@pytest.mark.parametrize("eos", ["RK", "VDW", "vdw"])
def test_kij_for_eos_without_table_is_all_zero_and_all_defaulted(eos):
    kset = kij_matrix(["methane", "carbon dioxide", "nitrogen"], eos)
    assert np.all(kset.matrix == 0.0)
    assert kset.sources == ()
    assert len(kset.defaulted) == 3


def test_kij_unknown_eos_lists_the_valid_ones():
    with pytest.raises(InputError) as info:
        kij_matrix(["methane", "ethane"], "BWRS")
    assert info.value.field == "eos"
    for name in ("PR", "SRK", "RK", "VDW"):
        assert name in str(info.value)


def test_kij_table_rows_are_sorted_sourced_and_known():
    ids = {c.id for c in all_components()}
    rows = _kij_rows()
    assert rows
    for row in rows:
        assert row["eos"] in ("PR", "SRK")
        assert row["id_1"] in ids and row["id_2"] in ids
        assert row["id_1"] < row["id_2"]
        assert row["source"].strip()
        assert -1.0 < float(row["kij"]) < 1.0


def test_every_pr_row_is_used_when_all_components_are_present():
    everything = [c.id for c in all_components()]
    kset = kij_matrix(everything, "PR")
    n_rows = sum(1 for r in _kij_rows() if r["eos"] == "PR")
    assert len(kset.sources) == n_rows
    assert len(kset.sources) + len(kset.defaulted) == len(everything) * (len(everything) - 1) // 2


@pytest.mark.parametrize(
    ("id_1", "id_2"),
    [
        ("carbon dioxide", "methane"), ("methane", "nitrogen"), ("carbon dioxide", "nitrogen"),
        ("carbon dioxide", "hydrogen sulfide"), ("hydrogen sulfide", "nitrogen"), ("carbon dioxide", "water"),
        ("hydrogen", "methane"), ("carbon dioxide", "propane"),
    ],
)
def test_pr_table_covers_the_pairs_that_matter_most(id_1, id_2):
    kset = kij_matrix([id_1, id_2], "PR")
    assert kset.defaulted == ()
    assert kset.matrix[0, 1] != 0.0


def test_the_data_cite_primary_sources_and_keep_the_compilations_attribution():
    """Issue 18 item 10: what users see (the source columns) cites papers and data collections, never the
    compilation or library the value was taken from; that goes to compiled_from, and the compilation's licence
    and attribution stay beside the data file."""
    from importlib.resources import files

    from jtcheck.thermo.components import _kij_table

    third_party = ("ChemSep", "CoolProp", "chemicals 1.5", "thermo 0.6", "as distributed with")
    for c in all_components():
        for text in (c.crit_source, c.zra_source, c.triple_source, c.cp_source):
            assert text and not any(word in text for word in third_party), (c.id, text)
    for (eos, a, b), (_, source) in _kij_table().items():
        assert source.startswith("Knapp, Doring, Oellrich, Plocker and Prausnitz (1982)"), (eos, a, b, source)
        assert not any(word in source for word in third_party), source
    data = files("jtcheck.thermo") / "data"
    notice = (data / "DATA_NOTICE.md").read_text()
    assert "Kooijman" in notice and "Artistic License 2.0" in notice and "ChemSep" in notice
    assert "Artistic License 2.0" in (data / "ChemSep_Artistic_license_2_0.txt").read_text()
