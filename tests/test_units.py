"""Units: parsing, dimension checks at the boundary, the one shared registry, display."""

import pint
import pytest

import latticecalc
from latticecalc import Q_, ureg
from latticecalc.errors import DimensionError, InputError, LatticeCalcError
from latticecalc.units import check_dimension, format_number, format_quantity, parse, unit_text


@pytest.mark.parametrize(
    ("text", "expected", "unit", "magnitude"),
    [
        ("5 mm", "length", "m", 0.005),
        ("10 MPa", "pressure", "Pa", 10e6),
        ("1150 kg/m^3", "density", "kg/m^3", 1150.0),
        ("1150 kg/m³", "density", "kg/m^3", 1150.0),
        ("31.5 Hz", "frequency", "Hz", 31.5),
        ("65 µm/s", "velocity", "m/s", 65e-6),
        ("1 microinch/s", "velocity", "m/s", 2.54e-8),  # 1 in = 25.4 mm exactly (NIST SP 811, 2008, B.8)
    ],
)
def test_parse_text_with_units(text, expected, unit, magnitude):
    q = parse(text, name="x", expected=expected)
    assert q.to(unit).magnitude == pytest.approx(magnitude, rel=1e-12)


def test_shared_registry_is_the_package_registry():
    assert latticecalc.ureg is ureg
    assert Q_(1, "m")._REGISTRY is ureg
    assert parse("2 mm", name="x")._REGISTRY is ureg


def test_wrong_dimension_names_argument_expected_and_got():
    with pytest.raises(DimensionError) as info:
        parse("10 mm", name="youngs_modulus", expected="pressure")
    err = info.value
    assert isinstance(err, TypeError) and isinstance(err, LatticeCalcError)
    assert err.input_name == "youngs_modulus"
    assert "pressure" in err.expected
    assert "10 mm" in err.got
    assert "youngs_modulus" in str(err)


def test_plain_number_rejected_where_unit_needed():
    with pytest.raises(DimensionError, match="diameter"):
        check_dimension(3.0, name="diameter", expected="length")


def test_unreadable_text_is_input_error_with_file_and_line():
    with pytest.raises(InputError) as info:
        parse("5 furlongz", name="cell.width", expected="length", file="inputs.toml", line=7)
    assert isinstance(info.value, ValueError)
    assert "inputs.toml, line 7" in str(info.value)
    assert "cell.width" in str(info.value)


def test_empty_text_rejected():
    with pytest.raises(InputError):
        parse("  ", name="x", expected="length")


def test_practitioner_units():
    assert unit_text("MPa") == "MPa"
    assert unit_text("kg/m^3") == "kg/m³"
    assert unit_text("Hz") == "Hz"
    assert unit_text("mm/s") == "mm/s"


@pytest.mark.parametrize(
    ("x", "sig", "text"),
    [(259.4236, 4, "259.4"), (306796.0, 4, "306800"), (50.0, 4, "50"), (0.0123456, 3, "0.0123"),
     (1.23456e-5, 3, "1.23 × 10⁻⁵"), (0.0, 3, "0")],
)
def test_significant_figures(x, sig, text):
    assert format_number(x, sig) == text


def test_format_quantity_is_short():
    assert format_quantity(Q_(259.42361, "Hz")) == "259.4 Hz"
    assert isinstance(Q_(1, "Hz"), pint.Quantity)


def test_the_registry_remembers_parsed_unit_texts_and_forgets_them_on_a_new_definition():
    """Parsing is remembered (same container back) and a definition clears the memo (`common practice`
    for a cache: invalidate on change); conversions agree with pint's own (pint documentation, 0.25)."""
    from latticecalc.units import _Registry

    r = _Registry(cache_folder=None)
    first = r.parse_units_as_container("kg/m^3")
    assert r.parse_units_as_container("kg/m^3") is first
    assert r.Quantity(1.0, "kg/m^3").to("g/cm^3").magnitude == pytest.approx(1e-3, rel=1e-15)
    r.define("lcspan = 3 * metre")
    assert r.__dict__["_lc_parsed"] == {}
    assert r.Quantity(2.0, "lcspan").to("m").magnitude == pytest.approx(6.0, rel=1e-15)
