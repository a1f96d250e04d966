"""Findings are codes and figures; the verdict reads the codes, the words come at the edge.

Project convention (DEVELOPERS.md): no decision is made by matching the text of a message.
"""

import pytest

import ridesim as rs
from ridesim.assess import wording
from ridesim.assess.findings import CODES, Finding
from ridesim.jobs.check import check_scenario
from ridesim.scenario.load import scenario_from_dict


def test_every_code_has_its_words_and_nothing_else_does():
    assert set(wording._WORDS) == set(CODES)


def test_unknown_code_is_refused_with_the_choices():
    with pytest.raises(rs.InputError, match="finding code must be one of"):
        Finding("looks_fine")


def test_triangle_is_refused_by_the_interference_code():
    # An equilateral-triangle wheel hits the next arch (Hall & Wagon, "Roads and Wheels",
    # Mathematics Magazine 65(5), 1992): the verdict comes from the code, whatever the words.
    res = check_scenario(scenario_from_dict({"wheel": {"shape": "polygon", "sides": 3,
                                                       "apothem_m": 0.2}}))
    # (its tan(pi/3) = 1.73 friction demand exceeds the default 0.8 too: a second refusal).
    codes = [f.code for f in res.findings if f.blocks]
    assert codes[0] == "interference" and "friction_exceeded" in codes and not res.rollable
    d = res.to_dict()
    assert d["findings"][0]["code"] == "interference" and d["findings"][0]["blocks"] is True
    assert d["reasons"] == [wording.describe(f) for f in res.findings if f.blocks]
    # The cusps of a regular n-gon's track open at 2 pi/n... for n = 3 less than the right
    # angle a corner needs (Hall & Wagon 1992): the figure travels with the code.
    assert res.findings[0].data["cusp_opening_rad"] < 1.5707963


def test_thin_friction_margin_is_advice_not_a_refusal():
    # A regular hexagon's track needs tan(pi/6) = 0.577 of friction at steady speed (Hall &
    # Wagon 1992); a surface of 0.65 leaves less than the 20 % margin (common practice).
    res = check_scenario(scenario_from_dict({"wheel": {"shape": "polygon", "sides": 6,
                                                       "apothem_m": 0.12},
                                             "surface": {"friction": 0.65}}))
    (thin,) = [f for f in res.findings if f.code == "friction_margin_thin"]
    assert not thin.blocks and res.rollable
    assert thin.data["required"] == pytest.approx(0.5773502691896258, rel=1e-6)
