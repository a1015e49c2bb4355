"""Formulas the kit writes out instead of solving with sympy in every kernel are sympy's own solutions.

Source: sympy (general-purpose reference library), ``sympy.solve`` of the forward formula each inverse comes
from; the forward formulas cite their own sources (Rao 2017 eq. 8.82 for the Euler–Bernoulli strut frequency).
An inverse written out by hand could drift from its forward formula; these checks fail if it does.
"""

from __future__ import annotations

import sympy as sp

from latticecalc import materials
from latticecalc.physics import beams
from latticecalc.signals import frf


def _positive_root(forward: sp.Expr, lhs: sp.Symbol, target: str) -> sp.Expr:
    """The one root of lhs = forward for ``target`` that is not negative, all symbols positive."""
    pos = {s: sp.Symbol(s.name, positive=True) for s in (*forward.free_symbols, lhs)}
    roots = [r for r in sp.solve(sp.Eq(pos[lhs], forward.subs(pos)), next(p for s, p in pos.items()
                                                                        if s.name == target))
             if r.is_positive is not False]
    assert len(roots) == 1
    return roots[0].subs({v: k for k, v in pos.items()})


def _same(written: sp.Expr, solved: sp.Expr) -> bool:
    positive = {s: sp.Symbol(s.name, positive=True) for s in written.free_symbols | solved.free_symbols}
    return sp.simplify(written.subs(positive) - solved.subs(positive)) == 0


def _strut_frequency() -> sp.Expr:
    return beams.EULER_BERNOULLI_FREQUENCY.expr.subs({sp.Symbol("I"): beams.SECOND_MOMENT_CIRCLE.expr,
                                                     sp.Symbol("A"): beams.AREA_CIRCLE.expr})


def test_strut_diameter_and_length_for_a_frequency_are_the_solved_strut_formula():
    forward = _strut_frequency()
    assert _same(beams.DIAMETER_FOR_FREQUENCY.expr, _positive_root(forward, sp.Symbol("f"), "d"))
    assert _same(beams.LENGTH_FOR_FREQUENCY.expr, _positive_root(forward, sp.Symbol("f"), "L"))
    # and a changed inverse would be caught
    assert not _same(beams.DIAMETER_FOR_FREQUENCY.expr * 1.01, _positive_root(forward, sp.Symbol("f"), "d"))


def test_calibrated_modulus_is_the_solved_strut_formula():
    forward = _strut_frequency().subs(sp.Symbol("f_n"), sp.Symbol("f_meas"))
    assert _same(frf.STRUT_MODULUS.expr, _positive_root(forward, sp.Symbol("f_meas"), "E"))


def test_static_modulus_from_a_dynamic_one_is_the_solved_dynamic_formula():
    solved = _positive_root(materials.DYNAMIC_MODULUS.expr, sp.Symbol("E_dyn"), "E")
    assert _same(materials.STATIC_FROM_DYNAMIC.expr, solved)


def test_scatter_frequency_ratios_are_each_formula_over_itself():
    # the tolerance module's frequency ratios are the strut formula (Euler–Bernoulli, Rao 2017 eq. 8.82) and the
    # mid-span-mass formula (Rayleigh, Rao 2017 §8.7) with changed values over themselves, as sympy simplifies them
    from latticecalc.physics import tolerance as tol

    def changed(expr: sp.Expr, names: dict[str, str]) -> sp.Expr:
        return expr.subs({s: sp.Symbol(names[s.name], positive=True) for s in expr.free_symbols if s.name in names})

    bare, mass = tol._strut_frequency_expr(), tol._midspan_mass_expr()
    assert _same(tol.GEOMETRY_FREQUENCY_RATIO.expr, sp.simplify(changed(bare, {"d": "d_2", "L": "L_2"}) / bare))
    assert _same(tol.DENSITY_FREQUENCY_RATIO.expr, sp.simplify(changed(bare, {"rho": "rho_2"}) / bare))
    assert _same(tol.GEOMETRY_FREQUENCY_RATIO_MASS.expr, sp.simplify(changed(mass, {"d": "d_2", "L": "L_2"}) / mass))
    assert _same(tol.DENSITY_FREQUENCY_RATIO_MASS.expr, sp.simplify(changed(mass, {"rho": "rho_2"}) / mass))
