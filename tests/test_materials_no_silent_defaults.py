"""No silent defaults: a material states what its use needs, or the kit says which field is missing.

A material used for vibration must state its loss factor and dynamic-to-static ratio; one under
permanent load its long-term (creep) factor.  These are behaviour rules of the kit (common practice:
an unstated value is an input error, not a zero-damping or no-creep assumption).
"""

from __future__ import annotations

import dataclasses
import shutil

import pytest

from latticecalc import Q_, materials
from latticecalc.errors import InputError
from latticecalc.materials import Material
from latticecalc.project import open_project
from latticecalc.project.column_panel import design_from_inputs
from latticecalc.project.inputs import set_values
from latticecalc.project.templates import templates_root

INPUTS = "projects/demo/inputs.toml"
FOAM = {"name": "Project foam", "youngs_modulus": {"value": "2 MPa", "source": "supplier sheet F-1"},
        "poissons_ratio": 0.3, "density": "300 kg/m^3"}
FOAM_FULL = FOAM | {"loss_factor": {"value": 0.12, "source": "supplier sheet F-1"},
                    "dynamic_to_static": {"value": 1.3, "source": "supplier sheet F-1"},
                    "long_term_factor": {"value": 0.7, "source": "supplier sheet F-1"}}
# categories that may carry the panel's self-weight (lattice or frame); concrete ("other") is for columns
PERMANENT_LOAD_CATEGORIES = ("elastomer", "polymer", "composite", "metal")


def _foam(**changes):
    return materials.from_mapping({k: v for k, v in (FOAM_FULL | changes).items() if v is not None},
                                  key="my-foam", file=INPUTS)


# --- what was stated -------------------------------------------------------------------------------------
def test_stated_records_the_fields_given_and_not_the_defaults():
    # common practice: fields passed to the constructor are stated; defaults are used but not stated
    mat = Material(name="t", youngs_modulus=Q_(10, "MPa"), poissons_ratio=0.49, density=Q_(1150, "kg/m^3"),
                   loss_factor=0.0)
    assert mat.is_stated("loss_factor") and mat.loss_factor == 0.0
    assert not mat.is_stated("dynamic_to_static") and mat.dynamic_to_static == 1.0
    assert type(mat.dynamic_to_static) is float and type(mat.category) is str
    assert mat.defaulted == {"dynamic_to_static": 1.0, "modulus_low_factor": 1.0, "modulus_high_factor": 1.0,
                             "long_term_factor": 1.0}
    # common practice: replace() changes values, not what the data stated
    assert dataclasses.replace(mat, youngs_modulus=Q_(12, "MPa")).stated == mat.stated


def test_project_override_keeps_what_the_catalogue_stated():
    # common practice: a project override adds its fields to the catalogue entry's stated ones
    base = materials.get("pu-elastomer-cast")
    mat = materials.get("pu-elastomer-cast", overrides={"pu-elastomer-cast": {"youngs_modulus": "12 MPa"}},
                        file=INPUTS)
    assert mat.stated == base.stated and mat.file == INPUTS
    materials.require_for_vibration(mat, role="lattice")
    materials.require_for_permanent_load(mat, role="lattice")


def test_unstated_loss_factor_is_shown_with_the_value_used():
    # common practice: an assumption text states what was actually used
    mat = Material(name="t", youngs_modulus=Q_(10, "MPa"), poissons_ratio=0.49, density=Q_(1150, "kg/m^3"))
    step = next(s for s in mat.properties().steps if s.id == "material.loss-factor")
    assert "not stated" in step.method and "η = 0" in step.note


# --- the checks ------------------------------------------------------------------------------------------
def test_project_material_without_loss_factor_names_material_field_and_file():
    # common practice: no zero-damping default for a vibration calculation
    mat = _foam(loss_factor=None)
    with pytest.raises(InputError) as err:
        materials.require_for_vibration(mat, role="lattice")
    e = err.value
    assert e.input_name == "materials.my-foam.loss_factor" and e.file == INPUTS
    assert "my-foam" in str(e) and "loss_factor" in str(e) and INPUTS in str(e)
    assert "loss factor" in e.expected and e.got == "not stated"


def test_project_material_without_dynamic_ratio_is_an_error():
    # common practice: no "dynamic modulus = static modulus" default for a vibration calculation
    with pytest.raises(InputError, match="materials.my-foam.dynamic_to_static"):
        materials.require_for_vibration(_foam(dynamic_to_static=None), role="frame")


def test_project_material_without_long_term_factor_is_an_error_under_permanent_load():
    # common practice: no "no creep" default for self-weight under permanent load
    mat = _foam(long_term_factor=None)
    materials.require_for_vibration(mat, role="lattice")
    with pytest.raises(InputError, match="materials.my-foam.long_term_factor") as err:
        materials.require_for_permanent_load(mat, role="lattice")
    assert err.value.file == INPUTS and "creep" in err.value.expected


def test_material_with_all_fields_passes():
    # common practice: a material that states every field it needs is used as given
    mat = _foam()
    assert materials.require_for_vibration(mat, role="lattice") is mat
    assert materials.require_for_permanent_load(mat, role="frame") is mat
    assert materials.check_column_material(mat) is mat


def test_loss_factor_of_one_or_more_is_refused_for_vibration():
    # common practice: the kit's models take 0 <= η < 1
    with pytest.raises(InputError, match="loss_factor"):
        materials.require_for_vibration(_foam(loss_factor=1.2), role="lattice")


def test_column_material_needs_loss_factor_and_dynamic_ratio():
    # common practice: the column's damping and dynamic modulus enter the floor check
    bare = Material(name="site concrete", youngs_modulus=Q_(33, "GPa"), poissons_ratio=0.2,
                    density=Q_(2500, "kg/m^3"), loss_factor=0.02)
    with pytest.raises(InputError, match="column material .*dynamic_to_static"):
        materials.check_column_material(bare, file=INPUTS)


def test_every_catalogue_material_states_what_its_use_needs():
    # common practice: the catalogue itself has no silent defaults
    for key in materials.names():
        mat = materials.get(key)
        materials.require_for_vibration(mat, role="lattice")
        assert mat.sources["dynamic_to_static"].title, key
        if mat.category in PERMANENT_LOAD_CATEGORIES:
            materials.require_for_permanent_load(mat, role="frame")
            assert mat.sources["long_term_factor"].title, key
    for key in (k for k in materials.names() if k.startswith("concrete-")):
        materials.check_column_material(materials.get(key))
        # concrete creeps: used under permanent load it must be given a factor, none is assumed
        with pytest.raises(InputError, match=f"materials.{key}.long_term_factor"):
            materials.require_for_permanent_load(materials.get(key), role="frame")


# --- in the column-panel design --------------------------------------------------------------------------
@pytest.fixture
def project(tmp_path):
    dest = tmp_path / "panel"
    shutil.copytree(templates_root() / "column-panel", dest)
    return dest


def _with_material(folder, fields, changes):
    lines = ["", "[materials.my-foam]"]
    for name, value in fields.items():
        if isinstance(value, dict):
            value = "{ " + ", ".join(f"{k} = {v!r}" for k, v in value.items()).replace("'", '"') + " }"
        elif isinstance(value, str):
            value = f'"{value}"'
        lines.append(f"{name} = {value}")
    with open(folder / "inputs.toml", "a", encoding="utf-8") as fh:
        fh.write("\n".join(lines) + "\n")
    proj = open_project(folder)
    set_values(folder / "inputs.toml", proj.template, changes)
    return open_project(folder)


def test_design_refuses_a_lattice_material_without_loss_factor(project):
    # common practice: the panel is not designed with zero damping that nobody stated
    fields = {k: v for k, v in FOAM_FULL.items() if k != "loss_factor"}
    proj = _with_material(project, fields, {"lattice.material": "my-foam"})
    with pytest.raises(InputError) as err:
        design_from_inputs(proj.inputs, folder=project)
    assert err.value.input_name == "materials.my-foam.loss_factor"
    assert err.value.file == proj.inputs.file and "lattice material" in str(err.value)


def test_design_refuses_a_frame_material_without_long_term_factor_under_long_term_selfweight(project):
    # common practice: the long-term modulus the sheet speaks of must come from a stated factor
    fields = {k: v for k, v in FOAM_FULL.items() if k != "long_term_factor"}
    proj = _with_material(project, fields, {"frame.material": "my-foam", "selfweight.long_term": True})
    with pytest.raises(InputError, match="materials.my-foam.long_term_factor"):
        design_from_inputs(proj.inputs, folder=project)
    # common practice: with the short-term modulus for self-weight the factor is not needed
    set_values(project / "inputs.toml", proj.template, {"selfweight.long_term": False})
    design = design_from_inputs(open_project(project).inputs, folder=project)
    assert design.frame.key == "my-foam"


def test_design_with_a_complete_project_material_passes(project):
    # common practice: a material that states every field it needs is used as given
    proj = _with_material(project, FOAM_FULL, {"lattice.material": "my-foam", "selfweight.long_term": True})
    design = design_from_inputs(proj.inputs, folder=project)
    assert design.lattice.loss_factor == 0.12 and design.lattice.is_stated("long_term_factor")


def test_unused_frame_material_is_not_checked(project):
    # common practice: a frame switched off carries no vibration or load, so its material is not needed
    fields = {k: v for k, v in FOAM.items()}
    proj = _with_material(project, fields, {"frame.material": "my-foam", "frame.enabled": False})
    assert not design_from_inputs(proj.inputs, folder=project).framed
