"""Lists typed one item a line: flare header sections, settle-out volumes, credible cases switched off."""
from __future__ import annotations

import pytest

from jtcheck import itemlists
from jtcheck.errors import InputError

P_ATM = 101325.0


def test_header_sections_read_in_flow_order_in_si():
    text = "tailpipe; 2 barg; -46 degC; stainless\n\nknock-out drum; 0.2 barg; -29 degC; carbon steel\ntip; 1 atm; -"
    rows = itemlists.header_sections(text)
    assert [r["name"] for r in rows] == ["tailpipe", "knock-out drum", "tip"]
    assert rows[0]["p_pa"] == pytest.approx(2e5 + P_ATM)
    assert rows[1]["limit_k"] == pytest.approx(244.15) and rows[1]["material"] == "carbon steel"
    assert rows[2]["limit_k"] is None and rows[2]["p_pa"] == pytest.approx(P_ATM)


def test_a_batch_cell_separates_items_with_a_bar_and_a_list_of_lines_is_taken_as_is():
    assert len(itemlists.header_sections("a; 1 bara | b; 0.5 barg")) == 2
    assert len(itemlists.header_sections(["a; 1 bara", "b; 0.5 barg"])) == 2
    assert itemlists.header_sections(None) == [] and itemlists.header_sections("  \n ") == []


@pytest.mark.parametrize(("text", "field"), [
    ("knock-out drum", "header_sections[0]"), ("; 1 bara", "header_sections[0]"),
    ("a; 1 bara\nb; lots", "header_sections[1].pressure"), ("a; 1 bara; cold", "header_sections[0].limit"),
    ("a; 1 bara; -29 degC; cs; extra", "header_sections[0]")])
def test_a_bad_section_names_its_line_and_entry(text, field):
    with pytest.raises(InputError) as err:
        itemlists.header_sections(text)
    assert err.value.field == field


def test_settle_out_volumes():
    rows = itemlists.settle_out_volumes("V-1; 40 m3; 72 barg; 15 degC\nline; 3.5; 70 bara; 288.15 K")
    assert rows[0] == {"name": "V-1", "volume_m3": 40.0, "p_pa": pytest.approx(72e5 + P_ATM),
                       "t_k": pytest.approx(288.15)}
    assert rows[1]["volume_m3"] == 3.5 and rows[1]["p_pa"] == pytest.approx(70e5)
    for bad, field in (("V-1; -4 m3; 72 barg; 15 degC", "settle_out_volumes[0].volume_m3"),
                       ("V-1; 4 litres; 72 barg; 15 degC", "settle_out_volumes[0]"),
                       ("V-1; 4 m3; 72 barg", "settle_out_volumes[0]")):
        with pytest.raises(InputError) as err:
            itemlists.settle_out_volumes(bad)
        assert err.value.field == field


def test_credible_cases_switched_off_need_a_reason():
    assert itemlists.credible_off("start-up: the header is never depressured\nAmbient: buried, insulated line") == {
        "start_up": "the header is never depressured", "ambient": "buried, insulated line"}
    with pytest.raises(InputError) as err:
        itemlists.credible_off("heater_loss:")
    assert err.value.field == "credible_off.heater_loss"
    with pytest.raises(InputError, match="allowed: settle_out, start_up, heater_loss, ambient"):
        itemlists.credible_off("blackout: no")


def test_stored_items_read_back_as_the_same_lines():
    text = "tailpipe; 2 barg; -46 degC; stainless\nknock-out drum; 0.2 barg; -"
    rows = itemlists.header_sections(text)
    again = itemlists.header_sections(itemlists.header_sections_text(rows))
    assert [r["p_pa"] for r in again] == pytest.approx([r["p_pa"] for r in rows])
    assert itemlists.header_sections_text(rows) == text
    vols = itemlists.settle_out_volumes("V-1; 40 m3; 72 barg; 15 degC")
    assert itemlists.settle_out_volumes_text(vols) == "V-1; 40 m3; 72 barg; 15 degC"
    off = {"start_up": "never depressured"}
    assert itemlists.credible_off(itemlists.credible_off_text(off)) == off
    assert itemlists.credible_off(off) == off


def test_other_relief_sources():
    rows = itemlists.other_sources("PSV-4101; propane=0.95,n-butane=0.05; 25 kg/s; 18 barg; 15 degC")
    assert rows == [{"name": "PSV-4101", "composition": "propane=0.95,n-butane=0.05", "mass_flow_kg_per_s": 25.0,
                     "p_pa": pytest.approx(18e5 + P_ATM), "t_k": pytest.approx(288.15)}]
    assert itemlists.other_sources(itemlists.other_sources_text(rows))[0]["p_pa"] == pytest.approx(18e5 + P_ATM)
    with pytest.raises(InputError) as err:
        itemlists.other_sources("PSV-1; methane=1; -2 kg/s; 18 barg; 15 degC")
    assert err.value.field == "other_sources[0].mass_flow_kg_per_s"
