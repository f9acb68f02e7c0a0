"""The hydrate curve on the P-T diagram (issue 13): the model's own temperatures, drawn with the letdown path."""
from __future__ import annotations

import numpy as np

import jtcheck
from jtcheck.reports.charts import ChartUnits, ColdLines, LetdownEnds, draw_pt_diagram, pt_diagram_data

LEAN = (("methane", 0.9), ("ethane", 0.06), ("propane", 0.03), ("carbon dioxide", 0.01))


def test_the_curve_is_the_models_and_is_drawn():
    ends = [LetdownEnds("normal", True, 80e5, 300.0, 30e5, 280.0)]
    data = pt_diagram_data((LEAN, "PR", None), ends, ColdLines(governing_k=250.0), ChartUnits())
    h = data.hydrate
    assert h is not None and len(h.t_k) >= 20
    assert min(h.p_pa) <= 30e5 * 0.71 and max(h.p_pa) >= 80e5
    again = jtcheck.hydrate_temperature(jtcheck.Fluid(list(LEAN)), np.array(h.p_pa))
    assert np.allclose(again.t_k, h.t_k, atol=1e-9)
    assert h.method == jtcheck.thermo.hydrate.METHOD_NAME
    assert "hydrate curve" in draw_pt_diagram(data, text_as_paths=False)


def test_no_curve_for_a_fluid_without_hydrate_formers():
    ends = [LetdownEnds("normal", True, 80e5, 300.0, 30e5, 280.0)]
    data = pt_diagram_data(((("hydrogen", 1.0),), "PR", None), ends, ColdLines(), ChartUnits())
    assert data.hydrate is None
