"""Values as an engineer writes them: significant figures, number-space-unit, powers of ten, no Python reprs.

Sources beside each check:

- BIPM, *The International System of Units (SI Brochure)*, 9th ed. (2019), §5.4: the value of a
  quantity is a number, a space and the unit (§5.4.3); a product of numbers takes a multiplication
  sign (×) or a half-high dot, and a power of ten is written with the × sign, not as ``e``
  (§5.4.4, §5.4.6); digits may be grouped in threes with a thin space (§5.4.4).  Subsection numbers
  from memory; the rules themselves are the Brochure's.
- significant figures and the choice of a unit prefix so the number reads plainly: common practice.
- the check sentences: the kit's own promise (a rendered check never states a relation the numbers
  contradict).
"""

from __future__ import annotations

import re

import numpy as np
import pytest
import sympy as sp

from latticecalc import Q_
from latticecalc.sheet.formula import Formula, explicit_products, number_latex, value_latex
from latticecalc.sheet.mathml import to_mathml
from latticecalc.sheet.render import band_notes, check_html, check_measure_text, check_relation_text
from latticecalc.sheet.step import check, evaluate
from latticecalc.units import (
    THIN_SPACE,
    format_number,
    format_quantity,
    format_value,
    group_digits,
    plain_numbers,
    readable_unit,
)

E_NOTATION = re.compile(r"\d[eE][+\-−]?\d")


@pytest.mark.parametrize(("x", "sig", "text"), [
    (259.4236, 4, "259.4"),          # common practice: 4 significant figures
    (0.0123456, 3, "0.0123"),        # common practice: leading zeros are not significant
    (306796.0, 4, "306800"),         # common practice: rounded, no exponent for a 6-digit number
    (-0.5, 3, "-0.5"),
    (0.0, 3, "0"),
])
def test_significant_figures(x, sig, text):
    assert format_number(x, sig) == text


def test_small_and_large_numbers_take_a_power_of_ten_with_the_times_sign():
    # SI Brochure (2019) §5.4: × 10ⁿ, never e-notation
    assert format_number(1.23456e-5, 3) == "1.23 × 10⁻⁵"
    assert format_number(4.2e9, 2) == "4.2 × 10⁹"
    assert not E_NOTATION.search(format_number(5.449e-05, 4))


def test_digit_grouping_uses_a_thin_space():
    # SI Brochure (2019) §5.4.4: groups of three digits separated by a thin space, not a comma or point
    assert group_digits("38900") == f"38{THIN_SPACE}900"
    assert format_number(306796.0, 4, group=True) == f"306{THIN_SPACE}800"
    assert group_digits("1234") == "1234"                          # four digits stay together
    assert group_digits("0.0001234", sep=" ") == "0.000 123 4"


def test_a_quantity_is_number_space_unit_in_its_own_unit():
    # SI Brochure (2019) §5.4.3: number, space, unit
    assert format_quantity(Q_(259.42361, "Hz")) == "259.4 Hz"
    assert format_quantity(Q_(0.15, "mm")) == "0.15 mm"          # a tolerance given in mm stays in mm
    assert format_quantity(Q_(20, "MPa")) == "20 MPa"


def test_a_value_that_would_need_an_exponent_gets_a_prefix_instead():
    # common practice: choose the prefix so the number reads plainly
    assert format_quantity(Q_(1.5e-4, "m")) == "0.15 mm"
    assert format_quantity(Q_(5.449e-5, "m/s")) == "54.49 µm/s"
    assert readable_unit(Q_(1e-9, "m/s")).units == Q_(1, "nm/s").units
    # a level in dB has no prefix: the power of ten stays, written with ×
    assert format_quantity(Q_(2.6e-4, "dB")) == "2.6 × 10⁻⁴ dB"


def test_arrays_are_listed_short_or_summarised_never_cut():
    assert format_quantity(Q_([39.25, 24.5], "Hz")) == "39.25, 24.5 Hz"
    levels = Q_(np.linspace(1.55e-7, 1.3e-4, 25), "m/s")
    assert format_quantity(levels) == "25 values from 0.155 to 130 µm/s"
    assert format_quantity(Q_(np.full(20, 50.0), "um/s")) == "20 values, all 50 µm/s"
    assert format_quantity(Q_(np.array([]), "Hz")) == "no values"
    assert "…" not in format_quantity(levels)


def test_no_python_reprs_for_booleans_lists_and_mappings():
    assert format_value(True) == "yes" and format_value(False) == "no"
    assert format_value(None) == "—"
    assert format_value([]) == "none"
    assert format_value([Q_(47, "Hz"), Q_(56, "Hz")]) == "47, 56 Hz"
    text = format_value({"tpu-90a-printed": {"name": "TPU 90A", "modulus_low_factor": {"value": 0.95}}})
    assert text == "tpu-90a-printed (1 entry)"
    for shown in (format_value(True), format_value([]), text):
        assert shown not in ("True", "False", "None", "[]") and "{'" not in shown


def test_program_written_e_notation_in_prose_is_rewritten():
    assert plain_numbers("sampling error about ±2.1e-06") == "sampling error about ±2.1 × 10⁻⁶"
    assert plain_numbers("Bragg frequency 1.1e+03") == "Bragg frequency 1100"
    assert plain_numbers("step fig.e-1 and x1e-3 stay") == "step fig.e-1 and x1e-3 stay"


def test_maths_shows_a_power_of_ten_not_e_notation():
    assert number_latex(1.5e-12) == r"1.5 \times 10^{-12}"
    mathml = to_mathml(value_latex(Q_(5.449e-5, "m/s")))
    assert "e-0" not in mathml and "µm/s" in mathml


def test_units_in_maths_are_text_not_latex_commands():
    latex = value_latex(Q_(1, "µin/s"))
    assert r"\mu" not in latex and "µin/s" in latex
    assert r"\mu" not in to_mathml(latex)


def test_long_vectors_in_maths_are_summarised_with_count_and_range():
    latex = value_latex(Q_(np.linspace(1.0, 250.0, 25), "Hz"))
    assert r"\text{25 values: }1 \ldots 250" in latex
    assert value_latex(Q_([1.0, 2.0], "Hz")) == r"\left[1, 2\right]\,\text{Hz}"


def test_a_bracketed_quantity_times_a_number_shows_the_multiplication_sign():
    # SI Brochure (2019) §5.4: a multiplication sign (or half-high dot) between numbers
    E, k = sp.symbols("E k")
    step = evaluate(Formula("E_dyn", E * k), id="x.dyn", description="dynamic modulus",
                    values={"E": Q_(20, "MPa"), "k": 1.3}, unit="MPa")
    sub = step.substitution_latex()
    assert r"\left(20\,\text{MPa}\right) \cdot 1.3" in sub
    assert explicit_products(r"2 \pi") == r"2 \pi"                   # a number and a symbol: no sign needed
    assert explicit_products(r"4.73^{2} \left(26\right)") == r"4.73^{2} \cdot \left(26\right)"


@pytest.mark.parametrize(("demand", "limit", "sense", "words"), [
    (Q_(155, "um/s"), Q_(50, "um/s"), "max", "155 µm/s exceeds the 50 µm/s limit"),
    (Q_(12, "mm"), Q_(20, "mm"), "max", "12 mm is within the 20 mm limit"),
    (Q_(55.2, "Hz"), Q_(51.7, "Hz"), "max", "55.2 Hz is above the 51.7 Hz limit"),
    (Q_(39.2, "Hz"), Q_(49.1, "Hz"), "min", "39.2 Hz is below the required 49.1 Hz"),
    (Q_(4.16, ""), Q_(3, ""), "min", "4.16 exceeds the required 3"),
])
def test_check_lines_state_the_actual_relation(demand, limit, sense, words):
    rec = check(id="c.x", description="a check", demand=demand, limit=limit, sense=sense).to_dict()
    assert check_relation_text(rec) == words
    line = check_html(rec)
    # no inequality sign at all, so none can be contradicted by the verdict
    assert "≤" not in line and "≥" not in line
    assert rec["verdict"] in line


def test_a_ratio_of_levels_is_not_shown_as_a_utilisation():
    rec = check(id="c.il", description="insertion loss", demand=Q_(-0.072, "dB"), limit=Q_(11.3, "dB"),
                sense="min").to_dict()
    assert rec["utilisation"] == float("inf")                        # the record's data field is unchanged
    text = check_measure_text(rec)
    assert text.startswith("short by 11.4 dB") and "inf" not in text and "utilisation" not in text
    ok = check(id="c.t", description="deflection", demand=Q_(12, "mm"), limit=Q_(20, "mm")).to_dict()
    assert check_measure_text(ok) == "utilisation 0.60"


def test_a_band_whose_edges_cross_is_named_as_no_band():
    low = check(id="cov.peak1-lower", description="above lower edge", demand=Q_(52.0, "Hz"),
                limit=Q_(54.32, "Hz"), sense="min").to_dict()
    high = check(id="cov.peak1-upper", description="below upper edge", demand=Q_(52.0, "Hz"),
                 limit=Q_(51.66, "Hz"), sense="max").to_dict()
    notes = band_notes([low, high])
    assert list(notes) == ["cov.peak1-upper"]
    assert "lower edge 54.32 Hz lies above the upper edge 51.66 Hz" in notes["cov.peak1-upper"]
    fine = check(id="cov.peak1-upper", description="below upper edge", demand=Q_(52.0, "Hz"),
                 limit=Q_(60.0, "Hz"), sense="max").to_dict()
    assert band_notes([low, fine]) == {}


def test_an_input_a_given_export_replaces_says_it_was_not_used():
    # the kit's own promise: the inputs table does not present a replaced value's template source as its source
    from latticecalc.project.export.html import _inputs_table, unused_inputs

    rows = [
        {"id": "coverage.target_peaks", "description": "Peaks the stop band must cover, used when no site-survey "
         "export is named", "text": "47, 56", "unit": "Hz", "value": [47.0, 56.0],
         "source": "example values; take them from a site survey"},
        {"id": "coverage.survey_results", "description": "JSON export of a site-survey project; its peaks to target "
         "replace coverage.target_peaks", "text": "../s/out/S-revA.json", "unit": "", "value": "../s/out/S-revA.json",
         "source": ""},
        {"id": "materials", "description": "Project materials", "text": "tpu (1 entry)", "unit": "",
         "value": {"tpu": {"name": "TPU 90A", "modulus_low_factor": {"value": 0.95, "source": "data sheet QP-90A"}}},
         "source": ""},
    ]
    unused = unused_inputs(rows)
    assert list(unused) == ["coverage.target_peaks"]
    assert unused["coverage.target_peaks"].startswith("not used: coverage.survey_results")
    html = _inputs_table(rows)
    assert "data sheet QP-90A" in html and "0.95" in html and "{'" not in html      # the mapping as a table
    rows[1]["value"] = rows[1]["text"] = ""
    assert unused_inputs(rows) == {}                                                # no export named: it is used
