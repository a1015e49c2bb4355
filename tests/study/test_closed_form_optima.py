"""The search finds optima known in closed form, on small spaces (hand stage only).

References:
- Rao, S. S., *Vibration of Continuous Systems*, 2nd ed. (2019), Table 11.1 (Euler–Bernoulli beam,
  fixed–fixed): first root β₁L = 4.7300, so f₁ = (4.7300² / 2π L²) √(E I / ρ A); for a solid circular strut
  I / A = d² / 16, hence the diameter that puts f₁ at a target f is d = 8π L² f / (4.7300² √(E / ρ)).
- Den Hartog, J. P., *Mechanical Vibrations*, 4th ed. (1956), §3.3: with the optimum absorber the host's
  amplitude at both fixed points is √(1 + 2/μ) times its static deflection, so the least mass ratio for a
  required amplitude ratio A is μ = 2 / (A² − 1).
"""

from __future__ import annotations

import math

from tests.study.helpers_study import bcc_context

from latticecalc import materials
from latticecalc.study.engine import Constraint, Objective, StudySettings, run_study
from latticecalc.study.space import space_from_table

#: the search is stopped after a few generations: it must land this close to the closed form
RTOL_DIAMETER = 5e-3
RTOL_MASS_RATIO = 1e-2
BETA1_L_FIXED_FIXED = 4.7300     # Rao 2019, Table 11.1 (rounded as printed)


def _best(result, objective):
    feasible = [r for r in result.records if r.feasible("hand")]
    return min(feasible, key=lambda r: r.outputs["hand"][objective])


def test_search_finds_the_strut_diameter_of_the_clamped_frequency(tmp_path):
    peak = 39.0
    ctx = bcc_context(peak, node_zones="none")      # struts bend node to node: the textbook beam
    space = space_from_table({"lattice.strut_diameter": {"low": "8 mm", "high": "40 mm"}})
    settings = StudySettings(screen=8, population=8, generations=6, seed=3, stages=("hand",),
                             objectives=(Objective(output="strut_detuning", sense="min"),),
                             constraints=(Constraint(output="fits"),))
    result = run_study(space, ctx, settings=settings, store=tmp_path / "evaluations")
    found = _best(result, "strut_detuning").design["lattice.strut_diameter"]

    mat = materials.get("tpu-90a-printed")
    E = mat.dynamic_modulus().to("Pa").m
    rho = mat.density.to("kg/m^3").m
    L = 0.350 * math.sqrt(3) / 2                   # bcc: corner to centre, a √3 / 2 (geometry)
    d_closed = 8 * math.pi * L**2 * peak / (BETA1_L_FIXED_FIXED**2 * math.sqrt(E / rho)) * 1000.0   # mm
    assert math.isclose(found, d_closed, rel_tol=RTOL_DIAMETER), (found, d_closed)


def test_search_finds_den_hartogs_least_mass_ratio(tmp_path):
    amplitude = 10.0                                # required fixed-point amplitude ratio (invented)
    mu_closed = 2.0 / (amplitude**2 - 1.0)         # Den Hartog 1956 §3.3: A = √(1 + 2/μ)
    ctx = bcc_context(39.0)
    space = space_from_table({"lattice.added_mass": {"low": "0 g", "high": "3000 g"}})
    settings = StudySettings(screen=8, population=12, generations=15, seed=5, stages=("hand",),
                             objectives=(Objective(output="panel_mass", sense="min"),),
                             constraints=(Constraint(output="fits"),
                                          Constraint(output="dh_amplitude", minimum=-math.inf, maximum=amplitude)))
    result = run_study(space, ctx, settings=settings, store=tmp_path / "evaluations")
    best = _best(result, "panel_mass").outputs["hand"]
    assert best["dh_amplitude"] <= amplitude
    assert math.isclose(best["mass_ratio"], mu_closed, rel_tol=RTOL_MASS_RATIO), (best["mass_ratio"], mu_closed)
