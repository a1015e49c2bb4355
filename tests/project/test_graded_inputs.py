"""The column-panel template's ``panel.zones`` input: rows into a graded panel's zones, and bad rows refused.

Sources: the rows are the template's own schema (template.toml); the zone checks are common practice
(a graded panel's zones must fill the panel, each with a positive strut diameter).
"""

from __future__ import annotations

import pytest
from tests.helpers import make_quick

from latticecalc.errors import InputError
from latticecalc.project.column_panel import design_from_inputs
from latticecalc.project.inputs import load_inputs, set_values
from latticecalc.project.schema import load_template_spec
from latticecalc.project.templates import new_project


@pytest.fixture(scope="module")
def project(tmp_path_factory):
    folder = tmp_path_factory.mktemp("graded") / "panel"
    new_project(folder, template="column-panel")
    return make_quick(folder)


def design_with(project, rows):
    spec = load_template_spec(project / "template.toml")
    set_values(project / "inputs.toml", spec, {"panel.zones": rows, "panel.cells_high": 4})
    return design_from_inputs(load_inputs(project / "inputs.toml", spec), folder=project)


def test_rows_become_zones_and_empty_means_uniform(project):
    d = design_with(project, [{"cells_high": 1, "strut_diameter": "3 mm"},
                              {"cells_high": 3, "strut_diameter": "4 mm", "added_mass": "5 g"}])
    assert [z.cells_high for z in d.zoning.zones] == [1, 3]
    assert d.zoning.zones[1].strut_diameter.to("mm").m == pytest.approx(4.0)
    assert d.zoning.zones[1].added_mass.to("g").m == pytest.approx(5.0)
    assert d.zoning.zones[1].rotary_inertia.to("kg*m^2").m > 0          # the sphere's, J = M D²/10
    assert d.cell.diameters["lattice"].to("mm").m == pytest.approx(3.0)  # the design's cell is zone 1's
    assert design_with(project, []).zoning is None


@pytest.mark.parametrize(("rows", "name", "expected", "got"), [
    ([{"cells_high": 1, "strut_diameter": "3 mm"}, {"cells_high": 2, "strut_diameter": "3 mm"}],
     "panel.zones", "panel.cells_high = 4", "1 + 2 = 3"),
    ([{"cells_high": 4, "strut_diameter": "-3 mm"}], "panel.zones row 1 strut_diameter", "> 0 mm", "-3"),
    ([{"cells_high": 2, "strut_diameter": "3 mm"}, {}], "panel.zones row 2", "cells_high, strut_diameter", "{}"),
])
def test_bad_rows_name_the_input_and_write_nothing(project, rows, name, expected, got):
    cache = project / ".latticecalc-cache"
    listed = sorted(cache.rglob("*")) if cache.exists() else []
    with pytest.raises(InputError) as err:
        design_with(project, rows)
    e = err.value
    assert e.input_name == name and expected in e.expected and got in e.got
    assert (sorted(cache.rglob("*")) if cache.exists() else []) == listed   # nothing computed or cached
