"""Sections 40 (stop band estimate) and 10 (strut resonance) of a column-panel project with a mass at mid-span.

The sheet must show the strut mode with the mid-span mass (Rayleigh's method with the static deflection shape,
Rao, Mechanical Vibrations, 6th ed. 2017, §8.7, the formula the library evaluates) and no longer a note that
the hand estimate ignores the mass (common practice: the sheet states what it computes).
"""

from __future__ import annotations

import shutil

import pytest
from tests.helpers import make_quick

from latticecalc.project import open_project
from latticecalc.project.export.collect import collect
from latticecalc.project.inputs import set_values
from latticecalc.project.runner import run_project
from latticecalc.project.templates import templates_root

pytestmark = pytest.mark.slow


def test_section_40_shows_the_midspan_mass_step(tmp_path):
    folder = tmp_path / "panel"
    shutil.copytree(templates_root() / "column-panel", folder)
    make_quick(folder)
    proj = open_project(folder)
    set_values(folder / "inputs.toml", proj.template, {"lattice.added_mass": "2 g"})
    run_project(folder, progress=None, only=["10", "40"])
    strut = collect(sorted((folder / "out" / "executed").glob("10_*.ipynb")))
    assert "the first mode with the mass (Rayleigh's method) is in section Stop band estimate" in " ".join(
        str(r.get("text", "")) for r in strut.records("note"))
    executed = sorted((folder / "out" / "executed").glob("40_*.ipynb"))
    assert executed
    doc = collect(executed)
    steps = {r["id"]: r for r in doc.records("step")}
    assert "band.added-mass" in steps and "band.f1-cc-bare" in steps
    f1 = steps["band.f1-cc"]
    assert "Rayleigh" in f1["description"] and "mid-span mass" in f1["description"]
    # the mass lowers the strut mode below the bare strut's
    assert f1["result"]["value"] < steps["band.f1-cc-bare"]["result"]["value"]
    text = " ".join(str(r.get("text", "")) for r in doc.records("note"))
    assert "does not count a mass added at mid-span" not in text
    assert "Rayleigh's method with the static deflection shape" in text


def test_sections_10_and_40_graded_panel_give_each_zone_its_own_mass(tmp_path):
    folder = tmp_path / "graded"
    shutil.copytree(templates_root() / "column-panel", folder)
    make_quick(folder)
    proj = open_project(folder)
    set_values(folder / "inputs.toml", proj.template, {"panel.cells_high": 4, "panel.zones": [
        {"cells_high": 2, "strut_diameter": "3 mm"}, {"cells_high": 2, "strut_diameter": "3 mm", "added_mass": "2 g"}]})
    run_project(folder, progress=None, only=["10", "40"])
    doc = collect(sorted((folder / "out" / "executed").glob("40_*.ipynb")))
    steps = {r["id"]: r for r in doc.records("step")}
    assert "band.zone1.added-mass" not in steps and "band.zone2.added-mass" in steps
    assert steps["band.zone2.f1-cc"]["result"]["value"] < steps["band.zone1.f1-cc"]["result"]["value"]
    table = next(r for r in doc.records("table") if r.get("id") == "band.zones")
    assert "added mass per strut" in table["columns"]
    text = " ".join(str(r.get("text", "")) for r in doc.records("note"))
    assert "Each zone's estimate counts its own mass at mid-span" in text
    # section 10 says it shows zone 1's struts and lists each zone's first mode from section 40's estimate
    strut = collect(sorted((folder / "out" / "executed").glob("10_*.ipynb")))
    notes = " ".join(str(r.get("text", "")) for r in strut.records("note"))
    assert "this section shows zone 1's lattice struts" in notes
    modes = next(r for r in strut.records("table") if r.get("id") == "strut.zone-modes")
    assert [row[4] for row in modes["rows"]] == [f"{steps[f'band.zone{k}.f1-cc']['result']['value']:.4g}"
                                                 for k in (1, 2)]


def test_section_70_scatter_factors_count_the_midspan_mass(tmp_path):
    """The coverage section's geometry and density factors are those of the strut with its mid-span mass (Rao
    2017 §8.7 Rayleigh formula), not the bare strut's d/L² and 1/√ρ."""
    folder = tmp_path / "panel"
    shutil.copytree(templates_root() / "column-panel", folder)
    make_quick(folder)
    proj = open_project(folder)
    set_values(folder / "inputs.toml", proj.template, {"lattice.added_mass": "2 g"})
    run_project(folder, progress=None, only=["70"])
    doc = collect(sorted((folder / "out" / "executed").glob("70_*.ipynb")))
    steps = {r["id"]: r for r in doc.records("step")}
    geometry = [r for k, r in steps.items() if k.startswith("coverage.geometry") and k.endswith("factor-low")]
    assert geometry, sorted(steps)
    assert all("at mid-span" in r["description"] and "M_\\mathrm{a}" in r["formula_latex"] for r in geometry)
