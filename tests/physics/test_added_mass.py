"""Masses at strut mid-span: sphere size, panel mass, and the same mass in every model.

Sources: solid sphere J = 2/5 M r² (Meriam & Kraige, Engineering Mechanics: Dynamics, 7th ed. 2012,
Table D/4, from memory); the rest are consistency checks between the kit's own models (common
practice: the reduced Bloch model and the full mesh must carry the same added mass).
"""

import numpy as np
import pytest

from latticecalc import Q_, materials
from latticecalc.physics import bloch
from latticecalc.physics.added_mass import added_mass_sphere, fe_strut_frequency, retuned_diameter
from latticecalc.physics.cells import build_cell
from latticecalc.physics.density import panel_mass, panel_strut_counts

STEEL = materials.get("steel-s355")
TPU = materials.get("tpu-90a-printed")


def test_sphere_size_and_inertia():
    s = added_mass_sphere(mass=Q_(0.5, "kg"), material=STEEL)
    r = (3 * 0.5 / (4 * np.pi * 7850)) ** (1 / 3)
    assert s.diameter.to("m").m == pytest.approx(2 * r, rel=1e-12)
    assert s.rotary_inertia.to("kg*m^2").m == pytest.approx(0.4 * 0.5 * r**2, rel=1e-12)


def test_sphere_narrower_than_the_strut_is_refused():
    with pytest.raises(Exception, match="narrower than the strut"):
        added_mass_sphere(mass=Q_(1, "g"), material=STEEL, strut_diameter=Q_(20, "mm"))


def test_panel_mass_counts_one_sphere_per_lattice_strut():
    cell = build_cell("bcc", cell_width=Q_(100, "mm"), strut_diameter=Q_(6, "mm"), frame_diameter=Q_(4, "mm"))
    mats = {"lattice": TPU, "frame": materials.get("cfrp-tube-qi")}
    bare = panel_mass(cell, materials=mats, cells_wide=2, cells_high=3, cells_deep=1, method="closed-form")
    heavy = panel_mass(cell.with_point_mass("lattice", mass=Q_(20, "g")), materials=mats, cells_wide=2,
                       cells_high=3, cells_deep=1, method="closed-form")
    n = panel_strut_counts(cell, cells_wide=2, cells_high=3, cells_deep=1)[cell.group_mask("lattice")].sum()
    assert n == 48
    assert (heavy.value - bare.value).to("kg").m == pytest.approx(48 * 0.020, rel=1e-12)


def test_reduced_and_full_bloch_models_carry_the_same_mass():
    cell = build_cell("bcc", cell_width=Q_(100, "mm"), strut_diameter=Q_(6, "mm"), frame_diameter=None)
    heavy = cell.with_point_mass("lattice", mass=Q_(5, "g"))
    mats = {"lattice": TPU}
    kw = dict(materials=mats, n_elements=4, n_bands=12, points=8, zone_points=0, convergence_check=False)
    # every one of the 12 strut modes kept (no cutoff), so the two models differ by truncation only
    red = bloch.dispersion(heavy, strut_modes=12, mode_cutoff=None, **kw)["frequencies"].to("Hz").m
    full = bloch.dispersion(heavy, method="full", **kw)["frequencies"].to("Hz").m
    light = bloch.dispersion(cell, strut_modes=12, mode_cutoff=None, **kw)["frequencies"].to("Hz").m
    sel = np.isfinite(red) & (red > 1.0)
    np.testing.assert_allclose(red[sel], full[sel], rtol=1e-5)    # 12 strut modes kept: truncation ~1e-6
    # the mass lowers the strut-resonance cluster (bands 3 and up at Γ-adjacent points)
    assert np.nanmax(red[:, 3:6]) < np.nanmax(light[:, 3:6])


def test_retuned_diameter_hits_the_target():
    d = retuned_diameter(target=40.0, length=0.3, material=TPU, mass=0.2, inertia=1e-6)
    assert fe_strut_frequency(length=0.3, diameter=d, material=TPU, mass=0.2, inertia=1e-6) == \
        pytest.approx(40.0, rel=1e-5)
