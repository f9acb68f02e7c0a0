"""Water columns of a letdown list (issue 13): the water content (mg/Sm3 or lb/MMscf) or the water dew point, with
the saturated-at-inlet default (conservative) when neither is given; read into the row's case inputs and shown in
the results."""
from __future__ import annotations

import csv
import io

import pytest

from jtcheck.batch.layout import COLUMN_BY_KEY, WATER_DEFAULT, layout_markdown
from jtcheck.batch.reader import read_cases
from jtcheck.batch.writer import write_results
from jtcheck.screening.batch import screen_batch

GAS = "methane=0.9,ethane=0.06,propane=0.04"
HEADER = ["tag", "fluid", "inlet pressure [barg]", "inlet temperature [degC]", "outlet pressure [barg]",
          "MDMT [degC]", "water saturated", "water content [lb/MMscf]", "water dew point [degC]"]
#: 1 lb/MMscf in mg/Sm3: 453592.37 mg per 28316.846592 m3 (10^6 ft3); exact by definition of the units.
LB_PER_MMSCF = 453592.37 / 28316.846592


def _csv(rows) -> bytes:
    out = io.StringIO()
    w = csv.writer(out)
    w.writerow(HEADER)
    w.writerows(rows)
    return out.getvalue().encode()


def test_the_layout_shows_the_saturated_at_inlet_default():
    for key in ("water_content", "water_dew_point"):
        assert COLUMN_BY_KEY[key].default == WATER_DEFAULT
    md = layout_markdown(notes=False)
    assert "`water content [unit]` | no | mg/Sm3, lb/MMscf | saturated at inlet (conservative)" in md
    assert "`water dew point [unit]` | no" in md


def test_water_content_in_either_unit_and_dew_point_are_read_in_si():
    result = read_cases(_csv([["A", GAS, 100, 40, 40, -29, "", 7, ""],
                              ["B", GAS, 100, 40, 40, -29, "", "110 mg/Sm3", ""],
                              ["C", GAS, 100, 40, 40, -29, "", "", -10],
                              ["D", GAS, 100, 40, 40, -29, "yes", "", ""]]), filename="w.csv")
    assert not result.errors
    a, b, c, d = result.cases
    assert a.extras["water_content_kg_per_sm3"] == pytest.approx(7 * LB_PER_MMSCF * 1e-6)
    assert b.extras["water_content_kg_per_sm3"] == pytest.approx(110e-6)
    assert c.extras["water_dew_point_k"] == pytest.approx(263.15)
    assert "water_content_kg_per_sm3" not in d.extras and "water_dew_point_k" not in d.extras
    # a row with water inputs is screened by its case kind (the scalar path), never by a cheaper method
    assert not a.vectorised and not c.vectorised


@pytest.mark.parametrize(("content", "dew", "column", "words"), [
    (7, -10, "water dew point [degC]", "not both"),
    (-5, "", "water content [lb/MMscf]", "above 0"),
    ("7 g/m3", "", "water content [lb/MMscf]", "mg/Sm3 or lb/MMscf"),
])
def test_bad_water_cells_are_reported_on_their_column(content, dew, column, words):
    result = read_cases(_csv([["A", GAS, 100, 40, 40, -29, "", content, dew]]), filename="w.csv", keep_going=True)
    assert not result.cases
    (err,) = result.errors
    assert err.column == column and words in err.reason


def test_the_results_show_the_water_basis_and_screen_the_rows_for_hydrates():
    result = read_cases(_csv([["A", GAS, 100, 40, 40, -29, "", 7, ""],
                              ["B", GAS, 100, 40, 40, -29, "yes", "", ""],
                              ["C", GAS, 100, 40, 40, -29, "", "", ""]]), filename="w.csv")
    screening = screen_batch(result.cases)
    rows = list(csv.reader(io.StringIO(write_results(screening, result, "csv").decode("utf-8-sig"))))
    col = rows[0].index("water basis")
    assert [r[col] for r in rows[1:]] == ["water content 112.1 mg/Sm3", f"{WATER_DEFAULT}: the default",
                                          "no water given: not screened for hydrates"]
    hydrate = [[f for f in r.findings if f["topic"] == "hydrates"][0]["message"] for r in screening.rows]
    assert not hydrate[0].startswith("Not screened") and "gas carries 112 mg/Sm3" not in hydrate[2]
    assert hydrate[2].startswith("Not screened for hydrates: the fluid holds no water")
