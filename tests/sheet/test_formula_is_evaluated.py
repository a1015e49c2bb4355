"""The formula a step shows is the formula it evaluates (one sympy expression, not two copies)."""

import sympy as sp
from tests.helpers import assert_quantity_close

from latticecalc import Q_
from latticecalc.physics import beams
from latticecalc.sheet import Formula, Source, check, evaluate
from latticecalc.sheet.mathml import to_mathml

RTOL = 1e-12


def _independent_value(formula: Formula, values: dict, unit: str) -> float:
    """Substitute SI magnitudes into the same sympy expression and evaluate it with sympy itself."""
    subs = {}
    for s in formula.symbols:
        v = values[s.name]
        subs[s] = v.to_base_units().magnitude if hasattr(v, "to_base_units") else v
    si = float(sp.N(formula.expr.subs(subs), 17))
    result = formula.evaluate(values)
    return Q_(si, f"{result.to_base_units().units:~}").to(unit).magnitude


def test_step_renders_the_expression_it_evaluates():
    step = beams.bending_frequency(length=Q_(100, "mm"), diameter=Q_(3, "mm"), youngs_modulus=Q_(20, "MPa"),
                                   density=Q_(1200, "kg/m^3")).step("strut.f1-cc")
    formula = step.formula
    assert formula is beams.EULER_BERNOULLI_FREQUENCY
    # the LaTeX shown is sympy's rendering of this very expression
    assert step.formula_latex() == f"f_{{n}} = {sp.latex(formula.expr)}"
    # the number shown is what sympy gets from the same expression with the substituted values
    expected = _independent_value(formula, step.values, "Hz")
    assert_quantity_close(step.result, expected, unit="Hz", rtol=RTOL)


def test_changing_the_expression_changes_both_rendering_and_value():
    a, b = sp.symbols("a b")
    f1 = Formula("y", a * b)
    f2 = Formula("y", a * b**2)
    vals = {"a": Q_(2, "m"), "b": Q_(3, "m")}
    s1 = evaluate(f1, id="t.y1", description="y", values=vals, unit="m^2")
    s2 = evaluate(f2, id="t.y2", description="y", values=vals, unit="m^3")
    assert s1.formula_latex() != s2.formula_latex()
    assert_quantity_close(s1.result, 6.0, unit="m^2", rtol=RTOL)
    assert_quantity_close(s2.result, 18.0, unit="m^3", rtol=RTOL)


def test_substitution_shows_values_with_units_and_the_result():
    step = beams.bending_frequency(length=Q_(100, "mm"), diameter=Q_(3, "mm"), youngs_modulus=Q_(20, "MPa"),
                                   density=Q_(1200, "kg/m^3")).step("strut.f1-cc")
    sub = step.substitution_latex()
    assert r"\text{MPa}" in sub and r"\text{mm}" in sub and r"\text{kg/m³}" in sub
    assert sub.endswith(r"\,\text{Hz}")
    mathml = to_mathml(sub, display=True)
    assert mathml.startswith("<math") and "<mfrac>" in mathml and "MPa" in mathml


def test_units_are_carried_by_the_arithmetic():
    # a formula whose units do not reduce to the display unit is refused, not silently converted
    m, a = sp.symbols("m a")
    force = Formula("F", m * a)
    step = evaluate(force, id="t.f", description="force", values={"m": Q_(2, "kg"), "a": Q_(3, "m/s^2")},
                    unit="N")
    assert_quantity_close(step.result, 6.0, unit="N", rtol=RTOL)
    import pytest

    from latticecalc.errors import DimensionError

    with pytest.raises(DimensionError):
        evaluate(force, id="t.f2", description="force", values={"m": Q_(2, "kg"), "a": Q_(3, "m/s^2")},
                 unit="Hz")


def test_check_utilisation_and_verdict():
    src = Source(author="common practice", title="deflection limit", tag="common practice")
    ok = check(id="t.ok", description="deflection", demand=Q_(2, "mm"), limit=Q_(5, "mm"), source=src)
    assert ok.ok and abs(ok.utilisation - 0.4) < 1e-12 and ok.verdict() == "HOLDS"
    bad = check(id="t.bad", description="safety factor", demand=Q_(1.5, ""), limit=Q_(3, ""), sense="min")
    assert not bad.ok and abs(bad.utilisation - 2.0) < 1e-12 and bad.verdict() == "FAILS"
    assert bad.to_dict()["verdict"] == "FAILS"


def test_a_copy_of_an_evaluated_step_with_another_result_or_values_is_checked_again():
    """evaluate() skips re-evaluating the formula it just evaluated; a copy that changes the result or the
    values (``dataclasses.replace``) is checked as any other step is (the kit's rule: the result shown is
    the formula's value)."""
    import dataclasses

    import pytest

    from latticecalc.errors import LatticeCalcError

    a, b = sp.symbols("a b")
    f = Formula("y", a * b)
    step = evaluate(f, id="t.y", description="y", values={"a": Q_(2.0, "m"), "b": Q_(3.0, "m")}, unit="m^2")
    assert step.result.to("m^2").magnitude == 6.0
    with pytest.raises(LatticeCalcError, match="result"):
        dataclasses.replace(step, result=Q_(7.0, "m^2"))
    with pytest.raises(LatticeCalcError):
        dataclasses.replace(step, values={"a": Q_(2.0, "m"), "b": Q_(4.0, "m")})
    assert dataclasses.replace(step, description="same numbers").result == step.result
