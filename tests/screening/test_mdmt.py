"""MDMT from the exemption curves (jtcheck.screening.mdmt, jtcheck.material_mdmt).

Sources of the check values, named beside each:
* ASME BPVC VIII-1 (2019) Fig. UCS-66 / Table UCS-66 tabular values: recalled, not read ("from memory").
* ASME B31.3-2016 Fig. 323.2.2B General Notes (b) and (c), read from a public page of the standard
  (https://dnrweblink.state.co.us/DRMSSearch/0/doc/1336347/Page107.aspx).
* ASME BPVC VIII-1 UCS-68(c): 30 degF (17 degC) PWHT reduction, and the -55 degF bound for a ratio above
  0.35 ("from memory"; the same two rules are quoted in public software issue write-ups).
* /work/shared/REFERENCES.md: at 10 mm and below the curves start at about -8 (A), -29 (B) and -48 degC
  (C, D) ("from memory" there too).
"""
from __future__ import annotations

import math

import pytest
from hypothesis import given
from hypothesis import strategies as st

import jtcheck
from jtcheck.errors import InputError
from jtcheck.screening.findings import Outcome
from jtcheck.screening.mdmt import (
    Code,
    CurveTable,
    MaterialColdSpec,
    allowable_curve,
    material_mdmt,
    screen_pressure_path,
    shipped_curve_table,
    stress_ratio,
)

T0 = 273.15
IN = 0.0254


def c(t_k: float) -> float:
    return t_k - T0


def f_to_c(t_f: float) -> float:
    return (t_f - 32.0) / 1.8


# --- published values (to 1 degC: the curves are read to that precision) -------------------------------------

@pytest.mark.parametrize(("curve", "thickness_m", "expected_c", "source"), [
    # REFERENCES.md (from memory): at 10 mm and below about -8 (A), -29 (B), -48 degC (C and D)
    ("A", 0.010, -8.0, "REFERENCES.md, from memory"),
    ("B", 0.010, -29.0, "REFERENCES.md, from memory"),
    ("C", 0.010, -48.0, "REFERENCES.md, from memory"),
    ("D", 0.010, -48.0, "REFERENCES.md, from memory"),
    # Table UCS-66 tabular values at 1 in, from memory: A 68 degF, B 31 degF, C -3 degF, D -30 degF
    ("A", 1.0 * IN, f_to_c(68), "Table UCS-66 at 1 in, from memory"),
    ("B", 1.0 * IN, f_to_c(31), "Table UCS-66 at 1 in, from memory"),
    ("C", 1.0 * IN, f_to_c(-3), "Table UCS-66 at 1 in, from memory"),
    ("D", 1.0 * IN, f_to_c(-30), "Table UCS-66 at 1 in, from memory"),
    # SA-516 Gr 70 normalised (curve D) 2 in: -4 degF; not normalised (curve B) 2 in: 64 degF (from memory)
    ("D", 2.0 * IN, f_to_c(-4), "Table UCS-66 at 2 in, from memory"),
    ("B", 2.0 * IN, f_to_c(64), "Table UCS-66 at 2 in, from memory"),
])
def test_curve_values(curve, thickness_m, expected_c, source):
    assert abs(c(jtcheck.material_mdmt(curve, thickness_m).mdmt_k) - expected_c) <= 1.0, source


def test_b31_3_ratio_at_or_below_0_3_goes_to_minus_104():
    # ASME B31.3-2016 Fig. 323.2.2B General Note (b): no impact testing down to -104 degC (-155 degF) at ratio <= 0.3
    w = material_mdmt("B", 0.5 * IN, 0.3, code="B31.3")
    assert abs(c(w.mdmt_k) - (-104.0)) <= 1.0
    assert "low-stress" in w.basis


def test_b31_3_ratio_above_0_3_not_below_minus_48():
    # ASME B31.3-2016 Fig. 323.2.2B General Note (c): above 0.3, not below -48 degC (-55 degF)
    w = material_mdmt("D", 0.5 * IN, 0.31, code="B31.3")
    assert abs(c(w.mdmt_k) - (-48.0)) <= 1.0
    assert w.bound_k is not None


def test_viii_1_low_stress_threshold_is_0_35():
    # UCS-66(b)(3) (from memory): at 0.35 or less down to -155 degF (-104 degC to 1 degC; -105 degC in the SI edition)
    assert abs(c(material_mdmt("A", 1 * IN, 0.35).mdmt_k) - f_to_c(-155)) <= 1.0
    assert c(material_mdmt("A", 1 * IN, 0.36).mdmt_k) > -48.5


def test_pwht_credit_is_30_degF_and_bounded():
    # UCS-68(c) (from memory): 30 degF (17 degC) more when PWHT is done but not required
    plain = material_mdmt("B", 1 * IN)
    pwht = material_mdmt("B", 1 * IN, pwht_credit=True)
    assert abs((plain.mdmt_k - pwht.mdmt_k) - 30 / 1.8) < 1e-9
    # ... and not below -55 degF (-48 degC) with a ratio above 0.35 (UCS-66(b)(1), from memory)
    assert abs(c(material_mdmt("D", 0.5 * IN, 0.5, pwht_credit=True).mdmt_k) - f_to_c(-55)) < 1e-9


def test_reduction_worked_example_from_memory():
    # Curve B, 1 in: 31 degF; Fig. UCS-66.1 at a ratio of 0.8: 20 degF (from memory) -> 11 degF = -11.7 degC
    w = material_mdmt("B", 1 * IN, 0.8)
    assert abs(c(w.mdmt_k) - f_to_c(11)) <= 1.0
    assert abs(w.reduction_k - 20 / 1.8) <= 1.0


def test_impact_tested_material_takes_the_colder_of_test_and_curve():
    # UG-84 practice: an impact-tested material may be used down to its test temperature
    w = material_mdmt("B", 1 * IN, impact_test_temperature_k=T0 - 46)
    assert abs(c(w.mdmt_k) + 46) < 1e-9 and w.basis == "impact test"
    # a thick impact-tested material beyond the curves' range keeps its test temperature
    assert abs(c(material_mdmt("B", 0.15, impact_test_temperature_k=T0 - 46).mdmt_k) + 46) < 1e-9
    # thin curve D at a low ratio is colder than a -40 degC test: the curve result governs
    assert c(material_mdmt("D", 0.006, 0.3, impact_test_temperature_k=T0 - 40).mdmt_k) < -100


def test_working_names_curve_ratio_reduction():
    w = jtcheck.material_mdmt("B", 25.4e-3, 0.8)
    assert float(w) == w.mdmt_k
    assert w.curve == "B" and w.stress_ratio == 0.8 and w.curve_k is not None
    text = " ".join(w.steps)
    assert "Curve B" in text and "reduction" in text and "0.800" in text
    assert w.to_dict()["caution"].startswith("Exemption curves")


# --- properties that hold by construction ------------------------------------------------------------------------

thickness = st.floats(min_value=0.001, max_value=4 * IN)


@given(thickness, thickness)
def test_mdmt_rises_with_thickness_on_every_curve(t1, t2):
    lo, hi = sorted((t1, t2))
    for curve in "ABCD":
        assert material_mdmt(curve, lo).mdmt_k <= material_mdmt(curve, hi).mdmt_k


@given(thickness)
def test_curve_a_warmest_d_coldest(t):
    a, b, c_, d = (material_mdmt(x, t).mdmt_k for x in "ABCD")
    assert a >= b >= c_ >= d
    assert a > d


@given(st.floats(min_value=0.36, max_value=1.0), st.floats(min_value=0.36, max_value=1.0))
def test_reduction_zero_at_one_and_grows_as_ratio_falls(r1, r2):
    table = shipped_curve_table()
    for code in ("VIII-1", "B31.3"):
        assert material_mdmt("A", 1 * IN, 1.0, code=code).reduction_k == 0.0
        lo, hi = sorted((r1, r2))
        assert material_mdmt("A", 1 * IN, lo, code=code).reduction_k >= material_mdmt("A", 1 * IN, hi,
                                                                                   code=code).reduction_k
        assert material_mdmt("A", 1 * IN, lo, code=code).mdmt_k <= material_mdmt("A", 1 * IN, hi, code=code).mdmt_k
    assert table.reduction_k(Code.VIII_1, 0.9) > 0.0


@given(st.floats(min_value=1.0, max_value=5.0))
def test_no_reduction_at_or_above_one(r):
    assert material_mdmt("C", 1 * IN, r).mdmt_k == material_mdmt("C", 1 * IN).mdmt_k


# --- bad input names the field ------------------------------------------------------------------------------------

@pytest.mark.parametrize(("args", "kwargs", "field"), [
    (("E", 0.01), {}, "curve"),
    (("A", -0.01), {}, "thickness_m"),
    (("A", 0.2), {}, "thickness_m"),      # beyond 4 in: impact testing required
    (("A", None), {}, "thickness_m"),
    (("A", 0.01, -0.1), {}, "stress_ratio"),
    (("A", 0.01, math.nan), {}, "stress_ratio"),
    (("A", 0.01), {"code": "EN 13445"}, "code"),
    (("A", 0.01), {"code": "B31.3", "pwht_credit": True}, "pwht_credit"),
    ((None, None), {}, "curve"),
])
def test_bad_input_names_the_field(args, kwargs, field):
    with pytest.raises(InputError) as err:
        material_mdmt(*args, **kwargs)
    assert err.value.field == field


def test_table_checks_its_rows():
    rows = [dict(r) for r in shipped_curve_table().rows]
    bad = [dict(r) for r in rows]
    first_a = next(r for r in bad if r["table"] == "exemption" and r["curve"] == "A")
    first_a["value"] = "200"          # the curve would fall with thickness
    with pytest.raises(InputError):
        CurveTable(tuple(bad))
    without_rule = [r for r in rows if not (r["table"] == "rule" and r["curve"] == "reduced_floor")]
    with pytest.raises(InputError):
        CurveTable(tuple(without_rule))


# --- stress ratio and the coincident-pressure screening -----------------------------------------------------------

def test_stress_ratio_is_ug27_hoop_stress_over_allowable():
    # UG-27(c)(1): sigma = P (R + 0.6 t) / (E t) with R the inside radius; here D_o = 508 mm, t = 12.7 mm
    p_g = 50e5
    r_in = 0.508 / 2 - 0.0127
    sigma = p_g * (r_in + 0.6 * 0.0127) / 0.0127
    r = stress_ratio(p_g + 101325.0, p_atm_pa=101325.0, allowable_stress_pa=138e6, outside_diameter_m=0.508,
                     thickness_m=0.0127)
    assert r == pytest.approx(sigma / 138e6, rel=1e-12)
    assert stress_ratio(50000.0, p_atm_pa=101325.0, allowable_stress_pa=138e6, outside_diameter_m=0.508,
                        thickness_m=0.0127) == 0.0


def test_other_stress_is_added_to_the_pressure_stress():
    # B31.3 Fig. 323.2.2B General Note (a)(3): dead loads and displacement strain count as well
    kw = {"p_atm_pa": 101325.0, "allowable_stress_pa": 138e6, "outside_diameter_m": 0.508, "thickness_m": 0.0127}
    assert stress_ratio(101325.0, **kw, other_stress_pa=69e6) == pytest.approx(0.5)
    assert stress_ratio(20e5, **kw, other_stress_pa=30e6) == pytest.approx(stress_ratio(20e5, **kw) + 30 / 138)
    spec = MaterialColdSpec(curve="B", thickness_m=0.0127, allowable_stress_pa=138e6, outside_diameter_m=0.508,
                            other_stress_pa=69e6)
    lim = spec.limit_at(101325.0, 101325.0)          # no pressure, but half the allowable from other loads
    assert lim.stress_ratio == pytest.approx(0.5) and lim.limit_k > material_mdmt("B", 0.0127, 0.35).mdmt_k
    assert "69.0 MPa from other loads" in lim.working.steps[0]


SPEC = MaterialColdSpec(name="demo plate", curve="B", thickness_m=0.0254, allowable_stress_pa=138e6,
                        outside_diameter_m=0.6)


def test_allowable_falls_with_pressure():
    curve = allowable_curve(SPEC, 60e5, 101325.0)
    ts = curve["t_k"]
    assert all(b >= a for a, b in zip(ts, ts[1:], strict=False))
    assert ts[0] < ts[-1]


def test_path_fails_where_it_crosses_into_the_region_not_allowed():
    p_full = 101325.0 + 1.0 * 138e6 * 2 * 0.0254 / (0.6 - 0.8 * 0.0254)   # ratio 1
    t_curve = material_mdmt("B", 0.0254).mdmt_k
    # at full pressure just below the curve: fail
    s = screen_pressure_path([p_full, 2e5], [t_curve - 0.5, T0 - 80], SPEC, p_atm_pa=101325.0)
    assert s.outcome is Outcome.FAIL and s.worst_index == 0
    # the same cold temperature at low pressure is allowed (low-stress exemption), and the warm full-pressure point
    s = screen_pressure_path([p_full, 2e5], [t_curve + 20, T0 - 80], SPEC, p_atm_pa=101325.0, margin_k=5)
    assert s.outcome is Outcome.PASS
    s = screen_pressure_path([p_full], [t_curve + 2], SPEC, p_atm_pa=101325.0, margin_k=5)
    assert s.outcome is Outcome.MARGIN_ERODED


def test_path_fails_closed():
    s = screen_pressure_path([10e5, 5e5], [250.0, math.nan], SPEC, p_atm_pa=101325.0)
    assert s.outcome is Outcome.NOT_SCREENED
    s = screen_pressure_path([10e5], [250.0], SPEC, p_atm_pa=101325.0, converged=[False])
    assert s.outcome is Outcome.NOT_SCREENED
    # no curve and no typed limit: not screened
    s = screen_pressure_path([10e5], [250.0], MaterialColdSpec(name="bare"), p_atm_pa=101325.0)
    assert s.outcome is Outcome.NOT_SCREENED


def test_typed_limit_kept_and_warmer_governs():
    typed = MaterialColdSpec(typed_limit_k=T0 - 29)
    assert typed.limit_at(10e5, 101325.0).limit_k == T0 - 29
    assert typed.limit_at(10e5, 101325.0).basis == "typed limit"
    both = MaterialColdSpec(typed_limit_k=T0 - 29, curve="B", thickness_m=0.0254)
    lim = both.limit_at(10e5, 101325.0)
    assert lim.limit_k == material_mdmt("B", 0.0254).mdmt_k     # -0.6 degC is warmer than -29 degC
    assert "typed limit" in lim.basis and "exemption curve" in lim.basis
