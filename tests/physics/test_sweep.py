"""Parameter study: each point is the band estimate of the changed cell; trends; figures; bad inputs."""

import math

import matplotlib
import numpy as np
import pytest
from tests.helpers import assert_quantity_close

from latticecalc import Q_, materials
from latticecalc.errors import DimensionError, InputError
from latticecalc.physics import bands, sweep
from latticecalc.physics.cells import build_cell

matplotlib.use("Agg")

PU = materials.get("pu-elastomer-cast")
PLA = materials.get("pla-printed")
CELL = build_cell("octet", cell_width=Q_(60, "mm"), strut_diameter=Q_(4, "mm"), frame_diameter=Q_(6, "mm"))
KW = {"cell": CELL, "lattice_material": PU, "frame_material": PLA}


@pytest.mark.parametrize("parameter,values,changed", [
    ("cell_width", Q_([50, 75, 90], "mm"), lambda v: (CELL.with_cell_width(v), PU)),
    ("strut_diameter", Q_([3, 4.5, 5], "mm"), lambda v: (CELL.with_diameters(lattice=v), PU)),
    ("youngs_modulus", Q_([6, 11.2, 25], "MPa"),
     lambda v: (CELL, materials.Material(name="pu", youngs_modulus=v, poissons_ratio=0.49,
                                         density=PU.density))),
])
def test_each_point_is_the_band_estimate_of_the_changed_cell(parameter, values, changed):
    r = sweep.band_sweep(**KW, parameter=parameter, values=values)
    for i, v in enumerate(values):
        cell, mat = changed(v)
        est = bands.band_estimate_for_cell(cell=cell, lattice_material=mat, frame_material=PLA)
        for key in ("f_low", "f_high", "f_low_pinned", "f_high_pinned", "f_bragg"):
            assert_quantity_close(r.value[key][i], est.value[key], rtol=1e-10)


def test_trends():
    wide = sweep.band_sweep(**KW, parameter="cell_width", values=Q_(np.linspace(40, 120, 9), "mm"))
    thick = sweep.band_sweep(**KW, parameter="strut_diameter", values=Q_(np.linspace(2, 6, 9), "mm"))
    stiff = sweep.band_sweep(**KW, parameter="youngs_modulus", values=Q_(np.linspace(4, 30, 9), "MPa"),
                             effective_modulus=Q_(25, "MPa"))
    assert np.all(np.diff(wide.value["f_low"].magnitude) < 0) and np.all(np.diff(wide.value["f_high"].magnitude) < 0)
    assert np.all(np.diff(thick.value["f_low"].magnitude) > 0)
    assert np.all(np.diff(thick.value["f_high"].magnitude) > 0)
    # f ∝ √E with everything else fixed (Rao 2017, eq. 8.82)
    E = stiff.value["parameter_values"].magnitude
    f = stiff.value["f_low"].magnitude
    np.testing.assert_allclose(f / f[0], np.sqrt(E / E[0]), rtol=1e-12)
    # the study's steps carry arrays for the sheet
    assert stiff.step("sweep.youngs-modulus.f-low").result.shape == (9,)


def test_figures():
    from latticecalc.plots.bands import band_figure, dispersion_figure, sweep_figure

    r = sweep.band_sweep(**KW, parameter="cell_width", values=Q_(np.linspace(40, 120, 5), "mm"))
    fig = sweep_figure(r, target=(Q_(20, "Hz"), Q_(80, "Hz")))
    assert fig.axes[0].get_xlabel() == "cell width (mm)" and len(fig.axes[0].lines) == 1
    est = bands.band_estimate_for_cell(**KW)
    fig = band_figure(est, measured=Q_([150, 210], "Hz"))
    assert fig.axes[0].get_xscale() == "log"
    chain = bands.mass_in_mass_dispersion(outer_mass=Q_(1, "kg"), inner_mass=Q_(0.5, "kg"),
                                          outer_stiffness=Q_(1e4, "N/m"), inner_stiffness=Q_(5e3, "N/m"),
                                          cell_length=Q_(50, "mm"))
    assert len(dispersion_figure(chain).axes[0].lines) == 2
    assert math.isfinite(float(chain.value["gap_high"].magnitude))


def test_bad_inputs():
    with pytest.raises(InputError, match="parameter"):
        sweep.band_sweep(**KW, parameter="density", values=Q_([1, 2], "kg/m^3"))
    with pytest.raises(InputError, match="values"):
        sweep.band_sweep(**KW, parameter="cell_width", values=Q_([60], "mm"))
    with pytest.raises(DimensionError, match="values"):
        sweep.band_sweep(**KW, parameter="strut_diameter", values=Q_([1, 2], "MPa"))
    with pytest.raises(InputError, match="values"):
        sweep.band_sweep(**KW, parameter="cell_width", values=Q_([60, -5], "mm"))
