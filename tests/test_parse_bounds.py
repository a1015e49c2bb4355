"""Bounded parsing of quantities: text that could make a parser slow, and non-finite or non-positive values.

Basis: common practice for input validation (check text against a small grammar, with length caps,
before a general-purpose parser sees it; refuse NaN and infinity where a physical value belongs).
A frequency is a rate of cycles, so a negative or zero one in an inputs file is a typing error
(common practice). These are behaviour tests: no published source gives the numbers.

Texts that once made the parser run for minutes are parsed in a child process, whose timeout is
only a hang guard (generous, not a timing assertion): the test fails instead of hanging the suite.
"""

from __future__ import annotations

import math
import shutil
import subprocess
import sys
import textwrap
from pathlib import Path

import pytest

from latticecalc.errors import InputError
from latticecalc.project.inputs import load_inputs
from latticecalc.project.schema import load_template_spec
from latticecalc.project.templates import templates_root
from latticecalc.units import MAX_QUANTITY_CHARS, MAX_UNIT_EXPONENT, parse

#: Seconds a child process gets to start Python, import the kit and refuse one text (hang guard).
HANG_GUARD_SECONDS = 60

HUNDRED_THOUSAND_DIGITS = "1" * 100_000

_CHILD = textwrap.dedent("""
    import sys
    from latticecalc.errors import InputError
    from latticecalc.units import parse
    text = sys.stdin.read()
    try:
        parse(text, name="cell.width", expected="length", file="inputs.toml", line=7)
    except InputError as exc:
        print("refused:", str(exc)[:300])
    else:
        print("accepted")
""")


def _parse_in_child(text: str) -> str:
    try:
        done = subprocess.run([sys.executable, "-c", _CHILD], input=text, capture_output=True, text=True,
                              timeout=HANG_GUARD_SECONDS)
    except subprocess.TimeoutExpired:
        pytest.fail(f"parsing {text[:30]!r}… did not return within {HANG_GUARD_SECONDS} s (hang guard)")
    assert done.returncode == 0, done.stderr[-2000:]
    return done.stdout


@pytest.mark.parametrize(
    "text",
    [
        "9**9**9 mm",  # a power tower: evaluating it builds an integer of ~370 million digits
        HUNDRED_THOUSAND_DIGITS + " mm",
        "0." + HUNDRED_THOUSAND_DIGITS + " mm",
        "1e" + "9" * 100_000 + " mm",
    ],
    ids=["power-tower", "100000-digit-integer", "100000-digit-decimal", "100000-digit-exponent"],
)
def test_text_that_could_stall_the_parser_is_refused_promptly(text):
    # common practice: bounded grammar and length caps before the general parser
    out = _parse_in_child(text)
    assert out.startswith("refused:"), out
    assert "cell.width" in out and "inputs.toml, line 7" in out
    assert len(out) < 1000  # the message quotes the start of the text, never all of it


@pytest.mark.parametrize(
    ("text", "why"),
    [
        ("9**9", "unit name"),
        ("5 m**9**9", "unit name"),
        ("5 m^99", "exponent"),
        ("5 ((((m))))", "nested"),
        ("5 (m", "parenthesis"),
        ("5 m)", "parenthesis"),
        ("5 m 2", "unexpected"),
        ("mm", "number"),
        ("1" * (MAX_QUANTITY_CHARS + 1), "too long"),
    ],
)
def test_text_outside_the_grammar_is_refused_with_the_reason(text, why):
    # common practice: a number, then unit names joined by *, /, or spaces, small exponents
    with pytest.raises(InputError) as info:
        parse(text, name="x", file="inputs.toml", line=3)
    assert why in str(info.value)
    assert "inputs.toml, line 3" in str(info.value)


@pytest.mark.parametrize(
    ("text", "unit", "magnitude"),
    [
        ("5 mm", "m", 0.005),
        ("-47 Hz", "Hz", -47.0),  # parse reads the sign; a frequency input refuses it at validation
        ("+5 mm", "mm", 5.0),
        (".5 mm", "mm", 0.5),
        ("5mm", "mm", 5.0),
        ("1e-9 m/s", "m/s", 1e-9),
        ("1150 kg/m^3", "kg/m^3", 1150.0),
        ("1150 kg/m³", "kg/m^3", 1150.0),
        ("1150 kg m^-3", "kg/m^3", 1150.0),
        ("1150 kg*m**-3", "kg/m^3", 1150.0),
        ("20 m/s²", "m/s^2", 20.0),
        ("0.001 MN*m", "N*m", 1000.0),
        ("5 N·m", "N*m", 5.0),
        ("2 (m/s)^2", "m^2/s^2", 2.0),
        ("2 m^(2)", "m^2", 2.0),
        ("1/s", "Hz", 1.0),
        ("65 µm/s", "m/s", 65e-6),
        ("3 Hz^0.5", "Hz^0.5", 3.0),
        ("5 %", "", 0.05),
        ("2.5", "", 2.5),
    ],
)
def test_the_ways_practitioners_write_quantities_still_parse(text, unit, magnitude):
    # conversions are exact by definition of the SI prefixes (common practice)
    assert parse(text, name="x").to(unit).magnitude == pytest.approx(magnitude, rel=1e-12)


def test_the_largest_allowed_unit_exponent_parses():
    # the cap is on the exponent's size, not on its use (common practice)
    assert parse(f"1 m^{MAX_UNIT_EXPONENT}", name="x").to(f"m^{MAX_UNIT_EXPONENT}").magnitude == 1


@pytest.mark.parametrize("text", ["nan mm", "NaN", "inf Hz", "-inf Hz", "Infinity m", "1e999 mm"])
def test_non_finite_text_is_refused_naming_input_file_and_line(text):
    # common practice: NaN and infinity are not measurements
    with pytest.raises(InputError) as info:
        parse(text, name="cell.width", expected="length", file="inputs.toml", line=12)
    err = info.value
    assert "finite" in str(err)
    assert err.input_name == "cell.width" and err.file == "inputs.toml" and err.line == 12


@pytest.mark.parametrize("value", [math.nan, math.inf, -math.inf, 10**400], ids=["nan", "inf", "-inf", "10**400"])
def test_non_finite_or_overflowing_numbers_are_refused(value):
    # common practice: a plain number must convert to a finite float
    with pytest.raises(InputError, match="finite"):
        parse(value, name="factor", file="inputs.toml", line=4)


# --- through inputs.toml --------------------------------------------------------------------------
_TEMPLATE = """\
[about]
name = "bounds"
title = "Bounds"
purpose = "inputs for parse-bound tests"
notebooks = ["a.ipynb"]

[given."cell.width"]
meaning = "Cell width"
form = "quantity"
dimension = "length"

[given."signal.rate"]
meaning = "Sample rate"
form = "quantity"
dimension = "frequency"

[given."signal.highpass"]
meaning = "High-pass, 0 Hz for none"
form = "quantity"
dimension = "frequency"
at_least = "0 Hz"

[given."signal.peaks"]
meaning = "Measured peaks"
form = "quantities"
dimension = "frequency"

[given."signal.factor"]
meaning = "Threshold factor"
form = "number"
"""

_INPUTS = """\
# test inputs
[cell]
width = "40 mm"

[signal]
rate = "1000 Hz"
highpass = "0 Hz"
peaks = ["35 Hz", "47 Hz"]
factor = 3.0
"""


@pytest.fixture
def bounds(tmp_path) -> tuple[Path, object]:
    (tmp_path / "template.toml").write_text(_TEMPLATE)
    (tmp_path / "inputs.toml").write_text(_INPUTS)
    return tmp_path / "inputs.toml", load_template_spec(tmp_path / "template.toml")


def _set(path: Path, old: str, new: str) -> int:
    text = path.read_text()
    assert old in text, f"test setup: {old!r} not in inputs"
    path.write_text(text.replace(old, new, 1))
    return next(i for i, line in enumerate(path.read_text().splitlines(), start=1) if new in line)


def test_defaults_of_the_bounds_template_validate(bounds):
    path, spec = bounds
    inputs = load_inputs(path, spec)
    assert inputs["signal.highpass"].magnitude == 0  # a declared min of 0 Hz allows zero


@pytest.mark.parametrize(
    ("old", "new", "name"),
    [
        ('width = "40 mm"', 'width = "nan mm"', "cell.width"),
        ('width = "40 mm"', "width = nan", "cell.width"),
        ('width = "40 mm"', "width = inf", "cell.width"),
        ('rate = "1000 Hz"', 'rate = "inf Hz"', "signal.rate"),
        ("factor = 3.0", "factor = nan", "signal.factor"),
        ("factor = 3.0", "factor = -inf", "signal.factor"),
        ('peaks = ["35 Hz", "47 Hz"]', 'peaks = ["35 Hz", nan]', "signal.peaks[1]"),
    ],
)
def test_non_finite_input_is_refused_naming_input_file_and_line(bounds, old, new, name):
    # common practice: NaN/infinity in an inputs file is refused where it is read
    path, spec = bounds
    line = _set(path, old, new)
    with pytest.raises(InputError) as info:
        load_inputs(path, spec)
    err = info.value
    assert "finite" in str(err)
    assert err.input_name == name and err.file == "inputs.toml" and err.line == line


@pytest.mark.parametrize(
    ("old", "new", "name"),
    [
        ('rate = "1000 Hz"', 'rate = "-47 Hz"', "signal.rate"),
        ('rate = "1000 Hz"', 'rate = "0 Hz"', "signal.rate"),
        ('rate = "1000 Hz"', 'rate = "-0.001 kHz"', "signal.rate"),
        ('peaks = ["35 Hz", "47 Hz"]', 'peaks = ["35 Hz", "-47 Hz"]', "signal.peaks"),
        ('peaks = ["35 Hz", "47 Hz"]', 'peaks = "0 Hz, 47 Hz"', "signal.peaks"),
    ],
)
def test_zero_or_negative_frequency_is_refused_without_a_declared_min(bounds, old, new, name):
    # a frequency is a rate of cycles: <= 0 is a typing error (common practice)
    path, spec = bounds
    line = _set(path, old, new)
    with pytest.raises(InputError) as info:
        load_inputs(path, spec)
    err = info.value
    assert "greater than zero" in str(err)
    assert err.input_name == name and err.file == "inputs.toml" and err.line == line


def test_declared_min_replaces_the_positive_frequency_rule(bounds):
    # the template's declared range is the authority where it exists (common practice)
    path, spec = bounds
    _set(path, 'highpass = "0 Hz"', 'highpass = "-1 Hz"')
    with pytest.raises(InputError, match="below the allowed range"):
        load_inputs(path, spec)


def test_positive_rule_applies_to_a_shipped_template(tmp_path):
    # prototype-test declares band.lowest as a frequency with no min (common practice: > 0)
    src = templates_root() / "prototype-test"
    for name in ("template.toml", "inputs.toml"):
        shutil.copy(src / name, tmp_path / name)
    path = tmp_path / "inputs.toml"
    line = _set(path, 'lowest = "20 Hz"', 'lowest = "-47 Hz"')
    with pytest.raises(InputError) as info:
        load_inputs(path, load_template_spec(tmp_path / "template.toml"))
    assert info.value.input_name == "band.lowest" and info.value.line == line


_CHILD_INPUTS = textwrap.dedent("""
    import sys
    from pathlib import Path
    from latticecalc.errors import InputError
    from latticecalc.project.inputs import load_inputs
    from latticecalc.project.schema import load_template_spec
    folder = Path(sys.argv[1])
    try:
        load_inputs(folder / "inputs.toml", load_template_spec(folder / "template.toml"))
    except InputError as exc:
        print("refused:", exc.input_name, exc.file, exc.line)
    else:
        print("accepted")
""")


@pytest.mark.parametrize("value", ["9**9**9 mm", HUNDRED_THOUSAND_DIGITS + " mm"], ids=["power-tower", "digits"])
def test_stalling_text_in_inputs_file_is_refused_naming_input_and_line(bounds, value):
    # common practice: bounded parsing applies to every quantity read from inputs.toml
    path, _spec = bounds
    line = _set(path, 'width = "40 mm"', f'width = "{value}"')
    try:
        done = subprocess.run([sys.executable, "-c", _CHILD_INPUTS, str(path.parent)], capture_output=True,
                              text=True, timeout=HANG_GUARD_SECONDS)
    except subprocess.TimeoutExpired:
        pytest.fail(f"load_inputs did not return within {HANG_GUARD_SECONDS} s (hang guard)")
    assert done.returncode == 0, done.stderr[-2000:]
    assert done.stdout.split() == ["refused:", "cell.width", "inputs.toml", str(line)]
